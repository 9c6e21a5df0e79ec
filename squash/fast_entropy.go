package squash

import (
	"fmt"
	"math"

	"keyceiling/gaussian"
)

// spectrumEntropy is gaussian.Spectrum.Entropy with the thermal entropies g summed in nats
// by gNats and converted to bits once: the same values to a few ulps, the same errors.
func spectrumEntropy(sp *gaussian.Spectrum, allowance float64) (float64, error) {
	s := 0.0
	for k := 0; k < sp.N; k++ {
		nu := sp.Nu[k]
		if nu < 1-allowance || math.IsNaN(nu) {
			return 0, fmt.Errorf("gaussian: symplectic eigenvalue %.12g below 1: %w", nu, gaussian.ErrUnphysical)
		}
		s += gNats((nu - 1) / 2)
	}
	return s * (1 / math.Ln2), nil
}

// gNats is gaussian.G in nats: (x+1) ln(x+1) - x ln x = log1p(x) + x log1p(1/x), with the
// two logarithms by log1pMid (gaussian.G itself outside [2^-500, 2^500]).
func gNats(x float64) float64 {
	if x <= 0 {
		return 0
	}
	if !(x >= 0x1p-500 && x <= 0x1p500) {
		return gaussian.G(x) * math.Ln2
	}
	l1 := log1pMid(x)
	if x <= 1 {
		// log1p(1/x) = log1p(x) - log(x), a sum of two terms >= 0: no cancellation.
		return l1 + x*(l1-logMid(x))
	}
	return l1 + x*log1pMid(1/x)
}

// logMid is math.Log(x) for x in [2^-600, 2^600] to about one ulp (logInv).
func logMid(x float64) float64 {
	l, _ := logInv(x)
	return l
}

// log1pMid is math.Log1p(y) for y in [0, 2^600] (finite, not NaN; the callers ensure it),
// to about one ulp: u = 1 + y rounded, ln u by logInv (table-driven, no division), plus the
// first-order correction (y - (u - 1)) / u for the rounding of u (Goldberg, ACM Comput.
// Surv. 23, 5 (1991), the log1p remark; fdlibm's log1p does the same), with logInv's
// approximate 1/u (the correction is below one ulp of u / u, so the approximation's
// relative 2^-13 costs nothing). It has no special-case branches.
func log1pMid(y float64) float64 {
	u := 1 + y
	l, inv := logInv(u)
	return l + (y-(u-1))*inv
}
