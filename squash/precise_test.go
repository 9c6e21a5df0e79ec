package squash

import (
	"errors"
	"math"
	"math/big"
	"math/rand/v2"
	"testing"

	"keyceiling/gaussian"
)

// Tolerances of these tests, each named once.
const (
	closedFormTol    = 1e-13 // PreciseHalf against the closed form at finite N_S (the brief)
	unconstrainedTol = 1e-12 // PreciseHalfUnconstrained against the closed form (the brief)
	noteTol          = 5e-7  // physics.md check values are given to 6 decimals
	agreeTol         = 1e-10 // PreciseHalf against the float64 Evaluator.Half (the brief)
	mapRoundTol      = 1e-14 // the float64 50:50 map misses the exact one by ~1e-16 (fl(sqrt 0.5))
	tailTol          = 1e-13 // limit against the objective at n = 1e18 (O(1/n) tail, about 1e-15)
	nudgeTol         = 1e-13 // relative change of Y made by gaussian.PreciseNudgeCP
)

// fiftyFifty is the squashing map of Takeoka, Guha, Wilde, Nat. Commun. 5, 5235 (2014): a
// 50:50 beam splitter between the channel's environment output e' and a vacuum, keeping one
// output; the environment's second mode (the purification f) is discarded.
func fiftyFifty() gaussian.Channel {
	bs := gaussian.BeamSplitter(3, 0, 2, 0.5)
	anc := gaussian.Vacuum(1)
	return gaussian.ChannelFromSymplectic(&bs, 2, &anc, []int{0})
}

// pureLossBound is g((1+eta) N/2) - g((1-eta) N/2) in big floats (Takeoka, Guha, Wilde, Nat.
// Commun. 5, 5235 (2014); physics.md "Reference bounds").
func pureLossBound(eta, n float64) float64 {
	p := new(big.Float).SetPrec(gaussian.PrecisePrec)
	e, nn := big.NewFloat(eta), big.NewFloat(n)
	one := big.NewFloat(1)
	a := new(big.Float).SetPrec(gaussian.PrecisePrec).Add(one, e)
	a.Mul(a, nn)
	a.SetMantExp(a, -1)
	b := new(big.Float).SetPrec(gaussian.PrecisePrec).Sub(one, e)
	b.Mul(b, nn)
	b.SetMantExp(b, -1)
	p.Sub(gaussian.PreciseG(a), gaussian.PreciseG(b))
	f, _ := p.Float64()
	return f
}

func TestPreciseHalfPureLossClosedForm(t *testing.T) {
	ch := fiftyFifty()
	if m, err := gaussian.PreciseCPCertify(&ch); err != nil || !(m > 0) {
		// With fl(sqrt 0.5)^2 > 1/2 the float64 map is strictly CP, by about 1e-16.
		t.Fatalf("50:50 map not certified: margin %v, err %v", m, err)
	}
	for _, eta := range []float64{0.5, 0.9, 0.3, 0.01} {
		for _, n := range []float64{1e-3, 1, 10, 1000, 1e6} {
			model := gaussian.Model{Kind: gaussian.ThermalLoss, Eta: eta, NB: 0}
			got, err := PreciseHalf(model, Thermal(n), &ch)
			if err != nil {
				t.Fatalf("eta %g, N_S %g: %v", eta, n, err)
			}
			if want := pureLossBound(eta, n); math.Abs(got-want) > closedFormTol {
				t.Errorf("eta %g, N_S %g: precise %.17g, closed form %.17g (diff %.3g)", eta, n, got, want, got-want)
			}
		}
	}
	// physics.md check values: pure loss eta = 0.5: N_S = 1 -> 0.821739; N_S = 10 -> 1.420833;
	// eta = 0.9, N_S = 1 -> 1.659070.
	for _, c := range []struct{ eta, n, want float64 }{{0.5, 1, 0.821739}, {0.5, 10, 1.420833}, {0.9, 1, 1.659070}} {
		got, err := PreciseHalf(gaussian.Model{Kind: gaussian.ThermalLoss, Eta: c.eta}, Thermal(c.n), &ch)
		if err != nil || math.Abs(got-c.want) > noteTol {
			t.Errorf("eta %g, N_S %g: %v (err %v), physics.md says %g", c.eta, c.n, got, err, c.want)
		}
	}
}

func TestPreciseHalfUnconstrainedPureLoss(t *testing.T) {
	// Source: log2((1+eta)/(1-eta)) (Takeoka, Guha, Wilde, Nat. Commun. 5, 5235 (2014)), and
	// physics.md: eta = 0.5 -> 1.584963, eta = 0.9 -> 4.247928.
	ch := fiftyFifty()
	notes := map[float64]float64{0.5: 1.584963, 0.9: 4.247928}
	for _, eta := range []float64{0.5, 0.9, 0.1} {
		model := gaussian.Model{Kind: gaussian.ThermalLoss, Eta: eta, NB: 0}
		v, e, err := PreciseHalfUnconstrained(model, &ch)
		if err != nil {
			t.Fatalf("eta %g: %v", eta, err)
		}
		want := math.Log2((1 + eta) / (1 - eta))
		if math.Abs(v-want) > unconstrainedTol {
			t.Errorf("eta %g: precise %.17g, closed form %.17g (diff %.3g)", eta, v, want, v-want)
		}
		if !(e < unconstrainedTol) || math.Abs(v-want) > e+mapRoundTol {
			t.Errorf("eta %g: error estimate %g for an actual difference %g", eta, e, v-want)
		}
		if w, ok := notes[eta]; ok && math.Abs(v-w) > noteTol {
			t.Errorf("eta %g: %v, physics.md says %g", eta, v, w)
		}
	}
}

// squeezedMap is a two-kept-mode map with squeezers and two-mode squeezers of parameter r
// on the environment and two vacuum ancillas (r = 3 is the families' MaxSqueezing).
func squeezedMap(r float64) gaussian.Channel {
	s := gaussian.Identity(8) // modes env1, env2, anc1, anc2
	for _, g := range []gaussian.Matrix{
		gaussian.BeamSplitter(4, 0, 2, 0.3),
		gaussian.Squeezer(4, 0, r),
		gaussian.TwoModeSqueezing(4, 0, 3, r),
		gaussian.Squeezer(4, 2, -r),
		gaussian.BeamSplitter(4, 2, 1, 0.6),
		gaussian.TwoModeSqueezing(4, 1, 2, r),
	} {
		var t gaussian.Matrix
		t.Mul(&g, &s)
		s = t
	}
	vac := gaussian.Vacuum(2)
	return gaussian.ChannelFromSymplectic(&s, 2, &vac, []int{0, 2})
}

func TestPreciseHalfUnconstrainedSqueezedMap(t *testing.T) {
	// Strong squeezing multiplies the covariance entries (here to about 5e30 at n = 1e27) and
	// with them the round-off; the routine must still return a small error estimate, and the
	// value must agree with the objective at n = 1e18, whose distance to the limit is O(1/n)
	// (common practice: about 1e-15 here, since the differences fall from 3e-12 at 1e15).
	raw := squeezedMap(3)
	ch, _, err := gaussian.PreciseNudgeCP(&raw)
	if err != nil {
		t.Fatal(err)
	}
	model := gaussian.Model{Kind: gaussian.ThermalLoss, Eta: 0.8, NB: 0.3}
	v, e, err := PreciseHalfUnconstrained(model, &ch)
	if err != nil {
		t.Fatal(err)
	}
	if !(e < unconstrainedTol) {
		t.Errorf("error estimate %g", e)
	}
	f18, err := PreciseHalf(model, Thermal(1e18), &ch)
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(v-f18) > tailTol {
		t.Errorf("limit %.17g, value at n = 1e18 %.17g", v, f18)
	}
}

func TestPreciseHalfUnconstrainedDiverges(t *testing.T) {
	// A map that replaces the environment by a vacuum makes the objective 1/2 I(A'; B), which
	// grows like log2 N_S (common practice: the mutual information of TMSV through a channel).
	ch := gaussian.Channel{In: 2, Out: 1, X: gaussian.NewMatrix(2, 4), Y: gaussian.Identity(2)}
	model := gaussian.Model{Kind: gaussian.ThermalLoss, Eta: 0.5}
	if _, _, err := PreciseHalfUnconstrained(model, &ch); !errors.Is(err, ErrNoLimit) {
		t.Errorf("err %v, want ErrNoLimit", err)
	}
}

func TestPreciseHalfRejectsNonCPMap(t *testing.T) {
	// X = 2 (I, 0), Y = 0: noiseless amplification of e' (not CP: Holevo, Werner, PRA 63,
	// 032312 (2001)). The output state is unphysical and must be an error, not a number.
	x := gaussian.NewMatrix(2, 4)
	x.Set(0, 0, 2)
	x.Set(1, 1, 2)
	ch := gaussian.Channel{In: 2, Out: 1, X: x, Y: gaussian.NewMatrix(2, 2)}
	model := gaussian.Model{Kind: gaussian.ThermalLoss, Eta: 0.5}
	if _, err := PreciseHalf(model, Thermal(1), &ch); !errors.Is(err, gaussian.ErrUnphysical) {
		t.Errorf("err %v, want ErrUnphysical", err)
	}
}

// randomMap builds a squashing map from a product of float64 beam splitters and two-mode
// squeezers on the 2 environment modes plus `anc` vacuum ancillas, keeping `keep` outputs.
func randomMap(rng *rand.Rand, anc, keep int) gaussian.Channel {
	n := 2 + anc
	s := gaussian.Identity(2 * n)
	for k := 0; k < 4*n; k++ {
		i := rng.IntN(n)
		j := (i + 1 + rng.IntN(n-1)) % n
		var g gaussian.Matrix
		if rng.IntN(2) == 0 {
			g = gaussian.BeamSplitter(n, i, j, rng.Float64())
		} else {
			g = gaussian.TwoModeSqueezer(n, i, j, 1+0.5*rng.Float64())
		}
		var t gaussian.Matrix
		t.Mul(&g, &s)
		s = t
	}
	modes := rng.Perm(n)[:keep]
	vac := gaussian.Vacuum(anc)
	return gaussian.ChannelFromSymplectic(&s, 2, &vac, modes)
}

func TestPreciseHalfAgreesWithFloat64(t *testing.T) {
	// Source: the float64 objective Evaluator.Half (a different code path: float64 dilation,
	// Cholesky-Jacobi spectra). A map from a symplectic matrix with vacuum ancillas is on the
	// boundary of complete positivity and its float64 entries may miss it by round-off, so it
	// is first made certifiably CP by gaussian.PreciseNudgeCP (a change of Y below 1e-13).
	rng := rand.New(rand.NewPCG(21, 22))
	models := []gaussian.Model{
		{Kind: gaussian.ThermalLoss, Eta: 0.8, NB: 0.3},
		{Kind: gaussian.Amplifier, Gain: 1.7, NB: 0.2},
		{Kind: gaussian.AdditiveNoise, Xi: 0.3},
	}
	inputs := []Input{Thermal(2), {N: 1, R: 0.3, Phi: 0.7}}
	for trial := 0; trial < 6; trial++ {
		model := models[trial%len(models)]
		in := inputs[trial%len(inputs)]
		raw := randomMap(rng, 1+trial%2, 1+trial%2)
		ch, margin, err := gaussian.PreciseNudgeCP(&raw)
		if err != nil {
			t.Fatalf("trial %d: %v", trial, err)
		}
		if d := ch.Y.MaxAbsDiff(&raw.Y); d > nudgeTol*math.Max(1, raw.Y.MaxAbs()) {
			t.Fatalf("trial %d: nudge moved Y by %g", trial, d)
		}
		ev, err := NewEvaluator(model, in)
		if err != nil {
			t.Fatal(err)
		}
		want, err := ev.Half(&raw)
		if err != nil {
			t.Fatalf("trial %d: float64: %v", trial, err)
		}
		got, err := PreciseHalf(model, in, &ch)
		if err != nil {
			t.Fatalf("trial %d (margin %g): precise: %v", trial, margin, err)
		}
		if math.Abs(got-want) > agreeTol {
			t.Errorf("trial %d, %v, %+v, %d kept: precise %.15g, float64 %.15g (diff %.3g)",
				trial, model, in, raw.Out, got, want, got-want)
		}
	}
}

// BenchmarkPreciseHalf2Modes times one PreciseHalf call for a map keeping 2 modes.
func BenchmarkPreciseHalf2Modes(b *testing.B) {
	rng := rand.New(rand.NewPCG(23, 24))
	raw := randomMap(rng, 2, 2)
	ch, _, err := gaussian.PreciseNudgeCP(&raw)
	if err != nil {
		b.Fatal(err)
	}
	model := gaussian.Model{Kind: gaussian.ThermalLoss, Eta: 0.9, NB: 1}
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if _, err := PreciseHalf(model, Thermal(1), &ch); err != nil {
			b.Fatal(err)
		}
	}
}
