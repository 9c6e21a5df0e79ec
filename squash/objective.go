package squash

import (
	"fmt"
	"math"

	"keyceiling/gaussian"
)

// Evaluator computes the squashing objective 1/2 I(A'; B | E') for one channel and one pure
// input state, for any number of squashing maps. It owns all scratch space: Half does not
// allocate. An Evaluator is not safe for concurrent use; give each worker its own.
//
// Modes of the joint state are ordered (A', B, env1', env2') as in gaussian.Dilation; the
// squashing map acts on the two environment modes and outputs E' (see gaussian's package doc
// for quadrature order and units).
type Evaluator struct {
	joint gaussian.Matrix // (A', B, env) covariance
	full  gaussian.Matrix // (A', B, E') covariance
	sub   gaussian.Matrix
	modes [gaussian.MaxModes]int
}

// NewEvaluator prepares the joint state of the model's dilation for the pure input in (a
// two-mode covariance on A', A). It returns an error if the joint state is not physical.
func NewEvaluator(model gaussian.Model, in gaussian.Matrix) (*Evaluator, error) {
	if err := model.Validate(); err != nil {
		return nil, err
	}
	e := &Evaluator{}
	d := model.Dilation()
	d.Joint(&in, &e.joint)
	if err := gaussian.CheckPhysical(&e.joint); err != nil {
		return nil, fmt.Errorf("joint state of %v: %w", model, err)
	}
	return e, nil
}

// Joint returns the (A', B, env1', env2') covariance.
func (e *Evaluator) Joint() gaussian.Matrix { return e.joint }

// entropyOf returns the entropy of the listed modes of e.full.
func (e *Evaluator) entropyOf(modes []int) (float64, error) {
	e.sub.SelectModes(&e.full, modes)
	return gaussian.Entropy(&e.sub)
}

// Half returns 1/2 I(A'; B | E') in bits for the squashing map ch on the environment:
// 1/2 [S(A'E') + S(BE') - S(E') - S(A'BE')]. ch must have gaussian.EnvModes inputs. An
// unphysical intermediate state (from a map that is not completely positive, or from
// round-off) is an error, never a number.
func (e *Evaluator) Half(ch *gaussian.Channel) (float64, error) {
	if ch.In != gaussian.EnvModes {
		return math.NaN(), fmt.Errorf("squashing map has %d input modes, want %d", ch.In, gaussian.EnvModes)
	}
	m := ch.Out
	if 2+m > gaussian.MaxModes {
		return math.NaN(), fmt.Errorf("squashing map keeps %d modes, at most %d supported", m, gaussian.MaxModes-2)
	}
	ch.ApplyToTail(&e.joint, 2, &e.full)
	// E' modes are 2 .. 2+m-1.
	md := e.modes[:0]
	md = append(md, 0)
	for k := 0; k < m; k++ {
		md = append(md, 2+k)
	}
	sAE, err := e.entropyOf(md) // A' E'
	if err != nil {
		return math.NaN(), err
	}
	md[0] = 1
	sBE, err := e.entropyOf(md) // B E'
	if err != nil {
		return math.NaN(), err
	}
	sE := 0.0 // the entropy of no modes
	if m > 0 {
		if sE, err = e.entropyOf(md[1:]); err != nil {
			return math.NaN(), err
		}
	}
	md = e.modes[:0]
	for k := 0; k < 2+m; k++ {
		md = append(md, k)
	}
	sABE, err := e.entropyOf(md)
	if err != nil {
		return math.NaN(), err
	}
	return 0.5 * (sAE + sBE - sE - sABE), nil
}
