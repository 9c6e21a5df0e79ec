package search

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"strings"

	"gonum.org/v1/gonum/optimize"

	"keyceiling/gaussian"
	"keyceiling/squash"
)

// Status tells how a search ended.
type Status int

const (
	// Converged: every local run that produced the reported map met the stall rule.
	Converged Status = iota + 1
	// StoppedEarly: the reported map's local run hit its evaluation budget.
	StoppedEarly
)

func (s Status) String() string {
	switch s {
	case Converged:
		return "converged"
	case StoppedEarly:
		return "stopped-early"
	}
	return "unknown"
}

// Stage records one family's part of a search.
type Stage struct {
	Family      string    `json:"family"`
	Value       float64   `json:"value"`
	Params      []float64 `json:"params"`
	Evaluations int       `json:"evaluations"`
	LocalRuns   int       `json:"local_runs"`
	Status      string    `json:"status"`
}

// Result is the outcome of one point search: the certified bound and its map.
type Result struct {
	Point Point
	// Bound is the certified bound in bits per channel use: the extended-precision value of
	// the map's objective at the input supremum.
	Bound float64
	// Family, Params and Dilation identify the winning map.
	Family   string
	Params   []float64
	Dilation squash.Dilation
	// Map is the certified (X, Y) on the environment, Y including CPSlack.
	Map            gaussian.Channel
	PhaseCovariant bool
	Sup            squash.InputSup
	Evaluations    int
	Status         Status
	StopReason     string
	Stages         []Stage
	Recheck        Recheck
}

// Run searches squashing maps for the point. The random source rng drives the random
// starts (use RandFor for reproducible per-point sources); warm, if not nil, is a
// neighbouring point's result whose stage optima are used as extra starts. The result and an
// error are returned together: on error the result holds what was found so far, but its
// Bound is not certified and must not be reported.
func Run(p Point, s Settings, rng *rand.Rand, warm *Result) (Result, error) {
	if err := p.Validate(); err != nil {
		return Result{Point: p}, err
	}
	if err := s.Validate(); err != nil {
		return Result{Point: p}, err
	}
	s = s.withDefaults()
	r := &runner{p: p, s: s, rng: rng, warm: warm}
	res, err := r.run()
	res.Point = p
	return res, err
}

type runner struct {
	p     Point
	s     Settings
	rng   *rand.Rand
	warm  *Result
	evals int
}

// candidate is a family member under consideration.
type candidate struct {
	fam    squash.Family
	params []float64
	value  float64
	status optimize.Status
	stage  Stage
}

func (r *runner) warmStart(name string) []float64 {
	if r.warm == nil {
		return nil
	}
	for _, st := range r.warm.Stages {
		if st.Family == name && len(st.Params) > 0 {
			return st.Params
		}
	}
	return nil
}

func (r *runner) run() (Result, error) {
	finite := !math.IsInf(r.p.Energy, 1)
	var stages []candidate
	best := -1 // index of the stage with the smallest search value
	consider := func(c candidate, err error) error {
		if err != nil {
			return err
		}
		stages = append(stages, c)
		if best < 0 || c.value < stages[best].value {
			best = len(stages) - 1
		}
		return nil
	}
	var err error
	switch r.s.Family {
	case "split":
		err = consider(r.fixedFamily(squash.Split{}))
	case "tms-split":
		err = consider(r.fixedFamily(squash.TMSSplit{}))
	case "covariant", "general":
		var c candidate
		if c, err = r.fixedFamily(squash.TMSSplit{}); err == nil {
			err = consider(r.lifted(c, r.s.Family))
		}
	case "auto":
		var c candidate
		if c, err = r.fixedFamily(squash.TMSSplit{}); err == nil {
			_ = consider(c, nil)
			if err = consider(r.lifted(c, "covariant")); err == nil && finite {
				err = consider(r.lifted(stages[best], "general"))
			}
		}
	}
	res := Result{Evaluations: r.evals}
	for _, c := range stages {
		res.Stages = append(res.Stages, c.stage)
	}
	if err != nil {
		return res, err
	}
	if len(stages) == 0 {
		return res, errors.New("no family produced a finite bound")
	}
	// Certify every stage's optimum and report the smallest certified bound. The search
	// values are not comparable to the last digit: a map that is not phase covariant is
	// certified at its supremum over squeezed inputs, which may exceed the value its search
	// saw by up to CutTolerance, so a near tie in search values can reverse.
	var chosen *Result
	var notes []string
	var firstErr error
	for _, c := range stages {
		cand := res
		cand.Family = c.fam.Name()
		cand.Params = append([]float64(nil), c.params...)
		cand.Dilation = squash.BuildDilation(c.fam, c.params)
		cand.PhaseCovariant = c.fam.PhaseCovariant()
		cand.Status = Converged
		if c.status.Early() {
			cand.Status = StoppedEarly
		}
		if err := r.certify(&cand); err != nil {
			notes = append(notes, fmt.Sprintf("%s not certified: %v", c.stage.Family, err))
			if firstErr == nil {
				firstErr = fmt.Errorf("%s: %w", c.stage.Family, err)
			}
			continue
		}
		cand.StopReason = fmt.Sprintf("%s: %s", c.stage.Family, c.stage.Status)
		if chosen == nil || cand.Bound < chosen.Bound {
			chosen = &cand
		}
	}
	if chosen == nil {
		res.Evaluations = r.evals
		return res, firstErr
	}
	out := *chosen
	if len(notes) > 0 {
		out.StopReason += "; " + strings.Join(notes, "; ")
	}
	out.Evaluations = r.evals
	return out, nil
}

// fixedFamily runs multi-start local searches of a family from its known starts, the warm
// start and seeded random starts, then the cutting-plane rounds.
func (r *runner) fixedFamily(fam squash.Family) (candidate, error) {
	starts := fam.Starts()
	if w := r.warmStart(fam.Name()); len(w) == fam.NumParams() {
		starts = append([][]float64{w}, starts...)
	}
	for i := 0; i < max(r.s.RandomStarts, 0); i++ {
		x := make([]float64, fam.NumParams())
		for j := range x {
			x[j] = (r.rng.Float64()*2 - 1) * 2
		}
		starts = append(starts, x)
	}
	return r.optimise(fam, starts)
}

// lifted runs a larger family started from a smaller family's optimum, plus seeded
// perturbations of it.
func (r *runner) lifted(from candidate, kind string) (candidate, error) {
	d := squash.BuildDilation(from.fam, from.params)
	var fam squash.Family
	var x0 []float64
	var err error
	k, m := r.s.Ancillas, r.s.Keep
	switch kind {
	case "covariant":
		if k == 0 {
			k = 3
		}
		if m == 0 {
			m = 2
		}
		fam, x0, err = liftCovariant(d, k, m)
	case "general":
		if k == 0 {
			k = max(2, from.fam.Ancillas())
		}
		if m == 0 {
			m = max(2, from.fam.Kept())
		}
		if !math.IsInf(r.p.Energy, 1) {
			fam, x0, err = liftGeneral(d, k, m)
		} else {
			err = errors.New("the general family needs a finite energy: at N_S = inf the supremum over squeezed inputs is not computed")
		}
	}
	if err != nil {
		return candidate{}, err
	}
	starts := [][]float64{x0}
	if w := r.warmStart(fam.Name()); len(w) == fam.NumParams() {
		starts = append(starts, w)
	}
	for i := 0; i < max(r.s.RandomStarts, 0)/2; i++ {
		x := append([]float64(nil), x0...)
		for j := 0; j < len(x)-fam.Ancillas(); j++ {
			x[j] += 0.3 * r.rng.NormFloat64()
		}
		starts = append(starts, x)
	}
	return r.optimise(fam, starts)
}

func liftCovariant(d squash.Dilation, k, m int) (squash.Family, []float64, error) {
	f, x, err := squash.LiftCovariant(d, k, m)
	return f, x, err
}

func liftGeneral(d squash.Dilation, k, m int) (squash.Family, []float64, error) {
	f, x, err := squash.LiftGeneral(d, k, m)
	return f, x, err
}

// optimise runs the local optimiser from every start (in order), polishes the best with
// restarts, and for finite energy runs the cutting-plane rounds over inputs.
func (r *runner) optimise(fam squash.Family, starts [][]float64) (candidate, error) {
	t, err := squash.NewTarget(r.p.Model, r.p.Energy, fam)
	if err != nil {
		return candidate{}, err
	}
	c := candidate{fam: fam, value: math.Inf(1)}
	c.stage.Family = fam.Name()
	runs := 0
	localAll := func(starts [][]float64) {
		for _, x0 := range starts {
			x, f, st := r.local(t, x0)
			runs++
			if f < c.value {
				c.value, c.params, c.status = f, x, st
			}
		}
	}
	localAll(starts)
	if math.IsInf(c.value, 1) {
		r.evals += t.Evaluations
		return c, fmt.Errorf("family %s: no start gave a finite bound", fam.Name())
	}
	// Nelder-Mead can stall on a collapsed simplex; two restarts from the best point
	// (common practice) cost little and often gain.
	localAll([][]float64{c.params, c.params})
	rounds := 0
	if !math.IsInf(r.p.Energy, 1) {
		for ; rounds < r.s.Rounds; rounds++ {
			var ch gaussian.Channel
			squash.MapOf(fam, c.params, &ch)
			sup, err := squash.Supremum(r.p.Model, &ch, r.p.Energy, fam.PhaseCovariant())
			r.evals += sup.Evaluations
			if err != nil {
				return c, err
			}
			if sup.Value <= c.value+CutTolerance {
				break
			}
			if err := t.AddInput(sup.Input); err != nil {
				return c, err
			}
			c.value = math.Inf(1)
			localAll([][]float64{c.params})
		}
	}
	r.evals += t.Evaluations
	c.stage.Value = c.value
	c.stage.Params = append([]float64(nil), c.params...)
	c.stage.Evaluations = t.Evaluations
	c.stage.LocalRuns = runs
	c.stage.Status = fmt.Sprintf("%s after %d local runs, %d input rounds", statusWord(c.status), runs, rounds)
	return c, nil
}

// CutTolerance is how far (bits) the input supremum may exceed the active-set value before
// the worst input joins the active set and the map is re-optimised.
const CutTolerance = 1e-9

func statusWord(s optimize.Status) string {
	if s.Early() {
		return "stopped early (" + s.String() + ")"
	}
	return "converged (" + s.String() + ")"
}

// local runs one local optimisation from x0.
func (r *runner) local(t *squash.Target, x0 []float64) ([]float64, float64, optimize.Status) {
	f0 := t.Value(x0)
	if math.IsInf(f0, 1) {
		return x0, f0, optimize.Failure
	}
	settings := &optimize.Settings{
		FuncEvaluations: r.s.MaxEvaluations,
		Converger:       &optimize.FunctionConverge{Absolute: r.s.Tolerance, Iterations: StallIterations},
	}
	problem := optimize.Problem{Func: t.Value}
	var method optimize.Method
	switch r.s.Method {
	case "bfgs":
		// Central differences with a per-parameter step (squash.Gradient), one-sided where
		// the objective is +Inf on one side.
		gr := squash.NewGradient(t)
		problem.Grad = func(dst, x []float64) { gr.Grad(dst, x) }
		method = &optimize.BFGS{}
	default:
		method = &optimize.NelderMead{SimplexSize: 0.2}
	}
	res, err := optimize.Minimize(problem, append([]float64(nil), x0...), settings, method)
	if res == nil {
		_ = err
		return x0, f0, optimize.Failure
	}
	if res.F > f0 || math.IsNaN(res.F) {
		return x0, f0, res.Status
	}
	return res.X, res.F, res.Status
}
