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

// gNats is gaussian.G in nats, (x+1) ln(x+1) - x ln x, with one logarithm (logMid) and
// one q (fast_q.go, q(x) = (1 + x) log1p(x) / x):
//
//	x (q(x) - ln x)                 for x <= 1,
//	ln x + (x u) q(u), u = 1/x      for x > 1,
//
// each a sum of two terms >= 0, so without cancellation (TestGNats: within 1e-15 of
// gaussian.G). gaussian.G itself outside [2^-500, 2^500].
func gNats(x float64) float64 {
	if x <= 0 {
		return 0
	}
	if !(x >= 0x1p-500 && x <= 0x1p500) {
		return gaussian.G(x) * math.Ln2
	}
	if x <= 1 {
		return x * (qMid(x) - logMid(x))
	}
	u := 1 / x
	return logMid(x) + (x*u)*qMid(u)
}
