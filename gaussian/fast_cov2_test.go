package gaussian

import (
	"math/rand/v2"
	"testing"
)

// symTridiagonal4 gives symTridiagonalGeneric's results bit for bit, and covSpectra2QL (the
// fallback of CovSpectra2) gives CovBatch.Spectra's, on random, graded, sparse and degenerate
// matrices K = L^T eta L.
func TestCovSpectra2QLMatchesBatch(t *testing.T) {
	rng := rand.New(rand.NewPCG(27, 28))
	var w CovScratch2
	var b CovBatch
	for trial := 0; trial < 50000; trial++ {
		// L lower triangular 4 x 4, rows scaled (graded), some entries zero; eta = +-1.
		var l [16]float64
		for r := 0; r < 4; r++ {
			sc := []float64{1, 1e-6, 1e6, 30}[rng.IntN(4)]
			for c := 0; c <= r; c++ {
				l[r*4+c] = sc * rng.NormFloat64()
				if rng.IntN(4) == 0 {
					l[r*4+c] = 0
				}
			}
		}
		if trial%7 == 0 { // identity-like: degenerate spectra
			l = [16]float64{1, 0, 0, 0, 0, 1, 0, 0, 0, 0, 1, 0, 0, 0, 0, 1}
			l[rng.IntN(16)] = float64(rng.IntN(3))
		}
		var eta [4]float64
		for i := range eta {
			eta[i] = float64(2*rng.IntN(2) - 1)
		}
		kOf := func(n int, rows [4][4]float64) []float64 {
			k := make([]float64, n*n)
			for i := 0; i < n; i++ {
				for r := 0; r < n; r++ {
					f := eta[r] * rows[r][i]
					for j := 0; j < n; j++ {
						k[i*n+j] += f * rows[r][j]
					}
				}
			}
			return k
		}
		var rows [4][4]float64
		for r := 0; r < 4; r++ {
			copy(rows[r][:], l[r*4:r*4+4])
		}
		rowsBE := rows
		rowsBE[2] = rows[3]
		kE, kAE, kBE, kABE := kOf(2, rows), kOf(3, rows), kOf(3, rowsBE), kOf(4, rows)

		var a4 [16]float64
		copy(a4[:], kABE)
		g4 := a4
		var d1, e1 [4]float64
		d2, e2 := make([]float64, 4), make([]float64, 4)
		symTridiagonal4(&a4, &d1, &e1)
		symTridiagonalGeneric(g4[:], 4, d2, e2)
		if d1 != [4]float64(d2) || e1 != [4]float64(e2) {
			t.Fatalf("symTridiagonal4 %v %v, generic %v %v", d1, e1, d2, e2)
		}

		detE := 1 + rng.Float64()
		var ka2 [4]float64
		var kb3, kc3 [9]float64
		var kd4 [16]float64
		copy(ka2[:], kE)
		copy(kb3[:], kAE)
		copy(kc3[:], kBE)
		copy(kd4[:], kABE)
		var out, ref [4]Spectrum
		CovariantSpectrum(ka2[:], 2, detE, &out[2])
		w.covSpectra2QL(&kb3, &kc3, &kd4, &out)
		ps := [4]CovProblem{
			{K: append([]float64(nil), kAE...), N: 3, Out: &ref[0]},
			{K: append([]float64(nil), kBE...), N: 3, Out: &ref[1]},
			{K: append([]float64(nil), kE...), N: 2, Det: detE, Out: &ref[2]},
			{K: append([]float64(nil), kABE...), N: 4, Out: &ref[3]},
		}
		b.Spectra(ps[:])
		if out != ref {
			t.Fatalf("trial %d: covSpectra2QL %v, CovBatch %v", trial, out, ref)
		}
	}
}
