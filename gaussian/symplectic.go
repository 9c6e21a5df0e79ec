package gaussian

import (
	"fmt"
	"math"
)

// Omega returns the n-mode symplectic form, the direct sum of [[0, 1], [-1, 0]].
func Omega(n int) Matrix {
	m := NewMatrix(2*n, 2*n)
	for k := 0; k < n; k++ {
		m.Set(2*k, 2*k+1, 1)
		m.Set(2*k+1, 2*k, -1)
	}
	return m
}

func checkModes(n int, modes ...int) {
	if n < 1 || n > MaxModes {
		panic(fmt.Sprintf("gaussian: %d modes outside 1..%d", n, MaxModes))
	}
	for i, a := range modes {
		if a < 0 || a >= n {
			panic(fmt.Sprintf("gaussian: mode %d outside 0..%d", a, n-1))
		}
		for _, b := range modes[:i] {
			if a == b {
				panic(fmt.Sprintf("gaussian: mode %d used twice", a))
			}
		}
	}
}

// BeamSplitter returns the n-mode symplectic of a beam splitter of transmissivity t on
// modes (i, j): [[sqrt(t) I, sqrt(1-t) I], [-sqrt(1-t) I, sqrt(t) I]], identity elsewhere.
func BeamSplitter(n, i, j int, t float64) Matrix {
	checkModes(n, i, j)
	s := Identity(2 * n)
	c, d := math.Sqrt(t), math.Sqrt(1-t)
	for q := 0; q < 2; q++ {
		s.Set(2*i+q, 2*i+q, c)
		s.Set(2*i+q, 2*j+q, d)
		s.Set(2*j+q, 2*i+q, -d)
		s.Set(2*j+q, 2*j+q, c)
	}
	return s
}

// TwoModeSqueezer returns the n-mode symplectic of a two-mode squeezer of gain G >= 1 with
// signal i and idler j: [[sqrt(G) I, sqrt(G-1) Z], [sqrt(G-1) Z, sqrt(G) I]], Z = diag(1, -1).
func TwoModeSqueezer(n, i, j int, gain float64) Matrix {
	return twoModeSqueezerCS(n, i, j, math.Sqrt(gain), math.Sqrt(gain-1))
}

// TwoModeSqueezing returns the two-mode squeezer with squeezing parameter r (any sign):
// cosh r on the diagonal blocks and sinh r Z off the diagonal. Gain cosh^2 r; a negative r
// is the same squeezer after a phase flip of one mode.
func TwoModeSqueezing(n, i, j int, r float64) Matrix {
	return twoModeSqueezerCS(n, i, j, math.Cosh(r), math.Sinh(r))
}

func twoModeSqueezerCS(n, i, j int, c, s float64) Matrix {
	checkModes(n, i, j)
	m := Identity(2 * n)
	m.Set(2*i, 2*i, c)
	m.Set(2*i+1, 2*i+1, c)
	m.Set(2*j, 2*j, c)
	m.Set(2*j+1, 2*j+1, c)
	m.Set(2*i, 2*j, s)
	m.Set(2*i+1, 2*j+1, -s)
	m.Set(2*j, 2*i, s)
	m.Set(2*j+1, 2*i+1, -s)
	return m
}

// Squeezer returns the single-mode squeezer diag(e^-r, e^r) on mode i: it squeezes x for r > 0.
func Squeezer(n, i int, r float64) Matrix {
	checkModes(n, i)
	m := Identity(2 * n)
	m.Set(2*i, 2*i, math.Exp(-r))
	m.Set(2*i+1, 2*i+1, math.Exp(r))
	return m
}

// PhaseRotation returns the rotation of mode i by theta: (x, p) -> (x cos + p sin,
// -x sin + p cos), the action of a -> a e^{-i theta}.
func PhaseRotation(n, i int, theta float64) Matrix {
	checkModes(n, i)
	m := Identity(2 * n)
	c, s := math.Cos(theta), math.Sin(theta)
	m.Set(2*i, 2*i, c)
	m.Set(2*i, 2*i+1, s)
	m.Set(2*i+1, 2*i, -s)
	m.Set(2*i+1, 2*i+1, c)
	return m
}

// SymplecticDefect returns max |S Omega S^T - Omega|, zero for an exactly symplectic S.
func SymplecticDefect(s *Matrix) float64 {
	r, c := s.Dims()
	if r != c || r%2 != 0 {
		return math.Inf(1)
	}
	om := Omega(r / 2)
	var t, u Matrix
	t.Mul(s, &om)
	u.MulTrans(&t, s)
	return u.MaxAbsDiff(&om)
}
