package search

import (
	"fmt"
	"math"

	"keyceiling/gaussian"
	"keyceiling/squash"
)

// Tolerances of the certificate, one per purpose.
const (
	// CPSlack is added to Y (times the identity) before certification. Maps built from a
	// symplectic and vacuum ancillas sit exactly on the boundary of complete positivity
	// (zero eigenvalues), where float64 round-off in X and Y can put them a hair outside.
	// Adding CPSlack I is composing with a Gaussian additive-noise channel, a valid map of E',
	// so the result is strictly completely positive and remains a squashing map; its effect
	// on the bound is of order 1e-11 bits.
	CPSlack = 1e-11
	// RecheckTolerance is the largest allowed difference in bits between the float64 bound
	// and the extended-precision recomputation of the same map at the same input.
	RecheckTolerance = 1e-8
	// CovarianceTolerance is the largest change in bits of the objective under a rotation of
	// a squeezed input that a map claimed phase covariant may show (round-off only).
	CovarianceTolerance = 1e-9
	// LowerSlack is how far below the best lower bound a bound may fall before it is
	// declared a bug (an upper bound below an achievable rate is impossible).
	LowerSlack = 1e-9
)

// Recheck is the certificate's verification record.
type Recheck struct {
	// Float64 is the input supremum computed in float64; Precise the extended-precision
	// objective at the same input; Difference = |Float64 - Precise|.
	Float64    float64 `json:"float64"`
	Precise    float64 `json:"precise"`
	Difference float64 `json:"difference"`
	// PreciseError is the extended-precision path's own error estimate (the N_S -> inf
	// extrapolation error; 0 at finite energy).
	PreciseError float64 `json:"precise_error"`
	// CPMargin is the smallest eigenvalue of Y + i Omega - i X Omega X^T in extended
	// precision (must be > 0).
	CPMargin float64 `json:"cp_margin"`
	// Lower is the best lower bound at the point, and the bound must not be below it.
	Lower float64 `json:"lower"`
	// Passed is true when every check passed.
	Passed bool `json:"passed"`
}

// certify turns the best map into a certified bound, filling res.Map, res.Sup, res.Bound
// and res.Recheck. It returns an error when any check fails; the bound is then not a result.
func (r *runner) certify(res *Result) error {
	ch := res.Dilation.Channel()
	for i := 0; i < 2*ch.Out; i++ {
		ch.Y.Set(i, i, ch.Y.At(i, i)+CPSlack)
	}
	// Stronger squeezing can leave a deficit larger than CPSlack; then size the nudge to
	// the map (refused beyond 1e-12 relative, see gaussian.PreciseNudgeCP).
	if m, err := gaussian.PreciseCPCertify(&ch); err == nil && !(m > 0) {
		if nudged, _, err := gaussian.PreciseNudgeCP(&ch); err == nil {
			ch = nudged
		}
	}
	res.Map = ch
	rc, sup, err := Certify(r.p, &ch, res.PhaseCovariant)
	res.Recheck, res.Sup = rc, sup
	r.evals += sup.Evaluations
	if err != nil {
		return err
	}
	res.Bound = rc.Precise
	return nil
}

// Certify verifies a map (X, Y) on the environment as a bound at point p, independently of
// how the map was found: complete positivity in extended precision, the supremum over
// inputs (thermal if covariant, else squeezed thermal too), the extended-precision
// recomputation at the supremum, and the comparison with the best lower bound. It is what
// `keyceiling check` runs on every stored record.
func Certify(p Point, ch *gaussian.Channel, covariant bool) (Recheck, squash.InputSup, error) {
	var rc Recheck
	if covariant {
		if err := CheckCovariance(p.Model, ch); err != nil {
			return rc, squash.InputSup{}, err
		}
	}
	margin, err := gaussian.PreciseCPCertify(ch)
	rc.CPMargin = margin
	if err != nil {
		return rc, squash.InputSup{}, fmt.Errorf("complete-positivity check: %w", err)
	}
	if !(margin > 0) {
		return rc, squash.InputSup{}, fmt.Errorf("map is not certified completely positive: smallest eigenvalue %.3g", margin)
	}
	sup, err := squash.Supremum(p.Model, ch, p.Energy, covariant)
	if err != nil {
		return rc, sup, fmt.Errorf("input supremum: %w", err)
	}
	rc.Float64 = sup.Value
	if math.IsInf(sup.Input.N, 1) {
		rc.Precise, rc.PreciseError, err = squash.PreciseHalfUnconstrained(p.Model, ch)
		// The float64 limit carries its own extrapolation error; allow for both.
		if err == nil && math.Abs(rc.Precise-rc.Float64) > RecheckTolerance+sup.LimitError+rc.PreciseError {
			err = fmt.Errorf("extended-precision limit %.12g differs from the float64 limit %.12g", rc.Precise, rc.Float64)
		}
	} else {
		rc.Precise, err = squash.PreciseHalf(p.Model, sup.Input, ch)
		if err == nil && math.Abs(rc.Precise-rc.Float64) > RecheckTolerance {
			err = fmt.Errorf("extended-precision value %.12g differs from the float64 value %.12g", rc.Precise, rc.Float64)
		}
	}
	rc.Difference = math.Abs(rc.Precise - rc.Float64)
	if err != nil {
		return rc, sup, fmt.Errorf("extended-precision re-check: %w", err)
	}
	refs := squash.References(p.Model, p.Energy)
	rc.Lower = squash.BestLower(refs)
	if rc.Precise < rc.Lower-LowerSlack {
		return rc, sup, fmt.Errorf("bound %.10g is below the lower bound %.10g: a bug, not a result", rc.Precise, rc.Lower)
	}
	rc.Passed = true
	return rc, sup, nil
}

// CheckCovariance tests a map's claim to phase covariance: for a covariant map the objective
// with a squeezed input cannot depend on the squeezing angle, because the rotation is undone
// by local unitaries on B and E' (physics notes). Several angles and two squeezings are
// tried; a change above CovarianceTolerance refutes the claim. This is a necessary
// condition checked numerically, so a map that fails it is never given the thermal-input
// supremum.
func CheckCovariance(model gaussian.Model, ch *gaussian.Channel) error {
	for _, in := range []squash.Input{{N: 0.3, R: 0.5}, {N: 1.2, R: 0.9}} {
		lo, hi := math.Inf(1), math.Inf(-1)
		for k := 0; k < 5; k++ {
			in.Phi = float64(k) * math.Pi / 5
			ev, err := squash.NewEvaluator(model, in)
			if err != nil {
				return err
			}
			v, err := ev.Half(ch)
			if err != nil {
				return fmt.Errorf("covariance check: %w", err)
			}
			lo, hi = math.Min(lo, v), math.Max(hi, v)
		}
		if hi-lo > CovarianceTolerance*math.Max(1, hi) {
			return fmt.Errorf("map claimed phase covariant is not: the objective changes by %.3g bits with the input's squeezing angle", hi-lo)
		}
	}
	return nil
}
