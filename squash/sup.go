package squash

import (
	"errors"
	"fmt"
	"math"

	"gonum.org/v1/gonum/optimize"

	"keyceiling/gaussian"
)

// InputSup is the supremum of the objective over admissible inputs for one fixed map.
type InputSup struct {
	// Value is the supremum found, bits per channel use.
	Value float64 `json:"value"`
	// Input is where it was attained (for the unconstrained limit, N is +Inf in memory and
	// the record says so).
	Input Input `json:"input"`
	// AtFullEnergy is the objective at the thermal input of full energy (or the limit),
	// the value the search minimised.
	AtFullEnergy float64 `json:"at_full_energy"`
	// LimitError is the extrapolation error estimate of the unconstrained limit (0 at
	// finite energy).
	LimitError float64 `json:"limit_error"`
	// Method says how the supremum was taken.
	Method string `json:"method"`
	// Evaluations counts objective evaluations spent on it.
	Evaluations int `json:"evaluations"`
}

// Thermal ladders used by the supremum: fractions of the energy for finite N_S, and
// absolute photon numbers checked below the limit for N_S = infinity.
var (
	supFractions = []float64{1e-4, 1e-3, 0.01, 0.03, 0.1, 0.2, 0.3, 0.4, 0.5, 0.6, 0.7, 0.8, 0.9, 0.95, 1}
	supLimitNs   = []float64{0.01, 0.1, 0.3, 1, 3, 10, 30, 100, 1e3, 1e4}
)

// Supremum returns the supremum over admissible Gaussian inputs of 1/2 I(A';B|E') for the
// map ch (Gaussian inputs suffice: Wolf, Giedke, Cirac, PRL 96, 080502 (2006)).
//
// For a phase-covariant map thermal inputs are optimal, and the supremum runs over the
// mean photon number n in (0, energy]: on a grid of fractions of the energy, then refined by
// golden-section search around an interior maximum. The objective is not assumed monotone in
// n. For N_S = infinity it is the extrapolated limit, unless some finite n on a ladder
// exceeds the limit beyond its error estimate, in which case that larger value is returned.
//
// For a map that is not phase covariant the supremum also runs over squeezed thermal inputs
// of mean photon number <= energy: a grid over the energy, the squeezing fraction and the
// squeezing angle, then Nelder-Mead from the three best grid points.
func Supremum(model gaussian.Model, ch *gaussian.Channel, energy float64, covariant bool) (InputSup, error) {
	if math.IsInf(energy, 1) {
		if !covariant {
			return InputSup{}, errors.New("the supremum over squeezed inputs is computed only at finite energy")
		}
		return supUnconstrained(model, ch)
	}
	if covariant {
		return supThermal(model, ch, energy)
	}
	return supSqueezed(model, ch, energy)
}

func halfAt(model gaussian.Model, in Input, ch *gaussian.Channel) (float64, error) {
	ev, err := NewEvaluator(model, in)
	if err != nil {
		return math.NaN(), err
	}
	return ev.Half(ch)
}

func supUnconstrained(model gaussian.Model, ch *gaussian.Channel) (InputSup, error) {
	l, err := NewLadder(model)
	if err != nil {
		return InputSup{}, err
	}
	lim, est, err := l.Half(ch)
	if err != nil {
		return InputSup{}, err
	}
	res := InputSup{Value: lim, Input: Input{N: math.Inf(1)}, AtFullEnergy: lim, LimitError: est,
		Method: "richardson-limit", Evaluations: LadderWindow}
	for _, n := range supLimitNs {
		v, err := halfAt(model, Thermal(n), ch)
		res.Evaluations++
		if err != nil {
			return res, err
		}
		if v > res.Value+est {
			res.Value, res.Input, res.Method = v, Thermal(n), "finite-n-above-limit"
		}
	}
	return res, nil
}

func supThermal(model gaussian.Model, ch *gaussian.Channel, energy float64) (InputSup, error) {
	res := InputSup{Method: "thermal-grid"}
	vals := make([]float64, len(supFractions))
	best := -1
	for i, f := range supFractions {
		v, err := halfAt(model, Thermal(f*energy), ch)
		res.Evaluations++
		if err != nil {
			return res, err
		}
		vals[i] = v
		if best < 0 || v > vals[best] {
			best = i
		}
	}
	res.AtFullEnergy = vals[len(vals)-1]
	res.Value, res.Input = vals[best], Thermal(supFractions[best]*energy)
	if best == len(vals)-1 {
		return res, nil
	}
	// Interior maximum: golden-section search on [f_{best-1}, f_{best+1}].
	lo := 0.0
	if best > 0 {
		lo = supFractions[best-1] * energy
	}
	hi := supFractions[best+1] * energy
	f := func(n float64) float64 {
		v, err := halfAt(model, Thermal(n), ch)
		res.Evaluations++
		if err != nil {
			return math.Inf(-1)
		}
		return v
	}
	n, v := goldenMax(f, lo, hi, 60)
	if v > res.Value {
		res.Value, res.Input = v, Thermal(n)
	}
	res.Method = "thermal-grid+golden"
	return res, nil
}

// goldenMax maximises f on [a, b] by golden-section search (Kiefer, Proc. AMS 4, 502 (1953)).
func goldenMax(f func(float64) float64, a, b float64, iters int) (float64, float64) {
	r := (math.Sqrt(5) - 1) / 2
	c, d := b-r*(b-a), a+r*(b-a)
	fc, fd := f(c), f(d)
	for i := 0; i < iters; i++ {
		if fc > fd {
			b, d, fd = d, c, fc
			c = b - r*(b-a)
			fc = f(c)
		} else {
			a, c, fc = c, d, fd
			d = a + r*(b-a)
			fd = f(d)
		}
	}
	if fc > fd {
		return c, fc
	}
	return d, fd
}

// squeezedInput maps (energy fraction e, squeezing fraction s, angle phi) in the unit box
// (e, s clamped) to a squeezed thermal input of mean photon number e * energy whose
// squeezing takes the fraction s of that energy's largest possible squeezing.
func squeezedInput(energy, e, s, phi float64) Input {
	e = math.Min(math.Max(e, 0), 1)
	s = math.Min(math.Max(s, 0), 1)
	E := e * energy
	rmax := math.Acosh(2*E+1) / 2
	r := s * rmax
	n := ((2*E+1)/math.Cosh(2*r) - 1) / 2
	if n < 0 {
		n = 0
	}
	return Input{N: n, R: r, Phi: phi}
}

func supSqueezed(model gaussian.Model, ch *gaussian.Channel, energy float64) (InputSup, error) {
	res := InputSup{Method: "squeezed-grid+nelder-mead"}
	at, err := halfAt(model, Thermal(energy), ch)
	res.Evaluations++
	if err != nil {
		return res, err
	}
	res.AtFullEnergy, res.Value, res.Input = at, at, Thermal(energy)
	type cand struct {
		x [3]float64
		v float64
	}
	var top [3]cand
	for i := range top {
		top[i].v = math.Inf(-1)
	}
	f := func(x []float64) float64 {
		in := squeezedInput(energy, x[0], x[1], x[2])
		v, err := halfAt(model, in, ch)
		res.Evaluations++
		if err != nil || math.IsNaN(v) {
			return math.Inf(-1)
		}
		if v > res.Value {
			res.Value, res.Input = v, in
		}
		return v
	}
	for _, e := range []float64{0.25, 0.5, 0.75, 1} {
		for _, s := range []float64{0, 0.1, 0.25, 0.5, 0.75, 0.95} {
			for k := 0; k < 8; k++ {
				phi := float64(k) * math.Pi / 8
				x := [3]float64{e, s, phi}
				v := f(x[:])
				for i := range top {
					if v > top[i].v {
						copy(top[i+1:], top[i:len(top)-1])
						top[i] = cand{x, v}
						break
					}
				}
				if s == 0 {
					break // the angle is irrelevant without squeezing
				}
			}
		}
	}
	for _, c := range top {
		if math.IsInf(c.v, -1) {
			continue
		}
		p := optimize.Problem{Func: func(x []float64) float64 { return -f(x) }}
		// Only the values seen matter (f records the best); a budget stop is fine.
		if r, err := optimize.Minimize(p, c.x[:], &optimize.Settings{FuncEvaluations: 400}, &optimize.NelderMead{}); r == nil && err != nil {
			return res, fmt.Errorf("input supremum: %w", err)
		}
	}
	return res, nil
}
