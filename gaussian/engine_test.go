package gaussian

// Tests of the engine against references outside it: published check values (the project's
// physics notes), theorems (Williamson's normal form, purity and strong subadditivity of the
// von Neumann entropy, the Holevo-Werner complete-positivity condition) and exact rational
// arithmetic (math/big) on the very float64 matrices the engine sees. Each test names its
// reference. The test is package-internal so that it can call jacobiSpectrum directly.

import (
	"errors"
	"fmt"
	"math"
	"math/big"
	"math/rand/v2"
	"slices"
	"testing"
)

// ---- helpers (prefixed eng to stay out of the way of other test files) ----

func engRNG(seed uint64) *rand.Rand { return rand.New(rand.NewPCG(seed, 0x9e3779b97f4a7c15)) }

// engRandomSymplectic returns a product of depth random elementary symplectics (beam
// splitters, two-mode squeezers, single-mode squeezers, rotations) on n modes; squeezing
// parameters are uniform in [-maxR, maxR].
func engRandomSymplectic(rng *rand.Rand, n, depth int, maxR float64) Matrix {
	s := Identity(2 * n)
	for k := 0; k < depth; k++ {
		i := rng.IntN(n)
		j := (i + 1 + rng.IntN(max(n-1, 1))) % n
		var e Matrix
		switch c := rng.IntN(4); {
		case c == 0 && n > 1:
			e = BeamSplitter(n, i, j, rng.Float64())
		case c == 1 && n > 1:
			e = TwoModeSqueezing(n, i, j, (2*rng.Float64()-1)*maxR)
		case c == 2:
			e = Squeezer(n, i, (2*rng.Float64()-1)*maxR)
		default:
			e = PhaseRotation(n, i, 2*math.Pi*rng.Float64())
		}
		var t Matrix
		t.Mul(&e, &s)
		s = t
	}
	return s
}

// engCongruence returns s v s^T, symmetrized.
func engCongruence(s, v *Matrix) Matrix {
	var out, tmp Matrix
	out.Congruence(s, v, &tmp)
	out.Symmetrize()
	return out
}

// engDirectSum returns the block-diagonal sum of the blocks.
func engDirectSum(blocks ...Matrix) Matrix {
	var out Matrix
	for _, b := range blocks {
		var t Matrix
		t.DirectSum(&out, &b)
		out = t
	}
	return out
}

// engWilliamson returns S (+_k Thermal(photons[k])) S^T for a random symplectic S and the
// entropy sum_k g(photons[k]) that Williamson's theorem assigns to it (Williamson, Am. J. Math.
// 58, 141 (1936): symplectic congruence leaves the symplectic spectrum unchanged).
func engWilliamson(rng *rand.Rand, photons []float64, depth int, maxR float64) (Matrix, float64) {
	var blocks []Matrix
	want := 0.0
	for _, n := range photons {
		blocks = append(blocks, Thermal(n))
		want += G(n)
	}
	d := engDirectSum(blocks...)
	s := engRandomSymplectic(rng, len(photons), depth, maxR)
	return engCongruence(&s, &d), want
}

func engEntropy(t *testing.T, v *Matrix) float64 {
	t.Helper()
	s, err := Entropy(v)
	if err != nil {
		t.Fatalf("Entropy: %v\n%v", err, v)
	}
	return s
}

func engEntropyOf(t *testing.T, v *Matrix, modes ...int) float64 {
	t.Helper()
	if len(modes) == 0 {
		return 0
	}
	var sub Matrix
	sub.SelectModes(v, modes)
	return engEntropy(t, &sub)
}

// engScale is the round-off scale max(1, max|V_ij|) the engine's tolerances are relative to.
func engScale(v *Matrix) float64 { return math.Max(1, v.MaxAbs()) }

// engExactTwoMode returns the symplectic eigenvalues (ascending) of the 4x4 matrix v exactly
// as stored: Serafini's invariants Delta = det A + det B + 2 det C and det V evaluated in
// exact binary arithmetic (math/big; every product and sum of float64 values is exact at this
// precision), then nu^2 = (Delta -+ sqrt(Delta^2 - 4 det V))/2 to 1024 bits (Serafini,
// Illuminati, De Siena, J. Phys. B 37, L21 (2004)). NaN for det V <= 0.
func engExactTwoMode(v *Matrix) (float64, float64) {
	const prec = 1024
	nw := func() *big.Float { return new(big.Float).SetPrec(prec) }
	e := func(i, j int) *big.Float { return nw().SetFloat64(v.At(i, j)) }
	mul := func(a, b *big.Float) *big.Float { return nw().Mul(a, b) }
	sub := func(a, b *big.Float) *big.Float { return nw().Sub(a, b) }
	add := func(a, b *big.Float) *big.Float { return nw().Add(a, b) }
	minor := func(r0, r1, c0, c1 int) *big.Float { return sub(mul(e(r0, c0), e(r1, c1)), mul(e(r0, c1), e(r1, c0))) }
	delta := add(add(minor(0, 1, 0, 1), minor(2, 3, 2, 3)), mul(nw().SetInt64(2), minor(0, 1, 2, 3)))
	// det V by Laplace expansion along the row pair (0, 1).
	det := nw()
	pairs := [][2]int{{0, 1}, {0, 2}, {0, 3}, {1, 2}, {1, 3}, {2, 3}}
	for _, p := range pairs {
		var q [2]int
		k := 0
		for c := 0; c < 4; c++ {
			if c != p[0] && c != p[1] {
				q[k] = c
				k++
			}
		}
		term := mul(minor(0, 1, p[0], p[1]), minor(2, 3, q[0], q[1]))
		if (p[0]+p[1]+0+1)%2 == 1 {
			term.Neg(term)
		}
		det = add(det, term)
	}
	if det.Sign() <= 0 {
		return math.NaN(), math.NaN()
	}
	disc := sub(mul(delta, delta), mul(nw().SetInt64(4), det))
	if disc.Sign() < 0 {
		disc.SetInt64(0)
	}
	plus := nw().Quo(add(delta, nw().Sqrt(disc)), nw().SetInt64(2))
	minus := nw().Quo(det, plus)
	nuP, _ := nw().Sqrt(plus).Float64()
	nuM, _ := nw().Sqrt(minus).Float64()
	return nuM, nuP
}

// ---- symplectic transforms ----

// Common practice: S Omega S^T = Omega defines a symplectic matrix; round-off in the check is
// a few eps times max|S|^2.
func TestSymplecticTransformsPreserveOmega(t *testing.T) {
	type tc struct {
		name string
		s    Matrix
	}
	var cases []tc
	for n := 1; n <= 4; n++ {
		for i := 0; i < n; i++ {
			for _, r := range []float64{0, 0.5, -2, 5} {
				cases = append(cases, tc{fmt.Sprintf("squeezer(n=%d,i=%d,r=%g)", n, i, r), Squeezer(n, i, r)})
			}
			for _, th := range []float64{0, 0.3, math.Pi / 2, -2.5} {
				cases = append(cases, tc{fmt.Sprintf("rotation(n=%d,i=%d,theta=%g)", n, i, th), PhaseRotation(n, i, th)})
			}
			for j := 0; j < n; j++ {
				if j == i {
					continue
				}
				for _, tr := range []float64{0, 1e-6, 0.3, 0.5, 1 - 1e-6, 1} {
					cases = append(cases, tc{fmt.Sprintf("beamsplitter(n=%d,%d,%d,t=%g)", n, i, j, tr), BeamSplitter(n, i, j, tr)})
				}
				for _, g := range []float64{1, 1 + 1e-6, 1.5, 10, 1e4} {
					cases = append(cases, tc{fmt.Sprintf("tms(n=%d,%d,%d,G=%g)", n, i, j, g), TwoModeSqueezer(n, i, j, g)})
				}
				for _, r := range []float64{-1, 0.7, 3} {
					cases = append(cases, tc{fmt.Sprintf("tms(n=%d,%d,%d,r=%g)", n, i, j, r), TwoModeSqueezing(n, i, j, r)})
				}
			}
		}
	}
	rng := engRNG(1)
	for k := 0; k < 40; k++ {
		n := 1 + k%MaxModes
		cases = append(cases, tc{fmt.Sprintf("random product %d (n=%d)", k, n), engRandomSymplectic(rng, n, 30, 1)})
	}
	for _, c := range cases {
		m := c.s.MaxAbs()
		tol := 8 * 0x1p-52 * math.Max(1, m*m) * float64(c.s.rows)
		if d := SymplecticDefect(&c.s); !(d <= tol) {
			t.Errorf("%s: SymplecticDefect = %.3g > %.3g", c.name, d, tol)
		}
	}
	// The check itself must see a non-symplectic matrix.
	bad := Identity(2)
	bad.Set(0, 0, 2)
	if d := SymplecticDefect(&bad); d < 0.5 {
		t.Errorf("diag(2, 1): SymplecticDefect = %g, want about 1", d)
	}
}

// Embedding: an n-mode transform on modes (i, j) is the two-mode transform on those modes and
// the identity elsewhere (physics notes' definitions).
func TestSymplecticEmbedding(t *testing.T) {
	const n = 4
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			if i == j {
				continue
			}
			for _, pair := range []struct {
				name     string
				full, on Matrix
			}{
				{"beamsplitter", BeamSplitter(n, i, j, 0.3), BeamSplitter(2, 0, 1, 0.3)},
				{"tms", TwoModeSqueezer(n, i, j, 2.5), TwoModeSqueezer(2, 0, 1, 2.5)},
				{"squeezer", Squeezer(n, i, 0.8), Squeezer(1, 0, 0.8)},
				{"rotation", PhaseRotation(n, i, 1.1), PhaseRotation(1, 0, 1.1)},
			} {
				modes := []int{i, j}
				if pair.on.rows == 2 {
					modes = []int{i}
				}
				var got Matrix
				got.SelectModes(&pair.full, modes)
				if d := got.MaxAbsDiff(&pair.on); d != 0 {
					t.Errorf("%s on (%d,%d): block differs from the %d-mode transform by %g", pair.name, i, j, len(modes), d)
				}
				for r := 0; r < 2*n; r++ {
					for c := 0; c < 2*n; c++ {
						if slices.Contains(modes, r/2) && slices.Contains(modes, c/2) {
							continue
						}
						want := 0.0
						if r == c {
							want = 1
						}
						if pair.full.At(r, c) != want {
							t.Errorf("%s on (%d,%d): entry (%d,%d) = %g, want %g", pair.name, i, j, r, c, pair.full.At(r, c), want)
						}
					}
				}
			}
		}
	}
	// Explicit entries of the physics notes' beam splitter and two-mode squeezer.
	bs := BeamSplitter(2, 0, 1, 0.36)
	tms := TwoModeSqueezer(2, 0, 1, 4)
	wantBS, _ := FromRows([][]float64{{0.6, 0, 0.8, 0}, {0, 0.6, 0, 0.8}, {-0.8, 0, 0.6, 0}, {0, -0.8, 0, 0.6}})
	s3 := math.Sqrt(3)
	wantTMS, _ := FromRows([][]float64{{2, 0, s3, 0}, {0, 2, 0, -s3}, {s3, 0, 2, 0}, {0, -s3, 0, 2}})
	if d := bs.MaxAbsDiff(&wantBS); d > 1e-15 {
		t.Errorf("BeamSplitter(0.36) differs from the physics notes' form by %g", d)
	}
	if d := tms.MaxAbsDiff(&wantTMS); d > 1e-15 {
		t.Errorf("TwoModeSqueezer(4) differs from the physics notes' form by %g", d)
	}
}

// ---- entropies ----

// Check values g(0.5) = 1.377444, g(1) = 2, g(10) = 4.834467 (physics notes); a thermal state
// of N photons has entropy g(N) (physics notes, conventions).
func TestThermalEntropyCheckValues(t *testing.T) {
	for _, c := range []struct{ n, want float64 }{{0.5, 1.377444}, {1, 2}, {10, 4.834467}} {
		if got := G(c.n); math.Abs(got-c.want) > 6e-7 {
			t.Errorf("g(%g) = %.7f, want %.6f", c.n, got, c.want)
		}
	}
	for _, n := range []float64{0, 1e-12, 1e-6, 0.5, 1, 10, 1e3, 1e6} {
		v := Thermal(n)
		got := engEntropy(t, &v)
		if math.Abs(got-G(n)) > 1e-12*math.Max(1, G(n)) {
			t.Errorf("S(Thermal(%g)) = %.15g, want g = %.15g", n, got, G(n))
		}
		// The defining formula of g, where it has no cancellation problem.
		if n >= 1e-6 && n <= 1e3 {
			def := (n+1)*math.Log2(n+1) - n*math.Log2(n)
			if math.Abs(G(n)-def) > 1e-12*math.Max(1, def) {
				t.Errorf("G(%g) = %.15g, defining formula %.15g", n, G(n), def)
			}
		}
	}
	if G(0) != 0 || G(-1) != 0 {
		t.Errorf("G(0) = %g, G(-1) = %g: want 0", G(0), G(-1))
	}
}

// The vacuum is pure: its entropy must be exactly 0 on every path (single-mode, two-mode
// closed form, Jacobi), and a passive transform keeps it the vacuum (common practice).
func TestVacuumEntropyExactlyZero(t *testing.T) {
	for n := 1; n <= MaxModes; n++ {
		v := Vacuum(n)
		if s := engEntropy(t, &v); s != 0 {
			t.Errorf("S(vacuum, %d modes) = %g, want exactly 0", n, s)
		}
		if n >= 2 {
			p := BeamSplitter(n, 0, n-1, 0.3)
			r := PhaseRotation(n, 0, 0.7)
			var pr Matrix
			pr.Mul(&p, &r)
			w := engCongruence(&pr, &v)
			if s := engEntropy(t, &w); s > 1e-13 {
				t.Errorf("S(passive(vacuum), %d modes) = %g, want 0", n, s)
			}
		}
	}
}

// For a pure global state the two sides of every bipartition have equal entropy (Araki, Lieb,
// Commun. Math. Phys. 18, 160 (1970)); the thermal marginal of TMSV(N) has entropy g(N)
// (physics notes); a beam splitter t on a thermal state of N photons leaves tN photons.
func TestPureStateBipartitionEntropies(t *testing.T) {
	for _, n := range []float64{0, 1e-3, 0.5, 1, 30, 1e3} {
		v := TMSV(n)
		sA, sB, sAB := engEntropyOf(t, &v, 0), engEntropyOf(t, &v, 1), engEntropyOf(t, &v, 0, 1)
		tol := 1e-10 * math.Max(1, G(n))
		if math.Abs(sA-G(n)) > tol || math.Abs(sB-G(n)) > tol {
			t.Errorf("TMSV(%g): S(A) = %.15g, S(B) = %.15g, want g(N) = %.15g", n, sA, sB, G(n))
		}
		if sAB > 1e-9 {
			t.Errorf("TMSV(%g): S(AB) = %g, want 0", n, sAB)
		}
		// TMSV on modes (0, 1), a beam splitter t between mode 1 and a vacuum mode 2.
		for _, tr := range []float64{0.1, 0.5, 0.93} {
			vac := Vacuum(1)
			w0 := engDirectSum(v, vac)
			bs := BeamSplitter(3, 1, 2, tr)
			w := engCongruence(&bs, &w0)
			tol := 1e-9 * math.Max(1, G(n))
			checks := []struct {
				name     string
				got, alt float64
				want     float64
			}{
				{"S(0) = S(12) = g(N)", engEntropyOf(t, &w, 0), engEntropyOf(t, &w, 1, 2), G(n)},
				{"S(1) = S(02) = g(tN)", engEntropyOf(t, &w, 1), engEntropyOf(t, &w, 0, 2), G(tr * n)},
				{"S(2) = S(01) = g((1-t)N)", engEntropyOf(t, &w, 2), engEntropyOf(t, &w, 0, 1), G((1 - tr) * n)},
			}
			for _, c := range checks {
				if math.Abs(c.got-c.want) > tol || math.Abs(c.alt-c.want) > tol {
					t.Errorf("TMSV(%g) through beam splitter %g: %s: got %.15g and %.15g, want %.15g", n, tr, c.name, c.got, c.alt, c.want)
				}
			}
			if s := engEntropyOf(t, &w, 0, 1, 2); s > 1e-9 {
				t.Errorf("TMSV(%g) through beam splitter %g: S(012) = %g, want 0", n, tr, s)
			}
		}
	}
	// Random pure states: a random symplectic applied to the vacuum, 2 to 6 modes, every
	// bipartition (the larger side goes through the Jacobi path).
	rng := engRNG(2)
	for trial := 0; trial < 25; trial++ {
		n := 2 + trial%5
		s := engRandomSymplectic(rng, n, 6*n, 0.8)
		vac := Vacuum(n)
		v := engCongruence(&s, &vac)
		tol := 1e-9 * engScale(&v)
		all := make([]int, n)
		for k := range all {
			all[k] = k
		}
		if s := engEntropyOf(t, &v, all...); s > 1e-8 {
			t.Errorf("random pure state %d (%d modes): S = %g, want 0", trial, n, s)
		}
		for mask := 1; mask < 1<<n-1; mask++ {
			var p, q []int
			for k := 0; k < n; k++ {
				if mask&(1<<k) != 0 {
					p = append(p, k)
				} else {
					q = append(q, k)
				}
			}
			sp, sq := engEntropyOf(t, &v, p...), engEntropyOf(t, &v, q...)
			if math.Abs(sp-sq) > tol*math.Max(1, sp) {
				t.Errorf("random pure state %d (%d modes): S(%v) = %.15g, S(%v) = %.15g", trial, n, p, sp, q, sq)
			}
		}
	}
}

// Degenerate symplectic spectra (equal thermal modes): the two-mode closed form (vanishing
// discriminant) and the Jacobi path (>= 3 modes, repeated eigenvalue pairs) must give
// k g(N), also after an arbitrary symplectic congruence (Williamson's theorem).
func TestDegenerateThermalSpectra(t *testing.T) {
	rng := engRNG(3)
	for _, n := range []float64{0, 1e-6, 0.5, 2, 1e3} {
		for k := 2; k <= 5; k++ {
			ph := make([]float64, k)
			for i := range ph {
				ph[i] = n
			}
			want := float64(k) * G(n)
			var blocks []Matrix
			for range ph {
				blocks = append(blocks, Thermal(n))
			}
			d := engDirectSum(blocks...)
			if got := engEntropy(t, &d); math.Abs(got-want) > 1e-12*math.Max(1, want) {
				t.Errorf("%d x Thermal(%g): S = %.15g, want %d g(N) = %.15g", k, n, got, k, want)
			}
			// Sum of the single-mode entropies, as the brief asks (3 modes: Jacobi vs 1-mode).
			sum := 0.0
			for i := 0; i < k; i++ {
				sum += engEntropyOf(t, &d, i)
			}
			if got := engEntropy(t, &d); math.Abs(got-sum) > 1e-12*math.Max(1, sum) {
				t.Errorf("%d x Thermal(%g): S = %.15g, sum of single modes %.15g", k, n, got, sum)
			}
			for trial := 0; trial < 5; trial++ {
				v, want := engWilliamson(rng, ph, 4*k, 0.7)
				got := engEntropy(t, &v)
				if math.Abs(got-want) > 1e-9*engScale(&v)*math.Max(1, want) {
					t.Errorf("S(symplectic(%d x Thermal(%g))) = %.15g, want %.15g (trial %d)", k, n, got, want, trial)
				}
			}
		}
	}
	// Nearly degenerate: N and N + 1e-9.
	v := engDirectSum(Thermal(1), Thermal(1+1e-9))
	if got, want := engEntropy(t, &v), G(1)+G(1+1e-9); math.Abs(got-want) > 1e-12 {
		t.Errorf("Thermal(1) + Thermal(1+1e-9): S = %.15g, want %.15g", got, want)
	}
}

// The two-mode closed form and the Jacobi path must agree with each other and with the
// spectrum Williamson's theorem assigns, on random two-mode states, within the engine's own
// documented round-off scale PurityTolerance * max(1, max|V_ij|) (spectrum.go). Every seventh
// state has a degenerate spectrum, as every pure two-mode state has.
func TestTwoModeClosedFormMatchesJacobi(t *testing.T) {
	rng := engRNG(4)
	for trial := 0; trial < 300; trial++ {
		ph := []float64{3 * rng.Float64(), 3 * rng.Float64()}
		if trial%7 == 0 {
			ph[1] = ph[0] // degenerate
		}
		if trial%11 == 0 {
			ph[0] = 0 // one pure mode
		}
		v, _ := engWilliamson(rng, ph, 8, 1)
		want := []float64{2*ph[0] + 1, 2*ph[1] + 1}
		slices.Sort(want)
		var cf, jc Spectrum
		if err := SymplecticSpectrum(&v, &cf); err != nil {
			t.Fatalf("trial %d: closed form: %v", trial, err)
		}
		if err := jacobiSpectrum(&v, &jc); err != nil {
			t.Fatalf("trial %d: Jacobi: %v", trial, err)
		}
		tol := purityAllowance(&v)
		for k := 0; k < 2; k++ {
			if math.Abs(cf.Nu[k]-want[k]) > tol || math.Abs(jc.Nu[k]-want[k]) > tol {
				t.Errorf("trial %d: nu_%d closed form %.15g, Jacobi %.15g, Williamson %.15g (scale %g)",
					trial, k, cf.Nu[k], jc.Nu[k], want[k], engScale(&v))
			}
		}
	}
}

// The two-mode closed form against exact arithmetic on the same float64 matrix: random
// states, and nearly pure states with large entries (TMSV(N) and its pure-loss output, N up
// to 1e6). The allowed error is the engine's own documented round-off scale, PurityTolerance
// times max(1, max|V_ij|) (spectrum.go), and the spectrum must be ascending.
func TestTwoModeSpectrumAgainstExactArithmetic(t *testing.T) {
	type tc struct {
		name string
		v    Matrix
	}
	var cases []tc
	rng := engRNG(5)
	for trial := 0; trial < 20; trial++ {
		v, _ := engWilliamson(rng, []float64{2 * rng.Float64(), 2 * rng.Float64()}, 8, 1)
		cases = append(cases, tc{fmt.Sprintf("random %d", trial), v})
	}
	sq, bs := Squeezer(2, 0, 5), BeamSplitter(2, 0, 1, 0.3)
	var sb Matrix
	sb.Mul(&bs, &sq)
	d := engDirectSum(Vacuum(1), Thermal(2))
	cases = append(cases, tc{"squeezed vacuum (r = 5) mixed with Thermal(2)", engCongruence(&sb, &d)})
	for _, ns := range []float64{1e2, 1e4, 1e6} {
		v := TMSV(ns)
		cases = append(cases, tc{fmt.Sprintf("TMSV(%g)", ns), v})
		for _, nb := range []float64{0, 1} {
			m := Model{Kind: ThermalLoss, Eta: 0.9, NB: nb}
			d := m.Dilation()
			var j, ab Matrix
			d.Joint(&v, &j)
			ab.SelectModes(&j, []int{0, 1})
			cases = append(cases, tc{fmt.Sprintf("A'B of %v, TMSV(%g) input", m, ns), ab})
		}
	}
	for _, c := range cases {
		wm, wp := engExactTwoMode(&c.v)
		var sp Spectrum
		err := SymplecticSpectrum(&c.v, &sp)
		if err != nil {
			t.Errorf("%s: %v (exact nu = %.12g, %.12g)", c.name, err, wm, wp)
			continue
		}
		tol := purityAllowance(&c.v)
		if math.Abs(sp.Nu[0]-wm) > tol || math.Abs(sp.Nu[1]-wp) > tol || sp.Nu[0] > sp.Nu[1]+tol {
			t.Errorf("%s: nu = (%.12g, %.12g), exact (%.12g, %.12g); allowed error %.3g",
				c.name, sp.Nu[0], sp.Nu[1], wm, wp, tol)
		}
	}
}

// Strong squeezing (r = 5, entries ~ e^10): the squeezed vacuum is pure, a squeezed thermal
// state keeps entropy g(N), and 2- and 3-mode states with a squeezed mode keep the Williamson
// sum. The 1e-9 bit tolerances are generous for a backward-stable spectrum: exact arithmetic
// on the stored 2-mode matrix gives nu_- = 1 - 2e-12 (see the exact-arithmetic test).
func TestStrongSqueezing(t *testing.T) {
	const r = 5.0
	sq := Squeezer(1, 0, r)
	vac := Vacuum(1)
	v := engCongruence(&sq, &vac)
	if s := engEntropy(t, &v); s > 1e-12 {
		t.Errorf("S(squeezed vacuum, r=5) = %g, want ~0", s)
	}
	// Rotated by 45 degrees the entries are ~cosh(10)/2 ~ 1e4 and det V = 1 cancels to eps e^20
	// already in the stored matrix; the entropy may only reflect a symplectic eigenvalue
	// within the engine's allowance of 1.
	rot := PhaseRotation(1, 0, math.Pi/4)
	var rs Matrix
	rs.Mul(&rot, &sq)
	vr := engCongruence(&rs, &vac)
	if s, limit := engEntropy(t, &vr), 2*G(purityAllowance(&vr)/2); s > limit {
		t.Errorf("S(rotated squeezed vacuum, r=5) = %g, want <= %.3g", s, limit)
	}
	th := Thermal(0.5)
	v = engCongruence(&sq, &th)
	if s := engEntropy(t, &v); math.Abs(s-G(0.5)) > 1e-12 {
		t.Errorf("S(squeezed thermal(0.5), r=5) = %.15g, want %.15g", s, G(0.5))
	}
	// Two modes: squeezed vacuum mixed with a thermal mode on a beam splitter.
	s2a, s2b := Squeezer(2, 0, r), BeamSplitter(2, 0, 1, 0.3)
	var s2 Matrix
	s2.Mul(&s2b, &s2a)
	d2 := engDirectSum(Vacuum(1), Thermal(2))
	v2 := engCongruence(&s2, &d2)
	if s := engEntropy(t, &v2); math.Abs(s-G(2)) > 1e-9 {
		t.Errorf("2 modes, squeezed r=5 then mixed: S = %.15g, want %.15g", s, G(2))
	}
	// Three modes (Jacobi path): thermal(0.5), vacuum, thermal(2); squeeze mode 0 by r = 5,
	// two-mode squeeze (1, 2), mix (0, 1) and (0, 2).
	ops := []Matrix{Squeezer(3, 0, r), TwoModeSqueezing(3, 1, 2, 1), BeamSplitter(3, 0, 1, 0.3), BeamSplitter(3, 0, 2, 0.6), Squeezer(3, 1, -r)}
	s3 := Identity(6)
	for _, o := range ops {
		var tmp Matrix
		tmp.Mul(&o, &s3)
		s3 = tmp
	}
	d3 := engDirectSum(Thermal(0.5), Vacuum(1), Thermal(2))
	v3 := engCongruence(&s3, &d3)
	want := G(0.5) + G(2)
	if s := engEntropy(t, &v3); math.Abs(s-want) > 1e-9 {
		t.Errorf("3 modes with r=5 squeezing: S = %.15g, want %.15g (max entry %g)", s, want, v3.MaxAbs())
	}
	// The pure 3-mode version: bipartitions balance.
	vac3 := Vacuum(3)
	p3 := engCongruence(&s3, &vac3)
	if s := engEntropy(t, &p3); s > 1e-9 {
		t.Errorf("pure 3-mode state with r=5 squeezing: S = %g, want ~0", s)
	}
	for k := 0; k < 3; k++ {
		var rest []int
		for j := 0; j < 3; j++ {
			if j != k {
				rest = append(rest, j)
			}
		}
		a, b := engEntropyOf(t, &p3, k), engEntropyOf(t, &p3, rest...)
		if math.Abs(a-b) > 1e-9*math.Max(1, a) {
			t.Errorf("pure 3-mode state with r=5 squeezing: S(%d) = %.12g, S(%v) = %.12g", k, a, rest, b)
		}
	}
}

// Large photon numbers: the marginal of TMSV(1e6) has entropy g(1e6) (physics notes); the
// whole TMSV(N) is pure, so its entropy may only reflect round-off (at most 2 g(delta/2) for
// symplectic eigenvalues within the engine's documented allowance delta of 1); and the joint
// output of a channel's dilation is pure, so S(A'B) = S(env1 env2) (Araki-Lieb).
func TestLargePhotonNumber(t *testing.T) {
	v := TMSV(1e6)
	if s := engEntropyOf(t, &v, 0); math.Abs(s-G(1e6)) > 1e-12*G(1e6) {
		t.Errorf("TMSV(1e6) marginal: S = %.15g, want g(1e6) = %.15g", s, G(1e6))
	}
	for _, ns := range []float64{1e2, 1e4, 1e6} {
		v := TMSV(ns)
		limit := 2 * G(purityAllowance(&v)/2)
		s, err := Entropy(&v)
		if err != nil || s > limit {
			t.Errorf("S(TMSV(%g)) = %g, err %v: want a pure state's entropy, <= %.3g", ns, s, err, limit)
		}
		for _, m := range []Model{{Kind: ThermalLoss, Eta: 0.9}, {Kind: ThermalLoss, Eta: 0.9, NB: 1}, {Kind: Amplifier, Gain: 2, NB: 0.5}, {Kind: AdditiveNoise, Xi: 0.1}} {
			d := m.Dilation()
			var j, ab, env Matrix
			d.Joint(&v, &j)
			ab.SelectModes(&j, []int{0, 1})
			env.SelectModes(&j, []int{2, 3})
			sAB, err1 := Entropy(&ab)
			sE, err2 := Entropy(&env)
			if err1 != nil || err2 != nil || math.Abs(sAB-sE) > 1e-6 {
				t.Errorf("%v, TMSV(%g) input: S(A'B) = %.12g (%v), S(env) = %.12g (%v): want equal",
					m, ns, sAB, err1, sE, err2)
			}
		}
	}
}

// Strong subadditivity, I(A;B|C) >= 0 (Lieb, Ruskai, J. Math. Phys. 14, 1938 (1973)), and
// subadditivity I(A;B) >= 0, on random mixed 3- and 4-mode states.
func TestStrongSubadditivity(t *testing.T) {
	rng := engRNG(6)
	for trial := 0; trial < 60; trial++ {
		n := 3 + trial%2
		ph := make([]float64, n)
		for i := range ph {
			ph[i] = 2 * rng.Float64() * rng.Float64()
		}
		v, _ := engWilliamson(rng, ph, 5*n, 1)
		a, b := []int{0}, []int{1}
		c := []int{2}
		if n == 4 {
			c = []int{2, 3}
		}
		cat := func(xs ...[]int) []int { return slices.Concat(xs...) }
		sAC := engEntropyOf(t, &v, cat(a, c)...)
		sBC := engEntropyOf(t, &v, cat(b, c)...)
		sC := engEntropyOf(t, &v, c...)
		sABC := engEntropyOf(t, &v, cat(a, b, c)...)
		cmi := sAC + sBC - sC - sABC
		tol := 1e-9 * engScale(&v)
		if cmi < -tol {
			t.Errorf("trial %d (%d modes): I(A;B|C) = %g < 0", trial, n, cmi)
		}
		mi := engEntropyOf(t, &v, 0) + engEntropyOf(t, &v, 1) - engEntropyOf(t, &v, 0, 1)
		if mi < -tol {
			t.Errorf("trial %d (%d modes): I(A;B) = %g < 0", trial, n, mi)
		}
	}
}

// Unphysical matrices (V + i Omega not >= 0, not positive definite, malformed) must give an
// error wrapping ErrUnphysical, never a number; CheckPhysical must reject them.
func TestUnphysicalRejected(t *testing.T) {
	half, _ := FromRows([][]float64{{0.5, 0}, {0, 0.5}})
	thin, _ := FromRows([][]float64{{0.1, 0}, {0, 5}}) // positive definite, det 0.5
	neg, _ := FromRows([][]float64{{-1, 0}, {0, -1}})
	tooCorrelated, _ := FromRows([][]float64{{2, 0, 1.9, 0}, {0, 2, 0, -1.9}, {1.9, 0, 2, 0}, {0, -1.9, 0, 2}})
	nan := Identity(2)
	nan.Set(0, 0, math.NaN())
	inf := Identity(4)
	inf.Set(3, 3, math.Inf(1))
	odd := Identity(3)
	rect := NewMatrix(2, 4)
	justOut := Identity(2)
	justOut.Scale(1 - 1e-6)
	cases := []struct {
		name string
		v    Matrix
	}{
		{"diag(0.5, 0.5)", half},
		{"diag(0.1, 5)", thin},
		{"-I", neg},
		{"2 modes: diag(0.5,0.5) + vacuum", engDirectSum(half, Vacuum(1))},
		{"2 modes: correlations too strong", tooCorrelated},
		{"3 modes: diag(0.5,0.5) + 2 vacua", engDirectSum(half, Vacuum(2))},
		{"3 modes: too correlated + vacuum", engDirectSum(tooCorrelated, Vacuum(1))},
		{"4 modes: vacuum + diag(0.1,5) + 2 thermal", engDirectSum(Vacuum(1), thin, Thermal(1), Thermal(2))},
		{"4 modes: -I block", engDirectSum(Vacuum(3), neg)},
		{"NaN entry", nan},
		{"Inf entry", inf},
		{"3x3", odd},
		{"2x4", rect},
		{"0x0", Matrix{}},
		{"(1 - 1e-6) I, beyond the tolerance", justOut},
	}
	for _, c := range cases {
		s, err := Entropy(&c.v)
		if !errors.Is(err, ErrUnphysical) {
			t.Errorf("%s: Entropy = %g, err %v; want an error wrapping ErrUnphysical", c.name, s, err)
		}
		if err := CheckPhysical(&c.v); !errors.Is(err, ErrUnphysical) {
			t.Errorf("%s: CheckPhysical err = %v; want an error wrapping ErrUnphysical", c.name, err)
		}
	}
	// Within the documented tolerance (PurityTolerance): accepted as pure.
	in := Identity(4)
	in.Scale(1 - 1e-12)
	if s, err := Entropy(&in); err != nil || s != 0 {
		t.Errorf("(1 - 1e-12) I: Entropy = %g, %v; want 0 (round-off within PurityTolerance)", s, err)
	}
}

// CheckPhysical accepts physical states: vacua, thermal states, TMSV, random pure and mixed
// states, and the dilations' joint states.
func TestCheckPhysicalAccepts(t *testing.T) {
	var states []Matrix
	for n := 1; n <= 5; n++ {
		states = append(states, Vacuum(n))
	}
	for _, n := range []float64{0, 0.3, 7, 1e4} {
		states = append(states, Thermal(n), TMSV(n))
	}
	rng := engRNG(7)
	for trial := 0; trial < 30; trial++ {
		n := 1 + trial%6
		s := engRandomSymplectic(rng, n, 4*n, 1)
		vac := Vacuum(n)
		states = append(states, engCongruence(&s, &vac))
		ph := make([]float64, n)
		for i := range ph {
			ph[i] = rng.Float64()
		}
		v, _ := engWilliamson(rng, ph, 4*n, 1)
		states = append(states, v)
	}
	for _, m := range engModels() {
		d := m.Dilation()
		for _, ns := range []float64{0, 0.5, 50} {
			in := TMSV(ns)
			var j Matrix
			d.Joint(&in, &j)
			states = append(states, j)
		}
	}
	for i, v := range states {
		if err := CheckPhysical(&v); err != nil {
			t.Errorf("state %d (%d modes): %v", i, Modes(&v), err)
		}
	}
}

// ---- channels and dilations ----

func engModels() []Model {
	return []Model{
		{Kind: ThermalLoss, Eta: 0.9, NB: 1},
		{Kind: ThermalLoss, Eta: 0.3},
		{Kind: ThermalLoss, Eta: 0.5, NB: 0.5},
		{Kind: Amplifier, Gain: 2, NB: 0.5},
		{Kind: Amplifier, Gain: 1.3},
		{Kind: AdditiveNoise, Xi: 0.1},
		{Kind: AdditiveNoise, Xi: 2},
	}
}

// Each model's (X, Y) action (physics notes' channel table) is reproduced by its Stinespring
// dilation on a random pure input: the B marginal is X V_A X^T + Y, the A'B correlations are
// C_{A'A} X^T, the joint state is pure, and ApplyToTail of the action gives the same A'B block.
func TestModelActionMatchesDilation(t *testing.T) {
	rng := engRNG(8)
	for _, m := range engModels() {
		ch := m.Action()
		d := m.Dilation()
		for trial := 0; trial < 10; trial++ {
			s := engRandomSymplectic(rng, 2, 8, 0.8)
			vac := Vacuum(2)
			in := engCongruence(&s, &vac)
			var j Matrix
			d.Joint(&in, &j)
			tol := 1e-12 * engScale(&j)
			var vA, vB, want Matrix
			vA.SelectModes(&in, []int{1})
			vB.SelectModes(&j, []int{1})
			ch.Apply(&vA, &want)
			if diff := vB.MaxAbsDiff(&want); diff > tol {
				t.Errorf("%v: B marginal differs from X V_A X^T + Y by %g", m, diff)
			}
			var cIn, cOut, cWant Matrix
			cIn.Reset(2, 2)
			cOut.Reset(2, 2)
			for r := 0; r < 2; r++ {
				for c := 0; c < 2; c++ {
					cIn.Set(r, c, in.At(r, 2+c))
					cOut.Set(r, c, j.At(r, 2+c))
				}
			}
			cWant.MulTrans(&cIn, &ch.X)
			if diff := cOut.MaxAbsDiff(&cWant); diff > tol {
				t.Errorf("%v: A'B correlations differ from C X^T by %g", m, diff)
			}
			var ab, tail Matrix
			ab.SelectModes(&j, []int{0, 1})
			ch.ApplyToTail(&in, 1, &tail)
			if diff := ab.MaxAbsDiff(&tail); diff > tol {
				t.Errorf("%v: ApplyToTail differs from the dilation's A'B block by %g", m, diff)
			}
			if s := engEntropy(t, &j); s > 1e-8 {
				t.Errorf("%v: joint state of a pure input has entropy %g, want 0", m, s)
			}
		}
		// The dilation's unitary restricted to (A, env1, env2), as a channel with the
		// environment state as ancilla, is the model's action (ChannelFromSymplectic).
		var u3 Matrix
		u3.SelectModes(&d.U, []int{1, 2, 3})
		got := ChannelFromSymplectic(&u3, 1, &d.EnvIn, []int{0})
		if dx, dy := got.X.MaxAbsDiff(&ch.X), got.Y.MaxAbsDiff(&ch.Y); dx > 1e-14 || dy > 1e-13 {
			t.Errorf("%v: ChannelFromSymplectic of the dilation differs from Action by %g (X), %g (Y)", m, dx, dy)
		}
	}
}

// The additive-noise dilation (pure loss 1/(1+xi), then a quantum-limited amplifier 1+xi,
// physics notes: derived) reproduces V -> V + 2 xi I.
func TestAdditiveNoiseDilation(t *testing.T) {
	rng := engRNG(9)
	for _, xi := range []float64{1e-6, 0.1, 1, 5} {
		m := Model{Kind: AdditiveNoise, Xi: xi}
		ch := m.Action()
		id := Identity(2)
		twoXi := Identity(2)
		twoXi.Scale(2 * xi)
		if ch.X.MaxAbsDiff(&id) != 0 || ch.Y.MaxAbsDiff(&twoXi) > 1e-15*xi {
			t.Errorf("xi = %g: Action = (%v, %v), want (I, 2 xi I)", xi, ch.X, ch.Y)
		}
		d := m.Dilation()
		if def := SymplecticDefect(&d.U); def > 1e-13*math.Max(1, xi) {
			t.Errorf("xi = %g: dilation unitary not symplectic (defect %g)", xi, def)
		}
		for trial := 0; trial < 5; trial++ {
			s := engRandomSymplectic(rng, 2, 8, 0.8)
			vac := Vacuum(2)
			in := engCongruence(&s, &vac)
			var j, vA, vB Matrix
			d.Joint(&in, &j)
			vA.SelectModes(&in, []int{1})
			vB.SelectModes(&j, []int{1})
			vA.AddScaled(1, &twoXi)
			if diff := vB.MaxAbsDiff(&vA); diff > 1e-12*engScale(&j) {
				t.Errorf("xi = %g: B marginal differs from V_A + 2 xi I by %g", xi, diff)
			}
		}
	}
}

func engLoss(eta float64) Channel { return Model{Kind: ThermalLoss, Eta: eta}.Action() }
func engAmp(g float64) Channel    { return Model{Kind: Amplifier, Gain: g}.Action() }

func engSameChannel(t *testing.T, name string, got, want Channel) {
	t.Helper()
	if got.In != want.In || got.Out != want.Out {
		t.Errorf("%s: %d -> %d modes, want %d -> %d", name, got.In, got.Out, want.In, want.Out)
		return
	}
	tol := 1e-14 * math.Max(1, want.Y.MaxAbs())
	if dx, dy := got.X.MaxAbsDiff(&want.X), got.Y.MaxAbsDiff(&want.Y); dx > 1e-15 || dy > tol {
		t.Errorf("%s: X differs by %g, Y by %g", name, dx, dy)
	}
}

// The data-processing decompositions of the physics notes, composed with Compose:
// thermal loss (eta, N_B) = quantum-limited amplifier G = 1 + (1-eta) N_B after pure loss
// eta' = eta/G; = pure loss eta2 = eta - (1-eta) N_B after amplifier eta/eta2 (eta2 > 0);
// additive noise xi = amplifier 1 + xi after pure loss 1/(1+xi); and (derived here, by the
// same algebra) thermal loss = additive noise (1-eta) N_B after pure loss eta.
func TestDataProcessingDecompositions(t *testing.T) {
	for _, eta := range []float64{0.1, 0.5, 0.9, 0.99} {
		for _, nb := range []float64{0, 0.05, 0.5, 1, 3} {
			want := Model{Kind: ThermalLoss, Eta: eta, NB: nb}.Action()
			g := 1 + (1-eta)*nb
			l1, a1 := engLoss(eta/g), engAmp(g)
			got, err := Compose(&l1, &a1)
			if err != nil {
				t.Fatal(err)
			}
			if nb > 0 {
				engSameChannel(t, fmt.Sprintf("amp(%g) after loss(%g) = thermal loss(%g, %g)", g, eta/g, eta, nb), got, want)
			}
			if e2 := eta - (1-eta)*nb; e2 > 0 && nb > 0 {
				a2, l2 := engAmp(eta/e2), engLoss(e2)
				got, err := Compose(&a2, &l2)
				if err != nil {
					t.Fatal(err)
				}
				engSameChannel(t, fmt.Sprintf("loss(%g) after amp(%g) = thermal loss(%g, %g)", e2, eta/e2, eta, nb), got, want)
			}
			if nb > 0 {
				l3, n3 := engLoss(eta), Model{Kind: AdditiveNoise, Xi: (1 - eta) * nb}.Action()
				got, err := Compose(&l3, &n3)
				if err != nil {
					t.Fatal(err)
				}
				engSameChannel(t, fmt.Sprintf("additive(%g) after loss(%g) = thermal loss(%g, %g)", (1-eta)*nb, eta, eta, nb), got, want)
			}
		}
	}
	for _, xi := range []float64{1e-3, 0.1, 1, 4} {
		l, a := engLoss(1/(1+xi)), engAmp(1+xi)
		got, err := Compose(&l, &a)
		if err != nil {
			t.Fatal(err)
		}
		engSameChannel(t, fmt.Sprintf("amp(%g) after loss(%g) = additive(%g)", 1+xi, 1/(1+xi), xi), got, Model{Kind: AdditiveNoise, Xi: xi}.Action())
	}
}

// Complete positivity (Holevo, Werner, PRA 63, 032312 (2001)): Y + i Omega - i X Omega X^T >= 0.
// The models' actions and channels built from symplectics with physical ancillas are CP; the
// noiseless amplifier X = sqrt(2) I, Y = 0 is not (its margin is -1), and the amplifier of
// gain 2 is CP exactly when Y >= (G-1) I.
func TestCPMargin(t *testing.T) {
	check := func(name string, ch Channel, wantCP bool) {
		t.Helper()
		h, err := ch.CPMatrix()
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		m, err := ch.CPMargin()
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		tol := 1e-12 * math.Max(1, h.MaxAbs())
		if wantCP && m < -tol {
			t.Errorf("%s: CPMargin = %g, want >= %g", name, m, -tol)
		}
		if !wantCP && !(m < 0) {
			t.Errorf("%s: CPMargin = %g, want < 0", name, m)
		}
	}
	for _, eta := range []float64{1e-6, 0.1, 0.5, 0.9, 1 - 1e-6} {
		for _, nb := range []float64{0, 0.5, 10} {
			m := Model{Kind: ThermalLoss, Eta: eta, NB: nb}
			check(m.String(), m.Action(), true)
		}
	}
	for _, g := range []float64{1 + 1e-6, 1.5, 2, 100} {
		for _, nb := range []float64{0, 0.5, 10} {
			m := Model{Kind: Amplifier, Gain: g, NB: nb}
			check(m.String(), m.Action(), true)
		}
	}
	for _, xi := range []float64{1e-6, 0.1, 3} {
		m := Model{Kind: AdditiveNoise, Xi: xi}
		check(m.String(), m.Action(), true)
	}
	rng := engRNG(10)
	for trial := 0; trial < 40; trial++ {
		in := 1 + trial%2
		k := 1 + trial%3
		n := in + k
		s := engRandomSymplectic(rng, n, 5*n, 0.8)
		var anc []Matrix
		for i := 0; i < k; i++ {
			anc = append(anc, Thermal(rng.Float64()))
		}
		a := engDirectSum(anc...)
		keep := rng.Perm(n)[:1+rng.IntN(min(n, 4))]
		ch := ChannelFromSymplectic(&s, in, &a, keep)
		check(fmt.Sprintf("ChannelFromSymplectic trial %d (in %d, keep %v)", trial, in, keep), ch, true)
		// Composition of CP maps is CP.
		if ch.Out == 1 {
			act := Model{Kind: ThermalLoss, Eta: 0.7, NB: 0.2}.Action()
			c2, err := Compose(&ch, &act)
			if err != nil {
				t.Fatal(err)
			}
			check(fmt.Sprintf("composition trial %d", trial), c2, true)
		}
	}
	x := Identity(2)
	x.Scale(math.Sqrt2)
	check("X = sqrt(2) I, Y = 0", Channel{In: 1, Out: 1, X: x, Y: NewMatrix(2, 2)}, false)
	ch := Channel{In: 1, Out: 1, X: x, Y: NewMatrix(2, 2)}
	if m, _ := ch.CPMargin(); math.Abs(m+1) > 1e-14 {
		t.Errorf("X = sqrt(2) I, Y = 0: CPMargin = %g, want -1", m)
	}
	y := Identity(2)
	check("X = sqrt(2) I, Y = I (quantum-limited amplifier)", Channel{In: 1, Out: 1, X: x, Y: y}, true)
	y.Scale(0.99)
	check("X = sqrt(2) I, Y = 0.99 I", Channel{In: 1, Out: 1, X: x, Y: y}, false)
}

// Identity (physics notes, derived): for a pure global state on A' B E' Ed,
// I(A';B|E') = H(B|E') + H(B|Ed) (Ed is the discarded output, E-double-prime in the notes). Build the pure
// state from a model's dilation with a TMSV input, apply a random symplectic to (env1, env2,
// k vacuum ancillas), split its outputs into E' (kept) and Ed (discarded). Also check that ChannelFromSymplectic + ApplyToTail give the
// same (A', B, E') covariance as selecting modes of the global state.
func TestConditionalMutualInformationIdentity(t *testing.T) {
	rng := engRNG(11)
	for _, m := range engModels() {
		for _, ns := range []float64{0.3, 2} {
			in := TMSV(ns)
			d := m.Dilation()
			var joint Matrix
			d.Joint(&in, &joint)
			for k := 1; k <= 2; k++ {
				nEnv := 2 + k
				sEnv := engRandomSymplectic(rng, nEnv, 5*nEnv, 0.7)
				idAB := Identity(4) // A' and B untouched
				var sFull Matrix
				sFull.DirectSum(&idAB, &sEnv)
				v0 := engDirectSum(joint, Vacuum(k))
				w := engCongruence(&sFull, &v0)
				n := 4 + k
				if s := engEntropy(t, &w); s > 1e-8 {
					t.Fatalf("%v: global state not pure (S = %g)", m, s)
				}
				for mKeep := 1; mKeep < nEnv; mKeep++ {
					var e1, e2 []int
					for q := 2; q < n; q++ {
						if q < 2+mKeep {
							e1 = append(e1, q)
						} else {
							e2 = append(e2, q)
						}
					}
					cat := func(xs ...[]int) []int { return slices.Concat(xs...) }
					a, b := []int{0}, []int{1}
					lhs := engEntropyOf(t, &w, cat(a, e1)...) + engEntropyOf(t, &w, cat(b, e1)...) -
						engEntropyOf(t, &w, e1...) - engEntropyOf(t, &w, cat(a, b, e1)...)
					rhs := engEntropyOf(t, &w, cat(b, e1)...) - engEntropyOf(t, &w, e1...) +
						engEntropyOf(t, &w, cat(b, e2)...) - engEntropyOf(t, &w, e2...)
					if math.Abs(lhs-rhs) > 1e-8*math.Max(1, math.Abs(lhs)) || lhs < -1e-9 {
						t.Errorf("%v, N_S=%g, k=%d, E' = %v: I(A';B|E') = %.12g, H(B|E') + H(B|E'') = %.12g",
							m, ns, k, e1, lhs, rhs)
					}
					// Same (A', B, E') state through the channel form of the squashing map.
					keep := make([]int, mKeep)
					for q := range keep {
						keep[q] = q
					}
					vk := Vacuum(k)
					ch := ChannelFromSymplectic(&sEnv, 2, &vk, keep)
					var viaMap, direct Matrix
					ch.ApplyToTail(&joint, 2, &viaMap)
					direct.SelectModes(&w, cat(a, b, e1))
					if diff := viaMap.MaxAbsDiff(&direct); diff > 1e-12*engScale(&direct) {
						t.Errorf("%v, k=%d, keep %d: ApplyToTail(ChannelFromSymplectic) differs from the global state by %g", m, k, mKeep, diff)
					}
				}
			}
		}
	}
}

// Extreme parameters: transmissivity 1e-6 and 1 - 1e-6 (and gains and noises near their
// edges) still give physical, pure joint states whose B marginal is the channel's action.
func TestExtremeParametersPhysical(t *testing.T) {
	var models []Model
	for _, eta := range []float64{1e-6, 1 - 1e-6} {
		for _, nb := range []float64{0, 1, 100} {
			models = append(models, Model{Kind: ThermalLoss, Eta: eta, NB: nb})
		}
	}
	for _, g := range []float64{1 + 1e-6, 1e3} {
		for _, nb := range []float64{0, 1} {
			models = append(models, Model{Kind: Amplifier, Gain: g, NB: nb})
		}
	}
	models = append(models, Model{Kind: AdditiveNoise, Xi: 1e-6}, Model{Kind: AdditiveNoise, Xi: 1e3})
	for _, m := range models {
		if err := m.Validate(); err != nil {
			t.Fatalf("%v: %v", m, err)
		}
		d := m.Dilation()
		ch := m.Action()
		for _, ns := range []float64{0, 0.5, 100} {
			in := TMSV(ns)
			var j, vA, vB, want Matrix
			d.Joint(&in, &j)
			if err := CheckPhysical(&j); err != nil {
				t.Errorf("%v, N_S = %g: joint state: %v", m, ns, err)
				continue
			}
			if s := engEntropy(t, &j); s > 1e-7 {
				t.Errorf("%v, N_S = %g: joint state entropy %g, want 0", m, ns, s)
			}
			vA.SelectModes(&in, []int{1})
			vB.SelectModes(&j, []int{1})
			ch.Apply(&vA, &want)
			if diff := vB.MaxAbsDiff(&want); diff > 1e-12*engScale(&j) {
				t.Errorf("%v, N_S = %g: B marginal differs from the action by %g", m, ns, diff)
			}
		}
	}
}
