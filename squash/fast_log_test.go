package squash

import (
	"math"
	"math/big"
	"math/rand/v2"
	"testing"
)

// bigLog is log c to 300 bits, c in (0.5, 2): 2 atanh((c - 1) / (c + 1)) by its series.
func bigLog(c float64) *big.Float {
	const prec = 300
	nf := func() *big.Float { return new(big.Float).SetPrec(prec) }
	x := nf().SetFloat64(c)
	one := nf().SetInt64(1)
	z := nf().Quo(nf().Sub(x, one), nf().Add(x, one))
	z2 := nf().Mul(z, z)
	sum, term := nf(), nf().Set(z)
	for k := 0; k < 200; k++ {
		sum.Add(sum, nf().Quo(term, nf().SetInt64(int64(2*k+1))))
		term.Mul(term, z2)
	}
	return sum.Mul(sum, nf().SetInt64(2))
}

// logTable's entries: c in its subinterval with z - c exact, 1/c rounded, log c as a
// double-double to 2^-100 relative; c = 1 on the three subintervals around 1.
func TestLogTable(t *testing.T) {
	const off = 0x3fe6000000000000
	for i, tb := range logTable {
		lo := math.Float64frombits(off + uint64(i)<<45)
		hi := math.Float64frombits(off + uint64(i+1)<<45 - 1)
		c := tb[0]
		next1 := hi > 0.9922 && lo <= 1 // the three subintervals around 1
		if next1 && c != 1 || !next1 && (!(c >= lo && c <= hi) || c*1024 != math.Round(c*1024)) {
			t.Errorf("entry %d: c = %v for [%v, %v]", i, c, lo, hi)
		}
		if tb[1] != 1/c {
			t.Errorf("entry %d: 1/c = %v, want %v", i, tb[1], 1/c)
		}
		l := bigLog(c)
		h, _ := l.Float64()
		r, _ := new(big.Float).SetPrec(300).Sub(l, new(big.Float).SetFloat64(h)).Float64()
		if tb[2] != h || tb[3] != r {
			t.Errorf("entry %d: log c = %v + %v, want %v + %v", i, tb[2], tb[3], h, r)
		}
	}
}

// logMid agrees with math.Log to 4e-16 relative (about 2 ulps; both are within about half
// an ulp of log x) over [2^-600, 2^600], near 1 and on [0.5, 2].
func TestLogMidRelative(t *testing.T) {
	n := 3000000
	if testing.Short() {
		n = 300000
	}
	rng := rand.New(rand.NewPCG(41, 42))
	worst := 0.0
	for i := 0; i < n; i++ {
		var x float64
		switch i % 4 {
		case 0:
			x = math.Exp2(1200*rng.Float64() - 600)
		case 1:
			x = 1 + (rng.Float64()-0.5)*0.05
		case 2:
			x = 0.5 + 1.5*rng.Float64()
		default:
			x = 1 + math.Exp2(-60*rng.Float64())*float64(2*rng.IntN(2)-1)
		}
		l := logMid(x)
		ref := math.Log(x)
		if ref == 0 {
			if l != 0 {
				t.Fatalf("logMid(%v) = %v, want 0", x, l)
			}
		} else if d := math.Abs(l-ref) / math.Abs(ref); d > worst {
			worst = d
			if d > 4e-16 {
				t.Errorf("logMid(%v) = %v, math.Log %v (%.3g relative)", x, l, ref, d)
			}
		}
	}
	t.Logf("%d arguments: largest relative difference from math.Log %.3g", n, worst)
}
