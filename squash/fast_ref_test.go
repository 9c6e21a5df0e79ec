package squash

import (
	"bufio"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"testing"

	"keyceiling/gaussian"
)

// refValues evaluates Target.Value on a fixed set of random and start points of all families,
// channels and energies (N_S <= 100), thermal and squeezed active inputs. It is the
// before/after check of performance work: KC_REF_WRITE=path writes the values, KC_REF=path
// compares against them (1e-12 absolute).
func refValues(t *testing.T) []float64 {
	t.Helper()
	models := []gaussian.Model{benchModel, {Kind: gaussian.ThermalLoss, Eta: 0.5, NB: 0},
		{Kind: gaussian.Amplifier, Gain: 1.5, NB: 0.2}, {Kind: gaussian.AdditiveNoise, Xi: 0.4}}
	var fams []Family
	fams = append(fams, Split{}, TMSSplit{})
	for _, km := range [][2]int{{0, 1}, {0, 2}, {1, 1}, {1, 2}, {2, 2}, {3, 2}, {3, 3}, {4, 3}, {4, 4}} {
		c, err := NewCovariant(km[0], km[1])
		if err != nil {
			t.Fatal(err)
		}
		fams = append(fams, c)
	}
	for _, km := range [][2]int{{0, 1}, {1, 2}, {2, 2}, {3, 3}} {
		g, err := NewGeneral(km[0], km[1])
		if err != nil {
			t.Fatal(err)
		}
		fams = append(fams, g)
	}
	rng := rand.New(rand.NewPCG(2026, 12))
	var out []float64
	for _, model := range models {
		for _, ns := range []float64{0.01, 1, 10, 100} {
			for _, fam := range fams {
				tg, err := NewTarget(model, ns, fam)
				if err != nil {
					t.Fatal(err)
				}
				if !fam.PhaseCovariant() {
					if err := tg.AddInput(Input{N: ns / 2, R: 0.3, Phi: 0.7}); err != nil {
						t.Fatal(err)
					}
				}
				pts := fam.Starts()
				for trial := 0; trial < 12; trial++ {
					p := make([]float64, fam.NumParams())
					sc := []float64{0.3, 1, 2, 4}[trial%4]
					for j := range p {
						p[j] = sc * (2*rng.Float64() - 1)
					}
					if trial%5 == 4 {
						for j := range p {
							if rng.IntN(2) == 0 {
								p[j] = 0
							}
						}
					}
					pts = append(pts, p)
				}
				for _, p := range pts {
					out = append(out, tg.Value(p))
					// Also the map route through Half directly (squeezed input).
					var ch gaussian.Channel
					MapOf(fam, p, &ch)
					ev, err := NewEvaluator(model, Input{N: ns, R: 0.2, Phi: 0.1})
					if err != nil {
						t.Fatal(err)
					}
					v, err := ev.Half(&ch)
					if err != nil {
						v = math.Inf(1)
					}
					out = append(out, v)
				}
			}
		}
	}
	return out
}

func TestFastReference(t *testing.T) {
	wpath, rpath := os.Getenv("KC_REF_WRITE"), os.Getenv("KC_REF")
	if wpath == "" && rpath == "" {
		t.Skip("KC_REF_WRITE or KC_REF not set")
	}
	vals := refValues(t)
	if wpath != "" {
		f, err := os.Create(wpath)
		if err != nil {
			t.Fatal(err)
		}
		w := bufio.NewWriter(f)
		for _, v := range vals {
			fmt.Fprintf(w, "%.17g\n", v)
		}
		w.Flush()
		f.Close()
		t.Logf("wrote %d values", len(vals))
		return
	}
	f, err := os.Open(rpath)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	sc := bufio.NewScanner(f)
	worst, inf := 0.0, 0
	i := 0
	for sc.Scan() {
		var r float64
		if _, err := fmt.Sscan(sc.Text(), &r); err != nil {
			t.Fatal(err)
		}
		v := vals[i]
		if math.IsInf(r, 0) || math.IsInf(v, 0) {
			inf++
			if r != v {
				t.Errorf("value %d: %v, reference %v", i, v, r)
			}
		} else if d := math.Abs(v - r); !(d <= 1e-12) {
			t.Errorf("value %d: %.17g, reference %.17g (difference %.3g)", i, v, r, d)
		} else {
			worst = math.Max(worst, d)
		}
		i++
	}
	if i != len(vals) {
		t.Fatalf("%d reference values, %d computed", i, len(vals))
	}
	t.Logf("%d values (%d infinite) agree; largest difference %.3g", i, inf, worst)
}

// TestFastAgainstPrecise reports the largest difference between Evaluator.Half and the
// extended-precision PreciseHalf over random maps of the phase-covariant and general
// families, thermal and squeezed inputs, N_S = 0.1 to 100 (KC_PRECISE=1; slow).
func TestFastAgainstPrecise(t *testing.T) {
	if os.Getenv("KC_PRECISE") == "" {
		t.Skip("KC_PRECISE not set")
	}
	rng := rand.New(rand.NewPCG(99, 100))
	fams := benchFamilies(t)
	for _, ns := range []float64{0.1, 1, 10, 100} {
		worst := 0.0
		for _, model := range []gaussian.Model{benchModel, {Kind: gaussian.ThermalLoss, Eta: 0.5, NB: 0}} {
			for _, fam := range fams {
				for trial := 0; trial < 6; trial++ {
					p := make([]float64, fam.NumParams())
					for j := range p {
						p[j] = 4*rng.Float64() - 2
					}
					var ch gaussian.Channel
					MapOf(fam, p, &ch)
					for _, in := range []Input{Thermal(ns), {N: ns, R: 0.3, Phi: 0.2}} {
						ev, err := NewEvaluator(model, in)
						if err != nil {
							t.Fatal(err)
						}
						v, err := ev.Half(&ch)
						if err != nil {
							continue
						}
						ref, err := PreciseHalf(model, in, &ch)
						if err != nil {
							continue
						}
						worst = math.Max(worst, math.Abs(v-ref))
					}
				}
			}
		}
		t.Logf("N_S = %g: largest |Half - PreciseHalf| = %.3g bits", ns, worst)
	}
}

// TestTMSSplitAgainstPrecise is TestFastAgainstPrecise for TMSSplit alone (the family whose
// spectra take gaussian.CovSpectra2's Jacobi sweeps), thermal inputs, more maps: the largest
// and mean |Half - PreciseHalf| per N_S (KC_PRECISE=1; slow).
func TestTMSSplitAgainstPrecise(t *testing.T) {
	if os.Getenv("KC_PRECISE") == "" {
		t.Skip("KC_PRECISE not set")
	}
	rng := rand.New(rand.NewPCG(101, 102))
	models := []gaussian.Model{benchModel, {Kind: gaussian.ThermalLoss, Eta: 0.5, NB: 0}, {Kind: gaussian.ThermalLoss, Eta: 0.1, NB: 10}}
	for _, ns := range []float64{0.01, 1, 100} {
		worst, sum, n := 0.0, 0.0, 0
		for _, model := range models {
			ev, err := NewEvaluator(model, Thermal(ns))
			if err != nil {
				t.Fatal(err)
			}
			for trial := 0; trial < 100; trial++ {
				p := make([]float64, 5)
				for j := range p {
					p[j] = 4*rng.Float64() - 2
				}
				var ch gaussian.Channel
				MapOf(TMSSplit{}, p, &ch)
				v, err := ev.Half(&ch)
				if err != nil {
					continue
				}
				ref, err := PreciseHalf(model, Thermal(ns), &ch)
				if err != nil {
					continue
				}
				d := math.Abs(v - ref)
				worst = math.Max(worst, d)
				sum += d
				n++
			}
		}
		t.Logf("N_S = %g: %d maps, largest |Half - PreciseHalf| = %.3g bits, mean %.3g", ns, n, worst, sum/float64(n))
	}
}
