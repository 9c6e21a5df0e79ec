package search_test

import (
	"fmt"

	"keyceiling/gaussian"
	"keyceiling/search"
)

// One certified point: thermal loss eta = 0.9, N_B = 1, N_S = 1. An independent search
// reached 1.06881 here (physics notes); the data-processing bound is 1.45453.
func ExampleRun() {
	p := search.Point{Model: gaussian.Model{Kind: gaussian.ThermalLoss, Eta: 0.9, NB: 1}, Energy: 1}
	res, err := search.Run(p, search.Settings{Family: "tms-split"}, search.RandFor(1, p), nil)
	if err != nil {
		panic(err)
	}
	fmt.Printf("bound %.5f bits, family %s, certified %v, %s\n",
		res.Bound, res.Family, res.Recheck.Passed, res.Status)
	// Output:
	// bound 1.06848 bits, family tms-split, certified true, converged
}
