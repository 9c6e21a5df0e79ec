package squash

import (
	"math"
	"math/big"
	"math/rand/v2"
	"testing"

	"keyceiling/gaussian"
)

// gNats / ln 2 agrees with gaussian.G (math.Log1p twice; an independent formula) to 1e-15
// relative over [2^-500, 2^500] (log-uniform, near 0, on [0, 1], near 1), and with
// (1+x) ln(1+x) - x ln x in 256-bit arithmetic (gaussian.PreciseLog) to 2 ulps at a few
// points on both sides of 1.
func TestGNats(t *testing.T) {
	rng := rand.New(rand.NewPCG(11, 12))
	worstG := 0.0
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
			y = 1 + 1e-6*(rng.Float64()-0.5)
		}
		g, ref := gNats(y)/math.Ln2, gaussian.G(y)
		if d := math.Abs(g-ref) / ref; d > worstG {
			worstG = d
		}
	}
	t.Logf("gNats: largest difference from gaussian.G %.2g relative", worstG)
	if worstG > 1e-15 {
		t.Errorf("gNats differs from gaussian.G by %.2g relative", worstG)
	}
	for _, y := range []float64{1e-10, 0.3, 0.41421356, 1, 1.0000001, 3, 1e8} {
		yb := new(big.Float).SetPrec(256).SetFloat64(y)
		y1 := new(big.Float).SetPrec(256).Add(yb, new(big.Float).SetInt64(1)) // exact here
		ref := new(big.Float).SetPrec(256).Mul(y1, gaussian.PreciseLog(y1))
		ref.Sub(ref, new(big.Float).SetPrec(256).Mul(yb, gaussian.PreciseLog(yb)))
		r, _ := ref.Float64()
		if d := math.Abs(gNats(y)-r) / ulp(r); d > 2 {
			t.Errorf("gNats(%g) = %v: %.2f ulps from the 256-bit value %v", y, gNats(y), d, r)
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
