package gaussian

import (
	"math"
	"math/big"
	"math/rand/v2"
	"os"
	"testing"

	"keyceiling/gaussian/internal/genjacobi/gen"
)

// jacobiReference is jacobiLockstepGen in loop form: the same floating-point operations in
// the same order (fast_jacobi.go explains the rotation and the stopping test).
func jacobiReference(k4 *[16]float64, k3a, k3b *[9]float64, d4 *[4]float64, d3a, d3b *[3]float64) bool {
	return jacobiReferenceLimit(k4, k3a, k3b, d4, d3a, d3b, jacobiMaxSweeps)
}

// refQuadraticStops counts the reference's stops by the quadratic test (not the linear).
var refQuadraticStops int

// jacobiReferenceLimit is jacobiReference with at most maxSweeps sweeps.
func jacobiReferenceLimit(k4 *[16]float64, k3a, k3b *[9]float64, d4 *[4]float64, d3a, d3b *[3]float64, maxSweeps int) bool {
	const eps = 0x1p-52
	type prob struct {
		n      int
		a      [4][4]float64 // upper triangle used
		rounds [3][][2]int
	}
	ps := [3]prob{
		{n: 4, rounds: [3][][2]int{{{0, 1}, {2, 3}}, {{0, 2}, {1, 3}}, {{0, 3}, {1, 2}}}},
		{n: 3, rounds: [3][][2]int{{{0, 1}}, {{0, 2}}, {{1, 2}}}},
		{n: 3, rounds: [3][][2]int{{{0, 1}}, {{0, 2}}, {{1, 2}}}},
	}
	src := [3][]float64{k4[:], k3a[:], k3b[:]}
	mx := 0.0
	for pi := range ps {
		p := &ps[pi]
		for i := 0; i < p.n; i++ {
			for j := i; j < p.n; j++ {
				p.a[i][j] = src[pi][i*p.n+j]
				mx = max(mx, math.Abs(p.a[i][j]))
			}
		}
	}
	if !(mx <= jacobiMaxEntry) {
		return false
	}
	at := func(p *prob, i, j int) *float64 {
		if i > j {
			i, j = j, i
		}
		return &p.a[i][j]
	}
	// stopped applies the stopping tests: the linear test, and from sweep
	// jacobiQuadraticFrom on the quadratic one (jacobiSeparated) for the matrices failing it.
	stopped := func(sweep int) bool {
		converged, separated := true, true
		for pi := range ps {
			p := &ps[pi]
			tol, off, gap := 0.0, 0.0, math.Inf(1)
			for i := 0; i < p.n; i++ {
				tol = max(tol, math.Abs(p.a[i][i]))
				for j := i + 1; j < p.n; j++ {
					off = max(off, math.Abs(p.a[i][j]))
					gap = min(gap, math.Abs(p.a[i][i]-p.a[j][j]))
				}
			}
			tol *= eps
			lin := off <= tol
			converged = converged && lin
			separated = separated && (lin || jacobiSeparated(p.n, off, tol, gap))
		}
		if converged || sweep >= jacobiQuadraticFrom && separated {
			if !converged {
				refQuadraticStops++
			}
			for i := 0; i < 4; i++ {
				d4[i] = ps[0].a[i][i]
			}
			for i := 0; i < 3; i++ {
				d3a[i], d3b[i] = ps[1].a[i][i], ps[2].a[i][i]
			}
			return true
		}
		return false
	}
	for sweep := 0; sweep < maxSweeps; sweep++ {
		if stopped(sweep) {
			return true
		}
		for r := 0; r < 3; r++ {
			// Within a sweep, the tests run only where the quadratic one may pass.
			if r > 0 && sweep >= jacobiQuadraticFrom && stopped(sweep) {
				return true
			}
			type rot struct {
				p       *prob
				i, j    int
				c, s, h float64
			}
			var rots []rot
			for pi := range ps {
				p := &ps[pi]
				for _, pq := range p.rounds[r] {
					i, j := pq[0], pq[1]
					d := p.a[j][j] - p.a[i][i]
					b := 2 * p.a[i][j]
					rr := math.Sqrt(d*d + b*b)
					n := rr + math.Abs(d)
					w := 2 * rr * n
					c, s, h := 1.0, 0.0, 0.0
					if w >= jacobiMinW {
						iw := 1 / math.Sqrt(w)
						c = n * iw
						s = b * math.Copysign(iw, d)
						h = math.Copysign(b*b*rr*(iw*iw), d)
					}
					rots = append(rots, rot{p, i, j, c, s, h})
				}
			}
			for _, x := range rots {
				p, i, j := x.p, x.i, x.j
				p.a[i][i], p.a[j][j], p.a[i][j] = p.a[i][i]-x.h, p.a[j][j]+x.h, 0
				for k := 0; k < p.n; k++ {
					if k == i || k == j {
						continue
					}
					kp, kq := at(p, k, i), at(p, k, j)
					*kp, *kq = x.c**kp-x.s**kq, x.s**kp+x.c**kq
				}
			}
		}
	}
	return false
}

// randomCovK returns the K = L^T eta L matrices of TestCovSpectra2QLMatchesBatch's kind:
// E' (2 x 2), A'E' and BE' (3 x 3), A'BE' (4 x 4), for L random lower triangular with graded
// rows and zero entries, or near the identity (degenerate spectra), and random signs eta.
func randomCovK(rng *rand.Rand, trial int) (kE [4]float64, kAE, kBE [9]float64, kABE [16]float64) {
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
	if trial%7 == 0 {
		l = [16]float64{1, 0, 0, 0, 0, 1, 0, 0, 0, 0, 1, 0, 0, 0, 0, 1}
		l[rng.IntN(16)] = float64(rng.IntN(3))
	}
	var eta [4]float64
	for i := range eta {
		eta[i] = float64(2*rng.IntN(2) - 1)
	}
	kOf := func(k []float64, n int, rows [4][4]float64) {
		for i := 0; i < n; i++ {
			for r := 0; r < n; r++ {
				f := eta[r] * rows[r][i]
				for j := 0; j < n; j++ {
					k[i*n+j] += f * rows[r][j]
				}
			}
		}
	}
	var rows [4][4]float64
	for r := 0; r < 4; r++ {
		copy(rows[r][:], l[r*4:r*4+4])
	}
	rowsBE := rows
	rowsBE[2] = rows[3]
	kOf(kE[:], 2, rows)
	kOf(kAE[:], 3, rows)
	kOf(kBE[:], 3, rowsBE)
	kOf(kABE[:], 4, rows)
	return
}

// The written-out sweeps are the loop form's, bit for bit, including the declines.
func TestJacobiLockstepMatchesReference(t *testing.T) {
	rng := rand.New(rand.NewPCG(41, 42))
	refQuadraticStops = 0
	defer func() {
		t.Logf("%d of 50000 stopped by the quadratic test", refQuadraticStops)
		if refQuadraticStops < 1000 {
			t.Errorf("only %d stops by the quadratic test: it is hardly exercised", refQuadraticStops)
		}
	}()
	for trial := 0; trial < 50000; trial++ {
		_, kAE, kBE, kABE := randomCovK(rng, trial)
		switch trial {
		case 1:
			kABE[5] = math.NaN()
		case 2:
			kAE[1], kAE[3] = math.Inf(1), math.Inf(1)
		case 3:
			kBE[8] = 0x1p401
		}
		var g4, r4 [4]float64
		var ga, gb, ra, rb [3]float64
		a4, aa, ab := kABE, kAE, kBE
		okG := jacobiLockstepGen(&a4, &aa, &ab, &g4, &ga, &gb)
		okR := jacobiReference(&kABE, &kAE, &kBE, &r4, &ra, &rb)
		if okG != okR || g4 != r4 || ga != ra || gb != rb {
			t.Fatalf("trial %d: generated %v %v %v %v, reference %v %v %v %v", trial, okG, g4, ga, gb, okR, r4, ra, rb)
		}
		if trial >= 1 && trial <= 3 && okG {
			t.Fatalf("trial %d: a non-finite or too large entry was accepted", trial)
		}
	}
}

// The generated file is what the generator writes now.
func TestJacobiGeneratedUpToDate(t *testing.T) {
	have, err := os.ReadFile("fast_jacobi_gen.go")
	if err != nil {
		t.Fatal(err)
	}
	if string(have) != gen.Source() {
		t.Fatal("fast_jacobi_gen.go is stale: run go generate ./gaussian")
	}
}

// CovSpectra2 (Jacobi) against CovBatch.Spectra (Householder + QL, an independent algorithm)
// and against 256-bit Jacobi eigenvalues of the same float64 matrices (bigJacobi), on the
// random, graded and degenerate matrices of TestCovSpectra2QLMatchesBatch. The accuracy class
// of both float64 methods is absolute: a small multiple of eps times the matrix norm
// (Golub and Van Loan, Matrix Computations, 4th ed., secs. 8.3 and 8.5). The test requires
// 8 eps max|K_ij| from the 256-bit values (measured: 4.9) and 32 from QL's (measured: 13.5,
// QL's own error included) and logs the largest differences seen.
func TestCovSpectra2JacobiAccuracy(t *testing.T) {
	const eps = 0x1p-52
	rng := rand.New(rand.NewPCG(43, 44))
	var w CovScratch2
	var b CovBatch
	worstQL, worstBig := 0.0, 0.0
	trials := 20000
	if testing.Short() {
		trials = 2000
	}
	for trial := 0; trial < trials; trial++ {
		kE, kAE, kBE, kABE := randomCovK(rng, trial)
		detE := 1 + rng.Float64()
		var out, ref [4]Spectrum
		kb, kc, kd := kAE, kBE, kABE
		CovariantSpectrum(kE[:], 2, detE, &out[2])
		w.CovSpectra2(&kb, &kc, &kd, &out)
		ref = batchSpectra(&b, &kE, &kAE, &kBE, &kABE, detE)
		for pi, k := range [][]float64{kAE[:], kBE[:], nil, kABE[:]} {
			if k == nil {
				continue
			}
			n := ref[pi].N
			norm := 0.0
			for _, x := range k {
				norm = max(norm, math.Abs(x))
			}
			tolQL, tol := 32*eps*norm, 8*eps*norm
			for i := 0; i < n; i++ {
				if e := math.Abs(out[pi].Nu[i] - ref[pi].Nu[i]); !(e <= tolQL) {
					t.Fatalf("trial %d problem %d: Jacobi %v, QL %v: error %g > %g", trial, pi, out[pi].Nu[:n], ref[pi].Nu[:n], e, tolQL)
				} else if norm > 0 {
					worstQL = max(worstQL, e/(eps*norm))
				}
			}
			if trial%10 != 0 {
				continue
			}
			bm := NewBigMatrix(n, n)
			for i := 0; i < n; i++ {
				for j := 0; j < n; j++ {
					bm.Set(i, j, new(big.Float).SetFloat64(k[i*n+j]))
				}
			}
			ev, _, err := bigJacobi(bm, false)
			if err != nil {
				t.Fatal(err)
			}
			exact := make([]float64, n)
			for i := range exact {
				exact[i] = math.Abs(toFloat64(ev[i]))
			}
			insertionSort(exact)
			for i := 0; i < n; i++ {
				if e := math.Abs(out[pi].Nu[i] - exact[i]); !(e <= tol) {
					t.Fatalf("trial %d problem %d: Jacobi %v, 256-bit %v: error %g > %g", trial, pi, out[pi].Nu[:n], exact, e, tol)
				} else if norm > 0 {
					worstBig = max(worstBig, e/(eps*norm))
				}
			}
		}
	}
	t.Logf("largest differences, in units of eps max|K_ij|: from QL %.2f, from 256-bit Jacobi %.2f", worstQL, worstBig)
}

// A matrix the sweeps decline (an entry above jacobiMaxEntry) gets CovBatch.Spectra's
// spectra (Householder and QL) from the upper triangles.
func TestCovSpectra2FallsBackToQL(t *testing.T) {
	rng := rand.New(rand.NewPCG(45, 46))
	kE, kAE, kBE, kABE := randomCovK(rng, 1)
	kABE[0] = 0x1p450
	mirrorUpper(kAE[:], 3)
	mirrorUpper(kBE[:], 3)
	mirrorUpper(kABE[:], 4)
	var w CovScratch2
	var b CovBatch
	var out [4]Spectrum
	kb, kc, kd := kAE, kBE, kABE
	CovariantSpectrum(kE[:], 2, 1.5, &out[2])
	w.CovSpectra2(&kb, &kc, &kd, &out)
	if ref := batchSpectra(&b, &kE, &kAE, &kBE, &kABE, 1.5); out != ref {
		t.Fatalf("CovSpectra2 %v, CovBatch.Spectra %v", out, ref)
	}
}

// The sorting networks of moduliSorted3 and moduliSorted4 order every arrangement as an
// insertion sort does: all permutations of values with ties, zeros and signs.
func TestModuliSortedNetworks(t *testing.T) {
	vals := []float64{0, 1, -1, 2.5, -2.5, 3, 1}
	var idx [4]int
	var rec func(k, n int)
	rec = func(k, n int) {
		if k == n {
			var d []float64
			for i := 0; i < n; i++ {
				d = append(d, vals[idx[i]])
			}
			want := make([]float64, n)
			for i, x := range d {
				want[i] = math.Abs(x)
			}
			insertionSort(want)
			var out Spectrum
			if n == 3 {
				moduliSorted3((*[3]float64)(d), &out)
			} else {
				moduliSorted4((*[4]float64)(d), &out)
			}
			if out.N != n {
				t.Fatalf("%v: N = %d", d, out.N)
			}
			for i := 0; i < n; i++ {
				if math.Float64bits(out.Nu[i]) != math.Float64bits(want[i]) {
					t.Fatalf("%v: network %v, insertion sort %v", d, out.Nu[:n], want)
				}
			}
			return
		}
		for i := range vals {
			idx[k] = i
			rec(k+1, n)
		}
	}
	rec(0, 3)
	rec(0, 4)
}

// jacobiSeparated's claim, checked against 256-bit eigenvalues: whenever it accepts a matrix
// D + E (D diagonal, E small off-diagonal), every sorted eigenvalue is within t/2 of the
// sorted diagonal. The matrices have well separated, close and equal diagonal entries and
// off-diagonal entries from 1e-20 to 1e-6 of the norm; a cluster (equal entries) must be
// refused.
func TestJacobiSeparatedBound(t *testing.T) {
	const eps = 0x1p-52
	rng := rand.New(rand.NewPCG(49, 50))
	accepted := 0
	for trial := 0; trial < 3000; trial++ {
		n := 3 + trial%2
		var a [4][4]float64
		for i := 0; i < n; i++ {
			a[i][i] = 10 * rng.NormFloat64()
		}
		cluster := trial%5 == 0
		if cluster {
			a[1][1] = a[0][0]
		} else if trial%5 == 1 {
			a[1][1] = a[0][0] * (1 + 1e-9*rng.NormFloat64())
		}
		mag := math.Pow(10, -6-14*rng.Float64())
		for i := 0; i < n; i++ {
			for j := i + 1; j < n; j++ {
				a[i][j] = mag * 10 * rng.NormFloat64()
				a[j][i] = a[i][j]
			}
		}
		tol := 0.0
		for i := 0; i < n; i++ {
			tol = max(tol, math.Abs(a[i][i]))
		}
		tol *= eps
		off, gap := 0.0, math.Inf(1)
		for i := 0; i < n; i++ {
			for j := i + 1; j < n; j++ {
				off = max(off, math.Abs(a[i][j]))
				gap = min(gap, math.Abs(a[i][i]-a[j][j]))
			}
		}
		if !jacobiSeparated(n, off, tol, gap) {
			continue
		}
		if cluster {
			t.Fatalf("trial %d: a cluster was accepted: %v", trial, a)
		}
		accepted++
		bm := NewBigMatrix(n, n)
		for i := 0; i < n; i++ {
			for j := 0; j < n; j++ {
				bm.Set(i, j, new(big.Float).SetFloat64(a[i][j]))
			}
		}
		ev, _, err := bigJacobi(bm, false)
		if err != nil {
			t.Fatal(err)
		}
		exact := make([]float64, n)
		diag := make([]float64, n)
		for i := range exact {
			exact[i] = toFloat64(ev[i])
			diag[i] = a[i][i]
		}
		sortFloats(exact)
		sortFloats(diag)
		for i := range exact {
			if e := math.Abs(exact[i] - diag[i]); !(e <= tol/2) {
				t.Fatalf("trial %d: accepted, but eigenvalue %g is %g from the diagonal %g (t/2 = %g)", trial, exact[i], e, diag[i], tol/2)
			}
		}
	}
	if accepted < 500 {
		t.Fatalf("only %d matrices accepted: the test does not exercise the bound", accepted)
	}
	t.Logf("%d of 3000 accepted", accepted)
}

// batchSpectra is CovBatch.Spectra on copies of the four problems, in CovSpectra2's order
// (A'E', BE', E', A'BE').
func batchSpectra(b *CovBatch, kE *[4]float64, kAE, kBE *[9]float64, kABE *[16]float64, detE float64) (ref [4]Spectrum) {
	ps := [4]CovProblem{
		{K: append([]float64(nil), kAE[:]...), N: 3, Out: &ref[0]},
		{K: append([]float64(nil), kBE[:]...), N: 3, Out: &ref[1]},
		{K: append([]float64(nil), kE[:]...), N: 2, Det: detE, Out: &ref[2]},
		{K: append([]float64(nil), kABE[:]...), N: 4, Out: &ref[3]},
	}
	b.Spectra(ps[:])
	return ref
}
