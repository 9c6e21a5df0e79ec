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
// eigenvalue to relative precision eps; for three or more modes (and nearly degenerate
// pairs) SkewSpectrum's Householder reduction of R^T Omega R to bidiagonal form and QR
// sweeps give absolute precision eps * N, as a one-sided Jacobi SVD of R^T Omega R
// (Hestenes, J. SIAM 6, 51 (1958)) does, which remains as fallback and cross-check. This is
// the square-root idea of Kalman filtering (Bierman, Factorization Methods for Discrete
// Sequential Estimation, 1977) applied to symplectic spectra. Phase-covariant states in real
// form reduce to an n x n symmetric problem (CovariantSpectrum).

// lq overwrites the first d columns of the d x r matrix f (r >= d) with the lower-triangular
// R of f = R Q (see LQ).
func lq(f *Matrix) {
	LQ(f.d[:f.rows*f.cols], f.rows, f.cols)
}

// LQ is lq on a row-major d x r slice (r >= d): it overwrites the first d columns of a with
// the lower-triangular R of a = R Q (Householder reflections from the right, backward
// stable) and zeroes the rest of each row. It does not allocate.
func LQ(a []float64, d, r int) {
	a = a[:d*r]
	for i := 0; i < d; i++ {
		row := a[i*r+i : i*r+r]
		norm := rowNorm(row)
		if norm == 0 {
			continue
		}
		x0 := row[0]
		// v = row_i[i:] - alpha e_i, stored in place; 2 / v.v = 1 / (norm (norm + |x0|)).
		v0, alpha, beta := householder(x0, norm)
		row[0] = v0
		for k := i + 1; k < d; k++ {
			rk := a[k*r+i : k*r+r]
			rk = rk[:len(row)]
			dot := 0.0
			for j, v := range row {
				dot += rk[j] * v
			}
			s := beta * dot
			for j, v := range row {
				rk[j] -= s * v
			}
		}
		row[0] = alpha
		clear(row[1:])
	}
}

// rowNorm is the Euclidean norm of x, by a plain sum of squares unless that over- or
// underflows (then by math.Hypot).
func rowNorm(x []float64) float64 {
	s := 0.0
	for _, v := range x {
		s += v * v
	}
	if s > 0x1p-900 && s < 0x1p900 {
		return math.Sqrt(s)
	}
	h := 0.0
	for _, v := range x {
		h = math.Hypot(h, v)
	}
	return h
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
	if forceJacobi {
		skewJacobi(m.d[:d*d], d, out.Nu[:n])
		return nil
	}
	SkewFactorSpectrum(m.d[:d*d], d, det, out)
	return nil
}

// SkewFactorSpectrum writes into out the symplectic eigenvalues of V = R R^T given
// m = R^T Omega R (d x d, row-major; overwritten) and det = |det R| > 0: nu = det for one
// mode; for two modes the closed form nu_+ nu_- = det, nu_+^2 + nu_-^2 = |m|_F^2 / 2 (relative
// precision eps) unless the two are nearly degenerate (NearDegenerateGap); SkewSpectrum
// otherwise. It does not allocate.
func SkewFactorSpectrum(m []float64, d int, det float64, out *Spectrum) {
	n := d / 2
	out.N = n
	if n == 1 {
		out.Nu[0] = det
		return
	}
	if n == 2 {
		fro := 0.0
		for i := 0; i < d; i++ {
			for j := i + 1; j < d; j++ {
				fro += m[i*d+j] * m[i*d+j]
			}
		}
		// fro = |M|_F^2 / 2 = nu_+^2 + nu_-^2 (Serafini's Delta); det = nu_+ nu_- (the
		// Pfaffian of M).
		gap := fro - 2*det
		if gap > NearDegenerateGap*fro {
			hi := (math.Sqrt(fro+2*det) + math.Sqrt(gap)) / 2
			out.Nu[0] = det / hi
			out.Nu[1] = hi
			return
		}
	}
	SkewSpectrum(m, d, out.Nu[:n])
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
				// Columns orthogonal to round-off (n ulps) are left alone; a threshold below
				// that is never met and would run all 60 sweeps.
				if gamma == 0 || math.Abs(gamma) <= float64(n)*0x1p-53*math.Sqrt(alpha*beta) {
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
	jacobi(&a, g)
	ad, gd := &a.d, &g.d
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

// SkewSpectrum writes into nu[:d/2], ascending, the singular values of the antisymmetric
// d x d matrix a (row-major; overwritten), each pair counted once: for a = R^T Omega R these
// are the symplectic eigenvalues of R R^T. It does not allocate.
//
// Householder similarity transforms reduce a to skew-symmetric tridiagonal form (about
// 2 d^3 / 3 flops; backward stable, so the error is of order eps |a|, as for a Jacobi SVD of
// a); an odd-even permutation turns that into an n x n bidiagonal matrix (n = d/2) with the
// same singular values (Ward, Gray, ACM TOMS 4, 278 (1978)), which implicit-shift
// Golub-Kahan QR sweeps with a closed form for 2 x 2 blocks finish (Golub, Van Loan, Matrix
// Computations, 4th ed., section 8.6; LAPACK dlas2). Should the sweeps not converge, the
// one-sided Jacobi SVD of a takes over.
func SkewSpectrum(a []float64, d int, nu []float64) {
	n := d / 2
	var e [MaxDim]float64
	if !skewTridiagonal(a[:d*d], d, e[:d-1]) {
		skewJacobi(a, d, nu)
		return
	}
	// Odd-even permutation: the tridiagonal matrix with super-diagonal e_0 .. e_{d-2} has
	// the singular values of the upper bidiagonal matrix with diagonal e_0, e_2, ... and
	// super-diagonal e_1, e_3, ... (signs do not matter).
	var q, f [MaxModes]float64
	for k := 0; k < n; k++ {
		q[k] = math.Abs(e[2*k])
		if k < n-1 {
			f[k] = math.Abs(e[2*k+1])
		}
	}
	if !bidiagonalSV(q[:n], f[:n]) {
		// a was overwritten: rebuild the tridiagonal matrix (same singular values).
		clear(a[:d*d])
		for k := 0; k < d-1; k++ {
			a[k*d+k+1] = e[k]
			a[(k+1)*d+k] = -e[k]
		}
		skewJacobi(a, d, nu)
		return
	}
	copy(nu[:n], q[:n])
	insertionSort(nu[:n])
}

// skewJacobi is SkewSpectrum by the one-sided Jacobi SVD.
func skewJacobi(a []float64, d int, nu []float64) {
	var m Matrix
	m.Reset(d, d)
	copy(m.d[:d*d], a[:d*d])
	var sv [MaxDim]float64
	singularValues(&m, sv[:d])
	for k := 0; k < d/2; k++ {
		nu[k] = 0.5 * (sv[2*k] + sv[2*k+1])
	}
}

func insertionSort(x []float64) {
	for i := 1; i < len(x); i++ {
		v := x[i]
		j := i - 1
		for ; j >= 0 && x[j] > v; j-- {
			x[j+1] = x[j]
		}
		x[j+1] = v
	}
}

// skewTridiagonal reduces the antisymmetric d x d matrix a (overwritten) to tridiagonal
// form Q^T a Q and writes its super-diagonal into e[:d-1]. It reports false for non-finite
// input.
func skewTridiagonal(a []float64, d int, e []float64) bool {
	var v, w [MaxDim]float64
	for k := 0; k < d-2; k++ {
		// Reflect x = a[k+1:, k] onto alpha e_1 with H = I - beta v v^T.
		m := d - k - 1
		s := 0.0
		for i := 0; i < m; i++ {
			x := a[(k+1+i)*d+k]
			v[i] = x
			s += x * x
		}
		if !(s < math.Inf(1)) {
			return false
		}
		if s == 0 {
			e[k] = 0
			continue
		}
		var alpha, beta float64
		v[0], alpha, beta = householder(v[0], math.Sqrt(s))
		// Trailing block b = a[k+1:, k+1:] <- H b H = b + v w^T - w v^T, w = beta b v
		// (v^T b v = 0 for antisymmetric b).
		for i := 0; i < m; i++ {
			row := a[(k+1+i)*d+k+1 : (k+1+i)*d+d]
			t := 0.0
			for j, x := range row {
				t += x * v[j]
			}
			w[i] = beta * t
		}
		for i := 0; i < m; i++ {
			row := a[(k+1+i)*d+k+1 : (k+1+i)*d+d]
			vi, wi := v[i], w[i]
			for j := range row {
				row[j] += vi*w[j] - wi*v[j]
			}
		}
		// The reflected column is alpha e_1: a[k+1][k] = alpha, a[k][k+1] = -alpha.
		e[k] = -alpha
	}
	e[d-2] = a[(d-2)*d+d-1]
	return !math.IsNaN(e[d-2]) && !math.IsInf(e[d-2], 0)
}

// bidiagonalSV overwrites q with the singular values (unordered, >= 0) of the upper
// bidiagonal matrix with diagonal q and super-diagonal f[:len(q)-1] (f is destroyed), by
// implicit-shift Golub-Kahan QR sweeps with deflation and a closed form for 2 x 2 blocks.
// The error is of order eps times the matrix norm. It reports false if it did not converge
// or met a zero diagonal entry (the caller falls back to Jacobi).
func bidiagonalSV(q, f []float64) bool {
	const eps = 0x1p-52
	n := len(q)
	hi := n - 1
	for iter := 0; hi > 0; iter++ {
		if iter > 40*n {
			return false
		}
		// Deflate negligible super-diagonal entries at the bottom.
		if math.Abs(f[hi-1]) <= eps*(math.Abs(q[hi-1])+math.Abs(q[hi])) {
			f[hi-1] = 0
			hi--
			continue
		}
		lo := hi - 1
		for lo > 0 && math.Abs(f[lo-1]) > eps*(math.Abs(q[lo-1])+math.Abs(q[lo])) {
			lo--
		}
		if lo > 0 {
			f[lo-1] = 0
		}
		if hi-lo == 1 {
			smin, smax := sv2x2(q[lo], f[lo], q[hi])
			q[lo], q[hi], f[lo] = smax, smin, 0
			hi -= 2
			continue
		}
		for i := lo; i <= hi; i++ {
			if q[i] == 0 {
				return false
			}
		}
		// Shift: the smaller singular value of the trailing 2 x 2 block, squared
		// (LAPACK dbdsqr's choice).
		mu, _ := sv2x2(q[hi-1], f[hi-1], q[hi])
		mu *= mu
		y := (q[lo] - mu/q[lo]) * q[lo] // q_lo^2 - mu without overflow of the square
		z := q[lo] * f[lo]
		for k := lo; k < hi; k++ {
			// Right rotation on columns k, k+1 zeroing z against y.
			c, s, r := givens(y, z)
			if k > lo {
				f[k-1] = r
			}
			y = c*q[k] + s*f[k]
			f[k] = -s*q[k] + c*f[k]
			z = s * q[k+1]
			q[k+1] *= c
			// Left rotation on rows k, k+1 zeroing the bulge z below the diagonal.
			c, s, r = givens(y, z)
			q[k] = r
			t := c*f[k] + s*q[k+1]
			q[k+1] = -s*f[k] + c*q[k+1]
			f[k] = t
			if k < hi-1 {
				y = f[k]
				z = s * f[k+1]
				f[k+1] *= c
			}
		}
	}
	for i := range q {
		q[i] = math.Abs(q[i])
	}
	return true
}

// givens returns c, s, r with [c s; -s c] [y; z] = [r; 0], r = hypot(y, z).
func givens(y, z float64) (c, s, r float64) {
	if z == 0 {
		return 1, 0, y
	}
	if y == 0 {
		return 0, 1, z
	}
	h := y*y + z*z
	if h > 0x1p-900 && h < 0x1p900 {
		r = math.Sqrt(h)
	} else {
		r = math.Hypot(y, z)
	}
	inv := 1 / r
	return y * inv, z * inv, r
}

// pythag is hypot(a, b) by a plain square root unless that over- or underflows.
// (tridiagonalQL's inner loop spells it out, as the compiler does not inline it.)
func pythag(a, b float64) float64 {
	h := a*a + b*b
	if h > 0x1p-900 && h < 0x1p900 {
		return math.Sqrt(h)
	}
	return math.Hypot(a, b)
}

// sv2x2 returns the singular values of the upper triangular [[f, g], [0, h]] to high
// relative accuracy (LAPACK dlas2).
func sv2x2(f, g, h float64) (smin, smax float64) {
	fa, ga, ha := math.Abs(f), math.Abs(g), math.Abs(h)
	fhmn, fhmx := math.Min(fa, ha), math.Max(fa, ha)
	switch {
	case fhmn == 0:
		if fhmx == 0 {
			return 0, ga
		}
		mx, mn := math.Max(fhmx, ga), math.Min(fhmx, ga)
		return 0, mx * math.Sqrt(1+(mn/mx)*(mn/mx))
	case ga < fhmx:
		as := 1 + fhmn/fhmx
		at := (fhmx - fhmn) / fhmx
		au := (ga / fhmx) * (ga / fhmx)
		c := 2 / (math.Sqrt(as*as+au) + math.Sqrt(at*at+au))
		return fhmn * c, fhmx / c
	default:
		au := fhmx / ga
		if au == 0 {
			return (fhmn * fhmx) / ga, ga
		}
		as := 1 + fhmn/fhmx
		at := (fhmx - fhmn) / fhmx
		c := 1 / (math.Sqrt(1+(as*au)*(as*au)) + math.Sqrt(1+(at*au)*(at*au)))
		return 2 * (fhmn * c) * au, ga / (c + c)
	}
}

// Phase-covariant states in real form. When every 2 x 2 block of a factor P is diagonal
// with P[p_i][p_j] = eta_i zeta_j P[x_i][x_j] (signs eta, zeta = +-1), as for thermal inputs
// and maps built from real beam splitters and two-mode squeezers, V = P P^T has no x-p
// correlations and V_pp = eta V_xx eta with V_xx = P_x P_x^T. Then nu^2 are the eigenvalues
// of V_xx V_pp = (V_xx eta)^2, so the symplectic eigenvalues are the moduli of the
// eigenvalues of the symmetric n x n matrix K = L^T eta L, L the LQ factor of P_x: an n x n
// problem instead of a 2n x 2n one, accurate to eps |K| (about eps nu_max) as the
// general route.

// CovariantSpectrum writes into out the symplectic eigenvalues of a phase-covariant state
// in real form (see above) given K = L^T eta L (n x n, row-major; overwritten) and
// det = |det L|^2 > 0, the product of the eigenvalues: nu = det for one mode, a closed form
// for two (its small root from the product, no cancellation), Householder tridiagonal
// reduction and implicit QL otherwise. It does not allocate.
func CovariantSpectrum(k []float64, n int, det float64, out *Spectrum) {
	out.N = n
	switch n {
	case 1:
		out.Nu[0] = det
		return
	case 2:
		a, b, c := k[0], k[1], k[3]
		t := (a + c) / 2
		h := (a - c) / 2
		s := math.Sqrt(h*h + b*b)
		big := math.Abs(t) + s // modulus of the eigenvalue of larger modulus
		out.Nu[0], out.Nu[1] = det/big, big
		if out.Nu[0] > out.Nu[1] {
			out.Nu[0], out.Nu[1] = out.Nu[1], out.Nu[0]
		}
		return
	}
	var d, e, d0, e0 [MaxModes]float64
	symTridiagonal(k, n, d[:n], e[:n])
	d0, e0 = d, e
	if !tridiagonalQL(d[:n], e[:n]) {
		// Rebuild the tridiagonal matrix and use cyclic Jacobi.
		var m Matrix
		m.Reset(n, n)
		d, e = d0, e0
		for i := 0; i < n; i++ {
			m.d[i*n+i] = d[i]
			if i+1 < n {
				m.d[i*n+i+1], m.d[(i+1)*n+i] = e[i], e[i]
			}
		}
		SymmetricEigenvalues(&m, d[:n])
	}
	for i := 0; i < n; i++ {
		out.Nu[i] = math.Abs(d[i])
	}
	insertionSort(out.Nu[:n])
}

// symTridiagonal writes the diagonal d and off-diagonal e[:n-1] (e[n-1] = 0) of a
// Householder tridiagonal form Q^T k Q of the symmetric n x n matrix k, which it overwrites.
func symTridiagonal(k []float64, n int, d, e []float64) {
	if n == 3 {
		symTridiagonal3(k, d, e)
		return
	}
	symTridiagonalGeneric(k, n, d, e)
}

// symTridiagonalGeneric is symTridiagonal for any n.
func symTridiagonalGeneric(k []float64, n int, d, e []float64) {
	a := k[:n*n]
	var v, w [MaxModes]float64
	for j := 0; j < n-2; j++ {
		m := n - j - 1
		s := 0.0
		for i := 0; i < m; i++ {
			x := a[(j+1+i)*n+j]
			v[i] = x
			s += x * x
		}
		if s == 0 {
			e[j] = 0
			continue
		}
		var alpha, beta float64
		v[0], alpha, beta = householder(v[0], math.Sqrt(s))
		// b <- H b H for the trailing block b: p = beta b v, w = p - (beta/2)(p.v) v,
		// b -= v w^T + w v^T.
		pv := 0.0
		for i := 0; i < m; i++ {
			row := a[(j+1+i)*n+j+1 : (j+1+i)*n+n]
			t := 0.0
			for l, x := range row {
				t += x * v[l]
			}
			w[i] = beta * t
			pv += w[i] * v[i]
		}
		h := beta / 2 * pv
		for i := 0; i < m; i++ {
			w[i] -= h * v[i]
		}
		for i := 0; i < m; i++ {
			row := a[(j+1+i)*n+j+1 : (j+1+i)*n+n]
			vi, wi := v[i], w[i]
			for l := range row {
				row[l] -= vi*w[l] + wi*v[l]
			}
		}
		e[j] = alpha
	}
	for i := 0; i < n; i++ {
		d[i] = a[i*n+i]
	}
	if n >= 2 {
		e[n-2] = a[(n-2)*n+n-1]
	}
	e[n-1] = 0
}

// tridiagonalQL overwrites d with the eigenvalues of the symmetric tridiagonal matrix with
// diagonal d and off-diagonal e[:n-1] (e[n-1] = 0; destroyed) by implicit QL iterations with
// Wilkinson shifts (Bowdler, Martin, Reinsch, Wilkinson, Numer. Math. 11, 293 (1968), as in
// Numerical Recipes' tqli). It reports false if an eigenvalue needs more than 30 iterations.
func tridiagonalQL(d, e []float64) bool {
	var st qlProgress
	for !st.done {
		st.step(d, e)
	}
	return !st.failed
}

// qlProgress is where tridiagonalQL stands on one matrix: the eigenvalues d[:l] are final,
// and iter QL sweeps have been spent on the current l. step advances it by one unit of work,
// so that independent problems can be advanced in turn (CovBatch).
type qlProgress struct {
	l, iter      int
	done, failed bool
}

// step does tridiagonalQL's next unit of work on (d, e): deflations up to the next 2 x 2
// closed form (done in the step) or QL sweep; it sets done when all eigenvalues are final,
// and failed (with done) when an eigenvalue needs more than 30 sweeps.
func (st *qlProgress) step(d, e []float64) {
	const eps = 0x1p-52
	n := len(d)
	e = e[:n]
	for ; st.l < n; st.l, st.iter = st.l+1, 0 {
		l := st.l
		m := l
		for ; m < n-1; m++ {
			if math.Abs(e[m]) <= eps*(math.Abs(d[m])+math.Abs(d[m+1])) {
				break
			}
		}
		if m == l {
			continue
		}
		if m == l+1 {
			// 2 x 2 block: closed form (the root of larger modulus without
			// cancellation, the other from the determinant).
			big, small := symmetric2x2(d[l], e[l], d[l+1])
			d[l], d[l+1], e[l] = big, small, 0
			st.l, st.iter = l+1, 0
			return
		}
		if st.iter == 30 {
			st.done, st.failed = true, true
			return
		}
		qlSweep(d, e, l, m)
		st.iter++
		return
	}
	st.done = true
}

// qlSweep is one implicit QL sweep with Wilkinson shift on rows l..m of the tridiagonal
// matrix (d, e) (Numerical Recipes' tqli).
func qlSweep(d, e []float64, l, m int) {
	g := (d[l+1] - d[l]) / (2 * e[l])
	// |g| <= |d| / (2 eps (|d_l| + |d_l+1|)) < 2^51 as e[l] was not negligible: g^2 + 1
	// neither over- nor underflows.
	r := math.Sqrt(g*g + 1)
	if g >= 0 {
		g = d[m] - d[l] + e[l]/(g+r)
	} else {
		g = d[m] - d[l] + e[l]/(g-r)
	}
	s, c, p := 1.0, 1.0, 0.0
	i := m - 1
	for ; i >= l; i-- {
		f := s * e[i]
		b := c * e[i]
		if h := g*g + f*f; h > 0x1p-900 && h < 0x1p900 {
			r = math.Sqrt(h)
		} else {
			r = math.Hypot(g, f)
		}
		e[i+1] = r
		if r == 0 {
			// Underflow: split here and sweep again.
			d[i+1] -= p
			e[m] = 0
			return
		}
		s = f / r
		c = g / r
		g = d[i+1] - p
		r = (d[i]-g)*s + 2*c*b
		p = s * r
		d[i+1] = g + p
		g = c*r - b
	}
	d[l] -= p
	e[l] = g
	e[m] = 0
}

// householder returns, for a vector x with first entry x0 and norm |x| = norm > 0, the
// reflection H = I - beta v v^T with H x = alpha e_1: v = x - alpha e_1 (its first entry v0
// returned; the others are those of x), alpha = -sign(x0) norm (no cancellation in v0),
// beta = 2 / v.v = 1 / (norm (norm + |x0|)) (Golub, Van Loan, Matrix Computations, 4th ed.,
// section 5.1.2).
func householder(x0, norm float64) (v0, alpha, beta float64) {
	alpha = -norm
	if x0 < 0 {
		alpha = norm
	}
	return x0 - alpha, alpha, 1 / (norm * (norm + math.Abs(x0)))
}

// symmetric2x2 returns the eigenvalues of [[a, b], [b, c]]: the one of larger modulus
// without cancellation, the other from the determinant (common practice).
func symmetric2x2(a, b, c float64) (big, small float64) {
	t, h := (a+c)/2, (a-c)/2
	s := pythag(h, b)
	big = t + s
	if t < 0 {
		big = t - s
	}
	if big != 0 {
		small = (a*c - b*b) / big
	}
	return big, small
}
