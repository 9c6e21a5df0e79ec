package gaussian

import "math"

// CovProblem is one input of CovBatch.Spectra: CovariantSpectrum(K, N, Det, Out).
type CovProblem struct {
	K   []float64
	N   int
	Det float64
	Out *Spectrum
}

// MaxCovBatch is the largest number of problems CovBatch.Spectra takes at once.
const MaxCovBatch = 4

// CovBatch is reusable scratch for CovariantSpectrum on several independent matrices at
// once. Spectra gives the same results as calling CovariantSpectrum on each, bit for bit,
// but advances the problems' QL iterations in turn, one sweep of each per round: a sweep is
// a chain of dependent square roots and divisions, and interleaving independent chains
// lets the processor overlap them. Not safe for concurrent use.
type CovBatch struct {
	d, e, d0, e0 [MaxCovBatch][MaxModes]float64
	st           [MaxCovBatch]qlProgress
	ql           [MaxCovBatch]bool
}

// Spectra writes CovariantSpectrum(p.K, p.N, p.Det, p.Out) for every p in ps
// (len(ps) <= MaxCovBatch); each p.K is overwritten. It does not allocate.
func (b *CovBatch) Spectra(ps []CovProblem) {
	ps = ps[:min(len(ps), MaxCovBatch)]
	for j := range ps {
		p := &ps[j]
		n := p.N
		if n <= 2 {
			CovariantSpectrum(p.K, n, p.Det, p.Out)
			b.ql[j] = false
			continue
		}
		b.ql[j] = true
		d, e := b.d[j][:n], b.e[j][:n]
		symTridiagonal(p.K, n, d, e)
		copy(b.d0[j][:n], d)
		copy(b.e0[j][:n], e)
		b.st[j] = qlProgress{}
	}
	for {
		active := false
		for j := range ps {
			if b.ql[j] && !b.st[j].done {
				n := ps[j].N
				b.st[j].step(b.d[j][:n], b.e[j][:n])
				active = true
			}
		}
		if !active {
			break
		}
	}
	for j := range ps {
		if !b.ql[j] {
			continue
		}
		p := &ps[j]
		n := p.N
		d := &b.d[j]
		if b.st[j].failed {
			// As CovariantSpectrum: cyclic Jacobi on the tridiagonal matrix.
			var m Matrix
			m.Reset(n, n)
			d0, e0 := &b.d0[j], &b.e0[j]
			for i := 0; i < n; i++ {
				m.d[i*n+i] = d0[i]
				if i+1 < n {
					m.d[i*n+i+1], m.d[(i+1)*n+i] = e0[i], e0[i]
				}
			}
			SymmetricEigenvalues(&m, d[:n])
		}
		p.Out.N = n
		for i := 0; i < n; i++ {
			p.Out.Nu[i] = math.Abs(d[i])
		}
		insertionSort(p.Out.Nu[:n])
	}
}
