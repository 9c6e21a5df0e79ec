package squash

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/optimize"
)

// stencil5 is an independent five-point-stencil derivative of f along coordinate i at x with
// absolute step h (the reference the tests compare Gradient with).
func stencil5(f func([]float64) float64, x []float64, i int, h float64) float64 {
	y := append([]float64(nil), x...)
	at := func(d float64) float64 {
		y[i] = x[i] + d
		return f(y)
	}
	return (8*(at(h)-at(-h)) - (at(2*h) - at(-2*h))) / (12 * h)
}

// The differencing scheme itself, on a smooth function with a known gradient.
func TestGradientAnalytic(t *testing.T) {
	f := func(x []float64) float64 {
		return math.Sin(x[0])*math.Exp(x[1]) + x[2]*x[2]*x[2] + math.Log1p(x[0]*x[0])*x[2]
	}
	df := func(x []float64) []float64 {
		return []float64{
			math.Cos(x[0])*math.Exp(x[1]) + 2*x[0]/(1+x[0]*x[0])*x[2],
			math.Sin(x[0]) * math.Exp(x[1]),
			3*x[2]*x[2] + math.Log1p(x[0]*x[0]),
		}
	}
	rng := rand.New(rand.NewPCG(3, 5))
	for _, order := range []int{2, 4} {
		g := NewGradientOf(f, 3)
		g.Order = order
		tol := map[int]float64{2: 1e-8, 4: 1e-10}[order]
		for trial := 0; trial < 50; trial++ {
			x := []float64{4*rng.Float64() - 2, 2*rng.Float64() - 1, 6*rng.Float64() - 3}
			grad := make([]float64, 3)
			if !g.Grad(grad, x) {
				t.Fatalf("order %d: not ok at %v", order, x)
			}
			want := df(x)
			for i := range grad {
				if e := math.Abs(grad[i] - want[i]); e > tol*math.Max(1, math.Abs(want[i])) {
					t.Errorf("order %d, x = %v, component %d: %.15g, exact %.15g (error %.2g)", order, x, i, grad[i], want[i], e)
				}
			}
		}
	}
}

// At random TMSSplit parameters the gradient of Target.Value matches five-point stencils
// (which agree among themselves at three step sizes, establishing the reference) to 1e-6
// (relative to the component where it exceeds 1).
// The stencil step shrinks with |x_i| below 1: the occupation parameters map p -> n ~ p^2,
// and the entropy g(n) ~ n log(1/n) is not analytic at n = 0, so derivatives of the
// objective grow like 1/p^k near p = 0.
func TestGradientMatchesStencil(t *testing.T) {
	tg, err := NewTarget(benchModel, benchEnergy, TMSSplit{})
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(17, 19))
	g2 := NewGradient(tg)
	g4 := NewGradient(tg)
	g4.Order = 4
	n := TMSSplit{}.NumParams()
	checked, skipped := 0, 0
	for trial := 0; trial < 20; trial++ {
		x := make([]float64, n)
		for j := range x {
			x[j] = 3*rng.Float64() - 1.5
		}
		if math.IsInf(tg.Value(x), 0) {
			continue
		}
		grad2, grad4 := make([]float64, n), make([]float64, n)
		if !g2.Grad(grad2, x) || !g4.Grad(grad4, x) {
			t.Fatalf("gradient not ok at %v", x)
		}
		for i := 0; i < n; i++ {
			s := math.Min(1, math.Max(math.Abs(x[i]), 0.01))
			ref := stencil5(tg.Value, x, i, 1e-3*s)
			ref2 := stencil5(tg.Value, x, i, 3e-4*s)
			ref3 := stencil5(tg.Value, x, i, 3e-3*s)
			scale := math.Max(1, math.Abs(ref))
			if math.Abs(ref-ref2) > 1e-7*scale || math.Abs(ref-ref3) > 1e-5*scale {
				// No reference: a nearly pure mode (nu - 1 tiny, where g is not analytic)
				// makes the objective non-smooth on the scale of the stencil.
				t.Logf("x = %v, component %d: stencils disagree: %.12g (h=1e-3), %.12g (h=3e-4), %.12g (h=3e-3); skipped", x, i, ref, ref2, ref3)
				skipped++
				continue
			}
			if e := math.Abs(grad2[i] - ref); e > 1e-6*scale {
				t.Errorf("x = %v, component %d: central %.12g, stencil %.12g (error %.2g)", x, i, grad2[i], ref, e)
			}
			// The five-point stencil's larger step (7e-4) straddles the non-analytic point
			// of an occupation parameter within a few steps of 0 (see Gradient).
			if e := math.Abs(grad4[i] - ref); e > 1e-6*scale && math.Abs(x[i]) > 0.01 {
				t.Errorf("x = %v, component %d: order 4 %.12g, stencil %.12g (error %.2g)", x, i, grad4[i], ref, e)
			}
		}
		checked++
	}
	if checked < 15 || skipped > checked*n/10 {
		t.Fatalf("%d finite points, %d of their components without a reference", checked, skipped)
	}
}

// At the TMSSplit optimum found by Nelder-Mead the gradient vanishes.
func TestGradientVanishesAtOptimum(t *testing.T) {
	tg, err := NewTarget(benchModel, benchEnergy, TMSSplit{})
	if err != nil {
		t.Fatal(err)
	}
	best, bestX := math.Inf(1), []float64(nil)
	for _, x0 := range (TMSSplit{}).Starts() {
		settings := &optimize.Settings{
			FuncEvaluations: 20000,
			Converger:       &optimize.FunctionConverge{Absolute: 1e-14, Iterations: 200},
		}
		x := append([]float64(nil), x0...)
		for restart := 0; restart < 3; restart++ {
			res, err := optimize.Minimize(optimize.Problem{Func: tg.Value}, x, settings, &optimize.NelderMead{SimplexSize: 0.2})
			if res == nil {
				t.Fatal(err)
			}
			x = res.X
			if res.F < best {
				best, bestX = res.F, append([]float64(nil), res.X...)
			}
		}
	}
	// The physics notes' target for this point (found independently) is 1.06881.
	if best > 1.06881+1e-5 {
		t.Fatalf("Nelder-Mead optimum %.8f above the notes' target 1.06881", best)
	}
	g := NewGradient(tg)
	g.Order = 4
	grad := make([]float64, len(bestX))
	if !g.Grad(grad, bestX) {
		t.Fatal("gradient not ok at the optimum")
	}
	norm := 0.0
	for _, v := range grad {
		norm = math.Max(norm, math.Abs(v))
	}
	// Compare with the gradient's size at unit distance in parameter space.
	away := append([]float64(nil), bestX...)
	away[1] += 0.1
	gAway := make([]float64, len(bestX))
	g.Grad(gAway, away)
	normAway := 0.0
	for _, v := range gAway {
		normAway = math.Max(normAway, math.Abs(v))
	}
	t.Logf("optimum %.10f at %v; max |grad| there %.2g, 0.1 away %.2g", best, bestX, norm, normAway)
	if norm > 1e-5 || norm > 1e-3*normAway {
		t.Errorf("max |grad| at the optimum = %.3g (0.1 away: %.3g): want < 1e-5", norm, normAway)
	}
}

// One-sided fallback where the objective is +Inf on one side, and ok = false where it is
// +Inf on both.
func TestGradientOneSided(t *testing.T) {
	f := func(x []float64) float64 {
		if x[0] > 1 || x[1] < -5 || x[1] > 5 {
			return math.Inf(1)
		}
		return x[0]*x[0] + 3*x[1]
	}
	g := NewGradientOf(f, 2)
	grad := make([]float64, 2)
	if !g.Grad(grad, []float64{1, 0}) {
		t.Fatal("not ok at the edge")
	}
	if math.Abs(grad[0]-2) > 1e-4 || math.Abs(grad[1]-3) > 1e-8 {
		t.Errorf("grad at the edge = %v, want ~ (2, 3)", grad)
	}
	g2 := NewGradientOf(func(x []float64) float64 {
		if x[0] != 0 {
			return math.Inf(1)
		}
		return 0
	}, 1)
	grad = grad[:1]
	if g2.Grad(grad, []float64{0}) || grad[0] != 0 {
		t.Errorf("isolated finite point: ok, grad = %v; want not ok, 0", grad)
	}
}

func TestGradientAllocs(t *testing.T) {
	for _, e := range []float64{benchEnergy, math.Inf(1)} {
		tg, err := NewTarget(benchModel, e, TMSSplit{})
		if err != nil {
			t.Fatal(err)
		}
		g := NewGradient(tg)
		g.Order = 4
		grad := make([]float64, 5)
		g.Grad(grad, benchTMSParams) // warm-up: the ladder's evaluators at N_S = inf
		if a := testing.AllocsPerRun(20, func() { g.Grad(grad, benchTMSParams) }); a != 0 {
			t.Errorf("Gradient.Grad, N_S = %v: %g allocations per run, want 0", e, a)
		}
	}
}

func BenchmarkGradient(b *testing.B) {
	for _, order := range []int{2, 4} {
		tg, err := NewTarget(benchModel, benchEnergy, TMSSplit{})
		if err != nil {
			b.Fatal(err)
		}
		g := NewGradient(tg)
		g.Order = order
		grad := make([]float64, 5)
		name := map[int]string{2: "central", 4: "five-point"}[order]
		b.Run(name, func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				g.Grad(grad, benchTMSParams)
			}
		})
	}
}
