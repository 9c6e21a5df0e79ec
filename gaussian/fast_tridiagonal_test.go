package gaussian

import (
	"math"
	"math/rand/v2"
	"testing"
)

// symTridiagonal3 gives symTridiagonal's generic results bit for bit, and CovariantSpectrum
// agrees with the cyclic Jacobi method to eps |K| on random, graded and degenerate 3 x 3 and
// 4 x 4 matrices.
func TestSymTridiagonal3MatchesGeneric(t *testing.T) {
	rng := rand.New(rand.NewPCG(21, 22))
	for trial := 0; trial < 200000; trial++ {
		var k [9]float64
		for i := 0; i < 3; i++ {
			for j := 0; j <= i; j++ {
				v := rng.NormFloat64() * []float64{1, 1e-8, 1e8}[rng.IntN(3)]
				if rng.IntN(5) == 0 {
					v = 0
				}
				k[i*3+j], k[j*3+i] = v, v
			}
		}
		k1, k2 := k, k
		var d1, e1, d2, e2 [3]float64
		symTridiagonal3(k1[:], d1[:], e1[:])
		symTridiagonalGeneric(k2[:], 3, d2[:], e2[:])
		if d1 != d2 || e1 != e2 {
			t.Fatalf("%v: specialised %v %v, generic %v %v", k, d1, e1, d2, e2)
		}
	}
}

func TestCovariantSpectrumAgainstJacobi(t *testing.T) {
	rng := rand.New(rand.NewPCG(23, 24))
	worst := 0.0
	var batch CovBatch
	for trial := 0; trial < 20000; trial++ {
		n := 3 + trial%2
		// K = Q diag(lam) Q^T with |lam| >= 1, some exactly repeated, some nearly.
		var lam [4]float64
		for i := 0; i < n; i++ {
			lam[i] = (1 + 50*rng.Float64()*rng.Float64()) * float64(2*rng.IntN(2)-1)
		}
		switch trial % 5 {
		case 1:
			lam[1] = lam[0]
		case 2:
			lam[1], lam[2] = lam[0], lam[0]
		case 3:
			lam[1] = lam[0] * (1 + 1e-12)
		case 4:
			lam[1], lam[0] = 1, 1
		}
		q := randomOrthogonal(rng, n)
		var k [16]float64
		for i := 0; i < n; i++ {
			for j := 0; j < n; j++ {
				s := 0.0
				for l := 0; l < n; l++ {
					s += q[i*n+l] * lam[l] * q[j*n+l]
				}
				k[i*n+j] = s
			}
		}
		for i := 0; i < n; i++ { // exact symmetry
			for j := 0; j < i; j++ {
				k[i*n+j] = k[j*n+i]
			}
		}
		scale := 0.0
		for _, v := range k[:n*n] {
			scale = math.Max(scale, math.Abs(v))
		}
		var m Matrix
		m.Reset(n, n)
		copy(m.d[:n*n], k[:n*n])
		var ev [MaxModes]float64
		SymmetricEigenvalues(&m, ev[:n])
		for i := 0; i < n; i++ {
			ev[i] = math.Abs(ev[i])
		}
		insertionSort(ev[:n])
		var sp, sb Spectrum
		kb := k
		CovariantSpectrum(k[:n*n], n, 0, &sp)
		ps := [1]CovProblem{{K: kb[:n*n], N: n, Out: &sb}}
		batch.Spectra(ps[:])
		if sb != sp {
			t.Fatalf("trial %d: CovBatch %v, CovariantSpectrum %v", trial, sb, sp)
		}
		for i := 0; i < n; i++ {
			d := math.Abs(sp.Nu[i]-ev[i]) / scale
			worst = math.Max(worst, d)
			if d > 1e-14 {
				t.Fatalf("trial %d, eigenvalues %v: CovariantSpectrum %v, Jacobi %v", trial, lam[:n], sp.Nu[:n], ev[:n])
			}
		}
	}
	t.Logf("largest difference %.2g |K|", worst)
}

func randomOrthogonal(rng *rand.Rand, n int) []float64 {
	q := make([]float64, n*n)
	for i := range q {
		q[i] = rng.NormFloat64()
	}
	// Gram-Schmidt on rows, twice.
	for pass := 0; pass < 2; pass++ {
		for i := 0; i < n; i++ {
			for j := 0; j < i; j++ {
				d := 0.0
				for l := 0; l < n; l++ {
					d += q[i*n+l] * q[j*n+l]
				}
				for l := 0; l < n; l++ {
					q[i*n+l] -= d * q[j*n+l]
				}
			}
			s := 0.0
			for l := 0; l < n; l++ {
				s += q[i*n+l] * q[i*n+l]
			}
			s = math.Sqrt(s)
			for l := 0; l < n; l++ {
				q[i*n+l] /= s
			}
		}
	}
	return q
}

// CovBatch.Spectra gives CovariantSpectrum's results bit for bit.
func TestCovBatchMatchesSingle(t *testing.T) {
	rng := rand.New(rand.NewPCG(25, 26))
	var b CovBatch
	for trial := 0; trial < 20000; trial++ {
		cnt := 1 + rng.IntN(MaxCovBatch)
		var ks, ks2 [MaxCovBatch][MaxModes * MaxModes]float64
		var outs, refs [MaxCovBatch]Spectrum
		var ps [MaxCovBatch]CovProblem
		for j := 0; j < cnt; j++ {
			n := 1 + rng.IntN(6)
			for i := 0; i < n; i++ {
				for l := 0; l <= i; l++ {
					v := rng.NormFloat64()
					if rng.IntN(4) == 0 {
						v = 0
					}
					if trial%3 == 0 && i == l {
						v = 1
					}
					ks[j][i*n+l], ks[j][l*n+i] = v, v
				}
			}
			ks2[j] = ks[j]
			det := 1 + rng.Float64()
			ps[j] = CovProblem{K: ks[j][:n*n], N: n, Det: det, Out: &outs[j]}
			CovariantSpectrum(ks2[j][:n*n], n, det, &refs[j])
		}
		b.Spectra(ps[:cnt])
		for j := 0; j < cnt; j++ {
			if outs[j] != refs[j] {
				t.Fatalf("trial %d problem %d: batch %v, single %v", trial, j, outs[j], refs[j])
			}
		}
	}
}
