package squash

import (
	"math"
	"math/big"
	"math/rand/v2"
	"testing"

	"keyceiling/gaussian"
)

// Half with the direct phase-covariant route (halfCovariantDirect) gives the same values and
// errors, bit for bit, as with the route through the full factor, for all families, thermal
// and squeezed inputs, and maps with non-finite entries.
func TestHalfDirectMatchesFactorRoute(t *testing.T) {
	rng := rand.New(rand.NewPCG(77, 78))
	models := []gaussian.Model{benchModel, {Kind: gaussian.Amplifier, Gain: 1.5, NB: 0.2},
		{Kind: gaussian.AdditiveNoise, Xi: 0.4}, {Kind: gaussian.ThermalLoss, Eta: 0.3, NB: 0}}
	direct := 0
	for _, model := range models {
		for _, fam := range benchFamilies(t) {
			for trial := 0; trial < 20; trial++ {
				p := make([]float64, fam.NumParams())
				for j := range p {
					p[j] = 3*rng.Float64() - 1.5
					if trial%3 == 0 && rng.IntN(2) == 0 {
						p[j] = 0
					}
				}
				if trial == 0 {
					p = fam.Starts()[0]
				}
				var ch gaussian.Channel
				MapOf(fam, p, &ch)
				switch trial {
				case 17:
					ch.X.Set(0, 0, math.Inf(1))
				case 18:
					ch.X.Set(1, 1, math.NaN())
				case 19:
					ch.Y.Set(0, 0, -1)
				}
				for _, in := range []Input{Thermal(0.1), Thermal(3), Thermal(100), {N: 2, R: 0.4, Phi: 0.3}} {
					ev, err := NewEvaluator(model, in)
					if err != nil {
						t.Fatal(err)
					}
					v1, err1 := ev.Half(&ch)
					if ev.jointDiag {
						if _, ok, _ := ev.halfCovariantDirect(&ch); ok {
							direct++
						}
					}
					ev.jointDiag = false
					v2, err2 := ev.Half(&ch)
					same := v1 == v2 || (math.IsNaN(v1) && math.IsNaN(v2))
					if !same || (err1 == nil) != (err2 == nil) || (err1 != nil && err1.Error() != err2.Error()) {
						t.Errorf("%v, %s at %v, input %+v: direct %v (%v), factor route %v (%v)", model, fam.Name(), p, in, v1, err1, v2, err2)
					}
				}
			}
		}
	}
	if direct == 0 {
		t.Error("the direct route was never taken")
	}
	t.Logf("direct route taken %d times", direct)
}

// covSignsSweep is covSigns as first written (repeated sweeps until nothing changes).
func covSignsSweep(nm, nc int, sgn *[gaussian.MaxModes][gaussian.MaxDim / 2]int8) (eta [gaussian.MaxModes]int8, ok bool) {
	var zeta [gaussian.MaxDim / 2]int8
	for {
		seed := -1
		for i := 0; i < nm; i++ {
			if eta[i] == 0 {
				seed = i
				break
			}
		}
		if seed < 0 {
			break
		}
		eta[seed] = 1
		for changed := true; changed; {
			changed = false
			for i := 0; i < nm; i++ {
				for j := 0; j < nc; j++ {
					s := sgn[i][j]
					switch {
					case s == 0:
					case eta[i] != 0 && zeta[j] == 0:
						zeta[j], changed = s*eta[i], true
					case eta[i] == 0 && zeta[j] != 0:
						eta[i], changed = s*zeta[j], true
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

// covSigns and covSignsMask give the first version's signs on random sign patterns,
// consistent and not.
func TestCovSignsMatchesSweeps(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	consistent := 0
	for trial := 0; trial < 200000; trial++ {
		nm, nc := 1+rng.IntN(gaussian.MaxModes), 1+rng.IntN(gaussian.MaxDim/2)
		var sgn [gaussian.MaxModes][gaussian.MaxDim / 2]int8
		var eta [gaussian.MaxModes]int8
		var zeta [gaussian.MaxDim / 2]int8
		for i := range eta {
			eta[i] = int8(2*rng.IntN(2) - 1)
		}
		for j := range zeta {
			zeta[j] = int8(2*rng.IntN(2) - 1)
		}
		density := rng.Float64()
		for i := 0; i < nm; i++ {
			for j := 0; j < nc; j++ {
				if rng.Float64() < density {
					sgn[i][j] = eta[i] * zeta[j]
					if trial%4 == 0 && rng.IntN(20) == 0 {
						sgn[i][j] = -sgn[i][j]
					}
				}
			}
		}
		e1, ok1 := covSigns(nm, nc, &sgn)
		e2, ok2 := covSignsSweep(nm, nc, &sgn)
		if ok1 != ok2 || (ok1 && e1 != e2) {
			t.Fatalf("%d x %d %v: covSigns %v %v, sweeps %v %v", nm, nc, sgn, e1, ok1, e2, ok2)
		}
		var pos, neg [gaussian.MaxModes]uint16
		for i := 0; i < nm; i++ {
			for j := 0; j < nc; j++ {
				switch sgn[i][j] {
				case 1:
					pos[i] |= 1 << j
				case -1:
					neg[i] |= 1 << j
				}
			}
		}
		e3, ok3 := covSignsMask(nm, &pos, &neg)
		if ok3 != ok2 || (ok3 && e3 != e2) {
			t.Fatalf("%d x %d %v: covSignsMask %v %v, sweeps %v %v", nm, nc, sgn, e3, ok3, e2, ok2)
		}
		if ok1 {
			consistent++
		}
	}
	t.Logf("%d consistent cases", consistent)
}

// lq46 (pairwise sums, products taken before the reflection) against gaussian.LQ (plain
// sums) on random, graded (rows and entries scaled by up to 1e+-100) and sparse 4 x 6
// matrices: both are Householder LQ decompositions, backward stable row by row (Higham,
// Accuracy and Stability of Numerical Algorithms, 2nd ed., Thm. 19.4, for QR by columns),
// so L is lower triangular and (L L^T)_ik equals (A A^T)_ik to a few eps |a_i| |a_k|; on the
// unscaled matrices (well conditioned) the two L also agree entry by entry to a few
// eps |a_i| (the same reflections; a column may differ in sign where its pivot is
// negligible, so columns are compared up to sign). Matrices
// with entries near 1e+-200, whose sums of squares over- or underflow, go to gaussian.LQ
// itself: there the results are its own, bit for bit.
func TestLQ46AgainstLQ(t *testing.T) {
	const eps = 0x1p-52
	rng := rand.New(rand.NewPCG(43, 44))
	worstG, worstL := 0.0, 0.0
	delegated := 0
	for trial := 0; trial < 30000; trial++ {
		var a [24]float64
		extreme := trial%10 == 0
		for i := range a {
			scales := []float64{1, 1e-8, 1e8, 1e-100, 1e100}
			if extreme {
				scales = []float64{1, 1e-200, 1e200}
			}
			a[i] = rng.NormFloat64() * scales[rng.IntN(len(scales))*(trial%3)/2]
			if rng.IntN(4) == 0 {
				a[i] = 0
			}
		}
		l, g := a, a
		lb := lq46(&l)
		gaussian.LQ(g[:], 4, 6)
		// lb is the norm of the B row's last two entries of L, taken before steps 2 and 3:
		// equal to round-off in the B row's norm.
		nB := 0.0
		for j := 18; j < 24; j++ {
			nB = math.Hypot(nB, a[j])
		}
		if h := math.Hypot(l[20], l[21]); h <= math.MaxFloat64 && !(math.Abs(lb-h) <= 8*eps*nB) {
			t.Fatalf("trial %d: lq46's lb = %v, hypot(l32, l33) = %v", trial, lb, h)
		}
		if p := a; !lq46PlainOK(&p) {
			delegated++
			for i := range l {
				if math.Float64bits(l[i]) != math.Float64bits(g[i]) && !(math.IsNaN(l[i]) && math.IsNaN(g[i])) {
					t.Fatalf("trial %d: delegated, but lq46 %v, LQ %v", trial, l, g)
				}
			}
			continue
		}
		var norm [4]float64
		for i := 0; i < 4; i++ {
			for j := 0; j < 6; j++ {
				norm[i] = math.Hypot(norm[i], a[6*i+j])
			}
		}
		for i := 0; i < 4; i++ {
			for j := i + 1; j < 6; j++ {
				if l[6*i+j] != 0 {
					t.Fatalf("trial %d: lq46 left L[%d][%d] = %g above the diagonal", trial, i, j, l[6*i+j])
				}
			}
			for k := 0; k <= i; k++ {
				// (L L^T)_ik - (A A^T)_ik in extended precision, over |a_i| |a_k|.
				d := new(big.Float)
				for j := 0; j < 6; j++ {
					d.Add(d, new(big.Float).Mul(big.NewFloat(l[6*i+j]), big.NewFloat(l[6*k+j])))
					d.Sub(d, new(big.Float).Mul(big.NewFloat(a[6*i+j]), big.NewFloat(a[6*k+j])))
				}
				d.Quo(d, big.NewFloat(norm[i]))
				d.Quo(d, big.NewFloat(norm[k]))
				r, _ := d.Float64()
				worstG = max(worstG, math.Abs(r)/eps)
			}
			for j := 0; j <= i && trial%3 == 0 && !extreme; j++ {
				gij := g[6*i+j]
				if (l[6*j+j] < 0) != (g[6*j+j] < 0) {
					gij = -gij
				}
				worstL = max(worstL, math.Abs(l[6*i+j]-gij)/eps/norm[i])
			}
		}
	}
	if !(worstG <= 16 && worstL <= 64) || delegated == 0 {
		t.Errorf("largest |L L^T - A A^T| = %.1f eps |a_i||a_k| (limit 16), |L - L_LQ| = %.1f eps |a_i| (limit 64); %d delegated", worstG, worstL, delegated)
	}
	t.Logf("largest |L L^T - A A^T| = %.2f eps |a_i||a_k|, |L - gaussian.LQ's L| = %.2f eps |a_i|; %d of 30000 delegated to gaussian.LQ", worstG, worstL, delegated)
}

// covRowCheck6 (integer maxima and masks, no data-dependent branches) reaches covRowCheck's
// decisions: the same ok, and when ok the same largest entry and sign masks. Rows in
// phase-covariant form with random signs, entries within and just outside the tolerance,
// zeros, entries at the zero tolerance, infinities and NaNs.
func TestCovRowCheck6MatchesCovRowCheck(t *testing.T) {
	const eps = 0x1p-52
	rng := rand.New(rand.NewPCG(47, 48))
	oks := 0
	for trial := 0; trial < 200000; trial++ {
		var x, q [6]float64
		sc := []float64{1, 1e-8, 1e8, 1e-300, 1e300}[rng.IntN(5)]
		for j := range x {
			x[j] = sc * rng.NormFloat64()
			q[j] = x[j]
			if rng.IntN(2) == 0 {
				q[j] = -q[j]
			}
			switch rng.IntN(12) {
			case 0:
				x[j], q[j] = 0, 0
			case 1: // |q| - |x| near the tolerance 8 eps max
				q[j] = math.Copysign(math.Abs(x[j])+float64(rng.IntN(20))*eps*sc, q[j])
			case 2: // |x| at the zero tolerance
				x[j] = 8 * eps * sc * float64(rng.IntN(3))
				q[j] = -x[j]
			case 3:
				if rng.IntN(20) == 0 {
					x[j] = []float64{math.Inf(1), math.Inf(-1), math.NaN()}[rng.IntN(3)]
				}
			case 4:
				if rng.IntN(20) == 0 {
					q[j] = math.NaN()
				}
			}
		}
		mx1, p1, n1, ok1 := covRowCheck(x[:], q[:])
		mx2, p2, n2, ok2 := covRowCheck6(&x, &q)
		if ok1 != ok2 || ok1 && (mx1 != mx2 || p1 != p2 || n1 != n2) {
			t.Fatalf("trial %d: x %v q %v: covRowCheck %v %b %b %v, covRowCheck6 %v %b %b %v", trial, x, q, mx1, p1, n1, ok1, mx2, p2, n2, ok2)
		}
		if ok1 {
			oks++
		}
	}
	t.Logf("%d of 200000 rows accepted", oks)
}

// covSignsMask4 gives covSignsMask(4, ...)'s eta and ok: random masks over six columns,
// consistent systems (from random signs) and inconsistent ones (a flipped bit), rows
// disconnected from row 0 and empty rows.
func TestCovSignsMask4MatchesCovSignsMask(t *testing.T) {
	rng := rand.New(rand.NewPCG(51, 52))
	short := 0
	for trial := 0; trial < 200000; trial++ {
		var pos, neg [gaussian.MaxModes]uint16
		var eta [4]int
		var zeta [6]int
		for i := range eta {
			eta[i] = 2*rng.IntN(2) - 1
		}
		for j := range zeta {
			zeta[j] = 2*rng.IntN(2) - 1
		}
		for i := 0; i < 4; i++ {
			for j := 0; j < 6; j++ {
				if rng.IntN(3) == 0 {
					continue // zero entry
				}
				if eta[i]*zeta[j] > 0 {
					pos[i] |= 1 << j
				} else {
					neg[i] |= 1 << j
				}
			}
		}
		if trial%3 == 0 { // perturb: a flipped or moved bit may make it inconsistent
			i, j := rng.IntN(4), rng.IntN(6)
			pos[i] ^= 1 << j
			neg[i] &^= pos[i]
		}
		e1, ok1 := covSignsMask(4, &pos, &neg)
		e2, ok2 := covSignsMask4(&pos, &neg)
		if ok1 != ok2 || ok1 && e1 != e2 {
			t.Fatalf("trial %d: pos %b neg %b: covSignsMask %v %v, covSignsMask4 %v %v", trial, pos[:4], neg[:4], e1, ok1, e2, ok2)
		}
		if (pos[1]|neg[1])&(pos[0]|neg[0]) != 0 && (pos[2]|neg[2])&(pos[0]|neg[0]) != 0 && (pos[3]|neg[3])&(pos[0]|neg[0]) != 0 {
			short++
		}
	}
	t.Logf("%d of 200000 on the short path", short)
}

func lq46PlainOK(a *[24]float64) bool {
	_, ok := lq46Plain(a)
	return ok
}

// sqrtFactorY4 (4 x 4 Y on an array) gives the general loop's results and errors: diagonal
// and non-diagonal Y, negative eigenvalues within and beyond the allowance, signed zeros,
// NaN and infinite entries. The loop form is the same code for n != 4, run here on a
// 4 x 4 matrix through sqrtFactorYLoop.
func TestSqrtFactorY4MatchesLoop(t *testing.T) {
	rng := rand.New(rand.NewPCG(55, 56))
	for trial := 0; trial < 50000; trial++ {
		var y gaussian.Matrix
		y.Reset(4, 4)
		d := y.Data()
		for i := 0; i < 4; i++ {
			d[5*i] = math.Abs(rng.NormFloat64()) * []float64{1, 1e-8, 1e8}[rng.IntN(3)]
		}
		switch trial % 7 {
		case 1:
			d[1], d[4] = 0.1, 0.1 // not diagonal
		case 2:
			d[5*rng.IntN(4)] = -1e-13 // negative within the allowance
		case 3:
			d[5*rng.IntN(4)] = -1e-3 // negative beyond it
		case 4:
			d[1+rng.IntN(3)] = math.Copysign(0, -1)
		case 5:
			d[rng.IntN(16)] = []float64{math.NaN(), math.Inf(1), math.Inf(-1)}[rng.IntN(3)]
		}
		var g1, g2 gaussian.Matrix
		e1 := sqrtFactorY4(&y, (*[16]float64)(d[:16]), &g1)
		e2 := sqrtFactorYLoop(&y, &g2)
		if (e1 == nil) != (e2 == nil) || e1 != nil && e1.Error() != e2.Error() {
			t.Fatalf("trial %d: Y %v: errors %v and %v", trial, d[:16], e1, e2)
		}
		if e1 == nil {
			a, b := g1.Data(), g2.Data()
			for i := range a {
				if math.Float64bits(a[i]) != math.Float64bits(b[i]) && !(math.IsNaN(a[i]) && math.IsNaN(b[i])) {
					t.Fatalf("trial %d: Y %v: G %v and %v", trial, d[:16], a, b)
				}
			}
		}
	}
}
