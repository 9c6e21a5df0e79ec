package squash

import (
	"math"
	"testing"

	"keyceiling/gaussian"
)

// wildFamily is a deliberately ill-conditioned map (two-mode squeezing far beyond
// MaxSqueezing), to show that the guards catch round-off-dominated evaluations.
type wildFamily struct{ r float64 }

func (wildFamily) Name() string         { return "wild" }
func (wildFamily) NumParams() int       { return 1 }
func (wildFamily) Ancillas() int        { return 2 }
func (wildFamily) Kept() int            { return 2 }
func (wildFamily) PhaseCovariant() bool { return true }
func (wildFamily) Starts() [][]float64  { return nil }
func (w wildFamily) Build(p []float64, s *gaussian.Matrix, anc []float64) {
	*s = gaussian.Identity(8)
	d := s.Data()
	lmulTwoModeSqueezing(d, 8, 0, 1, w.r)
	lmulBeamSplitter(d, 8, 0, 2, 0.5)
	lmulTwoModeSqueezing(d, 8, 0, 3, -w.r)
	lmulBeamSplitter(d, 8, 1, 3, 0.3)
	anc[0], anc[1] = 0, 0
}

// With squeezing r = 15 float64 round-off makes the CMI come out negative (the trap in the
// physics notes); the target must refuse that value, while a tame map gives a finite one.
func TestNegativeValuesAreRefused(t *testing.T) {
	m := gaussian.Model{Kind: gaussian.ThermalLoss, Eta: 0.5, NB: 0.5}
	tame, err := NewTarget(m, 1, wildFamily{1})
	if err != nil {
		t.Fatal(err)
	}
	if v := tame.Value([]float64{0}); math.IsInf(v, 0) || v < 0 {
		t.Fatalf("tame map: %v", v)
	}
	wild, _ := NewTarget(m, 1, wildFamily{15})
	var ch gaussian.Channel
	MapOf(wildFamily{15}, []float64{0}, &ch)
	ev, _ := NewEvaluator(m, Thermal(1))
	raw, err := ev.Half(&ch)
	if err == nil && raw >= 0 {
		t.Skipf("round-off did not produce a negative value here (%v); nothing to guard", raw)
	}
	if v := wild.Value([]float64{0}); !math.IsInf(v, 1) {
		t.Errorf("raw value %v (err %v) but the target returned %v, want +Inf", raw, err, v)
	}
}

// Every family bounds its squeezing by MaxSqueezing, whatever the parameters, so the
// optimiser cannot walk into the round-off regime.
func TestFamiliesBoundSqueezing(t *testing.T) {
	for _, x := range []float64{-1e6, -50, 50, 1e6} {
		if r := boundedSqueezing(x); math.Abs(r) > MaxSqueezing {
			t.Errorf("boundedSqueezing(%v) = %v", x, r)
		}
	}
	for _, f := range allFamilies(t) {
		p := make([]float64, f.NumParams())
		for i := range p {
			p[i] = 1e3
		}
		d := BuildDilation(f, p)
		// |S| <= e^{MaxSqueezing}^(layers): a loose cap that fails only if squeezing escaped.
		if d.S.MaxAbs() > math.Exp(3*MaxSqueezing) {
			t.Errorf("%s: entries up to %g", f.Name(), d.S.MaxAbs())
		}
	}
}
