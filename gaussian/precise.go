package gaussian

// Extended-precision re-check path.
//
// Everything in this file recomputes, in math/big floating point, what the float64 engine
// computes, by code that shares nothing with it beyond the conventions of the package doc:
// the dilations are rebuilt from the model parameters (square roots, exponentials and
// trigonometric functions evaluated in big floats), the logarithm is a big-float series, and
// symplectic spectra of three or more modes use a different algorithm from the float64 path.
// It is used to certify every bound the tool reports, so it favours clarity over speed:
// it allocates freely and takes milliseconds per objective value, not microseconds.
//
// Inputs given as float64 (model parameters, the entries of a Channel's X and Y, squeezing
// and rotation parameters of an input) are taken as exact binary numbers; everything derived
// from them is computed with PrecisePrec-bit mantissas.

import (
	"errors"
	"fmt"
	"math"
	"math/big"
	"sort"
	"sync"
)

// PrecisePrec is the mantissa length, in bits, of every big.Float the precise path returns
// or stores in a BigMatrix: 256 bits, about 77 significant decimal digits. Round-off in a
// symplectic eigenvalue of a state whose entries are of size s is then of order
// 2^-256 s^2 (about 1e-23 for s = 1e27), which is what makes the large-photon-number
// evaluations of the unconstrained bound possible.
const PrecisePrec uint = 256

// preciseGuard is the number of extra bits carried inside the series for log, exp, sin, cos
// and the constants ln 2 and pi, so that their results are correctly rounded to PrecisePrec
// bits in practice (the series lose at most a few bits; common practice: a guard word).
const preciseGuard uint = 64

// preciseWorkPrec is the working precision of the series.
const preciseWorkPrec = PrecisePrec + preciseGuard

// PreciseUnphysicalTol is how far below 1 a precise symplectic eigenvalue may fall, relative
// to the scale max(1, max|V_ij|) of its covariance, before the state is declared unphysical
// (an error wrapping ErrUnphysical); eigenvalues in [1 - allowance, 1) count as exactly 1.
// Round-off at PrecisePrec bits is of order 2^-256 max|V|^2 (about 1e-77 max|V|^2), far
// below 1e-30 max|V| for every state with max|V| < 1e40 (common practice: a scaled round-off
// tolerance, not a published value).
const PreciseUnphysicalTol = 1e-30

// PreciseUnphysicalCap caps the allowance PreciseUnphysicalTol max(1, max|V|), which grows
// without bound with the scale of V (at max|V| = 1e30 it would be 1): an eigenvalue below
// 1 - 1e-9 is an error at every scale. Round-off reaches 1e-9 only for max|V| of about 1e34
// (common practice: the float64 engine's PurityTolerance, so that the precise path never
// accepts a state the float64 path rejects as unphysical).
const PreciseUnphysicalCap = 1e-9

// PreciseCPSlack is subtracted, times max(1, ||H||_F), from the smallest eigenvalue of the
// complete-positivity matrix H in PreciseCPCertify, so that a reported margin > 0 holds for
// the exact eigenvalue despite round-off. The big-float Jacobi method is backward stable with
// an error below about n sweeps 2^-256 ||H|| (n <= 32 rows, fewer than 20 sweeps), i.e.
// below 2^-246 ||H||; 2^-200 leaves a factor 2^46 of safety (Golub, Van Loan, Matrix
// Computations, 4th ed., section 8.5 for the Jacobi error analysis).
const PreciseCPSlack = 0x1p-200

// PreciseCPNudgeLimit bounds, relative to max(1, max|X_ij|^2, max|Y_ij|), how negative a
// complete-positivity margin PreciseNudgeCP will repair by adding noise to Y. Maps built in
// float64 from a symplectic matrix and pure ancillas sit exactly on the boundary of complete
// positivity and miss it by round-off, about 1e-16; anything beyond 1e-12 is a map that is
// really not completely positive (common practice: a margin of 10^4 over float64 round-off).
const PreciseCPNudgeLimit = 1e-12

// preciseNudgeUlps is the number of float64 ulps (of the scale max(1, max|X|^2, max|Y|))
// PreciseNudgeCP adds to Y's diagonal beyond twice the deficit, so that the float64 entries
// of the repaired Y move by a representable amount (common practice).
const preciseNudgeUlps = 4

// preciseExpMaxArg bounds |x|/ln 2 in PreciseExp: big.Float exponents are int32 values.
const preciseExpMaxArg = 1e9

// preciseJacobiMaxSweeps bounds the cyclic Jacobi sweeps. Jacobi converges quadratically;
// matrices of up to 32 rows need about 10 sweeps at 256 bits.
const preciseJacobiMaxSweeps = 100

// preciseNearDegenerate: the two-mode closed form hands over to the Jacobi path when its
// discriminant (nu_+^2 - nu_-^2)^2 is below 2^-preciseNearDegenerate Delta^2, i.e. when
// nu_+^2 - nu_-^2 < 2^-32 (nu_+^2 + nu_-^2) (see preciseTwoModeSpectrum; common practice).
const preciseNearDegenerate = 64

// preciseSymmetryTol is the largest relative asymmetry |V_ij - V_ji| / max|V| accepted in a
// covariance handed to the precise spectrum (round-off of a congruence is about 2^-256).
const preciseSymmetryTol = 0x1p-200

// newPrecise returns a zero big.Float with PrecisePrec bits.
func newPrecise() *big.Float { return new(big.Float).SetPrec(PrecisePrec) }

// newWork returns a zero big.Float with the series' working precision.
func newWork() *big.Float { return new(big.Float).SetPrec(preciseWorkPrec) }

// preciseInt returns the integer v with PrecisePrec bits.
func preciseInt(v int64) *big.Float { return newPrecise().SetInt64(v) }

// preciseF64 returns the float64 v, exactly, with PrecisePrec bits. v must not be NaN.
func preciseF64(v float64) *big.Float { return newPrecise().SetFloat64(v) }

// toFloat64 rounds x to the nearest float64.
func toFloat64(x *big.Float) float64 {
	f, _ := x.Float64()
	return f
}

// ---------------------------------------------------------------------------------------
// Dense big-float matrices.

// BigMatrix is a small dense matrix of PrecisePrec-bit big.Float entries, row-major. It is
// meant for the precise re-check path only: every operation allocates. The zero value is the
// 0 x 0 matrix. A BigMatrix must not be copied by value and then modified through both
// copies (entries are shared); use Clone.
type BigMatrix struct {
	rows, cols int
	d          []big.Float
}

// NewBigMatrix returns an r x c zero matrix.
func NewBigMatrix(r, c int) *BigMatrix {
	if r < 0 || c < 0 {
		panic(fmt.Sprintf("gaussian: big matrix size %dx%d", r, c))
	}
	m := &BigMatrix{rows: r, cols: c, d: make([]big.Float, r*c)}
	for i := range m.d {
		m.d[i].SetPrec(PrecisePrec)
	}
	return m
}

// BigIdentity returns the n x n identity.
func BigIdentity(n int) *BigMatrix {
	m := NewBigMatrix(n, n)
	for i := 0; i < n; i++ {
		m.d[i*n+i].SetInt64(1)
	}
	return m
}

// BigOmega returns the n-mode symplectic form (see the package doc).
func BigOmega(n int) *BigMatrix {
	m := NewBigMatrix(2*n, 2*n)
	for k := 0; k < n; k++ {
		m.At(2*k, 2*k+1).SetInt64(1)
		m.At(2*k+1, 2*k).SetInt64(-1)
	}
	return m
}

// BigFromMatrix converts a float64 Matrix, taking every entry as an exact binary number.
func BigFromMatrix(a *Matrix) *BigMatrix {
	r, c := a.Dims()
	m := NewBigMatrix(r, c)
	for i := 0; i < r; i++ {
		for j := 0; j < c; j++ {
			m.At(i, j).SetFloat64(a.At(i, j))
		}
	}
	return m
}

// Dims returns the row and column counts.
func (m *BigMatrix) Dims() (int, int) { return m.rows, m.cols }

// At returns a pointer to entry (i, j); writing through it changes the matrix.
func (m *BigMatrix) At(i, j int) *big.Float {
	if i < 0 || j < 0 || i >= m.rows || j >= m.cols {
		panic(fmt.Sprintf("gaussian: index (%d,%d) outside %dx%d", i, j, m.rows, m.cols))
	}
	return &m.d[i*m.cols+j]
}

// Set sets entry (i, j) to x, rounded to PrecisePrec bits.
func (m *BigMatrix) Set(i, j int, x *big.Float) { m.At(i, j).Set(x) }

// Float64 returns entry (i, j) rounded to float64.
func (m *BigMatrix) Float64(i, j int) float64 { return toFloat64(m.At(i, j)) }

// Matrix rounds m to a float64 Matrix (it panics beyond MaxDim, like NewMatrix).
func (m *BigMatrix) Matrix() Matrix {
	out := NewMatrix(m.rows, m.cols)
	for i := 0; i < m.rows; i++ {
		for j := 0; j < m.cols; j++ {
			out.Set(i, j, m.Float64(i, j))
		}
	}
	return out
}

// Clone returns an independent copy.
func (m *BigMatrix) Clone() *BigMatrix {
	out := NewBigMatrix(m.rows, m.cols)
	for i := range m.d {
		out.d[i].Set(&m.d[i])
	}
	return out
}

// BigMul returns a b.
func BigMul(a, b *BigMatrix) *BigMatrix {
	if a.cols != b.rows {
		panic(fmt.Sprintf("gaussian: BigMul of %dx%d by %dx%d", a.rows, a.cols, b.rows, b.cols))
	}
	out := NewBigMatrix(a.rows, b.cols)
	t := newPrecise()
	for i := 0; i < a.rows; i++ {
		for j := 0; j < b.cols; j++ {
			s := out.At(i, j)
			for l := 0; l < a.cols; l++ {
				t.Mul(a.At(i, l), b.At(l, j))
				s.Add(s, t)
			}
		}
	}
	return out
}

// BigMulTrans returns a b^T.
func BigMulTrans(a, b *BigMatrix) *BigMatrix {
	if a.cols != b.cols {
		panic(fmt.Sprintf("gaussian: BigMulTrans of %dx%d by (%dx%d)^T", a.rows, a.cols, b.rows, b.cols))
	}
	out := NewBigMatrix(a.rows, b.rows)
	t := newPrecise()
	for i := 0; i < a.rows; i++ {
		for j := 0; j < b.rows; j++ {
			s := out.At(i, j)
			for l := 0; l < a.cols; l++ {
				t.Mul(a.At(i, l), b.At(j, l))
				s.Add(s, t)
			}
		}
	}
	return out
}

// BigCongruence returns a v a^T, symmetrized (v must be symmetric).
func BigCongruence(a, v *BigMatrix) *BigMatrix {
	out := BigMulTrans(BigMul(a, v), a)
	out.Symmetrize()
	return out
}

// Symmetrize replaces a square m by (m + m^T)/2.
func (m *BigMatrix) Symmetrize() {
	t := newPrecise()
	for i := 0; i < m.rows; i++ {
		for j := i + 1; j < m.cols; j++ {
			t.Add(m.At(i, j), m.At(j, i))
			t.SetMantExp(t, -1)
			m.At(i, j).Set(t)
			m.At(j, i).Set(t)
		}
	}
}

// Add sets m = m + a (same shape).
func (m *BigMatrix) Add(a *BigMatrix) {
	if a.rows != m.rows || a.cols != m.cols {
		panic("gaussian: BigMatrix.Add shape mismatch")
	}
	for i := range m.d {
		m.d[i].Add(&m.d[i], &a.d[i])
	}
}

// BigDirectSum returns a (+) b (block diagonal).
func BigDirectSum(a, b *BigMatrix) *BigMatrix {
	out := NewBigMatrix(a.rows+b.rows, a.cols+b.cols)
	for i := 0; i < a.rows; i++ {
		for j := 0; j < a.cols; j++ {
			out.At(i, j).Set(a.At(i, j))
		}
	}
	for i := 0; i < b.rows; i++ {
		for j := 0; j < b.cols; j++ {
			out.At(a.rows+i, a.cols+j).Set(b.At(i, j))
		}
	}
	return out
}

// SelectModes returns the sub-matrix of the square mode-indexed matrix m on the listed modes,
// in the listed order (both quadratures of each mode).
func (m *BigMatrix) SelectModes(modes []int) *BigMatrix {
	n := 2 * len(modes)
	out := NewBigMatrix(n, n)
	for a, ma := range modes {
		for b, mb := range modes {
			for qa := 0; qa < 2; qa++ {
				for qb := 0; qb < 2; qb++ {
					out.At(2*a+qa, 2*b+qb).Set(m.At(2*ma+qa, 2*mb+qb))
				}
			}
		}
	}
	return out
}

// MaxAbs returns the largest absolute entry, rounded to float64 (0 for an empty matrix).
func (m *BigMatrix) MaxAbs() float64 {
	best := newPrecise()
	t := newPrecise()
	for i := range m.d {
		t.Abs(&m.d[i])
		if t.Cmp(best) > 0 {
			best.Set(t)
		}
	}
	return toFloat64(best)
}

// isFinite reports whether no entry is infinite (big.Float has no NaN).
func (m *BigMatrix) isFinite() bool {
	for i := range m.d {
		if m.d[i].IsInf() {
			return false
		}
	}
	return true
}

// frobenius returns the Frobenius norm, rounded to float64.
func (m *BigMatrix) frobenius() float64 {
	s, t := newPrecise(), newPrecise()
	for i := range m.d {
		t.Mul(&m.d[i], &m.d[i])
		s.Add(s, t)
	}
	return toFloat64(s.Sqrt(s))
}

// ---------------------------------------------------------------------------------------
// Elementary functions in big floats.

var (
	preciseConstOnce sync.Once
	preciseLn2Work   *big.Float // ln 2 at preciseWorkPrec bits
	precisePiWork    *big.Float // pi at preciseWorkPrec bits
)

// preciseConsts computes ln 2 = 2 atanh(1/3) and pi = 16 atan(1/5) - 4 atan(1/239) (Machin's
// formula) once, at the working precision.
func preciseConsts() (ln2, pi *big.Float) {
	preciseConstOnce.Do(func() {
		l := atanhRecip(3)
		preciseLn2Work = l.SetMantExp(l, 1)
		a := atanRecip(5)
		a.SetMantExp(a, 4)
		b := atanRecip(239)
		b.SetMantExp(b, 2)
		precisePiWork = a.Sub(a, b)
	})
	return preciseLn2Work, precisePiWork
}

// negligible reports whether the series term t no longer changes sum at the working
// precision (both non-zero; t counted relative to sum).
func negligible(t, sum *big.Float) bool {
	if t.Sign() == 0 {
		return true
	}
	if sum.Sign() == 0 {
		return false
	}
	return t.MantExp(nil) < sum.MantExp(nil)-int(preciseWorkPrec)-2
}

// atanhRecip returns atanh(1/k) = sum_j 1/((2j+1) k^(2j+1)) at the working precision, k >= 2.
func atanhRecip(k int64) *big.Float {
	sum, t, d := newWork(), newWork(), newWork()
	pow := newWork().SetInt64(k)
	pow.Quo(newWork().SetInt64(1), pow)
	k2 := newWork().SetInt64(k * k)
	for j := int64(0); ; j++ {
		t.Quo(pow, d.SetInt64(2*j+1))
		if negligible(t, sum) {
			return sum
		}
		sum.Add(sum, t)
		pow.Quo(pow, k2)
	}
}

// atanRecip returns atan(1/k) = sum_j (-1)^j / ((2j+1) k^(2j+1)) at the working precision.
func atanRecip(k int64) *big.Float {
	sum, t, d := newWork(), newWork(), newWork()
	pow := newWork().SetInt64(k)
	pow.Quo(newWork().SetInt64(1), pow)
	k2 := newWork().SetInt64(k * k)
	for j := int64(0); ; j++ {
		t.Quo(pow, d.SetInt64(2*j+1))
		if negligible(t, sum) {
			return sum
		}
		if j%2 == 0 {
			sum.Add(sum, t)
		} else {
			sum.Sub(sum, t)
		}
		pow.Quo(pow, k2)
	}
}

// preciseLnWork returns ln x at the working precision. x must be positive and finite.
// Argument reduction: x = m 2^e with m in [1/sqrt 2, sqrt 2); then ln x = e ln 2 + ln m and
// ln m = 2 atanh(z) = 2 (z + z^3/3 + z^5/5 + ...), z = (m-1)/(m+1), |z| <= 0.172, so each
// term gains about 5 bits.
func preciseLnWork(x *big.Float) *big.Float {
	if x.Sign() <= 0 || x.IsInf() {
		panic(fmt.Sprintf("gaussian: precise log of %v", x))
	}
	ln2, _ := preciseConsts()
	m := newWork()
	e := x.MantExp(m) // x = m 2^e, 0.5 <= m < 1
	m.SetPrec(preciseWorkPrec)
	if m.Cmp(big.NewFloat(math.Sqrt2/2)) < 0 {
		m.SetMantExp(m, 1)
		e--
	}
	one := newWork().SetInt64(1)
	z, den := newWork().Sub(m, one), newWork().Add(m, one)
	z.Quo(z, den)
	sum := newWork().Set(z)
	if z.Sign() != 0 {
		z2 := newWork().Mul(z, z)
		pow, t, d := newWork().Set(z), newWork(), newWork()
		for k := int64(3); ; k += 2 {
			pow.Mul(pow, z2)
			t.Quo(pow, d.SetInt64(k))
			if negligible(t, sum) {
				break
			}
			sum.Add(sum, t)
		}
	}
	sum.SetMantExp(sum, 1)
	if e != 0 {
		t := newWork().SetInt64(int64(e))
		t.Mul(t, ln2)
		sum.Add(sum, t)
	}
	return sum
}

// PreciseLog returns the natural logarithm of x > 0 with PrecisePrec bits. It panics for
// x <= 0 or an infinite x (there is no big-float NaN).
func PreciseLog(x *big.Float) *big.Float { return newPrecise().Set(preciseLnWork(x)) }

// PreciseLn2 returns ln 2 with PrecisePrec bits.
func PreciseLn2() *big.Float {
	ln2, _ := preciseConsts()
	return newPrecise().Set(ln2)
}

// PrecisePi returns pi with PrecisePrec bits.
func PrecisePi() *big.Float {
	_, pi := preciseConsts()
	return newPrecise().Set(pi)
}

// preciseExpWork returns e^x at the working precision. Reduction: x = k ln 2 + s with
// |s| <= ln 2 / 2, then e^s = (e^(s/256))^256 with the Taylor series for e^(s/256), and
// e^x = 2^k e^s. |x| / ln 2 must be below preciseExpMaxArg (big.Float's exponent range).
func preciseExpWork(x *big.Float) *big.Float {
	if x.IsInf() {
		panic("gaussian: precise exp of an infinite value")
	}
	ln2, _ := preciseConsts()
	q := newWork().Quo(x, ln2)
	kf := math.Round(toFloat64(q))
	if math.Abs(kf) > preciseExpMaxArg {
		panic(fmt.Sprintf("gaussian: precise exp of %v overflows", x))
	}
	k := int(kf)
	s := newWork().SetInt64(int64(k))
	s.Mul(s, ln2)
	s.Sub(x, s)
	const halvings = 8
	s.SetMantExp(s, -halvings)
	sum := newWork().SetInt64(1)
	term, d := newWork().SetInt64(1), newWork()
	for j := int64(1); ; j++ {
		term.Mul(term, s)
		term.Quo(term, d.SetInt64(j))
		if negligible(term, sum) {
			break
		}
		sum.Add(sum, term)
	}
	for i := 0; i < halvings; i++ {
		sum.Mul(sum, sum)
	}
	return sum.SetMantExp(sum, k)
}

// PreciseExp returns e^x with PrecisePrec bits (|x| below about 7e8; it panics beyond).
func PreciseExp(x *big.Float) *big.Float { return newPrecise().Set(preciseExpWork(x)) }

// preciseCosSinWork returns cos x and sin x at the working precision: x is reduced by a
// multiple of 2 pi into about [-pi, pi] and both Taylor series are summed (their largest
// term is below 5, so at most 3 bits are lost). The reduction keeps full precision for
// |x| < 2^40.
func preciseCosSinWork(x *big.Float) (c, s *big.Float) {
	if x.IsInf() {
		panic("gaussian: precise cos/sin of an infinite value")
	}
	_, pi := preciseConsts()
	twoPi := newWork().SetMantExp(pi, 1)
	k := math.Round(toFloat64(newWork().Quo(x, twoPi)))
	y := newWork().SetFloat64(k)
	y.Mul(y, twoPi)
	y.Sub(x, y)
	c, s = newWork().SetInt64(1), newWork()
	term, d := newWork().SetInt64(1), newWork()
	ya := math.Abs(toFloat64(y))
	for j := int64(1); ; j++ {
		term.Mul(term, y)
		term.Quo(term, d.SetInt64(j))
		if term.Sign() == 0 {
			break
		}
		switch j % 4 {
		case 0:
			c.Add(c, term)
		case 1:
			s.Add(s, term)
		case 2:
			c.Sub(c, term)
		case 3:
			s.Sub(s, term)
		}
		// Once j > |y| the terms decrease; stop when they fall below the working precision
		// relative to 1 (|cos|, |sin| <= 1; sin y keeps its leading term y for tiny y).
		if float64(j) > ya && term.MantExp(nil) < -int(preciseWorkPrec)-4 {
			break
		}
	}
	return c, s
}

// PreciseCosSin returns cos x and sin x with PrecisePrec bits.
func PreciseCosSin(x *big.Float) (cos, sin *big.Float) {
	c, s := preciseCosSinWork(x)
	return newPrecise().Set(c), newPrecise().Set(s)
}

// preciseGWork returns g(x) = (x+1) log2(x+1) - x log2 x at the working precision, as
// [ln(1+x) + x ln(1+1/x)] / ln 2 (no cancellation for large x), and 0 for x <= 0.
func preciseGWork(x *big.Float) *big.Float {
	if x.Sign() <= 0 {
		return newWork()
	}
	ln2, _ := preciseConsts()
	one := newWork().SetInt64(1)
	a := preciseLnWork(newWork().Add(x, one))
	r := newWork().Quo(one, x)
	b := preciseLnWork(r.Add(r, one))
	b.Mul(b, x)
	a.Add(a, b)
	return a.Quo(a, ln2)
}

// PreciseG returns g(x) = (x+1) log2(x+1) - x log2 x in bits with PrecisePrec bits; g(x) = 0
// for x <= 0 (see G for the float64 version).
func PreciseG(x *big.Float) *big.Float { return newPrecise().Set(preciseGWork(x)) }

// ---------------------------------------------------------------------------------------
// Symmetric eigenproblems and symplectic spectra in big floats.

// bigJacobi returns the eigenvalues of the symmetric matrix a (not modified), in the order
// of the diagonal after the last rotation, and if wantVectors an orthogonal Q with
// a = Q diag(ev) Q^T (eigenvectors in the columns). Cyclic Jacobi rotations; a rotation is
// skipped when a_pq^2 <= eps^2 |a_pp a_qq| (the relative criterion of Demmel, Veselic, SIAM
// J. Matrix Anal. Appl. 13, 1204 (1992)) or |a_pq| <= eps^2 ||a||_F, eps = 2^-PrecisePrec;
// the iteration stops after a sweep without rotations.
func bigJacobi(in *BigMatrix, wantVectors bool) ([]*big.Float, *BigMatrix, error) {
	n := in.rows
	if in.cols != n {
		return nil, nil, fmt.Errorf("gaussian: Jacobi on a %dx%d matrix", in.rows, in.cols)
	}
	a := in.Clone()
	var q *BigMatrix
	if wantVectors {
		q = BigIdentity(n)
	}
	one := preciseInt(1)
	eps2 := newPrecise().SetMantExp(one, -2*int(PrecisePrec))
	floor2 := newPrecise()
	for i := range a.d {
		floor2.Add(floor2, newPrecise().Mul(&a.d[i], &a.d[i]))
	}
	floor2.Mul(floor2, eps2)
	floor2.Mul(floor2, eps2)
	apq2, rhs := newPrecise(), newPrecise()
	theta, t, c, s := newPrecise(), newPrecise(), newPrecise(), newPrecise()
	x, y, u, w := newPrecise(), newPrecise(), newPrecise(), newPrecise()
	rotate := func(m *BigMatrix, rows bool, p, r int) {
		for k := 0; k < n; k++ {
			var ep, eq *big.Float
			if rows {
				ep, eq = m.At(p, k), m.At(r, k)
			} else {
				ep, eq = m.At(k, p), m.At(k, r)
			}
			x.Mul(c, ep)
			y.Mul(s, eq)
			u.Sub(x, y)
			x.Mul(s, ep)
			y.Mul(c, eq)
			w.Add(x, y)
			ep.Set(u)
			eq.Set(w)
		}
	}
	for sweep := 0; sweep < preciseJacobiMaxSweeps; sweep++ {
		rotated := false
		for p := 0; p < n-1; p++ {
			for r := p + 1; r < n; r++ {
				apq := a.At(p, r)
				if apq.Sign() == 0 {
					continue
				}
				app, aqq := a.At(p, p), a.At(r, r)
				apq2.Mul(apq, apq)
				rhs.Mul(app, aqq)
				rhs.Abs(rhs)
				rhs.Mul(rhs, eps2)
				if apq2.Cmp(rhs) <= 0 || apq2.Cmp(floor2) <= 0 {
					continue
				}
				rotated = true
				// theta = (a_qq - a_pp) / (2 a_pq); t = sign(theta) / (|theta| + sqrt(theta^2 + 1))
				theta.Sub(aqq, app)
				x.SetMantExp(apq, 1)
				theta.Quo(theta, x)
				x.Mul(theta, theta)
				x.Add(x, one)
				x.Sqrt(x)
				y.Abs(theta)
				x.Add(x, y)
				t.Quo(one, x)
				if theta.Sign() < 0 {
					t.Neg(t)
				}
				x.Mul(t, t)
				x.Add(x, one)
				x.Sqrt(x)
				c.Quo(one, x)
				s.Mul(t, c)
				rotate(a, false, p, r)
				rotate(a, true, p, r)
				a.At(p, r).SetInt64(0)
				a.At(r, p).SetInt64(0)
				if wantVectors {
					rotate(q, false, p, r)
				}
			}
		}
		if !rotated {
			ev := make([]*big.Float, n)
			for i := range ev {
				ev[i] = newPrecise().Set(a.At(i, i))
			}
			return ev, q, nil
		}
	}
	return nil, nil, fmt.Errorf("gaussian: big-float Jacobi did not converge in %d sweeps", preciseJacobiMaxSweeps)
}

// PreciseSymmetricEigenvalues returns the eigenvalues of the symmetric matrix a, ascending,
// by big-float cyclic Jacobi rotations. a is not modified.
func PreciseSymmetricEigenvalues(a *BigMatrix) ([]*big.Float, error) {
	ev, _, err := bigJacobi(a, false)
	if err != nil {
		return nil, err
	}
	sortBig(ev)
	return ev, nil
}

func sortBig(v []*big.Float) {
	sort.Slice(v, func(i, j int) bool { return v[i].Cmp(v[j]) < 0 })
}

// checkCovariance checks shape, finiteness and symmetry of a candidate covariance.
func checkCovariance(v *BigMatrix) error {
	r, c := v.Dims()
	if r != c || r%2 != 0 || r == 0 {
		return fmt.Errorf("gaussian: covariance of shape %dx%d: %w", r, c, ErrUnphysical)
	}
	if !v.isFinite() {
		return fmt.Errorf("gaussian: infinite covariance entry: %w", ErrUnphysical)
	}
	scale := newPrecise().SetFloat64(v.MaxAbs() * preciseSymmetryTol)
	t := newPrecise()
	for i := 0; i < r; i++ {
		for j := 0; j < i; j++ {
			t.Sub(v.At(i, j), v.At(j, i))
			if t.Abs(t).Cmp(scale) > 0 {
				return fmt.Errorf("gaussian: covariance not symmetric at (%d,%d): %w", i, j, ErrUnphysical)
			}
		}
	}
	return nil
}

// PreciseSymplecticSpectrum returns the symplectic eigenvalues of the covariance v,
// ascending, with PrecisePrec bits. One mode: sqrt(det V). Two modes: the closed form
// nu_+^2 = (Delta + sqrt(Delta^2 - 4 det V))/2, nu_-^2 = det V / nu_+^2, Delta = det A +
// det B + 2 det C (Serafini, Illuminati, De Siena, J. Phys. B 37, L21 (2004)), with det V and
// the test for positive definiteness from an LDL^T factorisation; nearly equal two-mode
// eigenvalues go to the general algorithm, for accuracy. Three or more modes: an algorithm different
// from the float64 path; see preciseSpectrumJacobi. The error wraps ErrUnphysical if v is not
// a positive definite symmetric matrix (it does not test nu >= 1; PreciseEntropy does).
func PreciseSymplecticSpectrum(v *BigMatrix) ([]*big.Float, error) {
	if err := checkCovariance(v); err != nil {
		return nil, err
	}
	switch v.rows / 2 {
	case 1:
		det := det2Big(v.At(0, 0), v.At(0, 1), v.At(1, 0), v.At(1, 1))
		if v.At(0, 0).Sign() <= 0 || det.Sign() <= 0 {
			return nil, fmt.Errorf("gaussian: single-mode determinant %.6g: %w", det, ErrUnphysical)
		}
		return []*big.Float{det.Sqrt(det)}, nil
	case 2:
		return preciseTwoModeSpectrum(v)
	}
	return preciseSpectrumJacobi(v)
}

func det2Big(a, b, c, d *big.Float) *big.Float {
	x := newPrecise().Mul(a, d)
	y := newPrecise().Mul(b, c)
	return x.Sub(x, y)
}

// ldlDeterminant returns det v for a symmetric v by the LDL^T factorisation without
// pivoting, and whether every pivot is positive, which holds iff v is positive definite
// (Sylvester's criterion in the form of Cholesky's). Its relative error is about
// 2^-256 cond(v), not 2^-256 (sum of |terms| of a Laplace expansion) / det, which matters
// for nearly pure states with large entries: a TMSV with N = 1e27 has entries 2e27 and
// determinant 1.
func ldlDeterminant(v *BigMatrix) (*big.Float, bool) {
	n := v.rows
	a := v.Clone()
	det := preciseInt(1)
	t := newPrecise()
	for j := 0; j < n; j++ {
		p := a.At(j, j)
		if p.Sign() <= 0 {
			return det.Mul(det, p), false
		}
		det.Mul(det, p)
		for i := j + 1; i < n; i++ {
			l := newPrecise().Quo(a.At(i, j), p)
			for k := j + 1; k <= i; k++ {
				t.Mul(l, a.At(k, j))
				a.At(i, k).Sub(a.At(i, k), t)
			}
		}
	}
	return det, true
}

func preciseTwoModeSpectrum(v *BigMatrix) ([]*big.Float, error) {
	a := v.At
	dA := det2Big(a(0, 0), a(0, 1), a(1, 0), a(1, 1))
	dB := det2Big(a(2, 2), a(2, 3), a(3, 2), a(3, 3))
	dC := det2Big(a(0, 2), a(0, 3), a(1, 2), a(1, 3))
	dV, pd := ldlDeterminant(v)
	if !pd {
		return nil, fmt.Errorf("gaussian: two-mode covariance not positive definite (det %.6g): %w", dV, ErrUnphysical)
	}
	delta := newPrecise().SetMantExp(dC, 1)
	delta.Add(delta, dA)
	delta.Add(delta, dB)
	disc := newPrecise().Mul(delta, delta)
	t := newPrecise().SetMantExp(dV, 2)
	disc.Sub(disc, t)
	// For a positive definite V the discriminant is (nu_+^2 - nu_-^2)^2 >= 0. Near equal
	// eigenvalues its square root turns the round-off of Delta^2 and 4 det V (about
	// 2^-256 max|V|^4) into an error of about 2^-128 max|V|^2 in the eigenvalues, which for
	// max|V| = 1e27 would be 1e-11. There the Jacobi path, whose error is about
	// 2^-256 max|V|^2, is used instead.
	near := newPrecise().Mul(delta, delta)
	near.SetMantExp(near, -preciseNearDegenerate)
	if disc.Cmp(near) < 0 {
		return preciseSpectrumJacobi(v)
	}
	plus := newPrecise().Sqrt(disc)
	plus.Add(plus, delta)
	plus.SetMantExp(plus, -1)
	if plus.Sign() <= 0 {
		return nil, fmt.Errorf("gaussian: two-mode invariant Delta %.6g: %w", delta, ErrUnphysical)
	}
	minus := newPrecise().Quo(dV, plus) // nu_-^2 nu_+^2 = det V: no cancellation near pure states
	return []*big.Float{minus.Sqrt(minus), plus.Sqrt(plus)}, nil
}

// preciseSpectrumJacobi computes the symplectic spectrum of any number of modes without the
// Cholesky factor the float64 path uses: V = Q D Q^T by big-float Jacobi with eigenvectors,
// S = V^(1/2) = Q D^(1/2) Q^T, A = S Omega S (antisymmetric, similar to Omega V), and the
// eigenvalues of the symmetric positive semidefinite M = A A^T = -A^2, which are nu_k^2 twice
// each; after sorting, nu_k is the square root of the mean of the k-th pair.
func preciseSpectrumJacobi(v *BigMatrix) ([]*big.Float, error) {
	dim := v.rows
	n := dim / 2
	d, q, err := bigJacobi(v, true)
	if err != nil {
		return nil, err
	}
	b := q.Clone()
	for j, dj := range d {
		if dj.Sign() <= 0 {
			return nil, fmt.Errorf("gaussian: covariance eigenvalue %.6g: %w", dj, ErrUnphysical)
		}
		r := newPrecise().Sqrt(dj)
		for i := 0; i < dim; i++ {
			b.At(i, j).Mul(b.At(i, j), r)
		}
	}
	s := BigMulTrans(b, q) // V^(1/2)
	s.Symmetrize()
	os := NewBigMatrix(dim, dim) // Omega S
	for k := 0; k < n; k++ {
		for j := 0; j < dim; j++ {
			os.At(2*k, j).Set(s.At(2*k+1, j))
			os.At(2*k+1, j).Neg(s.At(2*k, j))
		}
	}
	a := BigMul(s, os)
	m := BigMulTrans(a, a)
	m.Symmetrize()
	ev, err := PreciseSymmetricEigenvalues(m)
	if err != nil {
		return nil, err
	}
	nu := make([]*big.Float, n)
	for k := 0; k < n; k++ {
		x := newPrecise().Add(ev[2*k], ev[2*k+1])
		x.SetMantExp(x, -1)
		if x.Sign() <= 0 {
			return nil, fmt.Errorf("gaussian: symplectic eigenvalue squared %.6g: %w", x, ErrUnphysical)
		}
		nu[k] = x.Sqrt(x)
	}
	return nu, nil
}

// PreciseEntropy returns the von Neumann entropy S = sum_k g((nu_k - 1)/2) in bits of the
// Gaussian state with covariance v, with PrecisePrec bits. Symplectic eigenvalues in
// [1 - min(PreciseUnphysicalCap, PreciseUnphysicalTol max(1, max|V|)), 1) are round-off and
// count as 1; a smaller one is an error wrapping ErrUnphysical.
func PreciseEntropy(v *BigMatrix) (*big.Float, error) {
	nus, err := PreciseSymplecticSpectrum(v)
	if err != nil {
		return nil, err
	}
	one := preciseInt(1)
	low := newPrecise().SetFloat64(math.Min(PreciseUnphysicalCap, PreciseUnphysicalTol*math.Max(1, v.MaxAbs())))
	low.Sub(one, low)
	sum := newWork()
	x := newWork()
	for _, nu := range nus {
		if nu.Cmp(low) < 0 {
			return nil, fmt.Errorf("gaussian: precise symplectic eigenvalue 1 - %.6g: %w",
				newPrecise().Sub(one, nu), ErrUnphysical)
		}
		if nu.Cmp(one) <= 0 {
			continue
		}
		x.Sub(nu, one)
		x.SetMantExp(x, -1)
		sum.Add(sum, preciseGWork(x))
	}
	return newPrecise().Set(sum), nil
}

// ---------------------------------------------------------------------------------------
// Symplectic transforms, states and dilations rebuilt from their parameters.

// preciseSqrtF64 returns sqrt(v) for a float64 v >= 0 taken as exact.
func preciseSqrtF64(v float64) *big.Float {
	x := preciseF64(v)
	return x.Sqrt(x)
}

// preciseBeamSplitterCS returns the beam splitter with sqrt(t) = c and sqrt(1-t) = s.
func preciseBeamSplitterCS(n, i, j int, c, s *big.Float) *BigMatrix {
	checkModes(n, i, j)
	m := BigIdentity(2 * n)
	for q := 0; q < 2; q++ {
		m.Set(2*i+q, 2*i+q, c)
		m.Set(2*i+q, 2*j+q, s)
		m.At(2*j+q, 2*i+q).Neg(s)
		m.Set(2*j+q, 2*j+q, c)
	}
	return m
}

// PreciseBeamSplitter is BeamSplitter (transmissivity t in [0, 1]) with sqrt(t) and
// sqrt(1-t) computed in big floats.
func PreciseBeamSplitter(n, i, j int, t float64) *BigMatrix {
	one := preciseInt(1)
	r := newPrecise().Sub(one, preciseF64(t))
	return preciseBeamSplitterCS(n, i, j, preciseSqrtF64(t), r.Sqrt(r))
}

// preciseTwoModeSqueezerCS returns the two-mode squeezer with sqrt(G) = c, sqrt(G-1) = s.
func preciseTwoModeSqueezerCS(n, i, j int, c, s *big.Float) *BigMatrix {
	checkModes(n, i, j)
	m := BigIdentity(2 * n)
	for _, k := range []int{2 * i, 2*i + 1, 2 * j, 2*j + 1} {
		m.Set(k, k, c)
	}
	m.Set(2*i, 2*j, s)
	m.At(2*i+1, 2*j+1).Neg(s)
	m.Set(2*j, 2*i, s)
	m.At(2*j+1, 2*i+1).Neg(s)
	return m
}

// PreciseTwoModeSqueezer is TwoModeSqueezer (gain G >= 1) with sqrt(G) and sqrt(G-1)
// computed in big floats.
func PreciseTwoModeSqueezer(n, i, j int, gain float64) *BigMatrix {
	gm1 := newPrecise().Sub(preciseF64(gain), preciseInt(1))
	return preciseTwoModeSqueezerCS(n, i, j, preciseSqrtF64(gain), gm1.Sqrt(gm1))
}

// PreciseSqueezer is Squeezer, diag(e^-r, e^r) on mode i, with e^r from the big-float series.
func PreciseSqueezer(n, i int, r float64) *BigMatrix {
	checkModes(n, i)
	m := BigIdentity(2 * n)
	er := preciseExpWork(preciseF64(r))
	m.Set(2*i+1, 2*i+1, er)
	m.At(2*i, 2*i).Quo(preciseInt(1), er)
	return m
}

// PrecisePhaseRotation is PhaseRotation with cos and sin from the big-float series.
func PrecisePhaseRotation(n, i int, theta float64) *BigMatrix {
	checkModes(n, i)
	m := BigIdentity(2 * n)
	c, s := preciseCosSinWork(preciseF64(theta))
	m.Set(2*i, 2*i, c)
	m.Set(2*i, 2*i+1, s)
	m.At(2*i+1, 2*i).Neg(s)
	m.Set(2*i+1, 2*i+1, c)
	return m
}

// PreciseTMSV is TMSV: [[a I, c Z], [c Z, a I]], a = 2N+1, c = 2 sqrt(N(N+1)), in big floats.
func PreciseTMSV(meanPhotons float64) *BigMatrix {
	n := preciseF64(meanPhotons)
	a := newPrecise().SetMantExp(n, 1)
	a.Add(a, preciseInt(1))
	c := newPrecise().Add(n, preciseInt(1))
	c.Mul(c, n)
	c.Sqrt(c)
	c.SetMantExp(c, 1)
	m := NewBigMatrix(4, 4)
	for k := 0; k < 4; k++ {
		m.Set(k, k, a)
	}
	m.Set(0, 2, c)
	m.Set(2, 0, c)
	m.At(1, 3).Neg(c)
	m.At(3, 1).Neg(c)
	return m
}

// PreciseSqueezedThermalPurification is SqueezedThermalPurification in big floats: TMSV(n)
// on (A', A), then the squeezer diag(e^-r, e^r) and the rotation by phi on A (mode 1).
func PreciseSqueezedThermalPurification(n, r, phi float64) *BigMatrix {
	v := PreciseTMSV(n)
	if r == 0 && phi == 0 {
		return v
	}
	t := BigMul(PrecisePhaseRotation(2, 1, phi), PreciseSqueezer(2, 1, r))
	return BigCongruence(t, v)
}

// BigDilation is Dilation in big floats: the environment input EnvIn (4x4, on env1, env2)
// and the symplectic U (8x8) on (A', A, env1, env2).
type BigDilation struct {
	EnvIn, U *BigMatrix
}

// PreciseDilation rebuilds the model's Stinespring dilation (documented on the Dilation type)
// in big floats from the model parameters, not from the float64 matrices.
func (m Model) PreciseDilation() (BigDilation, error) {
	if err := m.Validate(); err != nil {
		return BigDilation{}, err
	}
	switch m.Kind {
	case ThermalLoss:
		return BigDilation{EnvIn: PreciseTMSV(m.NB), U: PreciseBeamSplitter(4, 1, 2, m.Eta)}, nil
	case Amplifier:
		return BigDilation{EnvIn: PreciseTMSV(m.NB), U: PreciseTwoModeSqueezer(4, 1, 2, m.Gain)}, nil
	case AdditiveNoise:
		// Beam splitter t = 1/(1+xi): sqrt(t) = 1/sqrt(1+xi), sqrt(1-t) = sqrt(xi)/sqrt(1+xi);
		// then the two-mode squeezer G = 1+xi: sqrt(G) = sqrt(1+xi), sqrt(G-1) = sqrt(xi).
		xi := preciseF64(m.Xi)
		g := newPrecise().Add(xi, preciseInt(1))
		sg := newPrecise().Sqrt(g)
		sxi := newPrecise().Sqrt(xi)
		c := newPrecise().Quo(preciseInt(1), sg)
		s := newPrecise().Quo(sxi, sg)
		bs := preciseBeamSplitterCS(4, 1, 2, c, s)
		amp := preciseTwoModeSqueezerCS(4, 1, 3, sg, sxi)
		return BigDilation{EnvIn: BigIdentity(4), U: BigMul(amp, bs)}, nil
	}
	return BigDilation{}, fmt.Errorf("gaussian: no precise dilation for %v", m)
}

// Joint returns the covariance of (A', B, env1', env2') when the pure two-mode state in (on
// A', A) is sent through the dilation.
func (d *BigDilation) Joint(in *BigMatrix) *BigMatrix {
	return BigCongruence(d.U, BigDirectSum(in, d.EnvIn))
}

// ---------------------------------------------------------------------------------------
// Channels in big floats.

// checkShapes reports inconsistent or non-finite X, Y.
func (c *Channel) checkShapes() error {
	xr, xc := c.X.Dims()
	yr, yc := c.Y.Dims()
	if c.In < 0 || c.Out < 0 || xr != 2*c.Out || xc != 2*c.In || yr != 2*c.Out || yc != 2*c.Out {
		return fmt.Errorf("gaussian: channel %d -> %d modes with X %dx%d and Y %dx%d", c.In, c.Out, xr, xc, yr, yc)
	}
	if !c.X.IsFinite() || !c.Y.IsFinite() {
		return errors.New("gaussian: channel has a non-finite entry")
	}
	return nil
}

// bigY returns the symmetric part of Y in big floats (the antisymmetric part of Y does not
// act on covariances, which Apply symmetrizes).
func (c *Channel) bigY() *BigMatrix {
	y := BigFromMatrix(&c.Y)
	y.Symmetrize()
	return y
}

// PreciseApplyToTail is ApplyToTail in big floats: the channel acts on the last c.In modes
// of v and leaves the first keep modes alone; X and Y are taken as exact.
func (c *Channel) PreciseApplyToTail(v *BigMatrix, keep int) (*BigMatrix, error) {
	if err := c.checkShapes(); err != nil {
		return nil, err
	}
	if keep < 0 || v.rows != v.cols || v.rows != 2*(keep+c.In) {
		return nil, fmt.Errorf("gaussian: PreciseApplyToTail on %dx%d with %d kept and %d input modes", v.rows, v.cols, keep, c.In)
	}
	t := BigDirectSum(BigIdentity(2*keep), BigFromMatrix(&c.X))
	out := BigCongruence(t, v)
	out.Add(BigDirectSum(NewBigMatrix(2*keep, 2*keep), c.bigY()))
	return out, nil
}

// PreciseCPCertify returns the complete-positivity margin of the channel: the smallest
// eigenvalue of the Hermitian H = Y + i Omega_out - i X Omega_in X^T (Holevo, Werner, Phys.
// Rev. A 63, 032312 (2001)), computed in big floats as the smallest eigenvalue of its real
// symmetric form [[Y, -K], [K, Y]], K = Omega_out - X Omega_in X^T (same spectrum, each
// eigenvalue twice), minus PreciseCPSlack max(1, ||H||_F) for round-off, rounded to float64.
// X and Y are taken as exact. A margin > 0 certifies that the channel is completely positive.
// A map from a symplectic matrix with pure ancillas is exactly on the boundary (margin 0) and
// its float64 entries may miss it either way by round-off; see PreciseNudgeCP.
func PreciseCPCertify(ch *Channel) (margin float64, err error) {
	if err := ch.checkShapes(); err != nil {
		return math.Inf(-1), err
	}
	// K = Omega_out - X Omega_in X^T (antisymmetric: no BigCongruence, which symmetrizes).
	x := BigFromMatrix(&ch.X)
	k := negated(BigMulTrans(BigMul(x, BigOmega(ch.In)), x))
	k.Add(BigOmega(ch.Out))
	y := ch.bigY()
	m2 := 2 * ch.Out
	h := NewBigMatrix(2*m2, 2*m2)
	for i := 0; i < m2; i++ {
		for j := 0; j < m2; j++ {
			h.Set(i, j, y.At(i, j))
			h.Set(m2+i, m2+j, y.At(i, j))
			h.At(i, m2+j).Neg(k.At(i, j))
			h.Set(m2+i, j, k.At(i, j))
		}
	}
	// K is antisymmetric in exact arithmetic; round-off may leave it asymmetric at 2^-256.
	h.Symmetrize()
	ev, err := PreciseSymmetricEigenvalues(h)
	if err != nil {
		return math.Inf(-1), err
	}
	slack := newPrecise().SetFloat64(PreciseCPSlack * math.Max(1, h.frobenius()))
	return toFloat64(slack.Sub(ev[0], slack)), nil
}

// negated returns -m.
func negated(m *BigMatrix) *BigMatrix {
	out := m.Clone()
	for i := range out.d {
		out.d[i].Neg(&out.d[i])
	}
	return out
}

// PreciseNudgeCP returns a channel that PreciseCPCertify certifies as completely positive,
// and its margin. A certified ch is returned unchanged. A ch whose margin is negative by no
// more than PreciseCPNudgeLimit times max(1, max|X|^2, max|Y|) (the round-off of a float64
// map built from a symplectic matrix and pure ancillas) gets a little Gaussian noise: each
// diagonal entry of Y is raised by at least twice the deficit plus a few float64 ulps, which
// raises every eigenvalue of H by at least as much (Weyl's inequality), and the result is
// certified again. Any fixed completely positive map gives a valid squashing bound, and the
// bound moves continuously with Y, by about delta log2(1/delta) for a nudge delta. A larger
// deficit is an error: such a map is not completely positive.
func PreciseNudgeCP(ch *Channel) (Channel, float64, error) {
	margin, err := PreciseCPCertify(ch)
	if err != nil {
		return Channel{}, margin, err
	}
	if margin > 0 {
		return *ch, margin, nil
	}
	xa := ch.X.MaxAbs()
	scale := math.Max(1, math.Max(xa*xa, ch.Y.MaxAbs()))
	if -margin > PreciseCPNudgeLimit*scale {
		return Channel{}, margin, fmt.Errorf("gaussian: map is not completely positive (margin %.3g)", margin)
	}
	delta := 2*(-margin) + preciseNudgeUlps*0x1p-52*scale
	for attempt := 0; attempt < 4; attempt++ {
		out := *ch
		for i := 0; i < 2*ch.Out; i++ {
			yi := ch.Y.At(i, i)
			// Nextafter makes the float64 increment at least delta despite rounding.
			out.Y.Set(i, i, math.Nextafter(yi+delta, math.Inf(1)))
		}
		m, err := PreciseCPCertify(&out)
		if err != nil {
			return Channel{}, m, err
		}
		if m > 0 {
			return out, m, nil
		}
		delta *= 4
	}
	return Channel{}, margin, fmt.Errorf("gaussian: could not certify complete positivity by a nudge (margin %.3g)", margin)
}
