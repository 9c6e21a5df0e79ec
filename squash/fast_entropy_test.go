package squash

import (
	"math"
	"math/big"
	"math/rand/v2"
	"testing"

	"keyceiling/gaussian"
)

// log1pMid agrees with math.Log1p to 2 ulps over [0, 2^500] (log-uniform and near 0 and 1),
// and gNats / ln 2 with gaussian.G to 1e-15 relative (both round).
func TestLog1pMidAndG(t *testing.T) {
	rng := rand.New(rand.NewPCG(11, 12))
	worstL, worstG := 0.0, 0.0
	for trial := 0; trial < 2000000; trial++ {
		var y float64
		switch trial % 4 {
		case 0:
			y = math.Exp2(-60 + 120*rng.Float64())
		case 1:
			y = math.Exp2(-500 + 1000*rng.Float64())
		case 2:
			y = rng.Float64()
		default:
			y = math.Nextafter(math.Sqrt2-1, 0) + 1e-15*(rng.Float64()-0.5)
		}
		a, b := log1pMid(y), math.Log1p(y)
		if d := math.Abs(a-b) / ulp(b); d > worstL {
			worstL = d
		}
		if y <= 0x1p500 && y >= 0x1p-500 {
			g, ref := gNats(y)/math.Ln2, gaussian.G(y)
			if d := math.Abs(g-ref) / ref; d > worstG {
				worstG = d
			}
		}
	}
	for _, y := range []float64{0, 0x1p-1074, 0x1p-60, 0x1p-53, 0x1p-52, 1, 2, math.Sqrt2 - 1, 0x1p52, 0x1p53, 0x1p500} {
		a, b := log1pMid(y), math.Log1p(y)
		if d := math.Abs(a - b); d > 2*ulp(b) {
			t.Errorf("log1pMid(%g) = %v, math.Log1p %v", y, a, b)
		}
	}
	t.Logf("log1pMid: largest difference %.2f ulps; gNats: %.2g relative", worstL, worstG)
	if worstL > 2 {
		t.Errorf("log1pMid differs from math.Log1p by %.2f ulps", worstL)
	}
	if worstG > 1e-15 {
		t.Errorf("gNats differs from gaussian.G by %.2g relative", worstG)
	}
	// Against 200-bit arithmetic at a few points: both within 1.5 ulps.
	for _, y := range []float64{1e-10, 0.3, 0.41421356, 3, 1e8} {
		ref := bigLog1p(y)
		if d := math.Abs(log1pMid(y)-ref) / ulp(ref); d > 1.5 {
			t.Errorf("log1pMid(%g): %.2f ulps from the 200-bit value", y, d)
		}
	}
}

func ulp(x float64) float64 {
	x = math.Abs(x)
	if x == 0 {
		return 0x1p-1074
	}
	return math.Nextafter(x, math.Inf(1)) - x
}

// bigLog1p is log(1 + y) to about 200 bits (atanh series of (u-1)/(u+1)).
func bigLog1p(y float64) float64 {
	const prec = 220
	one := new(big.Float).SetPrec(prec).SetInt64(1)
	u := new(big.Float).SetPrec(prec).SetFloat64(y)
	u.Add(u, one)
	// ln u = 2 atanh(z), z = (u - 1) / (u + 1); reduce u by powers of 2 first.
	k := 0
	two := new(big.Float).SetPrec(prec).SetInt64(2)
	for u.Cmp(two) > 0 {
		u.Quo(u, two)
		k++
	}
	num := new(big.Float).SetPrec(prec).Sub(u, one)
	den := new(big.Float).SetPrec(prec).Add(u, one)
	z := new(big.Float).SetPrec(prec).Quo(num, den)
	z2 := new(big.Float).SetPrec(prec).Mul(z, z)
	sum := new(big.Float).SetPrec(prec)
	term := new(big.Float).SetPrec(prec).Set(z)
	for n := 1; n < 400; n += 2 {
		q := new(big.Float).SetPrec(prec).Quo(term, new(big.Float).SetPrec(prec).SetInt64(int64(n)))
		sum.Add(sum, q)
		term.Mul(term, z2)
	}
	sum.Mul(sum, two)
	if k > 0 {
		ln2 := new(big.Float).SetPrec(prec).SetFloat64(0) // ln 2 by the same series at u = 2
		zz := new(big.Float).SetPrec(prec).Quo(one, new(big.Float).SetPrec(prec).SetInt64(3))
		zz2 := new(big.Float).SetPrec(prec).Mul(zz, zz)
		tt := new(big.Float).SetPrec(prec).Set(zz)
		for n := 1; n < 400; n += 2 {
			ln2.Add(ln2, new(big.Float).SetPrec(prec).Quo(tt, new(big.Float).SetPrec(prec).SetInt64(int64(n))))
			tt.Mul(tt, zz2)
		}
		ln2.Mul(ln2, two)
		ln2.Mul(ln2, new(big.Float).SetPrec(prec).SetInt64(int64(k)))
		sum.Add(sum, ln2)
	}
	f, _ := sum.Float64()
	return f
}

var gSink float64

func BenchmarkG(b *testing.B) {
	b.Run("gaussian.G", func(b *testing.B) {
		x, s := 0.37, 0.0
		for b.Loop() {
			s += gaussian.G(x)
			x += 1e-7
		}
		gSink = s
	})
	b.Run("gNats", func(b *testing.B) {
		x, s := 0.37, 0.0
		for b.Loop() {
			s += gNats(x)
			x += 1e-7
		}
		gSink = s
	})
}

// logMid agrees with math.Log to 1 ulp.
func TestLogMid(t *testing.T) {
	rng := rand.New(rand.NewPCG(13, 14))
	worst := 0.0
	for trial := 0; trial < 1000000; trial++ {
		x := math.Exp2(-600 + 1200*rng.Float64())
		if trial%2 == 0 {
			x = 0.5 + 1.5*rng.Float64()
		}
		a, b := logMid(x), math.Log(x)
		if d := math.Abs(a-b) / ulp(b); d > worst {
			worst = d
		}
	}
	t.Logf("largest difference %.2f ulps", worst)
	if worst > 1 {
		t.Errorf("logMid differs from math.Log by %.2f ulps", worst)
	}
}
