package search

import (
	"math"
	"testing"

	"keyceiling/gaussian"
)

// benchPoint is the physics notes' target point: thermal loss eta = 0.9, N_B = 1, N_S = 1.
var benchPoint = Point{Model: gaussian.Model{Kind: gaussian.ThermalLoss, Eta: 0.9, NB: 1}, Energy: 1}

// BenchmarkPointSearch is one full point search with the tms-split family (multi-start
// Nelder-Mead, cutting-plane rounds, certification with the extended-precision re-check),
// as `keyceiling bound --family tms-split` runs it. The reported evals/op is the objective
// evaluations per search.
func BenchmarkPointSearch(b *testing.B) {
	b.ReportAllocs()
	evals := 0
	for b.Loop() {
		res, err := Run(benchPoint, Settings{Family: "tms-split"}, RandFor(1, benchPoint), nil)
		if err != nil {
			b.Fatal(err)
		}
		if math.IsNaN(res.Bound) || res.Bound > 1.06881+1e-5 {
			b.Fatalf("bound %v above the notes' target 1.06881", res.Bound)
		}
		evals = res.Evaluations
	}
	b.ReportMetric(float64(evals), "evals/op")
}
