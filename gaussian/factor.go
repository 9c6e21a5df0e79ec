package gaussian

import (
	"fmt"
	"math"
	"sort"
)

// Square-root (factor) form of covariance matrices.
//
// A covariance given entry by entry determines its small symplectic eigenvalues only to
// about eps * |V| * cond: for a two-mode squeezed vacuum of N photons the entries are of size
// N and any algorithm working on V loses about eps * N^2 in nu near 1. The objective instead
// keeps a factor F with V = F F^T (entries of size sqrt(N)), built exactly from the
// symplectic transforms that made the state, and computes the spectrum from F: an LQ
// decomposition F = R Q (Householder; backward stable in F) gives a square factor R, and
// the symplectic eigenvalues are the singular values of R^T Omega R (similar to Omega V).
// For one mode nu = |det R|; for two modes nu_+ nu_- = |det R| (the Pfaffian of R^T Omega R)
// and nu_+^2 + nu_-^2 = |R^T Omega R|_F^2 / 2 (Serafini's Delta), which fixes the small
// eigenvalue to relative precision eps; for three or more modes a one-sided Jacobi SVD of
// R^T Omega R (Hestenes, J. SIAM 6, 51 (1958)) gives absolute precision eps * N. This is
// the square-root idea of Kalman filtering (Bierman, Factorization Methods for Discrete
// Sequential Estimation, 1977) applied to symplectic spectra.

// lq overwrites the first d columns of the d x r matrix f (r >= d) with the lower-triangular
// R of f = R Q. Entries beyond the triangle are left as scratch.
func lq(f *Matrix) {
	d, r := f.rows, f.cols
	a := f.d[:d*r]
	for i := 0; i < d; i++ {
		// Householder reflection on columns i..r-1 zeroing row i right of the diagonal.
		norm := 0.0
		for j := i; j < r; j++ {
			norm = math.Hypot(norm, a[i*r+j])
		}
		if norm == 0 {
			continue
		}
		alpha := -norm
		if a[i*r+i] < 0 {
			alpha = norm
		}
		// v = row_i[i:] - alpha e_i, stored in place; beta = 2 / v.v
		a[i*r+i] -= alpha
		vv := 0.0
		for j := i; j < r; j++ {
			vv += a[i*r+j] * a[i*r+j]
		}
		if vv == 0 {
			a[i*r+i] = alpha
			continue
		}
		for k := i + 1; k < d; k++ {
			dot := 0.0
			for j := i; j < r; j++ {
				dot += a[k*r+j] * a[i*r+j]
			}
			s := 2 * dot / vv
			for j := i; j < r; j++ {
				a[k*r+j] -= s * a[i*r+j]
			}
		}
		a[i*r+i] = alpha
		for j := i + 1; j < r; j++ {
			a[i*r+j] = 0
		}
	}
}

// FactorSpectrum computes the symplectic eigenvalues of V = F F^T from a 2n x r factor F
// (r >= 2n). f is not modified. It does not allocate.
func FactorSpectrum(f *Matrix, out *Spectrum) error {
	d, r := f.rows, f.cols
	if d%2 != 0 || d == 0 || r < d {
		return fmt.Errorf("gaussian: factor of shape %dx%d: %w", d, r, ErrUnphysical)
	}
	if !f.IsFinite() {
		return fmt.Errorf("gaussian: non-finite factor entry: %w", ErrUnphysical)
	}
	w := *f
	lq(&w)
	return triangularSpectrum(&w, false, out)
}

// NearDegenerateGap is the relative gap (nu_+ - nu_-)^2 / (nu_+^2 + nu_-^2) below which the
// two-mode closed form hands over to the Jacobi SVD: the closed form computes that gap with
// an absolute error of a few eps, which its square root turns into a split of order
// sqrt(eps) between equal eigenvalues (e.g. those of every pure two-mode state).
const NearDegenerateGap = 1e-6

// triangularSpectrum computes the spectrum from the lower-triangular R held in the first d
// columns of w (row stride w.cols), V = R R^T. forceJacobi skips the two-mode closed form.
func triangularSpectrum(w *Matrix, forceJacobi bool, out *Spectrum) error {
	d, r := w.rows, w.cols
	n := d / 2
	out.N = n
	det := 1.0
	for i := 0; i < d; i++ {
		det *= w.d[i*r+i]
	}
	det = math.Abs(det)
	if !(det > 0) {
		return fmt.Errorf("gaussian: singular covariance (det R = %g): %w", det, ErrUnphysical)
	}
	if n == 1 {
		out.Nu[0] = det
		return nil
	}
	// m = R^T Omega R, d x d antisymmetric. R[i][j] = w.d[i*r+j] for j <= i, else 0.
	var m Matrix
	m.Reset(d, d)
	for i := 0; i < d; i++ {
		for j := i + 1; j < d; j++ {
			s := 0.0
			// R[a][i] is nonzero only for a >= i; R[a][j] only for a >= j > i.
			for k := j / 2; k < n; k++ {
				a, b := 2*k, 2*k+1
				var rai, rbi, raj, rbj float64
				if a >= i {
					rai = w.d[a*r+i]
				}
				rbi = w.d[b*r+i]
				if a >= j {
					raj = w.d[a*r+j]
				}
				if b >= j {
					rbj = w.d[b*r+j]
				}
				s += rai*rbj - rbi*raj
			}
			m.d[i*d+j] = s
			m.d[j*d+i] = -s
		}
	}
	if n == 2 && !forceJacobi {
		fro := 0.0
		for i := 0; i < d; i++ {
			for j := i + 1; j < d; j++ {
				fro += m.d[i*d+j] * m.d[i*d+j]
			}
		}
		// fro = |M|_F^2 / 2 = nu_+^2 + nu_-^2 (Serafini's Delta); det = nu_+ nu_- (the
		// Pfaffian of M).
		gap := fro - 2*det
		if gap > NearDegenerateGap*fro {
			hi := (math.Sqrt(fro+2*det) + math.Sqrt(gap)) / 2
			out.Nu[0] = det / hi
			out.Nu[1] = hi
			return nil
		}
	}
	var sv [MaxDim]float64
	singularValues(&m, sv[:d])
	for k := 0; k < n; k++ {
		out.Nu[k] = 0.5 * (sv[2*k] + sv[2*k+1])
	}
	return nil
}

// singularValues writes the singular values of the square matrix a, ascending, into sv by
// one-sided Jacobi rotations (Hestenes 1958); a is overwritten. It does not allocate.
func singularValues(a *Matrix, sv []float64) {
	n := a.rows
	d := &a.d
	for sweep := 0; sweep < 60; sweep++ {
		rotated := false
		for p := 0; p < n-1; p++ {
			for q := p + 1; q < n; q++ {
				alpha, beta, gamma := 0.0, 0.0, 0.0
				for k := 0; k < n; k++ {
					x, y := d[k*n+p], d[k*n+q]
					alpha += x * x
					beta += y * y
					gamma += x * y
				}
				if gamma == 0 || math.Abs(gamma) <= 1e-17*math.Sqrt(alpha*beta) {
					continue
				}
				rotated = true
				zeta := (beta - alpha) / (2 * gamma)
				t := 1 / (math.Abs(zeta) + math.Sqrt(1+zeta*zeta))
				if zeta < 0 {
					t = -t
				}
				c := 1 / math.Sqrt(1+t*t)
				s := c * t
				for k := 0; k < n; k++ {
					x, y := d[k*n+p], d[k*n+q]
					d[k*n+p] = c*x - s*y
					d[k*n+q] = s*x + c*y
				}
			}
		}
		if !rotated {
			break
		}
	}
	for j := 0; j < n; j++ {
		s := 0.0
		for k := 0; k < n; k++ {
			s = math.Hypot(s, d[k*n+j])
		}
		sv[j] = s
	}
	sort.Float64s(sv[:n])
}

// FactorEntropy is Entropy for V = F F^T given by a factor. allowance is how far below 1 a
// symplectic eigenvalue may fall before it is an error (use FactorAllowance).
func FactorEntropy(f *Matrix) (float64, error) {
	var sp Spectrum
	if err := FactorSpectrum(f, &sp); err != nil {
		return 0, err
	}
	return sp.Entropy(FactorAllowance(f))
}

// FactorAllowance is the round-off allowance for eigenvalues computed from the factor f:
// PurityTolerance scaled by the squared largest entry (the size of V's entries).
func FactorAllowance(f *Matrix) float64 {
	x := f.MaxAbs()
	return PurityTolerance * math.Max(1, x*x)
}

// SymmetricSqrtFactor writes into g (rows x rows) a factor with G G^T = s for a symmetric
// positive semidefinite s, via Jacobi eigenvectors: G = Q diag(sqrt(lambda)). Eigenvalues
// below -allowance are an error (s is not PSD); those in [-allowance, 0] count as 0.
// It does not allocate.
func SymmetricSqrtFactor(s *Matrix, g *Matrix, allowance float64) error {
	n := s.rows
	a := *s
	g.Reset(n, n)
	for i := 0; i < n; i++ {
		g.d[i*n+i] = 1
	}
	// Jacobi with accumulated rotations: a -> Q^T a Q, g -> g Q.
	ad, gd := &a.d, &g.d
	for sweep := 0; sweep < 60; sweep++ {
		off, diag := 0.0, 0.0
		for i := 0; i < n; i++ {
			diag += ad[i*n+i] * ad[i*n+i]
			for j := i + 1; j < n; j++ {
				off += ad[i*n+j] * ad[i*n+j]
			}
		}
		if off == 0 || off <= 1e-34*diag {
			break
		}
		for p := 0; p < n-1; p++ {
			for q := p + 1; q < n; q++ {
				apq := ad[p*n+q]
				if apq == 0 {
					continue
				}
				theta := (ad[q*n+q] - ad[p*n+p]) / (2 * apq)
				t := 1 / (math.Abs(theta) + math.Sqrt(theta*theta+1))
				if theta < 0 {
					t = -t
				}
				c := 1 / math.Sqrt(t*t+1)
				sn := t * c
				for k := 0; k < n; k++ {
					akp, akq := ad[k*n+p], ad[k*n+q]
					ad[k*n+p] = c*akp - sn*akq
					ad[k*n+q] = sn*akp + c*akq
				}
				for k := 0; k < n; k++ {
					apk, aqk := ad[p*n+k], ad[q*n+k]
					ad[p*n+k] = c*apk - sn*aqk
					ad[q*n+k] = sn*apk + c*aqk
				}
				ad[p*n+q], ad[q*n+p] = 0, 0
				for k := 0; k < n; k++ {
					gkp, gkq := gd[k*n+p], gd[k*n+q]
					gd[k*n+p] = c*gkp - sn*gkq
					gd[k*n+q] = sn*gkp + c*gkq
				}
			}
		}
	}
	for j := 0; j < n; j++ {
		lam := ad[j*n+j]
		if lam < -allowance || math.IsNaN(lam) {
			return fmt.Errorf("gaussian: matrix has eigenvalue %g < 0: not positive semidefinite", lam)
		}
		sq := math.Sqrt(math.Max(lam, 0))
		for k := 0; k < n; k++ {
			gd[k*n+j] *= sq
		}
	}
	return nil
}
