package squash

import (
	"errors"
	"fmt"
	"math"

	"keyceiling/gaussian"
)

// Reference is one published bound on the two-way assisted secret-key capacity of a channel
// (in bits per channel use), against which a squashing bound is compared.
//
// Upper bounds hold for the capacity with or without an energy constraint: a bound on the
// unconstrained capacity is also a bound on the capacity at any finite mean input photon
// number N_S, because restricting the inputs can only lower the capacity. Lower bounds
// (achievable rates) are different: an unconstrained rate is not achievable at finite N_S, so
// at finite N_S the lower bounds are computed for the energy-constrained input TMSV(N_S).
type Reference struct {
	// Name is a short kebab-case id of ours: "tgw-pure-loss", "data-processing", "ree",
	// "rci", "ci".
	Name string
	// Value is the bound in bits per channel use.
	Value float64
	// Upper is true for an upper bound on the capacity, false for an achievable rate.
	Upper bool
	// Source is a short citation.
	Source string
}

// Citations of the reference bounds (see the project's physics notes).
const (
	SourceTGW  = "Takeoka, Guha, Wilde, Nat. Commun. 5, 5235 (2014)"
	SourceDP   = "Takeoka, Guha, Wilde, Nat. Commun. 5, 5235 (2014), at eta' = eta/(1+(1-eta)N_B) by data processing"
	SourcePLOB = "Pirandola, Laurenza, Ottaviani, Banchi, Nat. Commun. 8, 15043 (2017)"
	SourceRCI  = "Garcia-Patron, Pirandola, Lloyd, Shapiro, PRL 102, 210501 (2009)"
	SourceCI   = "Holevo, Werner, PRA 63, 032312 (2001)"
	// SourceTMSV marks a lower bound evaluated from the covariance matrix of a TMSV(N_S) input.
	SourceTMSV = "TMSV(N_S) input, from the covariance matrix"
)

// Reference names.
const (
	RefTGWPureLoss    = "tgw-pure-loss"
	RefDataProcessing = "data-processing"
	RefREE            = "ree"
	RefRCI            = "rci"
	RefCI             = "ci"
)

// TGWPureLoss is the squashed-entanglement bound of Takeoka, Guha and Wilde (Nat. Commun. 5,
// 5235 (2014)) for the pure-loss channel of transmissivity eta in [0, 1] (a 50:50 beam
// splitter with vacuum on the environment as squashing map): log2((1+eta)/(1-eta)) for
// ns = +Inf (unconstrained), g((1+eta) ns/2) - g((1-eta) ns/2) at mean input photon number
// ns >= 0. It returns NaN outside the domain.
func TGWPureLoss(eta, ns float64) float64 {
	if !(eta >= 0 && eta <= 1) || !(ns >= 0) {
		return math.NaN()
	}
	if math.IsInf(ns, 1) {
		// log1p keeps full relative precision at small eta.
		return (math.Log1p(eta) - math.Log1p(-eta)) / math.Ln2
	}
	return gaussian.G((1+eta)*ns/2) - gaussian.G((1-eta)*ns/2)
}

// DataProcessingEta is the transmissivity eta' = eta / (1 + (1-eta) N_B) of the pure-loss
// channel that, followed by a quantum-limited amplifier of gain 1 + (1-eta) N_B, equals the
// thermal-loss channel (eta, N_B) (physics notes, "Decompositions").
func DataProcessingEta(eta, nb float64) float64 {
	return eta / (1 + (1-eta)*nb)
}

// DataProcessingThermalLoss is the data-processing bound for the thermal-loss channel (eta,
// N_B): TGWPureLoss at eta' = DataProcessingEta(eta, nb) and the same ns (+Inf for
// unconstrained). The thermal-loss channel is the pure-loss channel eta' followed by an
// amplifier, so by data processing its squashed entanglement at energy ns is at most the
// pure-loss one at the same energy. NaN outside the domain.
func DataProcessingThermalLoss(eta, nb, ns float64) float64 {
	if !(eta >= 0 && eta < 1) || !(nb >= 0) || math.IsInf(nb, 1) {
		return math.NaN()
	}
	return TGWPureLoss(DataProcessingEta(eta, nb), ns)
}

// The entanglement-breaking thresholds below are where the relative-entropy bounds of
// Pirandola et al. (Nat. Commun. 8, 15043 (2017)) reach 0: at N_B = eta/(1-eta) the
// thermal-loss bound is g(N_B) - g(N_B) = 0, at N_B = 1/(G-1) the amplifier bound is likewise
// 0, and at xi = 1 the additive-noise bound is 0. They agree with Holevo's criterion for a
// phase-insensitive channel V -> k V + y I to be entanglement breaking, y >= |k| + 1 in
// shot-noise units (Holevo, Probl. Inf. Transm. 44, 171 (2008), arXiv:0802.0235), which the
// tests check, together with the positivity of the partial transpose of the channel's output.

// thermalLossBreaks reports N_B >= eta/(1-eta) (eta in (0, 1)); eta = 0 breaks everything.
func thermalLossBreaks(eta, nb float64) bool { return eta <= 0 || nb >= eta/(1-eta) }

// amplifierBreaks reports N_B >= 1/(G-1).
func amplifierBreaks(gain, nb float64) bool { return nb >= 1/(gain-1) }

// additiveBreaks reports xi >= 1 (xi in units where the vacuum variance is 1/2).
func additiveBreaks(xi float64) bool { return xi >= 1 }

// EntanglementBreaking reports whether the model's channel is entanglement breaking, so that
// every two-way assisted capacity vanishes: thermal loss iff N_B >= eta/(1-eta), amplifier iff
// N_B >= 1/(G-1), additive noise iff xi >= 1 (Holevo, Probl. Inf. Transm. 44, 171 (2008);
// Pirandola et al., Nat. Commun. 8, 15043 (2017)). It reports false for an invalid model.
func EntanglementBreaking(model gaussian.Model) bool {
	if model.Validate() != nil {
		return false
	}
	switch model.Kind {
	case gaussian.ThermalLoss:
		return thermalLossBreaks(model.Eta, model.NB)
	case gaussian.Amplifier:
		return amplifierBreaks(model.Gain, model.NB)
	case gaussian.AdditiveNoise:
		return additiveBreaks(model.Xi)
	}
	return false
}

// The relative-entropy bounds are clamped at 0 from below: near the threshold round-off can
// make the closed form slightly negative, and max(0, bound) is still an upper bound because no
// capacity is negative.

// REEThermalLoss is the relative-entropy-of-entanglement bound of Pirandola, Laurenza,
// Ottaviani and Banchi (Nat. Commun. 8, 15043 (2017)) for the thermal-loss channel:
// -log2[(1-eta) eta^N_B] - g(N_B) for N_B < eta/(1-eta), else 0. It is an unconstrained bound
// and so holds at every N_S. NaN outside 0 <= eta < 1, N_B >= 0.
func REEThermalLoss(eta, nb float64) float64 {
	if !(eta >= 0 && eta < 1) || !(nb >= 0) || math.IsInf(nb, 1) {
		return math.NaN()
	}
	if thermalLossBreaks(eta, nb) {
		return 0
	}
	v := -(math.Log1p(-eta)+nb*math.Log(eta))/math.Ln2 - gaussian.G(nb)
	return math.Max(0, v)
}

// REEAmplifier is the relative-entropy bound of Pirandola et al. (2017) for the thermal
// amplifier of gain G > 1: log2[G^(N_B+1)/(G-1)] - g(N_B) for N_B < 1/(G-1), else 0.
// Unconstrained, so valid at every N_S. NaN outside the domain.
func REEAmplifier(gain, nb float64) float64 {
	if !(gain > 1) || math.IsInf(gain, 1) || !(nb >= 0) || math.IsInf(nb, 1) {
		return math.NaN()
	}
	if amplifierBreaks(gain, nb) {
		return 0
	}
	v := ((nb+1)*math.Log(gain)-math.Log(gain-1))/math.Ln2 - gaussian.G(nb)
	return math.Max(0, v)
}

// REEAdditive is the relative-entropy bound of Pirandola et al. (2017) for the additive-noise
// channel V -> V + 2 xi I (xi in units where the vacuum variance is 1/2):
// (xi-1)/ln 2 - log2 xi for xi < 1, else 0. Unconstrained, so valid at every N_S. NaN for
// xi <= 0.
func REEAdditive(xi float64) float64 {
	if !(xi > 0) || math.IsInf(xi, 1) {
		return math.NaN()
	}
	if additiveBreaks(xi) {
		return 0
	}
	return math.Max(0, (xi-1)/math.Ln2-math.Log2(xi))
}

// The achievable rates below are unconstrained (N_S -> infinity) closed forms; they are not
// achievable at finite N_S (use TMSVCoherentInformation there). A negative rate is clamped to
// 0, which is always achievable.

// RCIThermalLoss is the reverse coherent information of the thermal-loss channel,
// -log2(1-eta) - g(N_B), clamped at 0 (Garcia-Patron, Pirandola, Lloyd, Shapiro, PRL 102,
// 210501 (2009)). NaN outside the domain.
func RCIThermalLoss(eta, nb float64) float64 {
	if !(eta >= 0 && eta < 1) || !(nb >= 0) || math.IsInf(nb, 1) {
		return math.NaN()
	}
	return math.Max(0, -math.Log1p(-eta)/math.Ln2-gaussian.G(nb))
}

// CIThermalLoss is the coherent information of the thermal-loss channel,
// log2(eta/(1-eta)) - g(N_B), clamped at 0 (Holevo, Werner, PRA 63, 032312 (2001)). NaN
// outside the domain.
func CIThermalLoss(eta, nb float64) float64 {
	if !(eta >= 0 && eta < 1) || !(nb >= 0) || math.IsInf(nb, 1) {
		return math.NaN()
	}
	if eta == 0 {
		return 0
	}
	return math.Max(0, (math.Log(eta)-math.Log1p(-eta))/math.Ln2-gaussian.G(nb))
}

// CIAmplifier is the coherent information of the thermal amplifier, log2(G/(G-1)) - g(N_B),
// clamped at 0 (Holevo, Werner (2001); the amplifier's lower bound in Pirandola et al.
// (2017)). NaN outside the domain.
func CIAmplifier(gain, nb float64) float64 {
	if !(gain > 1) || math.IsInf(gain, 1) || !(nb >= 0) || math.IsInf(nb, 1) {
		return math.NaN()
	}
	return math.Max(0, (math.Log(gain)-math.Log(gain-1))/math.Ln2-gaussian.G(nb))
}

// CIAdditive is the coherent information of the additive-noise channel, -1/ln 2 - log2 xi,
// clamped at 0 (Holevo, Werner (2001); Pirandola et al. (2017)). For this channel the reverse
// coherent information has the same unconstrained limit. NaN for xi <= 0.
func CIAdditive(xi float64) float64 {
	if !(xi > 0) || math.IsInf(xi, 1) {
		return math.NaN()
	}
	return math.Max(0, -1/math.Ln2-math.Log2(xi))
}

// TMSVCoherentInformation returns the reverse coherent information S(A') - S(A'B) and the
// coherent information S(B) - S(A'B) of the state obtained by sending mode A of TMSV(ns) on
// (A', A) through the model's channel, from the covariance matrix of the dilation's joint
// state (modes A', B, env1, env2). Both are achievable two-way assisted key rates at mean
// input photon number ns (Garcia-Patron et al., PRL 102, 210501 (2009); Holevo, Werner, PRA
// 63, 032312 (2001)). They are returned unclamped and may be negative. ns must be finite and
// >= 0: the unconstrained limit is given by the closed forms, not by a huge ns.
func TMSVCoherentInformation(model gaussian.Model, ns float64) (rci, ci float64, err error) {
	if err := model.Validate(); err != nil {
		return math.NaN(), math.NaN(), err
	}
	if !(ns >= 0) || math.IsInf(ns, 1) {
		return math.NaN(), math.NaN(), fmt.Errorf("coherent information at N_S = %v: want a finite N_S >= 0", ns)
	}
	// The joint state is held as a factor F (V = F F^T), which keeps the small symplectic
	// eigenvalues accurate at large N_S (see gaussian.FactorSpectrum).
	in := gaussian.TMSVFactor(ns)
	d := model.Dilation()
	var joint, sub gaussian.Matrix
	d.JointFactor(&in, &joint)
	entropy := func(modes ...int) (float64, error) {
		_, cols := joint.Dims()
		sub.Reset(2*len(modes), cols)
		for a, m := range modes {
			for q := 0; q < 2; q++ {
				for j := 0; j < cols; j++ {
					sub.Set(2*a+q, j, joint.At(2*m+q, j))
				}
			}
		}
		return gaussian.FactorEntropy(&sub)
	}
	sA, err := entropy(0)
	if err != nil {
		return math.NaN(), math.NaN(), fmt.Errorf("S(A') of %v at N_S = %g: %w", model, ns, err)
	}
	sB, err := entropy(1)
	if err != nil {
		return math.NaN(), math.NaN(), fmt.Errorf("S(B) of %v at N_S = %g: %w", model, ns, err)
	}
	sAB, err := entropy(0, 1)
	if err != nil {
		return math.NaN(), math.NaN(), fmt.Errorf("S(A'B) of %v at N_S = %g: %w", model, ns, err)
	}
	return sA - sAB, sB - sAB, nil
}

// References returns every applicable reference bound for the model at mean input photon
// number ns (math.Inf(1) for unconstrained), upper bounds first, in a fixed order:
//
//   - thermal loss: "tgw-pure-loss" (N_B = 0) or "data-processing" (N_B > 0) at ns; "ree";
//     "rci"; "ci".
//   - amplifier and additive noise: "ree"; then "rci" and "ci" at finite ns, or "ci" alone
//     (the unconstrained closed form) at ns = +Inf.
//
// The TGW and data-processing bounds are evaluated at ns (the energy-constrained form, which
// is tighter than the unconstrained one); the relative-entropy bounds are unconstrained, which
// keeps them valid at finite ns. The lower bounds are the unconstrained closed forms at
// ns = +Inf and TMSVCoherentInformation (clamped at 0) at finite ns.
//
// An invalid model or ns gives nil. An entry that cannot be computed (an engine error) is left
// out, which can only weaken the list (BestLower falls, BestUpperReference rises); use
// CheckedReferences to see the error.
func References(model gaussian.Model, ns float64) []Reference {
	refs, _ := CheckedReferences(model, ns)
	return refs
}

// CheckedReferences is References with the reason for any missing entry. For an invalid model
// or ns it returns nil and the error.
func CheckedReferences(model gaussian.Model, ns float64) ([]Reference, error) {
	if err := model.Validate(); err != nil {
		return nil, err
	}
	if !(ns >= 0) {
		return nil, fmt.Errorf("references at N_S = %v: want N_S >= 0 or +Inf", ns)
	}
	inf := math.IsInf(ns, 1)
	var refs []Reference
	up := func(name string, v float64, src string) {
		refs = append(refs, Reference{Name: name, Value: v, Upper: true, Source: src})
	}
	low := func(name string, v float64, src string) {
		refs = append(refs, Reference{Name: name, Value: v, Upper: false, Source: src})
	}
	var errs []error
	finiteLower := func() {
		rci, ci, err := TMSVCoherentInformation(model, ns)
		if err != nil {
			errs = append(errs, err)
			return
		}
		low(RefRCI, math.Max(0, rci), SourceRCI+"; "+SourceTMSV)
		low(RefCI, math.Max(0, ci), SourceCI+"; "+SourceTMSV)
	}
	switch model.Kind {
	case gaussian.ThermalLoss:
		if model.NB == 0 {
			up(RefTGWPureLoss, TGWPureLoss(model.Eta, ns), SourceTGW)
		} else {
			up(RefDataProcessing, DataProcessingThermalLoss(model.Eta, model.NB, ns), SourceDP)
		}
		up(RefREE, REEThermalLoss(model.Eta, model.NB), SourcePLOB)
		if inf {
			low(RefRCI, RCIThermalLoss(model.Eta, model.NB), SourceRCI)
			low(RefCI, CIThermalLoss(model.Eta, model.NB), SourceCI)
		} else {
			finiteLower()
		}
	case gaussian.Amplifier:
		up(RefREE, REEAmplifier(model.Gain, model.NB), SourcePLOB)
		if inf {
			low(RefCI, CIAmplifier(model.Gain, model.NB), SourceCI)
		} else {
			finiteLower()
		}
	case gaussian.AdditiveNoise:
		up(RefREE, REEAdditive(model.Xi), SourcePLOB)
		if inf {
			low(RefCI, CIAdditive(model.Xi), SourceCI)
		} else {
			finiteLower()
		}
	}
	return refs, errors.Join(errs...)
}

// BestLower returns the largest lower bound (achievable rate) in refs, ignoring NaN values,
// and 0 (always achievable) if there is none.
func BestLower(refs []Reference) float64 {
	best := 0.0
	for _, r := range refs {
		if !r.Upper && r.Value > best {
			best = r.Value
		}
	}
	return best
}

// BestUpperReference returns the upper bound in refs with the smallest value, ignoring NaN
// values; the first one listed wins a tie. Without any upper bound it returns a Reference
// named "none" with Value +Inf.
func BestUpperReference(refs []Reference) Reference {
	best := Reference{Name: "none", Value: math.Inf(1), Upper: true}
	for _, r := range refs {
		if r.Upper && r.Value < best.Value {
			best = r
		}
	}
	return best
}
