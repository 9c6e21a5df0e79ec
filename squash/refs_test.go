package squash_test

import (
	"errors"
	"fmt"
	"math"
	"slices"
	"testing"

	"keyceiling/gaussian"
	"keyceiling/squash"
)

var refsInf = math.Inf(1)

// Check values of the physics notes ("Check values computed from the closed forms above",
// given to 6 decimals, and the data-processing values of "Targets", given to 5). Sources of
// the closed forms: Takeoka, Guha, Wilde, Nat. Commun. 5, 5235 (2014) (TGW, data processing);
// Pirandola, Laurenza, Ottaviani, Banchi, Nat. Commun. 8, 15043 (2017) (PLOB = ree);
// Garcia-Patron et al., PRL 102, 210501 (2009) (rci); Holevo, Werner, PRA 63, 032312 (2001)
// (ci).
func TestRefsCheckValues(t *testing.T) {
	cases := []struct {
		name      string
		got, want float64
		decimals  int
	}{
		{"g(0.5)", gaussian.G(0.5), 1.377444, 6},
		{"g(1)", gaussian.G(1), 2, 6},
		{"g(10)", gaussian.G(10), 4.834467, 6},
		{"pure loss 0.5, unconstrained", squash.TGWPureLoss(0.5, refsInf), 1.584963, 6},
		{"pure loss 0.9, unconstrained", squash.TGWPureLoss(0.9, refsInf), 4.247928, 6},
		{"pure loss 0.5, N_S = 1", squash.TGWPureLoss(0.5, 1), 0.821739, 6},
		{"pure loss 0.5, N_S = 10", squash.TGWPureLoss(0.5, 10), 1.420833, 6},
		{"pure loss 0.9, N_S = 1", squash.TGWPureLoss(0.9, 1), 1.659070, 6},
		{"thermal loss (0.9, 1) PLOB", squash.REEThermalLoss(0.9, 1), 1.473931, 6},
		{"thermal loss (0.9, 1) RCI", squash.RCIThermalLoss(0.9, 1), 1.321928, 6},
		{"thermal loss (0.9, 1) CI", squash.CIThermalLoss(0.9, 1), 1.169925, 6},
		{"thermal loss (0.9, 1) eta'", squash.DataProcessingEta(0.9, 1), 0.818182, 6},
		{"thermal loss (0.9, 1) data processing", squash.DataProcessingThermalLoss(0.9, 1, refsInf), 3.321928, 6},
		{"thermal loss (0.5, 0.5) PLOB", squash.REEThermalLoss(0.5, 0.5), 0.122556, 6},
		{"thermal loss (0.5, 0.5) RCI (negative, clamped)", squash.RCIThermalLoss(0.5, 0.5), 0, 6},
		{"thermal loss (0.5, 0.5) data processing", squash.DataProcessingThermalLoss(0.5, 0.5, refsInf), 1.222392, 6},
		{"amplifier (2, 0.5) PLOB", squash.REEAmplifier(2, 0.5), 0.122556, 6},
		{"additive 0.1 PLOB", squash.REEAdditive(0.1), 2.023503, 6},
		{"additive 0.1 lower", squash.CIAdditive(0.1), 1.879233, 6},
		{"target: thermal loss (0.9, 1), N_S = 1, data processing", squash.DataProcessingThermalLoss(0.9, 1, 1), 1.45453, 5},
		{"target: thermal loss (0.5, 0.5), N_S = 100, data processing", squash.DataProcessingThermalLoss(0.5, 0.5, 100), 1.20887, 5},
	}
	for _, c := range cases {
		tol := 0.5*math.Pow(10, -float64(c.decimals)) + 1e-12
		if math.Abs(c.got-c.want) > tol {
			t.Errorf("%s = %.8f, want %.*f", c.name, c.got, c.decimals, c.want)
		}
	}
	// The notes say the RCI of (0.5, 0.5) is negative before clamping: 1 - g(0.5) < 0.
	if raw := -math.Log2(0.5) - gaussian.G(0.5); raw >= 0 {
		t.Errorf("unclamped RCI(0.5, 0.5) = %g, the notes say negative", raw)
	}
}

// The lower bounds at finite N_S, from the covariance matrix of a TMSV(N_S) input, approach
// the unconstrained closed forms as N_S grows (N_S = 1e2, 1e4, 1e6: the differences shrink),
// and stay below them for thermal loss (an energy constraint cannot raise an achievable RCI
// beyond its N_S -> infinity value; Garcia-Patron et al. 2009). Closed forms: RCI and CI of
// thermal loss (Garcia-Patron et al. 2009; Holevo, Werner 2001), CI of the amplifier and of
// additive noise (Holevo, Werner 2001; Pirandola et al. 2017), and for additive noise the RCI
// has the same limit as the CI (both log2 N_S + O(1) terms of S(A') and S(B) cancel).
func TestRefsFiniteNSConverges(t *testing.T) {
	type lim struct {
		model    gaussian.Model
		rci, ci  float64 // unconstrained values (NaN: no closed form checked)
		rciBelow bool
	}
	lims := []lim{
		{gaussian.Model{Kind: gaussian.ThermalLoss, Eta: 0.9, NB: 1}, squash.RCIThermalLoss(0.9, 1), squash.CIThermalLoss(0.9, 1), true},
		{gaussian.Model{Kind: gaussian.ThermalLoss, Eta: 0.9}, squash.RCIThermalLoss(0.9, 0), squash.CIThermalLoss(0.9, 0), true},
		{gaussian.Model{Kind: gaussian.ThermalLoss, Eta: 0.3, NB: 0.05}, squash.RCIThermalLoss(0.3, 0.05), math.NaN(), true},
		{gaussian.Model{Kind: gaussian.Amplifier, Gain: 1.5}, math.NaN(), squash.CIAmplifier(1.5, 0), false},
		{gaussian.Model{Kind: gaussian.Amplifier, Gain: 1.2, NB: 0.1}, math.NaN(), squash.CIAmplifier(1.2, 0.1), false},
		{gaussian.Model{Kind: gaussian.AdditiveNoise, Xi: 0.1}, squash.CIAdditive(0.1), squash.CIAdditive(0.1), false},
	}
	for _, l := range lims {
		for _, which := range []string{"rci", "ci"} {
			want := l.rci
			if which == "ci" {
				want = l.ci
			}
			if math.IsNaN(want) {
				continue
			}
			if !(want > 0) {
				t.Fatalf("%v %s: closed form %g is clamped; pick a model where it is positive", l.model, which, want)
			}
			var diffs []float64
			for _, ns := range []float64{1e2, 1e4, 1e6} {
				rci, ci, err := squash.TMSVCoherentInformation(l.model, ns)
				if err != nil {
					t.Errorf("%v, N_S = %g: %v", l.model, ns, err)
					diffs = append(diffs, math.NaN())
					continue
				}
				got := rci
				if which == "ci" {
					got = ci
				}
				if which == "rci" && l.rciBelow && got > want+1e-9 {
					t.Errorf("%v, N_S = %g: finite RCI %.12g above its unconstrained value %.12g", l.model, ns, got, want)
				}
				diffs = append(diffs, math.Abs(got-want))
			}
			// The correction is O(1/N_S) (a factor 100 per step); ask for a factor 10.
			if !(diffs[1] < diffs[0]/10 && diffs[2] < diffs[1]/10 && diffs[2] < 1e-4) {
				t.Errorf("%v %s: |finite - closed form| at N_S = 1e2, 1e4, 1e6 = %.3g, %.3g, %.3g: want each 10x smaller, below 1e-4 at 1e6",
					l.model, which, diffs[0], diffs[1], diffs[2])
			}
		}
	}
	// Invalid N_S.
	m := gaussian.Model{Kind: gaussian.ThermalLoss, Eta: 0.5}
	for _, ns := range []float64{-1, math.NaN(), refsInf} {
		if _, _, err := squash.TMSVCoherentInformation(m, ns); err == nil {
			t.Errorf("TMSVCoherentInformation at N_S = %g: want an error", ns)
		}
	}
}

// Physical orderings on a grid of thermal-loss channels:
//   - CI <= RCI <= PLOB for the unconstrained closed forms (log2 eta <= 0 and
//     -N_B log2 eta >= 0; Holevo, Werner 2001; Garcia-Patron et al. 2009; Pirandola et al.
//     2017). At finite N_S the CI may exceed the RCI: CI - RCI = S(B) - S(A'), positive when
//     the output carries more photons than the input;
//   - every upper bound >= every lower bound (a violation would mean a wrong bound): the
//     data-processing bound and PLOB against the unconstrained RCI and CI, and at finite N_S
//     against the RCI and CI of a TMSV(N_S) input;
//   - the data-processing bound is the TGW bound at eta' <= eta, so it lies at or below TGW at
//     the same eta (equality at N_B = 0): adding thermal noise cannot raise the bound
//     (Takeoka, Guha, Wilde 2014, and monotonicity of TGW in eta).
func TestRefsOrderingsThermalLoss(t *testing.T) {
	for _, eta := range []float64{0.01, 0.1, 0.5, 0.9, 0.99} {
		for _, nb := range []float64{0, 0.01, 0.1, 0.5, 1, 5} {
			ree, rci, ci := squash.REEThermalLoss(eta, nb), squash.RCIThermalLoss(eta, nb), squash.CIThermalLoss(eta, nb)
			dp := squash.DataProcessingThermalLoss(eta, nb, refsInf)
			tgw := squash.TGWPureLoss(eta, refsInf)
			name := fmt.Sprintf("thermal loss (%g, %g)", eta, nb)
			if !(ci <= rci && rci <= ree) {
				t.Errorf("%s: want CI %.9g <= RCI %.9g <= PLOB %.9g", name, ci, rci, ree)
			}
			if !(dp >= rci && dp >= ci) {
				t.Errorf("%s: data processing %.9g below a lower bound (RCI %.9g, CI %.9g)", name, dp, rci, ci)
			}
			if dp > tgw*(1+1e-15) || (nb == 0 && dp != tgw) {
				t.Errorf("%s: data processing %.12g, TGW at the same eta %.12g: want <= (= at N_B = 0)", name, dp, tgw)
			}
			for _, ns := range []float64{0.1, 1, 10, 100} {
				frci, fci, err := squash.TMSVCoherentInformation(gaussian.Model{Kind: gaussian.ThermalLoss, Eta: eta, NB: nb}, ns)
				if err != nil {
					t.Errorf("%s, N_S = %g: %v", name, ns, err)
					continue
				}
				dpn := squash.DataProcessingThermalLoss(eta, nb, ns)
				lo := math.Max(frci, fci)
				if dpn < lo-1e-9 || ree < lo-1e-9 {
					t.Errorf("%s, N_S = %g: upper bounds (data processing %.9g, PLOB %.9g) below the TMSV rate %.9g",
						name, ns, dpn, ree, lo)
				}
			}
		}
	}
	// Amplifier and additive noise: PLOB >= the closed-form CI and the finite-N_S rates.
	for _, g := range []float64{1.05, 1.5, 2, 10} {
		for _, nb := range []float64{0, 0.1, 0.5} {
			m := gaussian.Model{Kind: gaussian.Amplifier, Gain: g, NB: nb}
			ree := squash.REEAmplifier(g, nb)
			if ci := squash.CIAmplifier(g, nb); ci > ree {
				t.Errorf("%v: CI %.9g > PLOB %.9g", m, ci, ree)
			}
			for _, ns := range []float64{0.1, 1, 10, 100} {
				rci, ci, err := squash.TMSVCoherentInformation(m, ns)
				if err != nil || math.Max(rci, ci) > ree+1e-9 {
					t.Errorf("%v, N_S = %g: TMSV rates (%.9g, %.9g, err %v) above PLOB %.9g", m, ns, rci, ci, err, ree)
				}
			}
		}
	}
	for _, xi := range []float64{0.01, 0.1, 0.5, 0.9} {
		m := gaussian.Model{Kind: gaussian.AdditiveNoise, Xi: xi}
		ree := squash.REEAdditive(xi)
		if ci := squash.CIAdditive(xi); ci > ree {
			t.Errorf("%v: CI %.9g > PLOB %.9g", m, ci, ree)
		}
		for _, ns := range []float64{0.1, 1, 10, 100} {
			rci, ci, err := squash.TMSVCoherentInformation(m, ns)
			if err != nil || math.Max(rci, ci) > ree+1e-9 {
				t.Errorf("%v, N_S = %g: TMSV rates (%.9g, %.9g, err %v) above PLOB %.9g", m, ns, rci, ci, err, ree)
			}
		}
	}
}

// The TGW bound (Takeoka, Guha, Wilde 2014): the energy-constrained form grows with N_S towards
// the unconstrained one, with the 1/N_S correction of g's expansion; for a pure-loss channel it is at least the capacity -log2(1-eta)
// (Pirandola et al. 2017, where RCI = PLOB); and at high loss it falls like (2/ln 2) eta,
// about twice -log2(1-eta) ~ eta/ln 2 (physics notes, rules of thumb).
func TestRefsTGWProperties(t *testing.T) {
	for _, eta := range []float64{1e-4, 0.1, 0.5, 0.9, 0.999} {
		unc := squash.TGWPureLoss(eta, refsInf)
		prev := 0.0
		for _, ns := range []float64{0, 0.01, 0.1, 1, 10, 100, 1e4, 1e6} {
			v := squash.TGWPureLoss(eta, ns)
			if v < prev-1e-12 || v > unc+1e-9 {
				t.Errorf("eta = %g: TGW(N_S = %g) = %.12g, previous %.12g, unconstrained %.12g: want increasing and below", eta, ns, v, prev, unc)
			}
			prev = v
		}
		// Derived here from g(x) = log2(e x) + 1/(2 x ln 2) + O(1/x^2):
		// TGW(N_S) = TGW(inf) - 2 eta / ((1 - eta^2) N_S ln 2) + O(1/((1-eta) N_S)^2).
		for _, ns := range []float64{1e4, 1e6} {
			v := squash.TGWPureLoss(eta, ns)
			lead := 2 * eta / ((1 - eta*eta) * ns * math.Ln2)
			x := 1 / ((1 - eta) * ns)
			if math.Abs(v-(unc-lead)) > 10*x*x+1e-12 {
				t.Errorf("eta = %g: TGW(%g) = %.12g, unconstrained %.12g minus 1/N_S term %.3g: off by %.3g",
					eta, ns, v, unc, lead, v-(unc-lead))
			}
		}
		if cap := -math.Log2(1 - eta); unc < cap {
			t.Errorf("eta = %g: TGW %.12g below the pure-loss capacity %.12g", eta, unc, cap)
		}
		if ree, rci := squash.REEThermalLoss(eta, 0), squash.RCIThermalLoss(eta, 0); math.Abs(ree-rci) > 1e-15*math.Max(1, ree) {
			t.Errorf("eta = %g: pure loss PLOB %.15g != RCI %.15g", eta, ree, rci)
		}
	}
	const eta = 1e-4
	if s := squash.TGWPureLoss(eta, refsInf) / eta; math.Abs(s-2/math.Ln2) > 1e-3 {
		t.Errorf("TGW slope at eta = 1e-4: %.6f, want 2/ln 2 = %.6f", s, 2/math.Ln2)
	}
	if r := squash.TGWPureLoss(eta, refsInf) / squash.REEThermalLoss(eta, 0); math.Abs(r-2) > 1e-3 {
		t.Errorf("TGW / PLOB at eta = 1e-4: %.6f, want about 2", r)
	}
	for _, bad := range [][2]float64{{-0.1, 1}, {1.1, 1}, {0.5, -1}, {math.NaN(), 1}, {0.5, math.NaN()}} {
		if v := squash.TGWPureLoss(bad[0], bad[1]); !math.IsNaN(v) {
			t.Errorf("TGWPureLoss(%g, %g) = %g, want NaN", bad[0], bad[1], v)
		}
	}
}

// The closed forms of Pirandola et al. (2017) vanish at the entanglement-breaking threshold
// (evaluated here from the formula itself, without the clamp) and are positive just below it;
// REE* returns exactly 0 at and above it; EntanglementBreaking agrees with Holevo's criterion
// y >= k + 1 for V -> k V + y I (Holevo, Probl. Inf. Transm. 44, 171 (2008)).
func TestRefsEntanglementBreakingThreshold(t *testing.T) {
	rawLoss := func(eta, nb float64) float64 { return -math.Log2((1-eta)*math.Pow(eta, nb)) - gaussian.G(nb) }
	rawAmp := func(g, nb float64) float64 { return math.Log2(math.Pow(g, nb+1)/(g-1)) - gaussian.G(nb) }
	for _, eta := range []float64{0.1, 0.5, 0.9, 0.99} {
		th := eta / (1 - eta)
		if r := rawLoss(eta, th); math.Abs(r) > 1e-12*math.Max(1, gaussian.G(th)) {
			t.Errorf("thermal loss eta = %g: PLOB formula at N_B = eta/(1-eta) is %g, want 0", eta, r)
		}
		for _, f := range []float64{1, 1 + 1e-9, 1.01, 2, 10} {
			m := gaussian.Model{Kind: gaussian.ThermalLoss, Eta: eta, NB: th * f}
			if v := squash.REEThermalLoss(eta, th*f); v != 0 || !squash.EntanglementBreaking(m) {
				t.Errorf("%v: PLOB = %g, entanglement breaking %v: want exactly 0 and true", m, v, squash.EntanglementBreaking(m))
			}
		}
		m := gaussian.Model{Kind: gaussian.ThermalLoss, Eta: eta, NB: th * 0.999}
		if v := squash.REEThermalLoss(eta, th*0.999); !(v > 0 && v < 1e-4) || squash.EntanglementBreaking(m) {
			t.Errorf("%v: PLOB = %g, entanglement breaking %v: want small positive and false", m, v, squash.EntanglementBreaking(m))
		}
	}
	for _, g := range []float64{1.1, 2, 10} {
		th := 1 / (g - 1)
		if r := rawAmp(g, th); math.Abs(r) > 1e-12*math.Max(1, gaussian.G(th)) {
			t.Errorf("amplifier G = %g: PLOB formula at N_B = 1/(G-1) is %g, want 0", g, r)
		}
		for _, f := range []float64{1, 1.01, 2} {
			m := gaussian.Model{Kind: gaussian.Amplifier, Gain: g, NB: th * f}
			if v := squash.REEAmplifier(g, th*f); v != 0 || !squash.EntanglementBreaking(m) {
				t.Errorf("%v: PLOB = %g, entanglement breaking %v: want exactly 0 and true", m, v, squash.EntanglementBreaking(m))
			}
		}
		m := gaussian.Model{Kind: gaussian.Amplifier, Gain: g, NB: th * 0.999}
		if v := squash.REEAmplifier(g, th*0.999); !(v > 0 && v < 1e-4) || squash.EntanglementBreaking(m) {
			t.Errorf("%v: PLOB = %g, entanglement breaking %v: want small positive and false", m, v, squash.EntanglementBreaking(m))
		}
	}
	if r := (1.0-1)/math.Ln2 - math.Log2(1); r != 0 {
		t.Errorf("additive: PLOB formula at xi = 1 is %g", r)
	}
	for _, xi := range []float64{1, 1.01, 3} {
		m := gaussian.Model{Kind: gaussian.AdditiveNoise, Xi: xi}
		if v := squash.REEAdditive(xi); v != 0 || !squash.EntanglementBreaking(m) {
			t.Errorf("%v: PLOB = %g, entanglement breaking %v: want exactly 0 and true", m, v, squash.EntanglementBreaking(m))
		}
	}
	if v := squash.REEAdditive(0.999); !(v > 0 && v < 1e-4) || squash.EntanglementBreaking(gaussian.Model{Kind: gaussian.AdditiveNoise, Xi: 0.999}) {
		t.Errorf("additive xi = 0.999: PLOB = %g, want small positive and not entanglement breaking", v)
	}
	// Holevo's criterion on the (X, Y) action, away from the threshold's rounding.
	var models []gaussian.Model
	for _, f := range []float64{0.5, 0.9, 0.999, 1.001, 1.1, 2} {
		for _, eta := range []float64{0.2, 0.5, 0.8} {
			models = append(models, gaussian.Model{Kind: gaussian.ThermalLoss, Eta: eta, NB: f * eta / (1 - eta)})
		}
		for _, g := range []float64{1.5, 3} {
			models = append(models, gaussian.Model{Kind: gaussian.Amplifier, Gain: g, NB: f / (g - 1)})
		}
		models = append(models, gaussian.Model{Kind: gaussian.AdditiveNoise, Xi: f})
	}
	for _, m := range models {
		ch := m.Action()
		k := ch.X.At(0, 0) * ch.X.At(0, 0)
		y := ch.Y.At(0, 0)
		if want := y >= k+1; squash.EntanglementBreaking(m) != want {
			t.Errorf("%v: EntanglementBreaking = %v, Holevo's y >= k+1 (y = %g, k = %g) says %v", m, !want, y, k, want)
		}
	}
}

// Independent check of the thresholds: the output of a TMSV(N_S) input is separable iff its
// partial transpose is physical, i.e. the smallest symplectic eigenvalue of the partially
// transposed A'B covariance is >= 1 (Simon, PRL 84, 2726 (2000)). Above the threshold every
// N_S gives a separable output; 5% below it, a large enough N_S gives an entangled one.
func TestRefsEntanglementBreakingPPT(t *testing.T) {
	ptMin := func(m gaussian.Model, ns float64) float64 {
		in := gaussian.TMSV(ns)
		d := m.Dilation()
		var j, ab gaussian.Matrix
		d.Joint(&in, &j)
		ab.SelectModes(&j, []int{0, 1})
		for c := 0; c < 4; c++ { // p of A' -> -p: flip row and column 1 ((1,1) twice)
			ab.Set(1, c, -ab.At(1, c))
			ab.Set(c, 1, -ab.At(c, 1))
		}
		var sp gaussian.Spectrum
		if err := gaussian.SymplecticSpectrum(&ab, &sp); err != nil {
			t.Fatalf("%v, N_S = %g: %v", m, ns, err)
		}
		return sp.Nu[0]
	}
	type pair struct{ above, below gaussian.Model }
	pairs := []pair{
		{gaussian.Model{Kind: gaussian.ThermalLoss, Eta: 0.5, NB: 1.05}, gaussian.Model{Kind: gaussian.ThermalLoss, Eta: 0.5, NB: 0.95}},
		{gaussian.Model{Kind: gaussian.ThermalLoss, Eta: 0.8, NB: 4 * 1.05}, gaussian.Model{Kind: gaussian.ThermalLoss, Eta: 0.8, NB: 4 * 0.95}},
		{gaussian.Model{Kind: gaussian.Amplifier, Gain: 2, NB: 1.05}, gaussian.Model{Kind: gaussian.Amplifier, Gain: 2, NB: 0.95}},
		{gaussian.Model{Kind: gaussian.AdditiveNoise, Xi: 1.05}, gaussian.Model{Kind: gaussian.AdditiveNoise, Xi: 0.95}},
	}
	for _, p := range pairs {
		if !squash.EntanglementBreaking(p.above) || squash.EntanglementBreaking(p.below) {
			t.Errorf("%v / %v: EntanglementBreaking = %v / %v, want true / false", p.above, p.below,
				squash.EntanglementBreaking(p.above), squash.EntanglementBreaking(p.below))
		}
		for _, ns := range []float64{0.01, 0.1, 1, 10, 100, 1000} {
			if nu := ptMin(p.above, ns); nu < 1-1e-9 {
				t.Errorf("%v, N_S = %g: partial transpose has nu = %.12g < 1: entangled output above the threshold", p.above, ns, nu)
			}
		}
		if nu := ptMin(p.below, 1000); !(nu < 1) {
			t.Errorf("%v, N_S = 1000: partial transpose has nu = %.12g >= 1: separable output below the threshold", p.below, nu)
		}
	}
}

func refsNames(refs []squash.Reference) []string {
	var out []string
	for _, r := range refs {
		out = append(out, r.Name)
	}
	return out
}

// References: names, order, flags and values per model kind, at finite and unconstrained N_S.
func TestReferencesList(t *testing.T) {
	tl := gaussian.Model{Kind: gaussian.ThermalLoss, Eta: 0.9, NB: 1}
	pl := gaussian.Model{Kind: gaussian.ThermalLoss, Eta: 0.9}
	amp := gaussian.Model{Kind: gaussian.Amplifier, Gain: 2, NB: 0.5}
	add := gaussian.Model{Kind: gaussian.AdditiveNoise, Xi: 0.1}
	cases := []struct {
		model gaussian.Model
		ns    float64
		names []string
		upper []bool
	}{
		{tl, refsInf, []string{"data-processing", "ree", "rci", "ci"}, []bool{true, true, false, false}},
		{tl, 1, []string{"data-processing", "ree", "rci", "ci"}, []bool{true, true, false, false}},
		{pl, refsInf, []string{"tgw-pure-loss", "ree", "rci", "ci"}, []bool{true, true, false, false}},
		{pl, 1, []string{"tgw-pure-loss", "ree", "rci", "ci"}, []bool{true, true, false, false}},
		{amp, refsInf, []string{"ree", "ci"}, []bool{true, false}},
		{amp, 1, []string{"ree", "rci", "ci"}, []bool{true, false, false}},
		{add, refsInf, []string{"ree", "ci"}, []bool{true, false}},
		{add, 1, []string{"ree", "rci", "ci"}, []bool{true, false, false}},
	}
	for _, c := range cases {
		refs, err := squash.CheckedReferences(c.model, c.ns)
		if err != nil {
			t.Errorf("%v, N_S = %g: %v", c.model, c.ns, err)
		}
		if got := refsNames(refs); !slices.Equal(got, c.names) {
			t.Errorf("%v, N_S = %g: names %v, want %v", c.model, c.ns, got, c.names)
			continue
		}
		for i, r := range refs {
			if r.Upper != c.upper[i] || r.Source == "" || math.IsNaN(r.Value) || r.Value < 0 {
				t.Errorf("%v, N_S = %g: %+v: want Upper = %v, a source, a value >= 0", c.model, c.ns, r, c.upper[i])
			}
		}
		if r2 := squash.References(c.model, c.ns); !slices.Equal(r2, refs) {
			t.Errorf("%v, N_S = %g: References differs from CheckedReferences", c.model, c.ns)
		}
	}
	// Values are the individual functions'.
	refs := squash.References(tl, 1)
	rci, ci, err := squash.TMSVCoherentInformation(tl, 1)
	if err != nil {
		t.Fatal(err)
	}
	want := []float64{squash.DataProcessingThermalLoss(0.9, 1, 1), squash.REEThermalLoss(0.9, 1), math.Max(0, rci), math.Max(0, ci)}
	for i, r := range refs {
		if r.Value != want[i] {
			t.Errorf("thermal loss (0.9, 1), N_S = 1: %s = %g, want %g", r.Name, r.Value, want[i])
		}
	}
	refs = squash.References(tl, refsInf)
	want = []float64{squash.DataProcessingThermalLoss(0.9, 1, refsInf), squash.REEThermalLoss(0.9, 1), squash.RCIThermalLoss(0.9, 1), squash.CIThermalLoss(0.9, 1)}
	for i, r := range refs {
		if r.Value != want[i] {
			t.Errorf("thermal loss (0.9, 1), unconstrained: %s = %g, want %g", r.Name, r.Value, want[i])
		}
	}
	// Invalid input: nil and an error.
	for _, c := range []struct {
		m  gaussian.Model
		ns float64
	}{{gaussian.Model{Kind: gaussian.ThermalLoss, Eta: 1.5}, 1}, {tl, -1}, {tl, math.NaN()}, {gaussian.Model{}, 1}} {
		refs, err := squash.CheckedReferences(c.m, c.ns)
		if refs != nil || err == nil || squash.References(c.m, c.ns) != nil {
			t.Errorf("%v, N_S = %g: refs %v, err %v; want nil and an error", c.m, c.ns, refs, err)
		}
	}
}

// BestLower and BestUpperReference on the notes' check points, and best upper >= best lower on
// a grid (a violation would mean a wrong bound).
func TestRefsBest(t *testing.T) {
	tl := gaussian.Model{Kind: gaussian.ThermalLoss, Eta: 0.9, NB: 1}
	refs := squash.References(tl, refsInf)
	if b := squash.BestUpperReference(refs); b.Name != "ree" || math.Abs(b.Value-1.473931) > 6e-7 {
		t.Errorf("thermal loss (0.9, 1), unconstrained: best upper %+v, want ree 1.473931", b)
	}
	if b := squash.BestLower(refs); math.Abs(b-1.321928) > 6e-7 {
		t.Errorf("thermal loss (0.9, 1), unconstrained: best lower %g, want rci 1.321928", b)
	}
	refs = squash.References(tl, 1)
	if b := squash.BestUpperReference(refs); b.Name != "data-processing" || math.Abs(b.Value-1.45453) > 6e-6 {
		t.Errorf("thermal loss (0.9, 1), N_S = 1: best upper %+v, want data-processing 1.45453", b)
	}
	if b := squash.BestLower(refs); !(b > 0 && b < 1.321928) {
		t.Errorf("thermal loss (0.9, 1), N_S = 1: best lower %g, want in (0, 1.321928)", b)
	}
	// Pure loss: PLOB equals the RCI, the capacity -log2(1-eta) (Pirandola et al. 2017).
	refs = squash.References(gaussian.Model{Kind: gaussian.ThermalLoss, Eta: 0.9}, refsInf)
	if up, lo := squash.BestUpperReference(refs), squash.BestLower(refs); up.Name != "ree" || math.Abs(up.Value-lo) > 1e-14 || math.Abs(lo-math.Log2(10)) > 1e-14 {
		t.Errorf("pure loss 0.9: best upper %+v, best lower %g, want both log2(10)", up, lo)
	}
	// Entanglement breaking: everything is 0.
	refs = squash.References(gaussian.Model{Kind: gaussian.ThermalLoss, Eta: 0.5, NB: 2}, 1)
	if up, lo := squash.BestUpperReference(refs), squash.BestLower(refs); up.Value != 0 || lo != 0 {
		t.Errorf("entanglement-breaking thermal loss: best upper %+v, best lower %g, want 0 and 0", up, lo)
	}
	// Empty and NaN handling.
	if b := squash.BestUpperReference(nil); b.Name != "none" || !math.IsInf(b.Value, 1) {
		t.Errorf("BestUpperReference(nil) = %+v", b)
	}
	if b := squash.BestLower(nil); b != 0 {
		t.Errorf("BestLower(nil) = %g", b)
	}
	mixed := []squash.Reference{{Name: "a", Value: math.NaN(), Upper: true}, {Name: "b", Value: 2, Upper: true},
		{Name: "c", Value: math.NaN()}, {Name: "d", Value: 1}, {Name: "e", Value: 2, Upper: true}}
	if b := squash.BestUpperReference(mixed); b.Name != "b" {
		t.Errorf("BestUpperReference with NaN and a tie: %+v, want b", b)
	}
	if b := squash.BestLower(mixed); b != 1 {
		t.Errorf("BestLower with NaN: %g, want 1", b)
	}
	// Grid.
	var models []gaussian.Model
	for _, eta := range []float64{0.05, 0.5, 0.95} {
		for _, nb := range []float64{0, 0.2, 2} {
			models = append(models, gaussian.Model{Kind: gaussian.ThermalLoss, Eta: eta, NB: nb})
		}
	}
	for _, g := range []float64{1.1, 2, 5} {
		for _, nb := range []float64{0, 0.2} {
			models = append(models, gaussian.Model{Kind: gaussian.Amplifier, Gain: g, NB: nb})
		}
	}
	for _, xi := range []float64{0.01, 0.3, 2} {
		models = append(models, gaussian.Model{Kind: gaussian.AdditiveNoise, Xi: xi})
	}
	for _, m := range models {
		for _, ns := range []float64{0, 0.1, 1, 10, refsInf} {
			refs, err := squash.CheckedReferences(m, ns)
			if err != nil {
				t.Errorf("%v, N_S = %g: %v", m, ns, err)
				continue
			}
			up, lo := squash.BestUpperReference(refs), squash.BestLower(refs)
			if up.Value < lo-1e-9 {
				t.Errorf("%v, N_S = %g: best upper %+v below best lower %g", m, ns, up, lo)
			}
			if ns == 0 && lo > 1e-12 {
				t.Errorf("%v, N_S = 0: best lower %g, want 0 (no input energy)", m, lo)
			}
		}
	}
}

// Errors from an invalid model propagate as errors, not numbers.
func TestRefsInvalidModel(t *testing.T) {
	bad := gaussian.Model{Kind: gaussian.Amplifier, Gain: 0.5}
	if _, _, err := squash.TMSVCoherentInformation(bad, 1); err == nil {
		t.Error("TMSVCoherentInformation of an invalid model: want an error")
	}
	if squash.EntanglementBreaking(bad) {
		t.Error("EntanglementBreaking of an invalid model: want false")
	}
	_, err := squash.CheckedReferences(bad, 1)
	if err == nil || errors.Is(err, gaussian.ErrUnphysical) {
		t.Errorf("CheckedReferences of an invalid model: err %v, want a validation error", err)
	}
}
