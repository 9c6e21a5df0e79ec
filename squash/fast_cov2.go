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
		mxRow[i], pos[i], neg[i], ok = covRowCheck(px[6*i:6*i+6], pp[i][:])
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
	eta, ok := covSignsMask(4, &pos, &neg)
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
	lq46(px)
	l00, l10, l11 := px[0], px[6], px[7]
	l20, l21, l22 := px[12], px[13], px[14]
	l30, l31, l32, l33 := px[18], px[19], px[20], px[21]
	detE := l00 * l11
	detE *= detE
	detA := l22 * l22
	detB := l33 * l33
	lb2 := hypotPlain(l32, l33) // B row of the (E', B) factor: l30, l31, lb2
	detBE := detE * lb2 * lb2

	// K = L^T eta L, with the operations of covTail's addCovTerm (eta = +-1: the products
	// with eta are exact).
	s0, s1, s2, s3 := float64(eta[0]), float64(eta[1]), float64(eta[2]), float64(eta[3])
	// E' (2 x 2).
	k00 := (s0*l00)*l00 + (s1*l10)*l10
	k01 := (s1 * l10) * l11
	k11 := (s1 * l11) * l11
	kE := [4]float64{k00, k01, k01, k11}
	// A'E' and BE' (3 x 3): K_E plus the A' (B) row's term.
	f0, f1, f2 := s2*l20, s2*l21, s2*l22
	kAE := [9]float64{
		k00 + f0*l20, k01 + f0*l21, f0 * l22,
		k01 + f1*l20, k11 + f1*l21, f1 * l22,
		f2 * l20, f2 * l21, f2 * l22,
	}
	g0, g1, g2 := s3*l30, s3*l31, s3*lb2
	kBE := [9]float64{
		k00 + g0*l30, k01 + g0*l31, g0 * lb2,
		k01 + g1*l30, k11 + g1*l31, g1 * lb2,
		g2 * l30, g2 * l31, g2 * lb2,
	}
	// A'BE' (4 x 4): K_A'E' plus the B row's term.
	h0, h1, h2, h3 := s3*l30, s3*l31, s3*l32, s3*l33
	kABE := [16]float64{
		kAE[0] + h0*l30, kAE[1] + h0*l31, kAE[2] + h0*l32, h0 * l33,
		kAE[3] + h1*l30, kAE[4] + h1*l31, kAE[5] + h1*l32, h1 * l33,
		kAE[6] + h2*l30, kAE[7] + h2*l31, kAE[8] + h2*l32, h2 * l33,
		h3 * l30, h3 * l31, h3 * l32, h3 * l33,
	}
	sp := &e.sp
	e.cov2.CovSpectra2(&kE, detE, &kAE, &kBE, &kABE, sp)
	sAE, err := covSpectrumEntropy(&sp[0], detE*detA, max(mxE, mxA))
	if err != nil {
		return math.NaN(), err
	}
	sBE, err := covSpectrumEntropy(&sp[1], detBE, max(mxE, mxB))
	if err != nil {
		return math.NaN(), err
	}
	sE, err := covSpectrumEntropy(&sp[2], detE, mxE)
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

// lq46 is gaussian.LQ(a, 4, 6) on an array: the same floating-point operations in the same
// order.
func lq46(a *[24]float64) {
	rows := [4]*[6]float64{(*[6]float64)(a[0:6]), (*[6]float64)(a[6:12]),
		(*[6]float64)(a[12:18]), (*[6]float64)(a[18:24])}
	for i := 0; i < 4; i++ {
		row := rows[i]
		s := 0.0
		for j := i; j < 6; j++ {
			s += row[j] * row[j]
		}
		var norm float64
		if s > 0x1p-900 && s < 0x1p900 {
			norm = math.Sqrt(s)
		} else {
			for j := i; j < 6; j++ {
				norm = math.Hypot(norm, row[j])
			}
		}
		if norm == 0 {
			continue
		}
		x0 := row[i]
		alpha := -norm
		if x0 < 0 {
			alpha = norm
		}
		row[i] = x0 - alpha
		beta := 1 / (norm * (norm + math.Abs(x0)))
		for k := i + 1; k < 4; k++ {
			rk := rows[k]
			dot := 0.0
			for j := i; j < 6; j++ {
				dot += rk[j] * row[j]
			}
			s := beta * dot
			for j := i; j < 6; j++ {
				rk[j] -= s * row[j]
			}
		}
		row[i] = alpha
		for j := i + 1; j < 6; j++ {
			row[j] = 0
		}
	}
}
