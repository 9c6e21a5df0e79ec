package squash

import (
	"fmt"
	"math"

	"keyceiling/gaussian"
)

// Target is the function a search minimises for one channel and energy: the bound of a
// family member at given parameters. At finite energy it is the largest objective over an
// active set of inputs (initially the thermal input at the full energy; the search adds the
// worst input it finds for non-covariant maps, a cutting-plane scheme); at infinite energy it
// is the extrapolated limit of a thermal input. Value never allocates and never returns a
// number for an unphysical evaluation: errors and non-finite values become +Inf, so an
// optimiser cannot "win" on a broken evaluation. Not safe for concurrent use.
type Target struct {
	Model  gaussian.Model
	Energy float64 // mean photon number bound; +Inf for unconstrained
	Family Family

	evs    []*Evaluator
	inputs []Input
	ladder *Ladder
	ch     gaussian.Channel
	work   MapWork
	// Evaluations counts calls of Value.
	Evaluations int
}

// NewTarget prepares the target for fam at the given energy.
func NewTarget(model gaussian.Model, energy float64, fam Family) (*Target, error) {
	if err := model.Validate(); err != nil {
		return nil, err
	}
	if math.IsNaN(energy) || energy <= 0 {
		return nil, fmt.Errorf("energy = %v is out of range (want a mean photon number > 0, or inf)", energy)
	}
	t := &Target{Model: model, Energy: energy, Family: fam}
	if math.IsInf(energy, 1) {
		if !fam.PhaseCovariant() {
			return nil, fmt.Errorf("family %s is not phase covariant: its bound needs the supremum over squeezed inputs, which keyceiling computes only at finite energy", fam.Name())
		}
		l, err := NewLadder(model)
		if err != nil {
			return nil, err
		}
		t.ladder = l
		return t, nil
	}
	if err := t.AddInput(Thermal(energy)); err != nil {
		return nil, err
	}
	return t, nil
}

// AddInput adds an input to the active set (finite energy only).
func (t *Target) AddInput(in Input) error {
	if t.ladder != nil {
		return fmt.Errorf("no input set at infinite energy")
	}
	ev, err := NewEvaluator(t.Model, in)
	if err != nil {
		return err
	}
	t.evs = append(t.evs, ev)
	t.inputs = append(t.inputs, in)
	return nil
}

// Inputs returns the active input set.
func (t *Target) Inputs() []Input { return t.inputs }

// Value returns the target at params, +Inf where the evaluation fails.
func (t *Target) Value(params []float64) float64 {
	t.Evaluations++
	t.work.Map(t.Family, params, &t.ch)
	if t.ladder != nil {
		v, _, err := t.ladder.Half(&t.ch)
		if err != nil || math.IsNaN(v) || v < -NegativeGuard {
			return math.Inf(1)
		}
		return v
	}
	best := math.Inf(-1)
	for _, ev := range t.evs {
		v, err := ev.Half(&t.ch)
		if err != nil || math.IsNaN(v) || v < -NegativeGuard {
			return math.Inf(1)
		}
		best = max(best, v)
	}
	return best
}

// NegativeGuard: a conditional mutual information is never negative (strong subadditivity,
// Lieb, Ruskai, J. Math. Phys. 14, 1938 (1973)), so a value below -NegativeGuard can only
// come from round-off dominating the evaluation, and Value returns +Inf for it instead of a
// number an optimiser would chase (physics notes, "Numerical trap").
const NegativeGuard = 1e-10
