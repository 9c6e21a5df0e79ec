package gaussian

import (
	"fmt"
	"math"
)

// Channel is a Gaussian channel V -> X V X^T + Y from In modes to Out modes. X is
// 2 Out x 2 In and Y is 2 Out x 2 Out, both in xpxp order (see the package doc).
type Channel struct {
	In, Out int
	X, Y    Matrix
}

// NewChannel checks shapes and returns the channel (X, Y).
func NewChannel(x, y Matrix) (Channel, error) {
	xr, xc := x.Dims()
	yr, yc := y.Dims()
	if xr%2 != 0 || xc%2 != 0 || xr == 0 || xc == 0 {
		return Channel{}, fmt.Errorf("map X is %dx%d: want an even number of rows and columns", xr, xc)
	}
	if yr != xr || yc != xr {
		return Channel{}, fmt.Errorf("map Y is %dx%d: want %dx%d to match X's %d rows", yr, yc, xr, xr, xr)
	}
	if !x.IsFinite() || !y.IsFinite() {
		return Channel{}, fmt.Errorf("map X or Y has a non-finite entry")
	}
	for i := 0; i < yr; i++ {
		for j := 0; j < i; j++ {
			if math.Abs(y.At(i, j)-y.At(j, i)) > 1e-12*math.Max(1, y.MaxAbs()) {
				return Channel{}, fmt.Errorf("map Y is not symmetric at (%d,%d)", i, j)
			}
		}
	}
	return Channel{In: xc / 2, Out: xr / 2, X: x, Y: y}, nil
}

// Apply sets out = X v X^T + Y.
func (c *Channel) Apply(v, out *Matrix) {
	var tmp Matrix
	out.Congruence(&c.X, v, &tmp)
	out.AddScaled(1, &c.Y)
	out.Symmetrize()
}

// ApplyToTail sets out = (I (+) X) v (I (+) X)^T + (0 (+) Y): the channel acts on the last
// c.In modes of v and leaves the first `keep` modes alone. v must have keep + c.In modes.
// It does not allocate.
func (c *Channel) ApplyToTail(v *Matrix, keep int, out *Matrix) {
	k2 := 2 * keep
	in2, out2 := 2*c.In, 2*c.Out
	if v.rows != k2+in2 {
		panic(fmt.Sprintf("gaussian: ApplyToTail on %d rows, want %d", v.rows, k2+in2))
	}
	n := k2 + out2
	out.rows, out.cols = n, n
	vd, od, xd, yd := &v.d, &out.d, &c.X.d, &c.Y.d
	vn := v.rows
	// Kept block unchanged.
	for i := 0; i < k2; i++ {
		for j := 0; j < k2; j++ {
			od[i*n+j] = vd[i*vn+j]
		}
	}
	// Cross block: rows of kept modes times X^T.
	for i := 0; i < k2; i++ {
		for a := 0; a < out2; a++ {
			s := 0.0
			for b := 0; b < in2; b++ {
				s += vd[i*vn+k2+b] * xd[a*in2+b]
			}
			od[i*n+k2+a] = s
			od[(k2+a)*n+i] = s
		}
	}
	// Environment block: X V_ee X^T + Y.
	var t [MaxDim * MaxDim]float64
	for a := 0; a < out2; a++ {
		for b := 0; b < in2; b++ {
			s := 0.0
			for l := 0; l < in2; l++ {
				s += xd[a*in2+l] * vd[(k2+l)*vn+k2+b]
			}
			t[a*in2+b] = s
		}
	}
	for a := 0; a < out2; a++ {
		for b := a; b < out2; b++ {
			s := yd[a*out2+b]
			for l := 0; l < in2; l++ {
				s += t[a*in2+l] * xd[b*in2+l]
			}
			od[(k2+a)*n+k2+b] = s
			od[(k2+b)*n+k2+a] = s
		}
	}
}

// CPMatrix returns the 4 Out x 4 Out real symmetric form [[Y, -K], [K, Y]] of the Hermitian
// matrix Y + i K, K = Omega_out - X Omega_in X^T. The channel is completely positive iff
// this matrix is positive semidefinite (Holevo, Werner, Phys. Rev. A 63, 032312 (2001); the
// real form of a Hermitian matrix has the same eigenvalues, each twice).
func (c *Channel) CPMatrix() (Matrix, error) {
	if 4*c.Out > MaxDim {
		return Matrix{}, fmt.Errorf("complete-positivity test supports at most %d output modes", MaxDim/4)
	}
	oi, oo := Omega(c.In), Omega(c.Out)
	var t, k Matrix
	t.Mul(&c.X, &oi)
	k.MulTrans(&t, &c.X)
	k.Scale(-1)
	k.AddScaled(1, &oo)
	m2 := 2 * c.Out
	h := NewMatrix(2*m2, 2*m2)
	for i := 0; i < m2; i++ {
		for j := 0; j < m2; j++ {
			y, kk := c.Y.At(i, j), k.At(i, j)
			h.Set(i, j, y)
			h.Set(m2+i, m2+j, y)
			h.Set(i, m2+j, -kk)
			h.Set(m2+i, j, kk)
		}
	}
	h.Symmetrize()
	return h, nil
}

// CPMargin returns the smallest eigenvalue of Y + i Omega_out - i X Omega_in X^T: the channel
// is completely positive iff it is >= 0 (up to round-off).
func (c *Channel) CPMargin() (float64, error) {
	h, err := c.CPMatrix()
	if err != nil {
		return math.Inf(-1), err
	}
	var ev [MaxDim]float64
	n, _ := h.Dims()
	SymmetricEigenvalues(&h, ev[:n])
	return ev[0], nil
}

// Compose returns the channel "first c, then d": (X_d X_c, X_d Y_c X_d^T + Y_d).
func Compose(c, d *Channel) (Channel, error) {
	if d.In != c.Out {
		return Channel{}, fmt.Errorf("compose: %d output modes into %d input modes", c.Out, d.In)
	}
	var x, y, tmp Matrix
	x.Mul(&d.X, &c.X)
	y.Congruence(&d.X, &c.Y, &tmp)
	y.AddScaled(1, &d.Y)
	y.Symmetrize()
	return Channel{In: c.In, Out: d.Out, X: x, Y: y}, nil
}

// ChannelFromSymplectic returns the channel of a Gaussian unitary s on In + k modes whose
// last k input modes are ancillas with covariance anc (2k x 2k), keeping the output modes
// listed in keep (in that order): X = P S_[:, :In], Y = P S_[:, In:] anc S_[:, In:]^T P^T.
func ChannelFromSymplectic(s *Matrix, in int, anc *Matrix, keep []int) Channel {
	n := s.rows / 2
	k := n - in
	if anc.rows != 2*k {
		panic(fmt.Sprintf("gaussian: %d ancilla rows for %d ancilla modes", anc.rows, k))
	}
	m := len(keep)
	var x, sa, y, tmp Matrix
	x.Reset(2*m, 2*in)
	sa.Reset(2*m, 2*k)
	for a, mode := range keep {
		for q := 0; q < 2; q++ {
			row := 2*mode + q
			for j := 0; j < 2*in; j++ {
				x.Set(2*a+q, j, s.At(row, j))
			}
			for j := 0; j < 2*k; j++ {
				sa.Set(2*a+q, j, s.At(row, 2*in+j))
			}
		}
	}
	if k > 0 {
		y.Congruence(&sa, anc, &tmp)
		y.Symmetrize()
	} else {
		y.Reset(2*m, 2*m)
	}
	return Channel{In: in, Out: m, X: x, Y: y}
}
