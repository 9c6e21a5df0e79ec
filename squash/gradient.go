package squash

import (
	"math"
)

// Gradient is a finite-difference gradient of an objective such as Target.Value, for
// gradient-based optimisers. The objective has no analytic derivative here (its entropies
// come from iterative eigenvalue solvers, so a complex step is not available either), so the
// gradient is differenced with a step chosen per parameter:
//
//   - Order 2 (the default): central differences (f(x+h) - f(x-h)) / 2h with
//     h_i = cbrt(eps) max(1, |x_i|), which balances the O(h^2 f^(3)) truncation error against
//     the O(eps |f| / h) round-off error; 2 evaluations per parameter.
//   - Order 4: the five-point stencil (8 [f(x+h) - f(x-h)] - [f(x+2h) - f(x-2h)]) / 12h, i.e.
//     Richardson's extrapolation of two central differences (h and 2h), with
//     h_i = eps^(1/5) max(1, |x_i|); 4 evaluations per parameter, error O(h^4 f^(5)).
//
// Both assume the objective is smooth on the scale of the step. It is not near a point
// where it fails to be analytic: an occupation parameter p near 0 (the photon number n ~ p^2
// and the entropy g(n) ~ n log(1/n)) makes the derivatives grow like 1/p^k, so the five-point
// stencil's larger step (7e-4) is inaccurate for |p| below about 0.01, while the central
// difference (step 6e-6) stays accurate to about |p| > 1e-4; at p = 0 the objective is even
// in p and both give exactly 0. Order 2 is therefore the default.
//
// Each step is rounded so that x_i + h is exactly representable (the difference of the
// evaluated points is then exactly h). Where the objective is +Inf on one side (an
// unphysical or guarded evaluation, see Target.Value), that component falls back to a
// one-sided difference from f(x); where it is +Inf on both sides, the component is set to 0
// and Grad reports ok = false. See Nocedal, Wright, Numerical Optimization, 2nd ed.,
// section 8.1, for the step choices.
//
// Grad does not allocate: the workspace is made once by NewGradient. A Gradient is not
// safe for concurrent use (nor is the Target it differentiates).
type Gradient struct {
	// F is the objective.
	F func(x []float64) float64
	// Order is 2 (central differences) or 4 (five-point stencil); 0 means 2.
	Order int
	// RelStep, if > 0, replaces the default relative step (cbrt(eps) for order 2,
	// eps^(1/5) for order 4): h_i = RelStep max(1, |x_i|).
	RelStep float64

	xs []float64
}

// NewGradient returns the central-difference gradient of t.Value with a workspace for
// t.Family.NumParams() parameters.
func NewGradient(t *Target) *Gradient {
	return NewGradientOf(t.Value, t.Family.NumParams())
}

// NewGradientOf returns the central-difference gradient of f with a workspace for n
// parameters.
func NewGradientOf(f func([]float64) float64, n int) *Gradient {
	return &Gradient{F: f, Order: 2, xs: make([]float64, n)}
}

// GradientStepOrder2 and GradientStepOrder4 are the default relative steps.
var (
	GradientStepOrder2 = math.Cbrt(0x1p-52)
	GradientStepOrder4 = math.Pow(0x1p-52, 0.2)
)

// Grad writes the gradient of F at x into grad (len(grad) = len(x) <= the workspace size)
// and reports whether every component was differenced from finite values. It evaluates F
// 2 len(x) times (order 2) or 4 len(x) times (order 4), plus once at x if a one-sided
// fallback is needed. x is not modified. The signature matches gonum's optimize.Problem.Grad
// up to the result: problem.Grad = func(grad, x []float64) { g.Grad(grad, x) }.
func (g *Gradient) Grad(grad, x []float64) (ok bool) {
	n := len(x)
	if len(grad) != n || n > len(g.xs) {
		panic("squash: Gradient.Grad: length mismatch")
	}
	order := g.Order
	if order == 0 {
		order = 2
	}
	if order != 2 && order != 4 {
		panic("squash: Gradient.Order must be 2 or 4")
	}
	rel := g.RelStep
	if rel <= 0 {
		rel = GradientStepOrder2
		if order == 4 {
			rel = GradientStepOrder4
		}
	}
	xs := g.xs[:n]
	copy(xs, x)
	ok = true
	f0, haveF0 := 0.0, false
	at := func(i int, v float64) float64 {
		xs[i] = v
		y := g.F(xs)
		xs[i] = x[i]
		return y
	}
	for i := 0; i < n; i++ {
		h := rel * math.Max(1, math.Abs(x[i]))
		h = (x[i] + h) - x[i] // exactly representable step
		fp, fm := at(i, x[i]+h), at(i, x[i]-h)
		finite := !math.IsInf(fp, 0) && !math.IsNaN(fp) && !math.IsInf(fm, 0) && !math.IsNaN(fm)
		if finite && order == 4 {
			fp2, fm2 := at(i, x[i]+2*h), at(i, x[i]-2*h)
			if !math.IsInf(fp2, 0) && !math.IsNaN(fp2) && !math.IsInf(fm2, 0) && !math.IsNaN(fm2) {
				grad[i] = (8*(fp-fm) - (fp2 - fm2)) / (12 * h)
				continue
			}
			// The outer points failed: fall back to the central difference.
		}
		if finite {
			grad[i] = (fp - fm) / (2 * h)
			continue
		}
		if !haveF0 {
			f0, haveF0 = g.F(xs), true
		}
		switch {
		case !math.IsInf(fp, 0) && !math.IsNaN(fp) && !math.IsInf(f0, 0) && !math.IsNaN(f0):
			grad[i] = (fp - f0) / h
		case !math.IsInf(fm, 0) && !math.IsNaN(fm) && !math.IsInf(f0, 0) && !math.IsNaN(f0):
			grad[i] = (f0 - fm) / h
		default:
			grad[i] = 0
			ok = false
		}
	}
	return ok
}
