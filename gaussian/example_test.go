package gaussian_test

import (
	"fmt"

	"keyceiling/gaussian"
)

// The entropy of a thermal state with N photons is g(N) (physics notes' check values:
// g(0.5) = 1.377444, g(1) = 2, g(10) = 4.834467).
func ExampleEntropy() {
	for _, n := range []float64{0.5, 1, 10} {
		v := gaussian.Thermal(n)
		s, err := gaussian.Entropy(&v)
		if err != nil {
			panic(err)
		}
		fmt.Printf("S(thermal(%g)) = %.6f bits\n", n, s)
	}
	// Output:
	// S(thermal(0.5)) = 1.377444 bits
	// S(thermal(1)) = 2.000000 bits
	// S(thermal(10)) = 4.834467 bits
}

// A two-mode squeezed vacuum is pure: both symplectic eigenvalues are 1.
func ExampleSymplecticSpectrum() {
	v := gaussian.TMSV(3)
	var sp gaussian.Spectrum
	if err := gaussian.SymplecticSpectrum(&v, &sp); err != nil {
		panic(err)
	}
	fmt.Printf("nu = %.12f, %.12f\n", sp.Nu[0], sp.Nu[1])
	// Output:
	// nu = 1.000000000000, 1.000000000000
}
