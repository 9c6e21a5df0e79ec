package squash

import (
	"math"
	"math/rand/v2"
	"testing"

	"keyceiling/gaussian"
)

// Benchmarks and allocation checks of the objective's hot path (docs/speed.md reports the
// numbers). The reference point is the physics notes' target: thermal loss eta = 0.9,
// N_B = 1, N_S = 1.

var benchModel = gaussian.Model{Kind: gaussian.ThermalLoss, Eta: 0.9, NB: 1}

const benchEnergy = 1.0

// benchTMSParams is a generic interior TMSSplit point (all parameters active, no symmetry).
var benchTMSParams = []float64{0.4, 0.7, 0.3, 0.5, 0.2}

// benchParams returns fixed pseudo-random parameters of moderate size for fam.
func benchParams(fam Family) []float64 {
	rng := rand.New(rand.NewPCG(7, uint64(fam.NumParams())))
	p := make([]float64, fam.NumParams())
	for i := range p {
		p[i] = 0.6 * (2*rng.Float64() - 1)
	}
	return p
}

func benchEvaluator(tb testing.TB) (*Evaluator, gaussian.Channel) {
	tb.Helper()
	ev, err := NewEvaluator(benchModel, Thermal(benchEnergy))
	if err != nil {
		tb.Fatal(err)
	}
	var ch gaussian.Channel
	MapOf(TMSSplit{}, benchTMSParams, &ch)
	return ev, ch
}

// BenchmarkHalf is one evaluation of 1/2 I(A';B|E') for a fixed TMSSplit map (m = 2 kept
// modes, 2 ancillas) at finite N_S = 1: the innermost cost of every search.
func BenchmarkHalf(b *testing.B) {
	ev, ch := benchEvaluator(b)
	b.ReportAllocs()
	for b.Loop() {
		if _, err := ev.Half(&ch); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkLadder is the N_S = inf objective (Richardson limit over the thermal ladder) for
// the same map, after the ladder's evaluators exist.
func BenchmarkLadder(b *testing.B) {
	l, err := NewLadder(benchModel)
	if err != nil {
		b.Fatal(err)
	}
	var ch gaussian.Channel
	MapOf(TMSSplit{}, benchTMSParams, &ch)
	if _, _, err := l.Half(&ch); err != nil {
		b.Fatal(err)
	}
	b.ReportAllocs()
	for b.Loop() {
		if _, _, err := l.Half(&ch); err != nil {
			b.Fatal(err)
		}
	}
}

// benchFamilies are the families of BenchmarkTargetValue, ordered by size (kept modes m,
// ancillas k).
func benchFamilies(tb testing.TB) []Family {
	tb.Helper()
	c32, err := NewCovariant(3, 2)
	if err != nil {
		tb.Fatal(err)
	}
	c43, err := NewCovariant(4, 3)
	if err != nil {
		tb.Fatal(err)
	}
	g22, err := NewGeneral(2, 2)
	if err != nil {
		tb.Fatal(err)
	}
	g33, err := NewGeneral(3, 3)
	if err != nil {
		tb.Fatal(err)
	}
	return []Family{Split{}, TMSSplit{}, c32, c43, g22, g33}
}

// BenchmarkTargetValue is Target.Value (map construction plus objective) at finite
// N_S = 1 with one active input, per family: the cost grows with kept modes (entropies of up
// to m + 2 modes) and ancillas (the size of the dilation and of Y).
func BenchmarkTargetValue(b *testing.B) {
	for _, fam := range benchFamilies(b) {
		t, err := NewTarget(benchModel, benchEnergy, fam)
		if err != nil {
			b.Fatal(err)
		}
		p := benchParams(fam)
		if v := t.Value(p); math.IsInf(v, 0) || math.IsNaN(v) {
			b.Fatalf("%s: value %v at %v", fam.Name(), v, p)
		}
		b.Run(fam.Name(), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				t.Value(p)
			}
		})
	}
}

// BenchmarkTargetValuePoints is Target.Value for TMSSplit at 200 random parameter vectors
// (uniform in [-2, 2]^5, the range of the search's random starts and of bench/compare.sh),
// evaluated in turn: unlike BenchmarkTargetValue, which repeats one point, the branches of
// the eigenvalue iterations vary from call to call as they do in a search. ns/op is per
// evaluation.
func BenchmarkTargetValuePoints(b *testing.B) {
	t, err := NewTarget(benchModel, benchEnergy, TMSSplit{})
	if err != nil {
		b.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(1, 1))
	pts := make([][]float64, 200)
	for i := range pts {
		pts[i] = make([]float64, 5)
		for j := range pts[i] {
			pts[i][j] = 4*rng.Float64() - 2
		}
	}
	b.ReportAllocs()
	i := 0
	for b.Loop() {
		t.Value(pts[i])
		if i++; i == len(pts) {
			i = 0
		}
	}
}

// TestHotPathAllocs asserts that the objective's hot path does not allocate: Evaluator.Half,
// Ladder.Half once its levels exist, and Target.Value for every benchmarked family at finite
// and (for covariant families) infinite energy.
func TestHotPathAllocs(t *testing.T) {
	ev, ch := benchEvaluator(t)
	var err error
	if a := testing.AllocsPerRun(200, func() { _, err = ev.Half(&ch) }); a != 0 || err != nil {
		t.Errorf("Evaluator.Half: %g allocations per run (err %v), want 0", a, err)
	}
	l, err := NewLadder(benchModel)
	if err != nil {
		t.Fatal(err)
	}
	if _, _, err := l.Half(&ch); err != nil { // warm-up: builds the ladder's evaluators
		t.Fatal(err)
	}
	if a := testing.AllocsPerRun(50, func() { _, _, err = l.Half(&ch) }); a != 0 || err != nil {
		t.Errorf("Ladder.Half after warm-up: %g allocations per run (err %v), want 0", a, err)
	}
	for _, fam := range benchFamilies(t) {
		energies := []float64{benchEnergy}
		if fam.PhaseCovariant() {
			energies = append(energies, math.Inf(1))
		}
		for _, e := range energies {
			tg, err := NewTarget(benchModel, e, fam)
			if err != nil {
				t.Fatal(err)
			}
			p := benchParams(fam)
			tg.Value(p) // warm-up (ladder levels at N_S = inf)
			var v float64
			if a := testing.AllocsPerRun(50, func() { v = tg.Value(p) }); a != 0 {
				t.Errorf("Target.Value, %s, N_S = %v: %g allocations per run, want 0", fam.Name(), e, a)
			}
			if math.IsInf(v, 0) || math.IsNaN(v) {
				t.Errorf("Target.Value, %s, N_S = %v: %v", fam.Name(), e, v)
			}
		}
	}
}

// separateHalf is the objective computed the plain way, as Half did before its shared-LQ
// and phase-covariant routes: the factor of (A', B, E') and one gaussian.FactorEntropy per
// subsystem. It is the cross-check of Half's faster routes.
func separateHalf(t *testing.T, ev *Evaluator, ch *gaussian.Channel) float64 {
	t.Helper()
	var g gaussian.Matrix
	if err := gaussian.SymmetricSqrtFactor(&ch.Y, &g, YAllowance*math.Max(1, ch.Y.MaxAbs())); err != nil {
		t.Fatal(err)
	}
	jf := ev.JointFactor()
	m := ch.Out
	cols := 8 + 2*m
	full := gaussian.NewMatrix(4+2*m, cols)
	for i := 0; i < 4; i++ {
		for j := 0; j < 8; j++ {
			full.Set(i, j, jf.At(i, j))
		}
	}
	for a := 0; a < 2*m; a++ {
		for j := 0; j < 8; j++ {
			s := 0.0
			for l := 0; l < 4; l++ {
				s += ch.X.At(a, l) * jf.At(4+l, j)
			}
			full.Set(4+a, j, s)
		}
		for j := 0; j < 2*m; j++ {
			full.Set(4+a, 8+j, g.At(a, j))
		}
	}
	entropy := func(modes ...int) float64 {
		sub := gaussian.NewMatrix(2*len(modes), cols)
		for r, md := range modes {
			for q := 0; q < 2; q++ {
				for j := 0; j < cols; j++ {
					sub.Set(2*r+q, j, full.At(2*md+q, j))
				}
			}
		}
		s, err := gaussian.FactorEntropy(&sub)
		if err != nil {
			t.Fatal(err)
		}
		return s
	}
	e := make([]int, m)
	for k := range e {
		e[k] = 2 + k
	}
	return 0.5 * (entropy(append([]int{0}, e...)...) + entropy(append([]int{1}, e...)...) -
		entropy(e...) - entropy(append([]int{0, 1}, e...)...))
}

// Half's shared-LQ route (all families) and phase-covariant route (Split and TMSSplit at
// thermal inputs) agree with the plain computation.
func TestHalfMatchesSeparateEntropies(t *testing.T) {
	rng := rand.New(rand.NewPCG(41, 43))
	models := []gaussian.Model{benchModel, {Kind: gaussian.Amplifier, Gain: 1.5, NB: 0.2},
		{Kind: gaussian.AdditiveNoise, Xi: 0.4}}
	worst := 0.0
	for _, model := range models {
		for _, fam := range benchFamilies(t) {
			for trial := 0; trial < 6; trial++ {
				p := make([]float64, fam.NumParams())
				for j := range p {
					p[j] = 3*rng.Float64() - 1.5
				}
				var ch gaussian.Channel
				MapOf(fam, p, &ch)
				for _, in := range []Input{Thermal(0.1), Thermal(3), Thermal(100), {N: 2, R: 0.4, Phi: 0.3}} {
					ev, err := NewEvaluator(model, in)
					if err != nil {
						t.Fatal(err)
					}
					v, err := ev.Half(&ch)
					if err != nil {
						t.Fatalf("%v, %s, %v: %v", model, fam.Name(), in, err)
					}
					ref := separateHalf(t, ev, &ch)
					d := math.Abs(v - ref)
					worst = math.Max(worst, d)
					if d > 1e-12*math.Max(1, in.N) {
						t.Errorf("%v, %s at %v, input %+v: Half %.15g, separate %.15g (difference %.2g)", model, fam.Name(), p, in, v, ref, d)
					}
				}
			}
		}
	}
	t.Logf("largest difference %.2g bits", worst)
}
