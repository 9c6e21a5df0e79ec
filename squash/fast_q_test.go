package squash

import (
	"fmt"
	"math"
	"math/big"
	"math/rand/v2"
	"os"
	"strings"
	"testing"

	"keyceiling/gaussian"
)

// qTableWant computes qTable with math/big: for each subinterval k of [0, 1] (width 1/32)
// the center c (0 for k = 0, else (k + 1/2)/32) and the Taylor coefficients q_0..q_10 of
// q(x) = (1 + x) log1p(x) / x about c. About 0: q = 1 + sum_{j>=1} (-1)^(j+1) u^j / (j (j+1))
// (the series of log1p(u)/u times 1 + u). About c > 0: with s = 1 + c and L = ln s,
// (s + t) log(s + t) has the coefficients a_0 = s L, a_j = s l_j + l_(j-1), where l_0 = L and
// l_j = (-1)^(j+1) / (j s^j); and (c + t) Q(t) = A(t) gives q_0 = a_0 / c,
// q_j = (a_j - q_(j-1)) / c. 256-bit arithmetic (the recurrence loses at most 45 bits).
func qTableWant() [qIntervals][qDegree + 2]float64 {
	const prec = 256
	nf := func(v float64) *big.Float { return new(big.Float).SetPrec(prec).SetFloat64(v) }
	var out [qIntervals][qDegree + 2]float64
	for k := 0; k < qIntervals; k++ {
		row := &out[k]
		if k == 0 {
			row[0], row[1] = 0, 1
			for j := 1; j <= qDegree; j++ {
				v := nf(1)
				v.Quo(v, nf(float64(j*(j+1))))
				if j%2 == 0 {
					v.Neg(v)
				}
				row[j+1], _ = v.Float64()
			}
			continue
		}
		c := (float64(k) + 0.5) / qIntervals
		row[0] = c
		s := nf(1 + c) // exact: c has few bits
		L := gaussian.PreciseLog(s)
		l := make([]*big.Float, qDegree+1)
		l[0] = L
		sp := nf(1)
		for j := 1; j <= qDegree; j++ {
			sp.Mul(sp, s)
			v := nf(float64(j))
			v.Mul(v, sp)
			v.Quo(nf(1), v)
			if j%2 == 0 {
				v.Neg(v)
			}
			l[j] = v
		}
		cb := nf(c)
		var prev *big.Float
		for j := 0; j <= qDegree; j++ {
			a := new(big.Float).SetPrec(prec).Mul(s, l[j])
			if j > 0 {
				a.Add(a, l[j-1])
				a.Sub(a, prev)
			}
			q := new(big.Float).SetPrec(prec).Quo(a, cb)
			row[j+1], _ = q.Float64()
			prev = q
		}
	}
	return out
}

// qTable is qTableWant, entry for entry. KC_QTABLE=print prints the Go literal.
func TestQTable(t *testing.T) {
	want := qTableWant()
	if os.Getenv("KC_QTABLE") == "print" {
		var b strings.Builder
		for _, row := range want {
			var f []string
			for _, v := range row {
				f = append(f, fmt.Sprintf("%v", v))
			}
			fmt.Fprintf(&b, "\t{%s},\n", strings.Join(f, ", "))
		}
		fmt.Print(b.String())
	}
	if qTable != want {
		for k := range want {
			if qTable[k] != want[k] {
				t.Errorf("qTable[%d] = %v, want %v", k, qTable[k], want[k])
			}
		}
	}
}

// bigQ is q(x) = (1 + x) log1p(x) / x in 256-bit arithmetic (1 at x = 0).
func bigQ(x float64) *big.Float {
	const prec = 256
	if x < 0x1p-60 { // 1 + x/2, to x^2/6 < 2^-122 (1 + x is not exact in 256 bits)
		h := new(big.Float).SetPrec(prec).SetFloat64(x / 2)
		return h.Add(h, new(big.Float).SetPrec(prec).SetInt64(1))
	}
	u := new(big.Float).SetPrec(prec).SetFloat64(x)
	one := new(big.Float).SetPrec(prec).SetInt64(1)
	s := new(big.Float).SetPrec(prec).Add(one, u) // exact for the x tested (few bits)
	l := gaussian.PreciseLog(s)
	l.Mul(l, s)
	return l.Quo(l, u)
}

// qMid agrees with q to 2.5e-16 relative (about one ulp; q is in [1, 1.39]) over [0, 1]:
// random points, the subinterval ends and tiny arguments. The truncation of the Taylor
// series is below 2^-60 (|t| <= 1/64 against a radius of convergence above 1; at 0 the
// terms fall as (1/32)^j / (j (j+1))).
func TestQMid(t *testing.T) {
	rng := rand.New(rand.NewPCG(53, 54))
	xs := []float64{0, 1, 0x1p-60, 0x1p-30, 1e-300, 0.5, 1 - 0x1p-53}
	for k := 0; k <= qIntervals; k++ {
		e := float64(k) / qIntervals
		xs = append(xs, e, math.Nextafter(e, 0), math.Nextafter(e, 1))
	}
	for i := 0; i < 20000; i++ {
		xs = append(xs, rng.Float64())
	}
	worst := 0.0
	for _, x := range xs {
		if x < 0 || x > 1 {
			continue
		}
		got := qMid(x)
		want := bigQ(x)
		d := new(big.Float).SetPrec(256).Sub(new(big.Float).SetFloat64(got), want)
		d.Quo(d, want)
		r, _ := d.Float64()
		worst = max(worst, math.Abs(r))
	}
	if worst > 2.5e-16 {
		t.Errorf("qMid: largest relative error %.3g, want <= 2.5e-16", worst)
	}
	t.Logf("qMid: largest relative error %.3g over %d points", worst, len(xs))
}
