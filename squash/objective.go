package squash

import (
	"fmt"
	"math"

	"keyceiling/gaussian"
)

// Evaluator computes the squashing objective 1/2 I(A'; B | E') for one channel and one pure
// input state, for any number of squashing maps. It owns all scratch space: Half does not
// allocate. An Evaluator is not safe for concurrent use; give each worker its own.
//
// Modes of the joint state are ordered (A', B, env1', env2') as in gaussian.Dilation; the
// squashing map acts on the two environment modes and outputs E' (see gaussian's package doc
// for quadrature order and units). The state is held in square-root form, V = F F^T, so that
// small symplectic eigenvalues stay accurate at large input energies (gaussian.FactorSpectrum).
type Evaluator struct {
	jointF gaussian.Matrix // factor of the (A', B, env) covariance, 8 x 8
	g      gaussian.Matrix // factor of Y
	// Scratch of Half: the factor of (E', A', B), row-major with stride cols, then its
	// lower-triangular LQ factor; the matrices R^T Omega R of the subsystems.
	p                  [gaussian.MaxDim * gaussian.MaxDim]float64
	mE, mAE, mBE, mABE [gaussian.MaxDim * gaussian.MaxDim]float64
	px                 [gaussian.MaxModes * gaussian.MaxModes]float64
	// jointDiag: every 2 x 2 block of jointF is diagonal (thermal inputs; see
	// halfCovariantDirect).
	jointDiag bool
	// Scratch of halfCovariantDirect: x-x and p-p entries of the factor, by modes.
	dxx, dpp [gaussian.MaxModes][gaussian.MaxDim / 2]float64
	// Scratch of covTail: the four spectra and their batch.
	sp    [4]gaussian.Spectrum
	batch gaussian.CovBatch
	// Scratch of covTail2.
	cov2 gaussian.CovScratch2
	// The A' and B rows of halfCovariantDirect (they depend on the joint state only): their
	// x-x and p-p entries on the four joint columns, largest absolute entries, sign masks, and
	// whether they pass the phase-covariant check (set when jointDiag).
	abx, abp     [2][4]float64
	abMx         [2]float64
	abPos, abNeg [2]uint16
	abOK         bool
}

// NewEvaluator prepares the joint state of the model's dilation for the input in.
func NewEvaluator(model gaussian.Model, in Input) (*Evaluator, error) {
	if err := model.Validate(); err != nil {
		return nil, err
	}
	if !in.Valid() {
		return nil, fmt.Errorf("invalid input state %+v", in)
	}
	e := &Evaluator{}
	d := model.Dilation()
	f := in.Factor()
	d.JointFactor(&f, &e.jointF)
	if !e.jointF.IsFinite() {
		return nil, fmt.Errorf("joint state of %v is not finite", model)
	}
	e.jointDiag = blocksDiagonal(e.jointF.Data(), 8, 8)
	if e.jointDiag {
		e.prepareAB()
	}
	return e, nil
}

// JointFactor returns the factor F of the (A', B, env1', env2') covariance F F^T.
func (e *Evaluator) JointFactor() gaussian.Matrix { return e.jointF }

// YAllowance is how far below zero an eigenvalue of a map's Y may fall (relative to
// max(1, max|Y_ij|)) and still count as round-off. A completely positive map has Y >= 0.
const YAllowance = 1e-12

// Half returns 1/2 I(A'; B | E') in bits for the squashing map ch on the environment:
// 1/2 [S(A'E') + S(BE') - S(E') - S(A'BE')]. ch must have gaussian.EnvModes inputs and at
// most gaussian.MaxDim/4 outputs. An unphysical intermediate state (from a map that is not
// completely positive, or from round-off) is an error, never a number.
//
// The four entropies share one LQ decomposition: with the factor's rows ordered (E', A', B),
// P = L Q and the leading rows of the lower-triangular L are square factors of E' and A'E'
// (and all of L of A'BE'); BE' needs only a 2 x 4 LQ of L's B rows on the A' and B columns.
// The matrices R^T Omega R of the nested subsystems are built by adding one mode's rank-2
// term at a time (gaussian.SkewFactorSpectrum takes it from there). Factors in real
// phase-covariant form (thermal inputs with Split or TMSSplit maps) take the n x n route of
// halfCovariant instead; when the joint factor, X and G all have diagonal 2 x 2 blocks,
// halfCovariantDirect takes it without forming the full factor (same values and errors).
func (e *Evaluator) Half(ch *gaussian.Channel) (float64, error) {
	if ch.In != gaussian.EnvModes {
		return math.NaN(), fmt.Errorf("squashing map has %d input modes, want %d", ch.In, gaussian.EnvModes)
	}
	m := ch.Out
	if m < 1 || m > gaussian.MaxDim/4 {
		return math.NaN(), fmt.Errorf("squashing map keeps %d modes, want 1..%d", m, gaussian.MaxDim/4)
	}
	if err := sqrtFactorY(&ch.Y, &e.g); err != nil {
		return math.NaN(), fmt.Errorf("map's Y: %w", err)
	}
	if v, ok, err := e.halfCovariantDirect(ch); ok {
		return v, err
	}
	// Factor of (E', A', B): rows of E' are [X F_env, G]; rows of A' and B unchanged.
	const jc = 8 // columns of the joint factor
	de := 2 * m  // rows of E'
	d := de + 4  // rows of the factor
	cols := jc + de
	p := e.p[:d*cols]
	jd, xd, gd := e.jointF.Data(), ch.X.Data(), e.g.Data()
	mxE, mxA, mxB := 0.0, 0.0, 0.0
	finite := true
	for a := 0; a < de; a++ {
		row := p[a*cols : (a+1)*cols]
		x := xd[a*4 : a*4+4]
		for j := 0; j < jc; j++ {
			row[j] = x[0]*jd[4*jc+j] + x[1]*jd[5*jc+j] + x[2]*jd[6*jc+j] + x[3]*jd[7*jc+j]
		}
		copy(row[jc:], gd[a*de:(a+1)*de])
		mxE, finite = rowMaxAbs(row, mxE, finite)
	}
	for a := 0; a < 4; a++ {
		row := p[(de+a)*cols : (de+a+1)*cols]
		copy(row, jd[a*jc:(a+1)*jc])
		clear(row[jc:])
		if a < 2 {
			mxA, finite = rowMaxAbs(row, mxA, finite)
		} else {
			mxB, finite = rowMaxAbs(row, mxB, finite)
		}
	}
	if !finite {
		return math.NaN(), fmt.Errorf("gaussian: non-finite factor entry: %w", gaussian.ErrUnphysical)
	}
	if v, ok, err := e.halfCovariant(d/2, cols/2, m, mxE, mxA, mxB); ok {
		return v, err
	}
	gaussian.LQ(p, d, cols)
	l := func(i, j int) float64 { return p[i*cols+j] }
	detE := 1.0
	for i := 0; i < de; i++ {
		detE *= l(i, i)
	}
	detE = math.Abs(detE)
	detA := math.Abs(l(de, de) * l(de+1, de+1))
	detB := math.Abs(l(de+2, de+2) * l(de+3, de+3))
	// B rows of the (E', B) factor: [L_BE, r'] with r' the LQ of L's B rows on the A' and B
	// columns.
	var xb, pb [gaussian.MaxDim]float64
	var t [8]float64
	copy(t[0:4], p[(de+2)*cols+de:(de+2)*cols+de+4])
	copy(t[4:8], p[(de+3)*cols+de:(de+3)*cols+de+4])
	gaussian.LQ(t[:], 2, 4)
	copy(xb[:de], p[(de+2)*cols:(de+2)*cols+de])
	copy(pb[:de], p[(de+3)*cols:(de+3)*cols+de])
	xb[de], pb[de], pb[de+1] = t[0], t[4], t[5]
	detBE := detE * math.Abs(t[0]*t[5])

	// R^T Omega R of E' (de x de), then A'E' and BE' ((de+2) x (de+2)), then A'BE' (d x d).
	mE := e.mE[:de*de]
	clear(mE)
	for k := 0; k < m; k++ {
		addModeTerm(mE, de, p[2*k*cols:], p[(2*k+1)*cols:], 2*k+2)
	}
	d2 := de + 2
	mAE, mBE, mABE := e.mAE[:d2*d2], e.mBE[:d2*d2], e.mABE[:d*d]
	clear(mAE)
	for i := 0; i < de; i++ {
		copy(mAE[i*d2:i*d2+de], mE[i*de:(i+1)*de])
	}
	copy(mBE, mAE)
	addModeTerm(mAE, d2, p[de*cols:], p[(de+1)*cols:], d2)
	addModeTerm(mBE, d2, xb[:], pb[:], d2)
	clear(mABE)
	for i := 0; i < d2; i++ {
		copy(mABE[i*d:i*d+d2], mAE[i*d2:(i+1)*d2])
	}
	addModeTerm(mABE, d, p[(de+2)*cols:], p[(de+3)*cols:], d)

	// Entropies in the order A'E', BE', E', A'BE' (the first failure is reported).
	sAE, err := subEntropy(mAE, d2, detE*detA, math.Max(mxE, mxA))
	if err != nil {
		return math.NaN(), err
	}
	sBE, err := subEntropy(mBE, d2, detBE, math.Max(mxE, mxB))
	if err != nil {
		return math.NaN(), err
	}
	sE, err := subEntropy(mE, de, detE, mxE)
	if err != nil {
		return math.NaN(), err
	}
	sABE, err := subEntropy(mABE, d, detE*detA*detB, math.Max(mxE, math.Max(mxA, mxB)))
	if err != nil {
		return math.NaN(), err
	}
	return 0.5 * (sAE + sBE - sE - sABE), nil
}

// rowMaxAbs folds the row's largest absolute entry into mx and its finiteness into ok.
func rowMaxAbs(row []float64, mx float64, ok bool) (float64, bool) {
	for _, v := range row {
		if a := math.Abs(v); a > mx {
			mx = a
		} else if a != a || a > math.MaxFloat64 {
			ok = false
		}
	}
	return mx, ok && mx <= math.MaxFloat64
}

// addModeTerm adds one mode's term x^T p - p^T x of R^T Omega R (x, p the mode's two rows
// of R, of which the first c entries are used) to the antisymmetric matrix m of stride dm.
func addModeTerm(m []float64, dm int, x, p []float64, c int) {
	x, p = x[:c], p[:c]
	for i := 0; i < c; i++ {
		xi, pi := x[i], p[i]
		row := m[i*dm : i*dm+c]
		for j := range row {
			row[j] += xi*p[j] - pi*x[j]
		}
	}
}

// subEntropy is the entropy of the subsystem with R^T Omega R = m (dm x dm, overwritten) and
// |det R| = det; mx is the largest absolute entry of its rows of the factor, which sets the
// round-off allowance as gaussian.FactorAllowance does.
func subEntropy(m []float64, dm int, det, mx float64) (float64, error) {
	if !(det > 0) {
		return 0, fmt.Errorf("gaussian: singular covariance (det R = %g): %w", det, gaussian.ErrUnphysical)
	}
	var sp gaussian.Spectrum
	gaussian.SkewFactorSpectrum(m, dm, det, &sp)
	return spectrumEntropy(&sp, gaussian.PurityTolerance*math.Max(1, mx*mx))
}

// halfCovariant is Half's route for factors in real phase-covariant form (see
// gaussian.CovariantSpectrum), as thermal inputs and maps built from real beam splitters and
// two-mode squeezers (Split, TMSSplit) produce: every 2 x 2 block of the factor e.p (nm
// modes of rows, nc modes of columns) is diagonal, with P[p_i][p_j] = eta_i zeta_j
// P[x_i][x_j]. It reports ok = false, having changed nothing, when the factor is not of that
// form (to round-off: 8 eps times the row's largest entry); the general route then runs.
func (e *Evaluator) halfCovariant(nm, nc, m int, mxE, mxA, mxB float64) (float64, bool, error) {
	const eps = 0x1p-52
	cols := 2 * nc
	p := e.p[:2*nm*cols]
	var sgn [gaussian.MaxModes][gaussian.MaxDim / 2]int8 // sign of P[p_i][p_j] P[x_i][x_j], 0 if both vanish
	for i := 0; i < nm; i++ {
		x, q := p[2*i*cols:(2*i+1)*cols], p[(2*i+1)*cols:(2*i+2)*cols]
		mx := 0.0
		for j := range x {
			if a := math.Abs(x[j]); a > mx {
				mx = a
			}
			if a := math.Abs(q[j]); a > mx {
				mx = a
			}
		}
		tol := 8 * eps * mx
		for j := 0; j < nc; j++ {
			xx, xp, px, pp := x[2*j], x[2*j+1], q[2*j], q[2*j+1]
			if math.Abs(xp) > tol || math.Abs(px) > tol || math.Abs(math.Abs(pp)-math.Abs(xx)) > tol {
				return 0, false, nil
			}
			switch {
			case math.Abs(xx) <= tol:
			case (xx > 0) == (pp > 0):
				sgn[i][j] = 1
			default:
				sgn[i][j] = -1
			}
		}
	}
	eta, ok := covSigns(nm, nc, &sgn)
	if !ok {
		return 0, false, nil
	}
	px := e.px[:nm*nc]
	for i := 0; i < nm; i++ {
		for j := 0; j < nc; j++ {
			px[i*nc+j] = p[2*i*cols+2*j]
		}
	}
	v, err := e.covTail(nm, nc, m, &eta, mxE, mxA, mxB)
	return v, true, err
}

// covSigns finds signs eta (rows) and zeta (columns) with sgn[i][j] = eta_i zeta_j wherever
// sgn[i][j] != 0, or reports false. Each connected component of the nonzero entries is
// seeded with eta = +1 at its first row (rows without nonzero entries get +1), and the
// signs spread along the entries; the result does not depend on the order of spreading.
func covSigns(nm, nc int, sgn *[gaussian.MaxModes][gaussian.MaxDim / 2]int8) (eta [gaussian.MaxModes]int8, ok bool) {
	var zeta [gaussian.MaxDim / 2]int8
	var stack [gaussian.MaxModes]int
	for seed := 0; seed < nm; seed++ {
		if eta[seed] != 0 {
			continue
		}
		eta[seed] = 1
		stack[0] = seed
		top := 1
		for top > 0 {
			top--
			i := stack[top]
			for j := 0; j < nc; j++ {
				s := sgn[i][j]
				if s == 0 || zeta[j] != 0 {
					continue
				}
				zj := s * eta[i]
				zeta[j] = zj
				for k := 0; k < nm; k++ {
					if t := sgn[k][j]; t != 0 && eta[k] == 0 {
						eta[k] = t * zj
						stack[top] = k
						top++
					}
				}
			}
		}
	}
	for i := 0; i < nm; i++ {
		for j := 0; j < nc; j++ {
			if s := sgn[i][j]; s != 0 && s != eta[i]*zeta[j] {
				return eta, false
			}
		}
	}
	return eta, true
}

// covTail finishes halfCovariant from P_x in e.px (nm x nc, row stride nc) and the row signs
// eta (for m = 2 by covTail2, the same operations written for those sizes).
func (e *Evaluator) covTail(nm, nc, m int, eta *[gaussian.MaxModes]int8, mxE, mxA, mxB float64) (float64, error) {
	if m == 2 {
		return e.covTail2(eta, mxE, mxA, mxB)
	}
	px := e.px[:nm*nc]
	// LQ factor L of P_x; rows E' (m), A', B.
	gaussian.LQ(px, nm, nc)
	l := func(i, j int) float64 { return px[i*nc+j] }
	detE := 1.0
	for i := 0; i < m; i++ {
		detE *= l(i, i)
	}
	detE *= detE
	detA := l(m, m) * l(m, m)
	detB := l(m+1, m+1) * l(m+1, m+1)
	var lb [gaussian.MaxModes]float64 // B row of the (E', B) factor
	copy(lb[:m], px[(m+1)*nc:(m+1)*nc+m])
	lb[m] = math.Hypot(l(m+1, m), l(m+1, m+1))
	detBE := detE * lb[m] * lb[m]

	// K = L^T eta L of E' (m x m), A'E' and BE' ((m+1) x (m+1)), A'BE' ((m+2) x (m+2)).
	kE := e.mE[:m*m]
	clear(kE)
	for i := 0; i < m; i++ {
		addCovTerm(kE, m, float64(eta[i]), px[i*nc:i*nc+i+1])
	}
	m1, m2 := m+1, m+2
	kAE, kBE, kABE := e.mAE[:m1*m1], e.mBE[:m1*m1], e.mABE[:m2*m2]
	clear(kAE)
	for i := 0; i < m; i++ {
		copy(kAE[i*m1:i*m1+m], kE[i*m:(i+1)*m])
	}
	copy(kBE, kAE)
	addCovTerm(kAE, m1, float64(eta[m]), px[m*nc:m*nc+m1])
	addCovTerm(kBE, m1, float64(eta[m+1]), lb[:m1])
	clear(kABE)
	for i := 0; i < m1; i++ {
		copy(kABE[i*m2:i*m2+m1], kAE[i*m1:(i+1)*m1])
	}
	addCovTerm(kABE, m2, float64(eta[m+1]), px[(m+1)*nc:(m+1)*nc+m2])

	// The four spectra at once (their QL iterations interleave), then the entropies in the
	// order A'E', BE', E', A'BE' (the first failure is reported).
	ps := [4]gaussian.CovProblem{
		{K: kAE, N: m1, Det: detE * detA, Out: &e.sp[0]},
		{K: kBE, N: m1, Det: detBE, Out: &e.sp[1]},
		{K: kE, N: m, Det: detE, Out: &e.sp[2]},
		{K: kABE, N: m2, Det: detE * detA * detB, Out: &e.sp[3]},
	}
	e.batch.Spectra(ps[:])
	sAE, err := covSpectrumEntropy(&e.sp[0], detE*detA, max(mxE, mxA))
	if err != nil {
		return math.NaN(), err
	}
	sBE, err := covSpectrumEntropy(&e.sp[1], detBE, max(mxE, mxB))
	if err != nil {
		return math.NaN(), err
	}
	sE, err := covSpectrumEntropy(&e.sp[2], detE, mxE)
	if err != nil {
		return math.NaN(), err
	}
	sABE, err := covSpectrumEntropy(&e.sp[3], detE*detA*detB, max(mxE, mxA, mxB))
	if err != nil {
		return math.NaN(), err
	}
	return 0.5 * (sAE + sBE - sE - sABE), nil
}

// addCovTerm adds s r r^T (r = the first len(r) entries of a row of L) to the symmetric
// matrix k of stride dk.
func addCovTerm(k []float64, dk int, s float64, r []float64) {
	for i, ri := range r {
		f := s * ri
		row := k[i*dk : i*dk+len(r)]
		for j, rj := range r {
			row[j] += f * rj
		}
	}
}

// covSpectrumEntropy is subEntropy for the phase-covariant route, given the spectrum sp of
// K = L^T eta L (gaussian.CovariantSpectrum) and det = |det L|^2.
func covSpectrumEntropy(sp *gaussian.Spectrum, det, mx float64) (float64, error) {
	if !(det > 0) {
		return 0, fmt.Errorf("gaussian: singular covariance (det R = %g): %w", det, gaussian.ErrUnphysical)
	}
	return spectrumEntropy(sp, gaussian.PurityTolerance*max(1, mx*mx))
}

// sqrtFactorY is gaussian.SymmetricSqrtFactor(y, g, YAllowance max(1, max|Y_ij|)) with a
// shortcut for a diagonal Y (maps whose ancillas each feed one kept quadrature pair, like
// Split and TMSSplit): there the Jacobi method stops before its first rotation, so
// G = diag(sqrt(Y_ii)) is the same result, computed without copying matrices.
func sqrtFactorY(y, g *gaussian.Matrix) error {
	n, _ := y.Dims()
	yd := y.Data()
	if n == 4 {
		return sqrtFactorY4(y, (*[16]float64)(yd[:16]), g)
	}
	return sqrtFactorYLoop(y, g)
}

// sqrtFactorYLoop is sqrtFactorY for any size.
func sqrtFactorYLoop(y, g *gaussian.Matrix) error {
	n, _ := y.Dims()
	yd := y.Data()
	// The largest |Y_ij| as the largest bit pattern of the magnitudes (finite magnitudes order
	// as their bits do, IEEE 754-2019 sec. 3.4, and a NaN's bits exceed +Inf's, so a NaN
	// entry makes mx a NaN): a conditional move, where the float comparison was a branch
	// that the diagonal entries, in no predictable order, mispredicted.
	var mb uint64
	diagonal := true
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			v := yd[i*n+j]
			if a := math.Float64bits(v) &^ (1 << 63); a > mb {
				mb = a
			}
			if i != j && v != 0 {
				diagonal = false
			}
		}
	}
	mx := math.Float64frombits(mb)
	allowance := YAllowance * max(1, mx)
	if !diagonal || mx != mx || mx > math.MaxFloat64 {
		return gaussian.SymmetricSqrtFactor(y, g, allowance)
	}
	g.Reset(n, n)
	gd := g.Data()
	for i := 0; i < n; i++ {
		lam := yd[i*n+i]
		if lam < -allowance {
			return fmt.Errorf("gaussian: matrix has eigenvalue %g < 0: not positive semidefinite", lam)
		}
		gd[i*n+i] = math.Sqrt(max(lam, 0))
	}
	return nil
}

// sqrtFactorY4 is sqrtFactorY for a 4 x 4 Y (two kept modes) on an array: the same results
// and errors, with the off-diagonal test as one comparison of an OR of bit patterns.
func sqrtFactorY4(y *gaussian.Matrix, yd *[16]float64, g *gaussian.Matrix) error {
	var mb, off uint64
	for i, v := range yd {
		a := math.Float64bits(v) &^ (1 << 63)
		if a > mb {
			mb = a
		}
		if i%5 != 0 {
			off |= a
		}
	}
	mx := math.Float64frombits(mb)
	allowance := YAllowance * max(1, mx)
	if off != 0 || mx != mx || mx > math.MaxFloat64 {
		return gaussian.SymmetricSqrtFactor(y, g, allowance)
	}
	g.Reset(4, 4)
	gd := (*[16]float64)(g.Data()[:16])
	for i := 0; i < 16; i += 5 {
		lam := yd[i]
		if lam < -allowance {
			return fmt.Errorf("gaussian: matrix has eigenvalue %g < 0: not positive semidefinite", lam)
		}
		gd[i] = math.Sqrt(max(lam, 0))
	}
	return nil
}
