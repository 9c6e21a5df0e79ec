package squash_test

import (
	"fmt"
	"math"

	"keyceiling/gaussian"
	"keyceiling/squash"
)

// Takeoka-Guha-Wilde's map (a 50:50 beam splitter on the pure-loss environment) reproduces
// their bound: 0.821739 bits at eta = 0.5, N_S = 1, and log2(3) = 1.584963 unconstrained
// (physics notes' check values).
func ExampleEvaluator_Half() {
	model := gaussian.Model{Kind: gaussian.ThermalLoss, Eta: 0.5}
	var ch gaussian.Channel
	squash.MapOf(squash.Split{}, []float64{math.Pi / 4}, &ch)

	ev, err := squash.NewEvaluator(model, squash.Thermal(1))
	if err != nil {
		panic(err)
	}
	v, err := ev.Half(&ch)
	if err != nil {
		panic(err)
	}
	fmt.Printf("N_S = 1:   %.6f bits\n", v)

	ladder, err := squash.NewLadder(model)
	if err != nil {
		panic(err)
	}
	lim, est, err := ladder.Half(&ch)
	if err != nil {
		panic(err)
	}
	fmt.Printf("N_S = inf: %.6f bits (extrapolation error below 1e-9: %v)\n", lim, est < 1e-9)
	// Output:
	// N_S = 1:   0.821739 bits
	// N_S = inf: 1.584963 bits (extrapolation error below 1e-9: true)
}

// The closed-form references at a thermal-loss point (physics notes' check values for
// (0.9, 1): PLOB 1.473931, RCI 1.321928, CI 1.169925, data-processing 3.321928).
func ExampleReferences() {
	model := gaussian.Model{Kind: gaussian.ThermalLoss, Eta: 0.9, NB: 1}
	for _, r := range squash.References(model, math.Inf(1)) {
		fmt.Printf("%-16s %.6f\n", r.Name, r.Value)
	}
	// Output:
	// data-processing  3.321928
	// ree              1.473931
	// rci              1.321928
	// ci               1.169925
}
