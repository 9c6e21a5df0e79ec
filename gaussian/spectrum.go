package gaussian

import (
	"errors"
	"fmt"
	"math"
	"sort"
)

// PurityTolerance bounds how far below 1 a computed symplectic eigenvalue may fall, relative
// to the scale max(1, max|V_ij|) of the matrix it came from, before the state is declared
// unphysical. Round-off in a symplectic spectrum is of order eps * max|V_ij| times a modest
// growth factor; 1e-9 leaves a margin of about 10^6 over eps for the states used here
// (common practice: a scaled round-off tolerance, not a published value).
const PurityTolerance = 1e-9

// ErrUnphysical is returned (wrapped) when a matrix is not a physical covariance matrix.
var ErrUnphysical = errors.New("unphysical covariance matrix")

// G is the entropy of a thermal state with mean photon number x >= 0, in bits:
// g(x) = (x+1) log2(x+1) - x log2 x, evaluated as (log1p(x) + x log1p(1/x)) / ln 2, which has
// no cancellation for large x and tends to 0 continuously as x -> 0.
func G(x float64) float64 {
	if x <= 0 {
		return 0
	}
	return (math.Log1p(x) + x*math.Log1p(1/x)) / math.Ln2
}

// Spectrum holds the symplectic eigenvalues of an n-mode state, ascending.
type Spectrum struct {
	N  int
	Nu [MaxModes]float64
}

// SymplecticSpectrum computes the symplectic eigenvalues of the 2n x 2n covariance v.
// One- and two-mode states use closed forms (sqrt(det V); and the Delta-determinant formula
// of Serafini, Illuminati, De Siena, J. Phys. B 37, L21 (2004)); larger states use the
// eigenvalues of -(L^T Omega L)^2, L the Cholesky factor of V (this matrix is similar to
// -(Omega V)^2, whose eigenvalues are nu_k^2 twice each), found by cyclic Jacobi rotations.
// It does not allocate. The error wraps ErrUnphysical if v is not positive definite.
func SymplecticSpectrum(v *Matrix, out *Spectrum) error {
	r, c := v.Dims()
	if r != c || r%2 != 0 || r == 0 {
		return fmt.Errorf("gaussian: covariance of shape %dx%d: %w", r, c, ErrUnphysical)
	}
	n := r / 2
	out.N = n
	if !v.IsFinite() {
		return fmt.Errorf("gaussian: non-finite covariance entry: %w", ErrUnphysical)
	}
	switch n {
	case 1:
		det := v.At(0, 0)*v.At(1, 1) - v.At(0, 1)*v.At(1, 0)
		if det <= 0 || v.At(0, 0) <= 0 {
			return fmt.Errorf("gaussian: single-mode determinant %g: %w", det, ErrUnphysical)
		}
		out.Nu[0] = math.Sqrt(det)
		return nil
	case 2:
		return twoModeSpectrum(v, out)
	}
	return jacobiSpectrum(v, out)
}

func det2(a, b, c, d float64) float64 { return a*d - b*c }

func twoModeSpectrum(v *Matrix, out *Spectrum) error {
	dA := det2(v.At(0, 0), v.At(0, 1), v.At(1, 0), v.At(1, 1))
	dB := det2(v.At(2, 2), v.At(2, 3), v.At(3, 2), v.At(3, 3))
	dC := det2(v.At(0, 2), v.At(0, 3), v.At(1, 2), v.At(1, 3))
	delta := dA + dB + 2*dC
	dV := det4(v)
	if !(dV > 0) || !(dA > 0) || v.At(0, 0) <= 0 {
		return fmt.Errorf("gaussian: two-mode determinant %g: %w", dV, ErrUnphysical)
	}
	disc := delta*delta - 4*dV
	if disc < 0 {
		// Equal eigenvalues: the discriminant vanishes and round-off may make it negative.
		disc = 0
	}
	plus := (delta + math.Sqrt(disc)) / 2
	if !(plus > 0) {
		return fmt.Errorf("gaussian: two-mode invariant Delta %g: %w", delta, ErrUnphysical)
	}
	minus := dV / plus // nu_-^2 nu_+^2 = det V; no cancellation near pure states
	out.Nu[0] = math.Sqrt(minus)
	out.Nu[1] = math.Sqrt(plus)
	return nil
}

// det4 is the determinant of a 4x4 matrix by 2x2 minors (Laplace expansion on row pairs).
func det4(v *Matrix) float64 {
	a := func(i, j int) float64 { return v.At(i, j) }
	s0 := a(0, 0)*a(1, 1) - a(1, 0)*a(0, 1)
	s1 := a(0, 0)*a(1, 2) - a(1, 0)*a(0, 2)
	s2 := a(0, 0)*a(1, 3) - a(1, 0)*a(0, 3)
	s3 := a(0, 1)*a(1, 2) - a(1, 1)*a(0, 2)
	s4 := a(0, 1)*a(1, 3) - a(1, 1)*a(0, 3)
	s5 := a(0, 2)*a(1, 3) - a(1, 2)*a(0, 3)
	c5 := a(2, 2)*a(3, 3) - a(3, 2)*a(2, 3)
	c4 := a(2, 1)*a(3, 3) - a(3, 1)*a(2, 3)
	c3 := a(2, 1)*a(3, 2) - a(3, 1)*a(2, 2)
	c2 := a(2, 0)*a(3, 3) - a(3, 0)*a(2, 3)
	c1 := a(2, 0)*a(3, 2) - a(3, 0)*a(2, 2)
	c0 := a(2, 0)*a(3, 1) - a(3, 0)*a(2, 1)
	return s0*c5 - s1*c4 + s2*c3 + s3*c2 - s4*c1 + s5*c0
}

// cholesky overwrites the lower triangle of a (n x n) with L such that a = L L^T and zeroes
// the upper triangle. It reports false if a is not numerically positive definite.
func cholesky(a *Matrix) bool {
	n := a.rows
	for j := 0; j < n; j++ {
		s := a.d[j*n+j]
		for k := 0; k < j; k++ {
			s -= a.d[j*n+k] * a.d[j*n+k]
		}
		if !(s > 0) {
			return false
		}
		ljj := math.Sqrt(s)
		a.d[j*n+j] = ljj
		for i := j + 1; i < n; i++ {
			t := a.d[i*n+j]
			for k := 0; k < j; k++ {
				t -= a.d[i*n+k] * a.d[j*n+k]
			}
			a.d[i*n+j] = t / ljj
		}
		for i := 0; i < j; i++ {
			a.d[i*n+j] = 0
		}
	}
	return true
}

func jacobiSpectrum(v *Matrix, out *Spectrum) error {
	n := v.rows / 2
	dim := v.rows
	l := *v
	if !cholesky(&l) {
		return fmt.Errorf("gaussian: covariance is not positive definite: %w", ErrUnphysical)
	}
	// a = L^T Omega L, antisymmetric; b = a a^T = -a a, symmetric with eigenvalues nu_k^2.
	var a, b Matrix
	a.Reset(dim, dim)
	for i := 0; i < dim; i++ {
		for j := 0; j < dim; j++ {
			s := 0.0
			for k := 0; k < n; k++ {
				// (Omega L)_{2k, j} = L_{2k+1, j}; (Omega L)_{2k+1, j} = -L_{2k, j}
				s += l.d[(2*k)*dim+i]*l.d[(2*k+1)*dim+j] - l.d[(2*k+1)*dim+i]*l.d[(2*k)*dim+j]
			}
			a.d[i*dim+j] = s
		}
	}
	b.MulTrans(&a, &a)
	b.Symmetrize()
	var ev [MaxDim]float64
	SymmetricEigenvalues(&b, ev[:dim])
	for k := 0; k < n; k++ {
		x := 0.5 * (ev[2*k] + ev[2*k+1])
		if !(x > 0) {
			return fmt.Errorf("gaussian: symplectic eigenvalue squared %g: %w", x, ErrUnphysical)
		}
		out.Nu[k] = math.Sqrt(x)
	}
	return nil
}

// SymmetricEigenvalues writes the eigenvalues of the symmetric matrix s, ascending, into ev
// (len(ev) >= rows). s is overwritten. Cyclic Jacobi rotations: slower than QR for large
// matrices but accurate to high relative precision and allocation-free at these sizes
// (Golub, Van Loan, Matrix Computations, 4th ed., section 8.5).
func SymmetricEigenvalues(s *Matrix, ev []float64) {
	n := s.rows
	d := &s.d
	for sweep := 0; sweep < 60; sweep++ {
		off, diag := 0.0, 0.0
		for i := 0; i < n; i++ {
			diag += d[i*n+i] * d[i*n+i]
			for j := i + 1; j < n; j++ {
				off += d[i*n+j] * d[i*n+j]
			}
		}
		if off <= 1e-34*diag || off == 0 {
			break
		}
		for p := 0; p < n-1; p++ {
			for q := p + 1; q < n; q++ {
				apq := d[p*n+q]
				if apq == 0 {
					continue
				}
				app, aqq := d[p*n+p], d[q*n+q]
				theta := (aqq - app) / (2 * apq)
				t := 1 / (math.Abs(theta) + math.Sqrt(theta*theta+1))
				if theta < 0 {
					t = -t
				}
				c := 1 / math.Sqrt(t*t+1)
				sn := t * c
				for k := 0; k < n; k++ {
					akp, akq := d[k*n+p], d[k*n+q]
					d[k*n+p] = c*akp - sn*akq
					d[k*n+q] = sn*akp + c*akq
				}
				for k := 0; k < n; k++ {
					apk, aqk := d[p*n+k], d[q*n+k]
					d[p*n+k] = c*apk - sn*aqk
					d[q*n+k] = sn*apk + c*aqk
				}
				d[p*n+q], d[q*n+p] = 0, 0
			}
		}
	}
	for i := 0; i < n; i++ {
		ev[i] = d[i*n+i]
	}
	sort.Float64s(ev[:n])
}

// Entropy returns the von Neumann entropy of the Gaussian state with covariance v, in bits.
// Symplectic eigenvalues below 1 by no more than PurityTolerance (scaled by the matrix size
// of v's entries) are round-off and count as pure; a larger deficit is an error wrapping
// ErrUnphysical. It does not allocate on success.
func Entropy(v *Matrix) (float64, error) {
	var sp Spectrum
	if err := SymplecticSpectrum(v, &sp); err != nil {
		return 0, err
	}
	return sp.Entropy(purityAllowance(v))
}

func purityAllowance(v *Matrix) float64 {
	return PurityTolerance * math.Max(1, v.MaxAbs())
}

// Entropy sums g((nu-1)/2) over the spectrum; allowance is how far below 1 an eigenvalue may
// fall before it is an error.
func (sp *Spectrum) Entropy(allowance float64) (float64, error) {
	s := 0.0
	for k := 0; k < sp.N; k++ {
		nu := sp.Nu[k]
		if nu < 1-allowance || math.IsNaN(nu) {
			return 0, fmt.Errorf("gaussian: symplectic eigenvalue %.12g below 1: %w", nu, ErrUnphysical)
		}
		s += G((nu - 1) / 2)
	}
	return s, nil
}
