package squash

import (
	"math"
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

// lq46 gives gaussian.LQ's results bit for bit (random, graded and sparse 4 x 6 matrices).
func TestLQ46MatchesLQ(t *testing.T) {
	rng := rand.New(rand.NewPCG(43, 44))
	for trial := 0; trial < 100000; trial++ {
		var a [24]float64
		for i := range a {
			a[i] = rng.NormFloat64() * []float64{1, 1e-8, 1e8, 1e-200, 1e200}[rng.IntN(5)*(trial%3)/2]
			if rng.IntN(4) == 0 {
				a[i] = 0
			}
		}
		b := a
		lq46(&a)
		gaussian.LQ(b[:], 4, 6)
		for i := range a {
			if math.Float64bits(a[i]) != math.Float64bits(b[i]) && !(math.IsNaN(a[i]) && math.IsNaN(b[i])) {
				t.Fatalf("trial %d: lq46 %v, LQ %v", trial, a, b)
			}
		}
	}
}
