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
		kE, kAE, kBE, kABE := randomCovK(rng, trial)
		a4 := kABE
		g4 := a4
		var d1, e1 [4]float64
		d2, e2 := make([]float64, 4), make([]float64, 4)
		symTridiagonal4(&a4, &d1, &e1)
		symTridiagonalGeneric(g4[:], 4, d2, e2)
		if d1 != [4]float64(d2) || e1 != [4]float64(e2) {
			t.Fatalf("symTridiagonal4 %v %v, generic %v %v", d1, e1, d2, e2)
		}

		detE := 1 + rng.Float64()
		ka2, kb3, kc3, kd4 := kE, kAE, kBE, kABE
		var out, ref [4]Spectrum
		CovariantSpectrum(ka2[:], 2, detE, &out[2])
		w.covSpectra2QL(&kb3, &kc3, &kd4, &out)
		ref = batchSpectra(&b, &kE, &kAE, &kBE, &kABE, detE)
		if out != ref {
			t.Fatalf("trial %d: covSpectra2QL %v, CovBatch %v", trial, out, ref)
		}
	}
}
