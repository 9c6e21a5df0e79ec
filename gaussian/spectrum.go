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
// One mode: nu = sqrt(det V). Two or more modes: the Cholesky factor V = L L^T and the
// square-root method of FactorSpectrum (for two modes Serafini's invariants Delta = nu_+^2 +
// nu_-^2 and det V = (nu_+ nu_-)^2 (Serafini, Illuminati, De Siena, J. Phys. B 37, L21
// (2004)) evaluated from L without cancellation; a one-sided Jacobi SVD otherwise). A matrix
// given entry by entry fixes eigenvalues near 1 only to about eps |V| cond(V); states of
// large energy should be built as factors (FactorSpectrum), as the objective does.
// It does not allocate. The error wraps ErrUnphysical if v is not positive definite.
func SymplecticSpectrum(v *Matrix, out *Spectrum) error {
	return symplecticSpectrum(v, false, out)
}

func symplecticSpectrum(v *Matrix, forceJacobi bool, out *Spectrum) error {
	r, c := v.Dims()
	if r != c || r%2 != 0 || r == 0 {
		return fmt.Errorf("gaussian: covariance of shape %dx%d: %w", r, c, ErrUnphysical)
	}
	out.N = r / 2
	if !v.IsFinite() {
		return fmt.Errorf("gaussian: non-finite covariance entry: %w", ErrUnphysical)
	}
	if r == 2 {
		det := v.At(0, 0)*v.At(1, 1) - v.At(0, 1)*v.At(1, 0)
		if det <= 0 || v.At(0, 0) <= 0 {
			return fmt.Errorf("gaussian: single-mode determinant %g: %w", det, ErrUnphysical)
		}
		out.Nu[0] = math.Sqrt(det)
		return nil
	}
	l := *v
	if !cholesky(&l) {
		return fmt.Errorf("gaussian: covariance is not positive definite: %w", ErrUnphysical)
	}
	return triangularSpectrum(&l, forceJacobi, out)
}

// jacobiSpectrum is SymplecticSpectrum without the two-mode closed form (for cross-checks).
func jacobiSpectrum(v *Matrix, out *Spectrum) error { return symplecticSpectrum(v, true, out) }

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

// SymmetricEigenvalues writes the eigenvalues of the symmetric matrix s, ascending, into ev
// (len(ev) >= rows). s is overwritten. Cyclic Jacobi rotations: slower than QR for large
// matrices but accurate to high relative precision and allocation-free at these sizes
// (Golub, Van Loan, Matrix Computations, 4th ed., section 8.5).
func SymmetricEigenvalues(s *Matrix, ev []float64) {
	n := s.rows
	jacobi(s, nil)
	for i := 0; i < n; i++ {
		ev[i] = s.d[i*n+i]
	}
	sort.Float64s(ev[:n])
}

// jacobi diagonalises the symmetric matrix a in place by cyclic Jacobi rotations,
// a -> Q^T a Q, and if vecs is not nil accumulates vecs -> vecs Q (start it at the identity
// to obtain the eigenvectors as its columns). It stops when the off-diagonal mass is below
// 1e-34 of the diagonal's (at round-off) or after 60 sweeps. It does not allocate.
func jacobi(a *Matrix, vecs *Matrix) {
	n := a.rows
	d := &a.d
	for sweep := 0; sweep < 60; sweep++ {
		off, diag := 0.0, 0.0
		for i := 0; i < n; i++ {
			diag += d[i*n+i] * d[i*n+i]
			for j := i + 1; j < n; j++ {
				off += d[i*n+j] * d[i*n+j]
			}
		}
		if off <= 1e-34*diag || off == 0 {
			return
		}
		for p := 0; p < n-1; p++ {
			for q := p + 1; q < n; q++ {
				apq := d[p*n+q]
				if apq == 0 {
					continue
				}
				theta := (d[q*n+q] - d[p*n+p]) / (2 * apq)
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
				if vecs != nil {
					g := &vecs.d
					for k := 0; k < n; k++ {
						gkp, gkq := g[k*n+p], g[k*n+q]
						g[k*n+p] = c*gkp - sn*gkq
						g[k*n+q] = sn*gkp + c*gkq
					}
				}
			}
		}
	}
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
