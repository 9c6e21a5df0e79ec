package gaussian

import (
	"fmt"
	"testing"
)

// engBenchState returns a fixed mixed n-mode state (a random symplectic applied to thermal
// modes), the kind of matrix the squashing objective hands to Entropy.
func engBenchState(n int) Matrix {
	rng := engRNG(uint64(100 + n))
	ph := make([]float64, n)
	for i := range ph {
		ph[i] = 0.5 + rng.Float64()
	}
	v, _ := engWilliamson(rng, ph, 4*n, 0.7)
	return v
}

func BenchmarkSymplecticSpectrum(b *testing.B) {
	for n := 1; n <= 4; n++ {
		v := engBenchState(n)
		b.Run(fmt.Sprintf("modes=%d", n), func(b *testing.B) {
			b.ReportAllocs()
			var sp Spectrum
			for b.Loop() {
				if err := SymplecticSpectrum(&v, &sp); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

func BenchmarkEntropy(b *testing.B) {
	for n := 1; n <= 4; n++ {
		v := engBenchState(n)
		b.Run(fmt.Sprintf("modes=%d", n), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				if _, err := Entropy(&v); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

// The objective's hot path relies on SymplecticSpectrum and Entropy not allocating (package
// doc, "Sizes and allocation").
func TestSpectrumAllocs(t *testing.T) {
	for _, n := range []int{2, 4} {
		v := engBenchState(n)
		var sp Spectrum
		var err error
		if a := testing.AllocsPerRun(100, func() { err = SymplecticSpectrum(&v, &sp) }); a != 0 || err != nil {
			t.Errorf("SymplecticSpectrum, %d modes: %g allocations per run (err %v), want 0", n, a, err)
		}
		if a := testing.AllocsPerRun(100, func() { _, err = Entropy(&v) }); a != 0 || err != nil {
			t.Errorf("Entropy, %d modes: %g allocations per run (err %v), want 0", n, a, err)
		}
	}
}
