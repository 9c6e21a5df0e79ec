package squash

import (
	"errors"
	"fmt"
	"math"
	"math/big"

	"keyceiling/gaussian"
)

// The extended-precision re-check of the objective. Everything below is recomputed in
// gaussian's big-float path (gaussian.PrecisePrec bits) from the model parameters, the input
// parameters and the float64 entries of the squashing map, which are taken as exact; it
// shares no code with Evaluator.Half beyond the conventions of gaussian's package doc.

// PreciseLimitPhotons are the thermal-input photon numbers at which PreciseHalfUnconstrained
// evaluates the objective, ascending and a factor 1000 apart. The distance of the objective
// from its limit falls like 1/n (up to log n), while big-float round-off grows like
// 2^-256 (max|V|)^2 with max|V| of order n: about 1e-23 at n = 1e27 for unsqueezed maps, but
// more for maps with strong squeezing, which multiplies max|V|. The ladder lets the routine
// pick the level where the sum of the two is smallest.
var PreciseLimitPhotons = [...]float64{1e12, 1e15, 1e18, 1e21, 1e24, 1e27}

// PreciseLimitContraction is the largest ratio |f(n_k) - f(n_k-1)| / |f(n_k-1) - f(n_k-2)|
// of successive differences along PreciseLimitPhotons accepted as evidence that the
// thermal-input objective f has reached its asymptotic regime at level k. A tail c n^-p
// (times powers of log n) with p = 1 contracts by about 1000 per level; a divergent f (log n
// growth) does not contract at all (common practice: a ratio test with a wide margin).
const PreciseLimitContraction = 0.5

// PreciseLimitFloor is the size of a difference |f(n_k) - f(n_k-1)| below which the
// contraction test is not applied: such a difference is already far below any reported
// precision (common practice).
const PreciseLimitFloor = 1e-18

// PreciseRoundoffBits sets the round-off allowance of one precise objective value:
// 2^-PreciseRoundoffBits max(1, max|V|)^2 bits, V the (A', B, E') covariance. Symplectic
// eigenvalues carry an error of about 2^-256 max|V|^2 (gaussian.PrecisePrec) and an entropy
// term g((nu-1)/2) amplifies it by at most about 80 (its slope log2(e/x) at x = 1e-23); the
// allowance 2^-240 leaves a factor 2^16 for those and for the few dozen rounding steps
// (common practice; at n = 1e27 the measured round-off of the 50:50 map is about 1e-23, the
// allowance 2e-18).
const PreciseRoundoffBits = 240

// ErrNoLimit is returned (wrapped) when the thermal-input objective does not converge as
// the photon number grows: the unconstrained bound of that map is infinite or not reached.
var ErrNoLimit = errors.New("objective has no finite N_S -> infinity limit")

// PreciseHalf returns 1/2 I(A'; B | E') in bits for the model, the input and the squashing map
// ch (with gaussian.EnvModes input modes), computed entirely in big floats: the purification
// of the input and the model's dilation rebuilt from their parameters
// (gaussian.Model.PreciseDilation), the map applied with its float64 X and Y taken as exact,
// and the four entropies S(A'E') + S(BE') - S(E') - S(A'BE') from precise symplectic
// spectra; only the result is rounded to float64. An unphysical intermediate state (a map
// that is not exactly completely positive can produce one; see gaussian.PreciseNudgeCP) is an
// error wrapping gaussian.ErrUnphysical. It allocates (a few milliseconds and about 1 MB per
// call for a map keeping two modes) and is safe for concurrent use.
func PreciseHalf(model gaussian.Model, in Input, ch *gaussian.Channel) (float64, error) {
	v, _, err := preciseHalfBig(model, in, ch)
	if err != nil {
		return math.NaN(), err
	}
	f, _ := v.Float64()
	return f, nil
}

// preciseHalfBig is PreciseHalf before rounding to float64. It also returns max|V| of the
// (A', B, E') covariance, the scale of its round-off.
func preciseHalfBig(model gaussian.Model, in Input, ch *gaussian.Channel) (*big.Float, float64, error) {
	if !in.Valid() {
		return nil, 0, fmt.Errorf("invalid input %+v", in)
	}
	if ch.In != gaussian.EnvModes {
		return nil, 0, fmt.Errorf("squashing map has %d input modes, want %d", ch.In, gaussian.EnvModes)
	}
	d, err := model.PreciseDilation()
	if err != nil {
		return nil, 0, err
	}
	joint := d.Joint(gaussian.PreciseSqueezedThermalPurification(in.N, in.R, in.Phi))
	full, err := ch.PreciseApplyToTail(joint, 2) // modes (A', B, E'_1 .. E'_m)
	if err != nil {
		return nil, 0, err
	}
	m := ch.Out
	eModes := make([]int, m)
	for k := range eModes {
		eModes[k] = 2 + k
	}
	entropy := func(modes ...int) (*big.Float, error) {
		s, err := gaussian.PreciseEntropy(full.SelectModes(modes))
		if err != nil {
			return nil, fmt.Errorf("precise entropy of modes %v: %w", modes, err)
		}
		return s, nil
	}
	sAE, err := entropy(append([]int{0}, eModes...)...)
	if err != nil {
		return nil, 0, err
	}
	sBE, err := entropy(append([]int{1}, eModes...)...)
	if err != nil {
		return nil, 0, err
	}
	sE := new(big.Float).SetPrec(gaussian.PrecisePrec) // the entropy of no modes is 0
	if m > 0 {
		if sE, err = entropy(eModes...); err != nil {
			return nil, 0, err
		}
	}
	sABE, err := entropy(append([]int{0, 1}, eModes...)...)
	if err != nil {
		return nil, 0, err
	}
	r := new(big.Float).SetPrec(gaussian.PrecisePrec).Add(sAE, sBE)
	r.Sub(r, sE)
	r.Sub(r, sABE)
	return r.SetMantExp(r, -1), full.MaxAbs(), nil
}

// PreciseHalfUnconstrained returns the N_S -> infinity limit of PreciseHalf for a thermal
// input, with an estimate of its error.
//
// Method and why it is valid. The objective f(n) for a thermal input with n photons is a
// combination of g((nu_k - 1)/2) over symplectic eigenvalues that are algebraic in n; the
// growing ones contribute log2 n + const + O(1/n) each and those logarithms cancel in the
// conditional mutual information, so a finite limit is approached as O(1/n) up to log n
// factors (eigenvalues tending to 1 contribute (c/n) log n). In float64 the cancellation of
// log n terms and of covariance entries of size n destroys such an evaluation, which is why
// the float64 path must not plug in a huge N_S; at 256 bits the round-off of an objective
// value is about 2^-256 (max|V|)^2 (1e-23 at n = 1e27 without squeezing), so f can be
// evaluated directly at n = 1e12 .. 1e27 (PreciseLimitPhotons). At level k the distance to
// the limit is estimated by E_k = |f(n_k) - f(n_k-1)|: for a tail c n^-p with p > 0.1 (in
// particular p = 1, with or without a log factor) the difference over a factor 1000 exceeds
// the remaining tail c n_k^-p, here by a factor of about 1000. That the tail is in this regime
// is checked: E_k must be at most PreciseLimitContraction E_k-1 (or below PreciseLimitFloor).
// To E_k is added the round-off allowance R_k = 2^-PreciseRoundoffBits max(1, max|V|)^2 of
// f(n_k) (see PreciseRoundoffBits). Among the levels that pass the test the one with the
// smallest E_k + R_k is returned: value f(n_k), errEstimate E_k + R_k + half an ulp of value.
// If no level passes, the error wraps ErrNoLimit (a map whose objective grows like log n,
// for instance). A state found unphysical at the fourth level or above (round-off under
// extreme squeezing) ends the ladder below that level instead of failing the call.
//
// This is the limit, not the supremum over n: the caller must know (or check) that the
// thermal-input objective does not exceed its limit at a finite n.
func PreciseHalfUnconstrained(model gaussian.Model, ch *gaussian.Channel) (value, errEstimate float64, err error) {
	levels := len(PreciseLimitPhotons)
	var f [len(PreciseLimitPhotons)]*big.Float
	var scale [len(PreciseLimitPhotons)]float64
	for i, n := range PreciseLimitPhotons {
		if f[i], scale[i], err = preciseHalfBig(model, Thermal(n), ch); err != nil {
			// Round-off grows with n; a state found unphysical at a high level (extreme
			// squeezing in the map) ends the ladder there if three levels are left.
			if i >= 3 && errors.Is(err, gaussian.ErrUnphysical) {
				levels = i
				break
			}
			return math.NaN(), math.Inf(1), fmt.Errorf("thermal input n = %g: %w", n, err)
		}
	}
	diff := func(a, b *big.Float) float64 {
		d := new(big.Float).SetPrec(gaussian.PrecisePrec).Sub(a, b)
		x, _ := d.Abs(d).Float64()
		return x
	}
	best, bestEst := -1, math.Inf(1)
	var e [len(PreciseLimitPhotons)]float64
	for k := 1; k < levels; k++ {
		e[k] = diff(f[k], f[k-1])
		if k < 2 || (e[k] > PreciseLimitFloor && e[k] > PreciseLimitContraction*e[k-1]) {
			continue
		}
		s := math.Max(1, scale[k])
		est := e[k] + math.Ldexp(s*s, -PreciseRoundoffBits)
		if est < bestEst {
			best, bestEst = k, est
		}
	}
	if best < 0 {
		return math.NaN(), math.Inf(1), fmt.Errorf("successive differences %.3g along n = %g .. %g: %w",
			e[1:levels], PreciseLimitPhotons[0], PreciseLimitPhotons[levels-1], ErrNoLimit)
	}
	value, _ = f[best].Float64()
	ulp := math.Nextafter(math.Abs(value), math.Inf(1)) - math.Abs(value)
	return value, bestEst + ulp/2, nil
}
