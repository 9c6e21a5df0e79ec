package search

import (
	"math"
	"reflect"
	"sync"
	"testing"

	"keyceiling/gaussian"
	"keyceiling/squash"
)

func thermalLoss(eta, nb, ns float64) Point {
	return Point{Model: gaussian.Model{Kind: gaussian.ThermalLoss, Eta: eta, NB: nb}, Energy: ns}
}

// tgw is the Takeoka-Guha-Wilde pure-loss bound written out independently of squash/refs.go
// (Nat. Commun. 5, 5235 (2014)).
func tgw(eta, ns float64) float64 {
	if math.IsInf(ns, 1) {
		return math.Log2((1 + eta) / (1 - eta))
	}
	return gaussian.G((1+eta)*ns/2) - gaussian.G((1-eta)*ns/2)
}

// dataProcessing is the data-processing bound for thermal loss: TGW at eta' = eta/(1 +
// (1-eta) N_B) (thermal loss = amplifier after pure loss eta'; physics notes).
func dataProcessing(eta, nb, ns float64) float64 {
	return tgw(eta/(1+(1-eta)*nb), ns)
}

// The targets that an independent search reached (physics notes, "Targets that a good
// squashing search reaches") must be met from the default starts.
func TestReachesPublishedTargets(t *testing.T) {
	cases := []struct {
		p      Point
		target float64
	}{
		{thermalLoss(0.9, 1, 1), 1.06881},
		{thermalLoss(0.5, 0.5, 100), 0.24160},
	}
	for _, c := range cases {
		res, err := Run(c.p, Settings{}, RandFor(1, c.p), nil)
		if err != nil {
			t.Fatalf("%s: %v", c.p.Key(), err)
		}
		if res.Bound > c.target {
			t.Errorf("%s: bound %.6f above the target %.5f", c.p.Key(), res.Bound, c.target)
		}
		if dp := dataProcessing(c.p.Model.Eta, c.p.Model.NB, c.p.Energy); res.Bound > dp-0.3 {
			t.Errorf("%s: bound %.6f not far below the data-processing bound %.6f", c.p.Key(), res.Bound, dp)
		}
		if !res.Recheck.Passed || res.Recheck.CPMargin <= 0 {
			t.Errorf("%s: certificate not passed: %+v", c.p.Key(), res.Recheck)
		}
		t.Logf("%s: %.6f (%s), %d evaluations", c.p.Key(), res.Bound, res.Family, res.Evaluations)
	}
}

// At N_B = 0 the pure-loss bound of Takeoka, Guha, Wilde is reproduced and not undercut:
// the search may not report less than the published closed form by more than round-off.
func TestPureLossReproducesTGW(t *testing.T) {
	for _, c := range []struct{ eta, ns float64 }{{0.5, 1}, {0.9, 1}, {0.5, 10}, {0.3, math.Inf(1)}} {
		p := thermalLoss(c.eta, 0, c.ns)
		res, err := Run(p, Settings{Family: "tms-split"}, RandFor(1, p), nil)
		if err != nil {
			t.Fatal(err)
		}
		want := tgw(c.eta, c.ns)
		if math.Abs(res.Bound-want) > 1e-6 {
			t.Errorf("%s: %.9f vs TGW %.9f", p.Key(), res.Bound, want)
		}
		if res.Bound < want-1e-9 {
			t.Errorf("%s: %.12f undercuts TGW %.12f", p.Key(), res.Bound, want)
		}
	}
}

// Across the grid of the issue, the bound lies between the best lower bound and the
// data-processing bound, and its map is certified completely positive.
func TestGridBetweenLowerAndDataProcessing(t *testing.T) {
	if testing.Short() {
		t.Skip("grid of searches; run without -short")
	}
	var pts []Point
	for _, eta := range []float64{0.05, 0.3, 0.6, 0.9, 0.99} {
		for _, nb := range []float64{0.01, 0.1, 1, 5} {
			if nb >= eta/(1-eta) { // entanglement breaking (Holevo, Probl. Inf. Transm. 44, 171 (2008))
				continue
			}
			for _, ns := range []float64{0.01, 1, 100, math.Inf(1)} {
				pts = append(pts, thermalLoss(eta, nb, ns))
			}
		}
	}
	var wg sync.WaitGroup
	sem := make(chan struct{}, 2)
	results := make([]Result, len(pts))
	errs := make([]error, len(pts))
	for i, p := range pts {
		wg.Add(1)
		go func() {
			defer wg.Done()
			sem <- struct{}{}
			defer func() { <-sem }()
			results[i], errs[i] = Run(p, Settings{}, RandFor(7, p), nil)
		}()
	}
	wg.Wait()
	for i, p := range pts {
		res, err := results[i], errs[i]
		if err != nil {
			t.Errorf("%s: %v", p.Key(), err)
			continue
		}
		dp := dataProcessing(p.Model.Eta, p.Model.NB, p.Energy)
		lower := squash.BestLower(squash.References(p.Model, p.Energy))
		if !(res.Bound < dp) {
			t.Errorf("%s: bound %.9g not below the data-processing bound %.9g", p.Key(), res.Bound, dp)
		}
		if res.Bound < lower-1e-9 {
			t.Errorf("%s: bound %.9g below the lower bound %.9g", p.Key(), res.Bound, lower)
		}
		if !(res.Recheck.CPMargin > 0) || !res.Recheck.Passed {
			t.Errorf("%s: certificate %+v", p.Key(), res.Recheck)
		}
	}
}

// The same point, settings and seed give a bit-identical result (common practice for
// reproducible numerical work; the issue requires it).
func TestRerunIsBitIdentical(t *testing.T) {
	p := thermalLoss(0.7, 0.2, 3)
	s := Settings{Family: "covariant", RandomStarts: 2}
	a, err := Run(p, s, RandFor(42, p), nil)
	if err != nil {
		t.Fatal(err)
	}
	b, err := Run(p, s, RandFor(42, p), nil)
	if err != nil {
		t.Fatal(err)
	}
	if math.Float64bits(a.Bound) != math.Float64bits(b.Bound) || !reflect.DeepEqual(a.Params, b.Params) ||
		a.Map.X.MaxAbsDiff(&b.Map.X) != 0 || a.Map.Y.MaxAbsDiff(&b.Map.Y) != 0 || a.Evaluations != b.Evaluations {
		t.Errorf("reruns differ: %v vs %v", a.Bound, b.Bound)
	}
}

// A warm start from a neighbour is used and cannot make the result worse than the
// neighbour's map would give (it is one of the starts).
func TestWarmStartIsUsed(t *testing.T) {
	p1, p2 := thermalLoss(0.8, 0.3, 1), thermalLoss(0.8, 0.3, 2)
	s := Settings{Family: "tms-split", RandomStarts: -1}
	r1, err := Run(p1, s, RandFor(1, p1), nil)
	if err != nil {
		t.Fatal(err)
	}
	r2, err := Run(p2, s, RandFor(1, p2), &r1)
	if err != nil {
		t.Fatal(err)
	}
	// The neighbour's map evaluated at p2 is an upper bound on what the warm run reports.
	tg, err := squash.NewTarget(p2.Model, p2.Energy, squash.TMSSplit{})
	if err != nil {
		t.Fatal(err)
	}
	if at := tg.Value(r1.Params); r2.Bound > at+1e-9 {
		t.Errorf("warm-started bound %.9f worse than the warm start's own value %.9f", r2.Bound, at)
	}
}

// Certify must refuse maps that are not completely positive, and covariance claims that
// are false, whatever the caller says.
func TestCertifyRefuses(t *testing.T) {
	p := thermalLoss(0.8, 0.1, 1)
	// X = sqrt(2) I on env1 with Y = 0: an amplifier without its noise, not CP.
	x := gaussian.NewMatrix(2, 4)
	x.Set(0, 0, math.Sqrt2)
	x.Set(1, 1, math.Sqrt2)
	ch, err := gaussian.NewChannel(x, gaussian.NewMatrix(2, 2))
	if err != nil {
		t.Fatal(err)
	}
	if _, _, err := Certify(p, &ch, true); err == nil {
		t.Error("a map that is not completely positive was certified")
	}
	// A squeezer on env1 (a valid map, not phase covariant) claimed covariant.
	g, _ := squash.NewGeneral(1, 1)
	params := make([]float64, g.NumParams())
	params[passiveIndexOfFirstSqueezer(g)] = 0.8
	var gch gaussian.Channel
	squash.MapOf(g, params, &gch)
	for i := 0; i < 2; i++ {
		gch.Y.Set(i, i, gch.Y.At(i, i)+1e-9)
	}
	if _, _, err := Certify(p, &gch, true); err == nil {
		t.Error("a squeezing map was accepted as phase covariant")
	}
	if rc, _, err := Certify(p, &gch, false); err != nil || !rc.Passed {
		t.Errorf("the same map as not covariant should certify: %v", err)
	}
}

// passiveIndexOfFirstSqueezer is where General's first squeezing parameter sits: after the
// first passive layer of n^2 parameters.
func passiveIndexOfFirstSqueezer(g *squash.General) int {
	n := 2 + g.K
	return n * n
}

// The gradient method (BFGS on central differences) reaches the same published target as
// Nelder-Mead at (0.9, 1, 1) (physics notes' target 1.06881).
func TestBFGSReachesTarget(t *testing.T) {
	p := thermalLoss(0.9, 1, 1)
	res, err := Run(p, Settings{Family: "tms-split", Method: "bfgs"}, RandFor(1, p), nil)
	if err != nil {
		t.Fatal(err)
	}
	if res.Bound > 1.06881 {
		t.Errorf("bfgs: %.6f above the target 1.06881", res.Bound)
	}
}

// A map whose float64 evaluation is dominated by round-off (two-mode squeezing r = 15, far
// beyond what any family produces) must not be certified, whatever its float64 value says:
// the physics notes' trap, where round-off makes the CMI negative.
func TestCertifyRejectsRoundOffDominatedMap(t *testing.T) {
	p := thermalLoss(0.5, 0.5, 1)
	s := gaussian.Identity(8)
	for _, op := range []gaussian.Matrix{
		gaussian.TwoModeSqueezing(4, 0, 1, 15),
		gaussian.BeamSplitter(4, 0, 2, 0.5),
		gaussian.TwoModeSqueezing(4, 0, 3, -15),
		gaussian.BeamSplitter(4, 1, 3, 0.3),
	} {
		var next gaussian.Matrix
		next.Mul(&op, &s)
		s = next
	}
	anc := gaussian.Vacuum(2)
	ch := gaussian.ChannelFromSymplectic(&s, 2, &anc, []int{0, 1})
	ev, err := squash.NewEvaluator(p.Model, squash.Thermal(1))
	if err != nil {
		t.Fatal(err)
	}
	raw, rawErr := ev.Half(&ch)
	for _, covariant := range []bool{true, false} {
		if rc, _, err := Certify(p, &ch, covariant); err == nil {
			t.Errorf("covariant=%v: certified %.6g (float64 said %v, %v)", covariant, rc.Precise, raw, rawErr)
		}
	}
}
