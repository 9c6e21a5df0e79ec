package squash

import (
	"math"

	"keyceiling/gaussian"
)

// blocksDiagonal reports whether every 2 x 2 block of the r x c matrix a (row-major, r and
// c even) is diagonal: the entries with i + j odd are exactly zero.
func blocksDiagonal(a []float64, r, c int) bool {
	for i := 0; i < r; i++ {
		for j := 1 - i&1; j < c; j += 2 {
			if a[i*c+j] != 0 {
				return false
			}
		}
	}
	return true
}

// halfCovariantDirect is halfCovariant without the factor e.p: when the joint factor, X and
// G all have diagonal 2 x 2 blocks (e.jointDiag, checked here for X and G), the x-p and p-x
// entries of the factor of (E', A', B) are exact zeros, so only its x-x and p-p entries are
// formed (with the floating-point operations Half's product would use, less the terms that
// are products of exact zeros), and the checks of halfCovariant run on them. It reports
// ok = false, having decided nothing, when a block is not diagonal, an entry is not finite
// or the factor is not in phase-covariant form; Half's general code then runs and reaches
// the same decisions (and errors) from the full factor. The A' and B rows come precomputed
// (prepareAB); m = 2 goes to halfCovDirect2.
func (e *Evaluator) halfCovariantDirect(ch *gaussian.Channel) (float64, bool, error) {
	m := ch.Out
	de := 2 * m
	xd, gd, jd := ch.X.Data(), e.g.Data(), e.jointF.Data()
	if !e.jointDiag || !e.abOK {
		return 0, false, nil
	}
	if m == 2 {
		return e.halfCovDirect2((*[16]float64)(xd[:16]), (*[16]float64)(gd[:16]), (*[64]float64)(jd[:64]))
	}
	if !blocksDiagonal(xd, de, 4) || !blocksDiagonal(gd, de, de) {
		return 0, false, nil
	}
	const jc = 8
	nm, nc := m+2, 4+m
	xx, pp := &e.dxx, &e.dpp // every entry used below is written first
	var mxRow [gaussian.MaxModes]float64
	// Signs of P[p_i][p_j] P[x_i][x_j] as bit masks over the columns: pos, neg (neither if
	// both entries vanish to tolerance). The A' and B rows (prepareAB) come precomputed.
	var pos, neg [gaussian.MaxModes]uint16
	for i := 0; i < m; i++ {
		x, q := xd[2*i*4:2*i*4+4], xd[(2*i+1)*4:(2*i+1)*4+4]
		xi, pi := &xx[i], &pp[i]
		for j := 0; j < 4; j++ {
			// Half's x[0] F[4][c] + x[1] F[5][c] + x[2] F[6][c] + x[3] F[7][c] with the
			// exact zeros dropped.
			xi[j] = x[0]*jd[4*jc+2*j] + x[2]*jd[6*jc+2*j]
			pi[j] = q[1]*jd[5*jc+2*j+1] + q[3]*jd[7*jc+2*j+1]
		}
		for k := 0; k < m; k++ {
			xi[4+k] = gd[2*i*de+2*k]
			pi[4+k] = gd[(2*i+1)*de+2*k+1]
		}
		var ok bool
		mxRow[i], pos[i], neg[i], ok = covRowCheck(xi[:nc], pi[:nc])
		if !ok {
			return 0, false, nil
		}
	}
	for a := 0; a < 2; a++ {
		mxRow[m+a], pos[m+a], neg[m+a] = e.abMx[a], e.abPos[a], e.abNeg[a]
	}
	eta, ok := covSignsMask(nm, &pos, &neg)
	if !ok {
		return 0, false, nil
	}
	mxE := 0.0
	for i := 0; i < m; i++ {
		mxE = max(mxE, mxRow[i])
	}
	px := e.px[:nm*nc]
	for i := 0; i < m; i++ {
		copy(px[i*nc:(i+1)*nc], xx[i][:nc])
	}
	for a := 0; a < 2; a++ {
		row := px[(m+a)*nc : (m+a+1)*nc]
		copy(row, e.abx[a][:])
		clear(row[4:])
	}
	v, err := e.covTail(nm, nc, m, &eta, mxE, mxRow[m], mxRow[m+1])
	return v, true, err
}

// covRowCheck is halfCovariantDirect's check of one row of modes: the x-x entries x and p-p
// entries q of the row's columns. It returns the largest absolute entry, the sign masks
// (bit j of pos: q_j x_j > 0; of neg: < 0; neither: |x_j| within tolerance of 0) and whether
// the row is in phase-covariant form (|q_j| = |x_j| to 8 eps times the largest entry, all
// entries finite).
func covRowCheck(x, q []float64) (mx float64, pos, neg uint16, ok bool) {
	const eps = 0x1p-52
	q = q[:len(x)]
	for j, a := range x {
		b := q[j]
		if a := math.Abs(a); a > mx {
			mx = a
		}
		if b := math.Abs(b); b > mx {
			mx = b
		}
	}
	if !(mx <= math.MaxFloat64) {
		return mx, 0, 0, false // an infinite entry
	}
	tol := 8 * eps * mx
	for j, a := range x {
		b := q[j]
		if !(math.Abs(math.Abs(b)-math.Abs(a)) <= tol) {
			return mx, 0, 0, false // not in phase-covariant form, or a NaN entry
		}
		bit := uint16(1) << j
		switch {
		case math.Abs(a) <= tol:
		case (a > 0) == (b > 0):
			pos |= bit
		default:
			neg |= bit
		}
	}
	return mx, pos, neg, true
}

// prepareAB fills the Evaluator's precomputed A' and B rows of halfCovariantDirect from the
// joint factor (whose 2 x 2 blocks are diagonal): on the map's ancilla columns these rows
// are zero, which changes neither their largest entry nor their signs.
func (e *Evaluator) prepareAB() {
	const jc = 8
	jd := e.jointF.Data()
	e.abOK = true
	for a := 0; a < 2; a++ {
		for j := 0; j < 4; j++ {
			e.abx[a][j] = jd[2*a*jc+2*j]
			e.abp[a][j] = jd[(2*a+1)*jc+2*j+1]
		}
		var ok bool
		e.abMx[a], e.abPos[a], e.abNeg[a], ok = covRowCheck(e.abx[a][:], e.abp[a][:])
		e.abOK = e.abOK && ok
	}
}

// covSignsMask is covSigns with the signs as column bit masks (pos: sgn = +1, neg: sgn = -1;
// at most 16 columns): the same seeding (+1 at the first row of each connected component)
// and so the same eta.
func covSignsMask(nm int, pos, neg *[gaussian.MaxModes]uint16) (eta [gaussian.MaxModes]int8, ok bool) {
	var zp, zn uint16 // columns with zeta = +1, -1
	for seed := 0; seed < nm; seed++ {
		if eta[seed] != 0 {
			continue
		}
		eta[seed] = 1
		free := ^(zp | zn)
		zp |= pos[seed] & free
		zn |= neg[seed] & free
		for changed := true; changed; {
			changed = false
			for k := 0; k < nm; k++ {
				if eta[k] != 0 {
					continue
				}
				switch {
				case pos[k]&zp != 0 || neg[k]&zn != 0:
					eta[k] = 1
				case pos[k]&zn != 0 || neg[k]&zp != 0:
					eta[k] = -1
				default:
					continue
				}
				free := ^(zp | zn)
				if eta[k] == 1 {
					zp |= pos[k] & free
					zn |= neg[k] & free
				} else {
					zp |= neg[k] & free
					zn |= pos[k] & free
				}
				changed = true
			}
		}
	}
	for i := 0; i < nm; i++ {
		if eta[i] == 1 && (pos[i]&zn != 0 || neg[i]&zp != 0) ||
			eta[i] == -1 && (pos[i]&zp != 0 || neg[i]&zn != 0) {
			return eta, false
		}
	}
	return eta, true
}
