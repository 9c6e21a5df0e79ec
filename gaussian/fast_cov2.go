package gaussian

import "math"

// Spectra of the subsystems of a two-mode E' in the phase-covariant route (the TMSSplit
// case): A'E' and BE' (3 x 3) and A'BE' (4 x 4); E' (2 x 2) has a closed form. CovSpectra2
// runs cyclic Jacobi sweeps (fast_jacobi.go); its fallback covSpectra2QL gives the same
// results as CovBatch.Spectra on these problems, bit for bit: the same Householder steps,
// the same QL sweeps and deflations, written for fixed sizes (arrays, no slices) and
// advanced in turn.

// qlFixed is tridiagonalQL's state on one matrix of order n <= 4 held in arrays.
type qlFixed struct {
	d, e         [4]float64
	n, l, iter   int
	done, failed bool
}

// step is qlProgress.step on q's arrays.
func (q *qlFixed) step() {
	const eps = 0x1p-52
	n := q.n
	for ; q.l < n; q.l, q.iter = q.l+1, 0 {
		l := q.l
		m := l
		for ; m < n-1; m++ {
			if math.Abs(q.e[m&3]) <= eps*(math.Abs(q.d[m&3])+math.Abs(q.d[(m+1)&3])) {
				break
			}
		}
		if m == l {
			continue
		}
		if m == l+1 {
			// symmetric2x2 written out: the call is not inlined and this is the hot path.
			a, b, c := q.d[l&3], q.e[l&3], q.d[(l+1)&3]
			t, h := (a+c)/2, (a-c)/2
			s := pythag(h, b)
			big := t + s
			if t < 0 {
				big = t - s
			}
			small := 0.0
			if big != 0 {
				small = (a*c - b*b) / big
			}
			q.d[l&3], q.d[(l+1)&3], q.e[l&3] = big, small, 0
			q.l, q.iter = l+1, 0
			return
		}
		if q.iter == 30 {
			q.done, q.failed = true, true
			return
		}
		q.sweep(l, m)
		q.iter++
		return
	}
	q.done = true
}

// sweep is qlSweep on q's arrays.
func (q *qlFixed) sweep(l, m int) {
	d, e := &q.d, &q.e
	g := (d[(l+1)&3] - d[l&3]) / (2 * e[l&3])
	r := math.Sqrt(g*g + 1)
	if g >= 0 {
		g = d[m&3] - d[l&3] + e[l&3]/(g+r)
	} else {
		g = d[m&3] - d[l&3] + e[l&3]/(g-r)
	}
	s, c, p := 1.0, 1.0, 0.0
	for i := m - 1; i >= l; i-- {
		ei := e[i&3]
		f := s * ei
		b := c * ei
		if h := g*g + f*f; h > 0x1p-900 && h < 0x1p900 {
			r = math.Sqrt(h)
		} else {
			r = math.Hypot(g, f)
		}
		e[(i+1)&3] = r
		if r == 0 {
			d[(i+1)&3] -= p
			e[m&3] = 0
			return
		}
		s = f / r
		c = g / r
		g = d[(i+1)&3] - p
		r = (d[i&3]-g)*s + 2*c*b
		p = s * r
		d[(i+1)&3] = g + p
		g = c*r - b
	}
	d[l&3] -= p
	e[l&3] = g
	e[m&3] = 0
}

// finish writes the moduli of q's eigenvalues, sorted, into out; on failure (more than 30
// sweeps for one eigenvalue) it uses the cyclic Jacobi method on the tridiagonal matrix
// (d0, e0) as CovariantSpectrum does.
func (q *qlFixed) finish(d0, e0 *[4]float64, out *Spectrum) {
	n := q.n
	if q.failed {
		var m Matrix
		m.Reset(n, n)
		for i := 0; i < n; i++ {
			m.d[i*n+i] = d0[i]
			if i+1 < n {
				m.d[i*n+i+1], m.d[(i+1)*n+i] = e0[i], e0[i]
			}
		}
		SymmetricEigenvalues(&m, q.d[:n])
	}
	out.N = n
	for i := 0; i < n; i++ {
		out.Nu[i] = math.Abs(q.d[i])
	}
	insertionSort(out.Nu[:n])
}

// symTridiagonal4 is symTridiagonalGeneric for n = 4 on an array: the same floating-point
// operations in the same order.
func symTridiagonal4(a *[16]float64, d, e *[4]float64) {
	var v, w [3]float64
	// Step j = 0: trailing 3 x 3 block.
	{
		x0, x1, x2 := a[4], a[8], a[12]
		s := x0*x0 + x1*x1 + x2*x2
		if s == 0 {
			e[0] = 0
		} else {
			v0, alpha, beta := householder(x0, math.Sqrt(s))
			v = [3]float64{v0, x1, x2}
			pv := 0.0
			for i := 0; i < 3; i++ {
				o := (1+i)*4 + 1
				t := a[o]*v[0] + a[o+1]*v[1] + a[o+2]*v[2]
				w[i] = beta * t
				pv += w[i] * v[i]
			}
			h := beta / 2 * pv
			for i := 0; i < 3; i++ {
				w[i] -= h * v[i]
			}
			for i := 0; i < 3; i++ {
				o := (1+i)*4 + 1
				vi, wi := v[i], w[i]
				a[o] -= vi*w[0] + wi*v[0]
				a[o+1] -= vi*w[1] + wi*v[1]
				a[o+2] -= vi*w[2] + wi*v[2]
			}
			e[0] = alpha
		}
	}
	// Step j = 1: trailing 2 x 2 block.
	{
		x0, x1 := a[9], a[13]
		s := x0*x0 + x1*x1
		if s == 0 {
			e[1] = 0
		} else {
			v0, alpha, beta := householder(x0, math.Sqrt(s))
			v1 := x1
			b00, b01, b10, b11 := a[10], a[11], a[14], a[15]
			w0 := beta * (b00*v0 + b01*v1)
			pv := w0 * v0
			w1 := beta * (b10*v0 + b11*v1)
			pv += w1 * v1
			h := beta / 2 * pv
			w0 -= h * v0
			w1 -= h * v1
			a[10] = b00 - (v0*w0 + w0*v0)
			a[11] = b01 - (v0*w1 + w0*v1)
			a[14] = b10 - (v1*w0 + w1*v0)
			a[15] = b11 - (v1*w1 + w1*v1)
			e[1] = alpha
		}
	}
	d[0], d[1], d[2], d[3] = a[0], a[5], a[10], a[15]
	e[2] = a[11]
	e[3] = 0
}

// CovScratch2 is reusable scratch for CovSpectra2. Not safe for concurrent use.
type CovScratch2 struct {
	q      [3]qlFixed
	d0, e0 [3][4]float64
}

// CovSpectra2 writes the spectra CovariantSpectrum(kAE, 3, .), CovariantSpectrum(kBE, 3, .)
// and CovariantSpectrum(kABE, 4, .) into out[0], out[1] and out[3] (the order of the
// phase-covariant route's entropies; out[2], the E' problem's closed form, is left to the
// caller, which computes it first so that its entropy overlaps these iterations). The
// eigenvalues come from jacobiLockstepGen (fast_jacobi.go): the same as CovBatch.Spectra's
// Householder and QL to within a few eps |K|, not the same bits. When the Jacobi sweeps
// decline (an entry not finite or too large, or no convergence) covSpectra2QL computes
// them, as CovBatch.Spectra does, bit for bit. Only the upper triangles of kAE, kBE and
// kABE are read (the fallback copies them to the lower ones); they may be overwritten. It
// does not allocate.
func (w *CovScratch2) CovSpectra2(kAE, kBE *[9]float64, kABE *[16]float64, out *[4]Spectrum) {
	var d4 [4]float64
	var da, db [3]float64
	if !jacobiLockstepGen(kABE, kAE, kBE, &d4, &da, &db) {
		mirrorUpper(kAE[:], 3)
		mirrorUpper(kBE[:], 3)
		mirrorUpper(kABE[:], 4)
		w.covSpectra2QL(kAE, kBE, kABE, out)
		return
	}
	moduliSorted3(&da, &out[0])
	moduliSorted3(&db, &out[1])
	moduliSorted4(&d4, &out[3])
}

// moduliSorted3 and moduliSorted4 write the moduli of the eigenvalues d, ascending, into
// out, by sorting networks (Knuth, The Art of Computer Programming 3, sec. 5.3.4) on the
// moduli's bit patterns, which order as the moduli do (IEEE 754-2019, sec. 3.4): each
// comparator is a conditional move, where an insertion sort of eigenvalues in random order
// mispredicts its branches and the floating-point min and max take longer sequences. The
// moduli are finite (jacobiLockstepGen returned true).
func moduliSorted3(d *[3]float64, out *Spectrum) {
	a, b, c := absBits(d[0]), absBits(d[1]), absBits(d[2])
	a, b = sort2Bits(a, b)
	b, c = sort2Bits(b, c)
	a, b = sort2Bits(a, b)
	out.N = 3
	out.Nu[0], out.Nu[1], out.Nu[2] = math.Float64frombits(a), math.Float64frombits(b), math.Float64frombits(c)
}

func moduliSorted4(d *[4]float64, out *Spectrum) {
	a, b, c, e := absBits(d[0]), absBits(d[1]), absBits(d[2]), absBits(d[3])
	a, b = sort2Bits(a, b)
	c, e = sort2Bits(c, e)
	a, c = sort2Bits(a, c)
	b, e = sort2Bits(b, e)
	b, c = sort2Bits(b, c)
	out.N = 4
	out.Nu[0], out.Nu[1], out.Nu[2], out.Nu[3] = math.Float64frombits(a), math.Float64frombits(b), math.Float64frombits(c), math.Float64frombits(e)
}

// sort2Bits returns min(a, b), max(a, b).
func sort2Bits(a, b uint64) (uint64, uint64) {
	lo := a
	if b < a {
		lo = b
	}
	return lo, a ^ b ^ lo
}

// covSpectra2QL is CovSpectra2 by Householder tridiagonalisation and implicit QL: the same
// steps as CovBatch.Spectra on these three problems, bit for bit, written for fixed sizes
// and with the three QL problems advanced in turn. The matrices are overwritten.
func (w *CovScratch2) covSpectra2QL(kAE, kBE *[9]float64, kABE *[16]float64, out *[4]Spectrum) {
	q := &w.q
	// The A'BE' problem first: its chain of sweeps is the longest.
	symTridiagonal4(kABE, &q[2].d, &q[2].e)
	symTridiagonal3(kAE[:], q[0].d[:3], q[0].e[:3])
	symTridiagonal3(kBE[:], q[1].d[:3], q[1].e[:3])
	for j := range q {
		q[j].n = 3
		q[j].l, q[j].iter, q[j].done, q[j].failed = 0, 0, false, false
		w.d0[j], w.e0[j] = q[j].d, q[j].e
	}
	q[2].n = 4
	for !(q[0].done && q[1].done && q[2].done) {
		if !q[2].done {
			q[2].step()
		}
		if !q[0].done {
			q[0].step()
		}
		if !q[1].done {
			q[1].step()
		}
	}
	q[0].finish(&w.d0[0], &w.e0[0], &out[0])
	q[1].finish(&w.d0[1], &w.e0[1], &out[1])
	q[2].finish(&w.d0[2], &w.e0[2], &out[3])
}

// mirrorUpper copies the upper triangle of the n x n matrix k to its lower triangle.
func mirrorUpper(k []float64, n int) {
	for i := 0; i < n; i++ {
		for j := i + 1; j < n; j++ {
			k[j*n+i] = k[i*n+j]
		}
	}
}
