package gaussian

import "math"

// Spectra of the subsystems of a two-mode E' in the phase-covariant route (the TMSSplit
// case): A'E' and BE' (3 x 3) and A'BE' (4 x 4); E' (2 x 2) has a closed form. CovSpectra2
// runs cyclic Jacobi sweeps (fast_jacobi.go) and falls back on CovBatch.Spectra.

// CovScratch2 is reusable scratch for CovSpectra2. Not safe for concurrent use.
type CovScratch2 struct {
	batch CovBatch
}

// CovSpectra2 writes the spectra CovariantSpectrum(kAE, 3, .), CovariantSpectrum(kBE, 3, .)
// and CovariantSpectrum(kABE, 4, .) into out[0], out[1] and out[3] (the order of the
// phase-covariant route's entropies; out[2], the E' problem's closed form, is left to the
// caller, which computes it first so that its entropy overlaps these iterations). The
// eigenvalues come from jacobiLockstepGen (fast_jacobi.go): the same as CovBatch.Spectra's
// Householder and QL to within a few eps |K|, not the same bits. When the Jacobi sweeps
// decline (an entry not finite or too large, or no convergence) CovBatch.Spectra computes
// them (Householder and QL). Only the upper triangles of kAE, kBE and kABE are read (the
// fallback copies them to the lower ones); they may be overwritten. It does not allocate.
func (w *CovScratch2) CovSpectra2(kAE, kBE *[9]float64, kABE *[16]float64, out *[4]Spectrum) {
	var d4 [4]float64
	var da, db [3]float64
	if !jacobiLockstepGen(kABE, kAE, kBE, &d4, &da, &db) {
		mirrorUpper(kAE[:], 3)
		mirrorUpper(kBE[:], 3)
		mirrorUpper(kABE[:], 4)
		ps := [3]CovProblem{
			{K: kAE[:], N: 3, Out: &out[0]},
			{K: kBE[:], N: 3, Out: &out[1]},
			{K: kABE[:], N: 4, Out: &out[3]},
		}
		w.batch.Spectra(ps[:])
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

// mirrorUpper copies the upper triangle of the n x n matrix k to its lower triangle.
func mirrorUpper(k []float64, n int) {
	for i := 0; i < n; i++ {
		for j := i + 1; j < n; j++ {
			k[j*n+i] = k[i*n+j]
		}
	}
}
