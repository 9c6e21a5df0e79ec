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

// logMid is math.Log(x) for x in [2^-600, 2^600] to about one ulp (the core of log1pMid).
func logMid(x float64) float64 {
	const (
		ln2Hi = 6.93147180369123816490e-01 /* 3fe62e42 fee00000 */
		ln2Lo = 1.90821492927058770002e-10 /* 3dea39ef 35793c76 */
		l1    = 6.666666666666735130e-01   /* 3FE55555 55555593 */
		l2    = 3.999999999940941908e-01   /* 3FD99999 9997FA04 */
		l3    = 2.857142874366239149e-01   /* 3FD24924 94229359 */
		l4    = 2.222219843214978396e-01   /* 3FCC71C5 1D8E78AF */
		l5    = 1.818357216161805012e-01   /* 3FC74664 96CB03DE */
		l6    = 1.531383769920937332e-01   /* 3FC39A09 D078C69F */
		l7    = 1.479819860511658591e-01   /* 3FC2F112 DF3E5244 */
	)
	bits := math.Float64bits(x)
	k := float64(int(bits>>52) - 1023)
	f1 := math.Float64frombits(bits&(1<<52-1) | 1023<<52) // in [1, 2)
	if f1 >= math.Sqrt2 {
		f1 *= 0.5
		k++
	}
	f := f1 - 1
	s := f / (2 + f)
	s2 := s * s
	s4 := s2 * s2
	t1 := s2 * (l1 + s4*(l3+s4*(l5+s4*l7)))
	t2 := s4 * (l2 + s4*(l4+s4*l6))
	r := t1 + t2
	hfsq := 0.5 * f * f
	return k*ln2Hi - ((hfsq - (s*(hfsq+r) + k*ln2Lo)) - f)
}

// log1pMid is math.Log1p(y) for y in [0, 2^600] (finite, not NaN; the callers ensure it),
// to about one ulp: u = 1 + y rounded, ln u by the fdlibm algorithm of package math's
// pure-Go Log (argument reduction to [sqrt(2)/2, sqrt(2)) by the exponent bits, minimax
// polynomial), plus the first-order correction (y - (u - 1)) / u for the rounding of u
// (Goldberg, ACM Comput. Surv. 23, 5 (1991), the log1p remark; fdlibm's log1p does the same).
// It has no special-case branches.
func log1pMid(y float64) float64 {
	u := 1 + y
	return logMid(u) + (y-(u-1))/u
}
