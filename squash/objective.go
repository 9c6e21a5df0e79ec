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
// for quadrature order and units). The state is held in square-root form, V = F F^T, so that
// small symplectic eigenvalues stay accurate at large input energies (gaussian.FactorSpectrum).
type Evaluator struct {
	jointF gaussian.Matrix // factor of the (A', B, env) covariance, 8 x 8
	full   gaussian.Matrix // factor of the (A', B, E') covariance
	sub    gaussian.Matrix
	g      gaussian.Matrix // factor of Y
	rows   [gaussian.MaxDim]int
}

// NewEvaluator prepares the joint state of the model's dilation for the input in.
func NewEvaluator(model gaussian.Model, in Input) (*Evaluator, error) {
	if err := model.Validate(); err != nil {
		return nil, err
	}
	if !in.Valid() {
		return nil, fmt.Errorf("invalid input state %+v", in)
	}
	e := &Evaluator{}
	d := model.Dilation()
	f := in.Factor()
	d.JointFactor(&f, &e.jointF)
	if !e.jointF.IsFinite() {
		return nil, fmt.Errorf("joint state of %v is not finite", model)
	}
	return e, nil
}

// JointFactor returns the factor F of the (A', B, env1', env2') covariance F F^T.
func (e *Evaluator) JointFactor() gaussian.Matrix { return e.jointF }

// YAllowance is how far below zero an eigenvalue of a map's Y may fall (relative to
// max(1, max|Y_ij|)) and still count as round-off. A completely positive map has Y >= 0.
const YAllowance = 1e-12

// entropyOf returns the entropy of the listed modes of the state with factor e.full.
func (e *Evaluator) entropyOf(modes []int) (float64, error) {
	_, cols := e.full.Dims()
	e.sub.Reset(2*len(modes), cols)
	sd, fd := e.sub.Data(), e.full.Data()
	for a, m := range modes {
		copy(sd[2*a*cols:(2*a+2)*cols], fd[2*m*cols:(2*m+2)*cols])
	}
	return gaussian.FactorEntropy(&e.sub)
}

// Half returns 1/2 I(A'; B | E') in bits for the squashing map ch on the environment:
// 1/2 [S(A'E') + S(BE') - S(E') - S(A'BE')]. ch must have gaussian.EnvModes inputs and at
// most gaussian.MaxDim/4 outputs. An unphysical intermediate state (from a map that is not
// completely positive, or from round-off) is an error, never a number.
func (e *Evaluator) Half(ch *gaussian.Channel) (float64, error) {
	if ch.In != gaussian.EnvModes {
		return math.NaN(), fmt.Errorf("squashing map has %d input modes, want %d", ch.In, gaussian.EnvModes)
	}
	m := ch.Out
	if m < 1 || m > gaussian.MaxDim/4 {
		return math.NaN(), fmt.Errorf("squashing map keeps %d modes, want 1..%d", m, gaussian.MaxDim/4)
	}
	if err := gaussian.SymmetricSqrtFactor(&ch.Y, &e.g, YAllowance*math.Max(1, ch.Y.MaxAbs())); err != nil {
		return math.NaN(), fmt.Errorf("map's Y: %w", err)
	}
	// Factor of (A', B, E'): rows of A' and B unchanged; rows of E' are [X F_env, G].
	const jc = 8 // columns of the joint factor
	cols := jc + 2*m
	e.full.Reset(4+2*m, cols)
	fd, jd, xd, gd := e.full.Data(), e.jointF.Data(), ch.X.Data(), e.g.Data()
	for i := 0; i < 4; i++ {
		copy(fd[i*cols:i*cols+jc], jd[i*jc:(i+1)*jc])
	}
	for a := 0; a < 2*m; a++ {
		row := fd[(4+a)*cols : (5+a)*cols]
		for j := 0; j < jc; j++ {
			s := 0.0
			for l := 0; l < 4; l++ {
				s += xd[a*4+l] * jd[(4+l)*jc+j]
			}
			row[j] = s
		}
		copy(row[jc:], gd[a*2*m:(a+1)*2*m])
	}
	// Modes of the factor: 0 A', 1 B, 2 .. 1+m E'.
	md := e.rows[:0]
	md = append(md, 0)
	for k := 0; k < m; k++ {
		md = append(md, 2+k)
	}
	sAE, err := e.entropyOf(md)
	if err != nil {
		return math.NaN(), err
	}
	md[0] = 1
	sBE, err := e.entropyOf(md)
	if err != nil {
		return math.NaN(), err
	}
	sE, err := e.entropyOf(md[1:])
	if err != nil {
		return math.NaN(), err
	}
	md = e.rows[:0]
	for k := 0; k < 2+m; k++ {
		md = append(md, k)
	}
	sABE, err := e.entropyOf(md)
	if err != nil {
		return math.NaN(), err
	}
	return 0.5 * (sAE + sBE - sE - sABE), nil
}
