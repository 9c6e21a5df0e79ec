package squash

import "math"

// In-place left multiplication of a 2n x 2n symplectic (row-major, xpxp) by elementary
// Gaussian unitaries on one or two modes. Each touches only the rows of its modes, so a map
// family builds its symplectic in O(n) work per element and without allocating. The
// conventions are those of package gaussian (beam splitter, two-mode squeezer, squeezer and
// rotation matrices as stated there); squash/family_test.go checks each against the
// full-matrix constructors in gaussian.

// lmulBeamSplitter applies the beam splitter of transmissivity t on modes (i, j).
func lmulBeamSplitter(s []float64, dim, i, j int, t float64) {
	c, d := math.Sqrt(t), math.Sqrt(1-t)
	for q := 0; q < 2; q++ {
		ri, rj := s[(2*i+q)*dim:(2*i+q+1)*dim], s[(2*j+q)*dim:(2*j+q+1)*dim]
		for k := 0; k < dim; k++ {
			a, b := ri[k], rj[k]
			ri[k] = c*a + d*b
			rj[k] = -d*a + c*b
		}
	}
}

// lmulTwoModeSqueezing applies the two-mode squeezer with parameter r between i and j.
func lmulTwoModeSqueezing(s []float64, dim, i, j int, r float64) {
	c, sh := math.Cosh(r), math.Sinh(r)
	xi, pi := s[2*i*dim:(2*i+1)*dim], s[(2*i+1)*dim:(2*i+2)*dim]
	xj, pj := s[2*j*dim:(2*j+1)*dim], s[(2*j+1)*dim:(2*j+2)*dim]
	for k := 0; k < dim; k++ {
		a, b := xi[k], xj[k]
		xi[k] = c*a + sh*b
		xj[k] = sh*a + c*b
		a, b = pi[k], pj[k]
		pi[k] = c*a - sh*b
		pj[k] = -sh*a + c*b
	}
}

// lmulPhase applies the rotation of mode i by theta.
func lmulPhase(s []float64, dim, i int, theta float64) {
	c, sn := math.Cos(theta), math.Sin(theta)
	x, p := s[2*i*dim:(2*i+1)*dim], s[(2*i+1)*dim:(2*i+2)*dim]
	for k := 0; k < dim; k++ {
		a, b := x[k], p[k]
		x[k] = c*a + sn*b
		p[k] = -sn*a + c*b
	}
}

// lmulSqueezer applies diag(e^-r, e^r) to mode i.
func lmulSqueezer(s []float64, dim, i int, r float64) {
	e := math.Exp(r)
	x, p := s[2*i*dim:(2*i+1)*dim], s[(2*i+1)*dim:(2*i+2)*dim]
	for k := 0; k < dim; k++ {
		x[k] /= e
		p[k] *= e
	}
}

// lmulPassive applies a passive (number-preserving) unitary on the listed modes,
// parameterised by len(modes)^2 reals: for each pair (a < b) in order, a phase theta on
// modes[a] followed by a beam splitter of transmissivity cos^2(phi) on (modes[a], modes[b]);
// then one phase per mode. All-zero parameters give the identity. This is the triangular
// decomposition of Reck, Zeilinger, Bernstein, Bertani, PRL 73, 58 (1994), which reaches
// every unitary on the modes. It returns the parameters it did not use.
func lmulPassive(s []float64, dim int, modes []int, p []float64) []float64 {
	for a := 0; a < len(modes); a++ {
		for b := a + 1; b < len(modes); b++ {
			if p[0] != 0 {
				lmulPhase(s, dim, modes[a], p[0])
			}
			if p[1] != 0 {
				c := math.Cos(p[1])
				lmulBeamSplitter(s, dim, modes[a], modes[b], c*c)
			}
			p = p[2:]
		}
	}
	for _, m := range modes {
		if p[0] != 0 {
			lmulPhase(s, dim, m, p[0])
		}
		p = p[1:]
	}
	return p
}

// passiveParams is the parameter count of lmulPassive on n modes.
func passiveParams(n int) int { return n * n }

// boundedSqueezing maps a real parameter onto a squeezing parameter in (-MaxSqueezing,
// MaxSqueezing) smoothly (identity near 0).
func boundedSqueezing(x float64) float64 { return MaxSqueezing * math.Tanh(x/MaxSqueezing) }

// occupation maps a real parameter onto a thermal photon number in [0, MaxAncillaPhotons).
func occupation(x float64) float64 {
	return MaxAncillaPhotons * math.Tanh(x*x/MaxAncillaPhotons)
}

// transmissivity maps a real parameter onto [0, 1].
func transmissivity(x float64) float64 {
	s := math.Sin(x)
	return s * s
}

// MaxSqueezing bounds every squeezing parameter a map family can produce. A squeezer of
// parameter r puts entries of size e^{2r} in covariance matrices; with r <= 3 (e^6 ~ 403)
// float64 round-off in the objective stays below ~1e-11 bits, far from the differences
// the search resolves. This is the guard against optimisers that win by round-off
// (physics notes: "Numerical trap"); the extended-precision re-check backs it up.
const MaxSqueezing = 3.0

// MaxAncillaPhotons bounds the thermal photon number of an ancilla.
const MaxAncillaPhotons = 100.0
