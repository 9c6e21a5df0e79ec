package squash

import (
	"math"

	"keyceiling/gaussian"
)

// halfCovDirect2 is halfCovariantDirect for m = 2 kept modes (X and G 4 x 4, the joint
// factor xd, gd, jd), written for these sizes: the same entries, checks and decisions, the
// rows formed in place in e.px.
func (e *Evaluator) halfCovDirect2(xd, gd *[16]float64, jd *[64]float64) (float64, bool, error) {
	// Diagonal 2 x 2 blocks: the entries with i + j odd vanish.
	if xd[1] != 0 || xd[3] != 0 || xd[4] != 0 || xd[6] != 0 ||
		xd[9] != 0 || xd[11] != 0 || xd[12] != 0 || xd[14] != 0 ||
		gd[1] != 0 || gd[3] != 0 || gd[4] != 0 || gd[6] != 0 ||
		gd[9] != 0 || gd[11] != 0 || gd[12] != 0 || gd[14] != 0 {
		return 0, false, nil
	}
	px := (*[24]float64)(e.px[:24])
	var pp [2][6]float64
	for i := 0; i < 2; i++ {
		x, q := xd[8*i:8*i+4], xd[8*i+4:8*i+8]
		xi := (*[6]float64)(px[6*i : 6*i+6])
		pi := &pp[i]
		for j := 0; j < 4; j++ {
			// Half's x[0] F[4][c] + x[1] F[5][c] + x[2] F[6][c] + x[3] F[7][c] with the
			// exact zeros dropped.
			xi[j] = x[0]*jd[32+2*j] + x[2]*jd[48+2*j]
			pi[j] = q[1]*jd[40+2*j+1] + q[3]*jd[56+2*j+1]
		}
		xi[4], xi[5] = gd[8*i], gd[8*i+2]
		pi[4], pi[5] = gd[8*i+5], gd[8*i+7]
	}
	var mxRow [4]float64
	var pos, neg [gaussian.MaxModes]uint16
	for i := 0; i < 2; i++ {
		var ok bool
		mxRow[i], pos[i], neg[i], ok = covRowCheck6((*[6]float64)(px[6*i:6*i+6]), &pp[i])
		if !ok {
			return 0, false, nil
		}
	}
	for a := 0; a < 2; a++ {
		mxRow[2+a], pos[2+a], neg[2+a] = e.abMx[a], e.abPos[a], e.abNeg[a]
		row := (*[6]float64)(px[12+6*a : 18+6*a])
		ab := &e.abx[a]
		row[0], row[1], row[2], row[3], row[4], row[5] = ab[0], ab[1], ab[2], ab[3], 0, 0
	}
	eta, ok := covSignsMask4(&pos, &neg)
	if !ok {
		return 0, false, nil
	}
	v, err := e.covTail2(&eta, max(mxRow[0], mxRow[1]), mxRow[2], mxRow[3])
	return v, true, err
}

// covTail2 is covTail for m = 2 kept modes (the TMSSplit case: P_x is 4 x 6, rows E'1,
// E'2, A', B), written for these sizes: the same LQ decomposition and the same K matrices,
// the spectra by gaussian.CovScratch2.
func (e *Evaluator) covTail2(eta *[gaussian.MaxModes]int8, mxE, mxA, mxB float64) (float64, error) {
	px := (*[24]float64)(e.px[:24])
	lb2 := lq46(px) // B row of the (E', B) factor: l30, l31, lb2
	l00, l10, l11 := px[0], px[6], px[7]
	l20, l21, l22 := px[12], px[13], px[14]
	l30, l31, l32, l33 := px[18], px[19], px[20], px[21]
	detE := l00 * l11
	detE *= detE
	detA := l22 * l22
	detB := l33 * l33
	detBE := detE * lb2 * lb2

	// K = L^T eta L, with the operations of covTail's addCovTerm (eta = +-1: the products
	// with eta are exact).
	s0, s1, s2, s3 := float64(eta[0]), float64(eta[1]), float64(eta[2]), float64(eta[3])
	// E' (2 x 2).
	k00 := (s0*l00)*l00 + (s1*l10)*l10
	k01 := (s1 * l10) * l11
	k11 := (s1 * l11) * l11
	kE := [4]float64{k00, k01, k01, k11}
	// A'E' and BE' (3 x 3): K_E plus the A' (B) row's term. Only the upper triangles:
	// CovSpectra2 reads no more (its QL fallback mirrors them).
	f0, f1, f2 := s2*l20, s2*l21, s2*l22
	kAE := [9]float64{
		k00 + f0*l20, k01 + f0*l21, f0 * l22,
		0, k11 + f1*l21, f1 * l22,
		0, 0, f2 * l22,
	}
	g0, g1, g2 := s3*l30, s3*l31, s3*lb2
	kBE := [9]float64{
		k00 + g0*l30, k01 + g0*l31, g0 * lb2,
		0, k11 + g1*l31, g1 * lb2,
		0, 0, g2 * lb2,
	}
	// A'BE' (4 x 4): K_A'E' plus the B row's term.
	h0, h1, h2, h3 := s3*l30, s3*l31, s3*l32, s3*l33
	kABE := [16]float64{
		kAE[0] + h0*l30, kAE[1] + h0*l31, kAE[2] + h0*l32, h0 * l33,
		0, kAE[4] + h1*l31, kAE[5] + h1*l32, h1 * l33,
		0, 0, kAE[8] + h2*l32, h2 * l33,
		0, 0, 0, h3 * l33,
	}
	sp := &e.sp
	gaussian.CovariantSpectrum(kE[:], 2, detE, &sp[2])
	sE, err := covSpectrumEntropy(&sp[2], detE, mxE)
	if err != nil {
		return math.NaN(), err
	}
	e.cov2.CovSpectra2(&kAE, &kBE, &kABE, sp)
	sAE, err := covSpectrumEntropy(&sp[0], detE*detA, max(mxE, mxA))
	if err != nil {
		return math.NaN(), err
	}
	sBE, err := covSpectrumEntropy(&sp[1], detBE, max(mxE, mxB))
	if err != nil {
		return math.NaN(), err
	}
	sABE, err := covSpectrumEntropy(&sp[3], detE*detA*detB, max(mxE, mxA, mxB))
	if err != nil {
		return math.NaN(), err
	}
	return 0.5 * (sAE + sBE - sE - sABE), nil
}

// hypotPlain is math.Hypot(a, b) by a plain square root unless that over- or underflows.
func hypotPlain(a, b float64) float64 {
	h := a*a + b*b
	if h > 0x1p-900 && h < 0x1p900 {
		return math.Sqrt(h)
	}
	return math.Hypot(a, b)
}

// covRowCheck6 is covRowCheck for six columns, without data-dependent branches: the
// magnitudes of finite floats order as their bit patterns do (IEEE 754-2019, sec. 3.4), so
// the largest entry, the largest ||q_j| - |x_j|| and the sign masks are integer maxima,
// comparisons and shifts, which the compiler makes conditional moves; the entries of a
// row arrive in no predictable order, and a mispredicted branch costs more than these
// operations. The same results as covRowCheck whenever it reports ok; when it does not,
// ok is false here too (a NaN entry is caught by the first test instead of the second).
func covRowCheck6(x, q *[6]float64) (mx float64, pos, neg uint16, ok bool) {
	const eps = 0x1p-52
	const abs = 1<<63 - 1
	var mb uint64
	for j := 0; j < 6; j++ {
		a, b := math.Float64bits(x[j])&abs, math.Float64bits(q[j])&abs
		if a > mb {
			mb = a
		}
		if b > mb {
			mb = b
		}
	}
	mx = math.Float64frombits(mb)
	if !(mx <= math.MaxFloat64) {
		return mx, 0, 0, false // an infinite or NaN entry
	}
	tol := 8 * eps * mx
	tb := math.Float64bits(tol)
	var db uint64
	var p, n uint64
	for j := 0; j < 6; j++ {
		a, b := x[j], q[j]
		d := math.Float64bits(math.Abs(b)-math.Abs(a)) & abs
		if d > db {
			db = d
		}
		// nz: |a| > tol; diff: the signs of a and b differ.
		nz := (tb - math.Float64bits(a)&abs) >> 63
		diff := (math.Float64bits(a) ^ math.Float64bits(b)) >> 63
		p |= (nz &^ diff) << j
		n |= (nz & diff) << j
	}
	if !(math.Float64frombits(db) <= tol) {
		return mx, 0, 0, false // not in phase-covariant form
	}
	return mx, uint16(p), uint16(n), true
}

// lq46 is the LQ decomposition of the 4 x 6 matrix a (rows E'1, E'2, A', B) in place by
// Householder reflections, as gaussian.LQ(a, 4, 6) computes it, with shorter dependency
// chains: the sums of squares and the products with the later rows are summed pairwise,
// and the products are taken with the row before its reflection, so that they run
// alongside its norm (with v = row - alpha e_i, v.r = row.r - alpha r_i). The same
// reflections, rounded differently: L agrees with gaussian.LQ's to a few ulps of the rows'
// norms, and L L^T with A A^T as closely (TestLQ46AgainstLQ). A row whose sum of squares
// over- or underflows (entries beyond about 2^+-450, far from any covariance factor here)
// sends the whole matrix to gaussian.LQ, which takes such norms by math.Hypot.
//
// It also returns lb = hypot(l_32, l_33), the last entry of the B row of the (E', B)
// factor: the norm of the B row on columns 2..5 once E'1 and E'2 are eliminated, which the
// reflections of steps 2 and 3 leave unchanged, so it is known two steps early (off the
// chain to the K matrices).
func lq46(a *[24]float64) (lb float64) {
	orig := *a
	lb, ok := lq46Plain(a)
	if !ok {
		*a = orig
		gaussian.LQ(a[:], 4, 6)
		lb = hypotPlain(a[20], a[21])
	}
	return lb
}

// lq46Plain is lq46 for rows whose sums of squares are in (2^-900, 2^900) (then no product
// of two entries over- or underflows to a loss); it reports false, with a overwritten, at
// the first row that is not (a zero row included: gaussian.LQ skips it).
func lq46Plain(a *[24]float64) (lb float64, ok bool) {
	r0, r1, r2, r3 := (*[6]float64)(a[0:6]), (*[6]float64)(a[6:12]), (*[6]float64)(a[12:18]), (*[6]float64)(a[18:24])
	// Step 0: row 0 on columns 0..5.
	s := (r0[0]*r0[0] + r0[1]*r0[1]) + (r0[2]*r0[2] + r0[3]*r0[3]) + (r0[4]*r0[4] + r0[5]*r0[5])
	d1 := (r1[0]*r0[0] + r1[1]*r0[1]) + (r1[2]*r0[2] + r1[3]*r0[3]) + (r1[4]*r0[4] + r1[5]*r0[5])
	d2 := (r2[0]*r0[0] + r2[1]*r0[1]) + (r2[2]*r0[2] + r2[3]*r0[3]) + (r2[4]*r0[4] + r2[5]*r0[5])
	d3 := (r3[0]*r0[0] + r3[1]*r0[1]) + (r3[2]*r0[2] + r3[3]*r0[3]) + (r3[4]*r0[4] + r3[5]*r0[5])
	if !lqInRange(s) {
		return 0, false
	}
	alpha, v0, beta := lqReflector(r0[0], s)
	s1, s2, s3 := (d1-r1[0]*alpha)*beta, (d2-r2[0]*alpha)*beta, (d3-r3[0]*alpha)*beta
	r1[0] -= s1 * v0
	r2[0] -= s2 * v0
	r3[0] -= s3 * v0
	for j := 1; j < 6; j++ {
		r1[j] -= s1 * r0[j]
		r2[j] -= s2 * r0[j]
		r3[j] -= s3 * r0[j]
	}
	r0[0], r0[1], r0[2], r0[3], r0[4], r0[5] = alpha, 0, 0, 0, 0, 0

	// Step 1: row 1 on columns 1..5.
	s = (r1[1]*r1[1] + r1[2]*r1[2]) + (r1[3]*r1[3] + r1[4]*r1[4]) + r1[5]*r1[5]
	d2 = (r2[1]*r1[1] + r2[2]*r1[2]) + (r2[3]*r1[3] + r2[4]*r1[4]) + r2[5]*r1[5]
	d3 = (r3[1]*r1[1] + r3[2]*r1[2]) + (r3[3]*r1[3] + r3[4]*r1[4]) + r3[5]*r1[5]
	if !lqInRange(s) {
		return 0, false
	}
	alpha, v0, beta = lqReflector(r1[1], s)
	s2, s3 = (d2-r2[1]*alpha)*beta, (d3-r3[1]*alpha)*beta
	r2[1] -= s2 * v0
	r3[1] -= s3 * v0
	for j := 2; j < 6; j++ {
		r2[j] -= s2 * r1[j]
		r3[j] -= s3 * r1[j]
	}
	r1[1], r1[2], r1[3], r1[4], r1[5] = alpha, 0, 0, 0, 0
	lb = math.Sqrt((r3[2]*r3[2] + r3[3]*r3[3]) + (r3[4]*r3[4] + r3[5]*r3[5]))

	// Step 2: row 2 on columns 2..5.
	s = (r2[2]*r2[2] + r2[3]*r2[3]) + (r2[4]*r2[4] + r2[5]*r2[5])
	d3 = (r3[2]*r2[2] + r3[3]*r2[3]) + (r3[4]*r2[4] + r3[5]*r2[5])
	if !lqInRange(s) {
		return 0, false
	}
	alpha, v0, beta = lqReflector(r2[2], s)
	s3 = (d3 - r3[2]*alpha) * beta
	r3[2] -= s3 * v0
	for j := 3; j < 6; j++ {
		r3[j] -= s3 * r2[j]
	}
	r2[2], r2[3], r2[4], r2[5] = alpha, 0, 0, 0

	// Step 3: row 3 on columns 3..5.
	s = (r3[3]*r3[3] + r3[4]*r3[4]) + r3[5]*r3[5]
	if !lqInRange(s) {
		return 0, false
	}
	alpha, _, _ = lqReflector(r3[3], s)
	r3[3], r3[4], r3[5] = alpha, 0, 0
	return lb, true
}

// lqReflector is gaussian.LQ's Householder reflector for a row with leading entry x0 and
// sum of squares s > 0: alpha = -sgn(x0) |row| (the new diagonal entry), v0 = x0 - alpha
// (the reflector's leading entry; the others are the row's) and beta = 2 / (v.v).
func lqReflector(x0, s float64) (alpha, v0, beta float64) {
	norm := math.Sqrt(s)
	alpha = -norm
	if x0 < 0 {
		alpha = norm
	}
	return alpha, x0 - alpha, 1 / (norm * (norm + math.Abs(x0)))
}

// lqInRange reports whether a sum of squares s is in (2^-900, 2^900).
func lqInRange(s float64) bool { return s > 0x1p-900 && s < 0x1p900 }

// covSignsMask4 is covSignsMask(4, pos, neg), the same eta and ok, with a short path for
// the usual case where rows 1 to 3 (E'2, A', B) each share a column with row 0 (E'1): the
// sign of each row then follows from that overlap alone (in a consistent system every
// overlap gives the same sign, and the solution seeded with eta_0 = +1 is unique), and the
// system is consistent exactly when no column is required to be both +1 and -1 (P and N
// below disjoint), which is what covSignsMask's final check tests. Other cases go to
// covSignsMask.
func covSignsMask4(pos, neg *[gaussian.MaxModes]uint16) (eta [gaussian.MaxModes]int8, ok bool) {
	zp, zn := pos[0], neg[0]
	p, n := zp, zn // columns required +1, -1
	eta[0] = 1
	for k := 1; k < 4; k++ {
		agree := pos[k]&zp | neg[k]&zn
		differ := pos[k]&zn | neg[k]&zp
		switch {
		case agree != 0:
			eta[k] = 1
			p |= pos[k]
			n |= neg[k]
		case differ != 0:
			eta[k] = -1
			p |= neg[k]
			n |= pos[k]
		default:
			return covSignsMask(4, pos, neg)
		}
	}
	return eta, p&n == 0
}
