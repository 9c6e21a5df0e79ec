package squash

import (
	"fmt"
	"math"

	"keyceiling/gaussian"
)

// occupationParam inverts occupation: the parameter whose photon number is n.
func occupationParam(n float64) float64 {
	if n <= 0 {
		return 0
	}
	return math.Sqrt(MaxAncillaPhotons * math.Atanh(math.Min(n/MaxAncillaPhotons, 1-1e-16)))
}

// embedDilation places the dilation d of a smaller family into n modes so that the first
// keep outputs are d's kept outputs followed by fresh vacuum ancillas, d's discarded outputs
// go to discarded slots of the same parity, and the ancilla inputs keep their photon numbers
// (fresh ones are vacuum). Slot parity is what Covariant uses for its two rotation groups,
// so a phase-covariant d stays phase covariant. Conditioning on an extra uncorrelated vacuum
// does not change the CMI, so the embedded map has the same bound as d.
func embedDilation(d Dilation, n, keep int) (gaussian.Matrix, []float64, error) {
	ns, _ := d.S.Dims()
	ns /= 2
	if n < ns || keep < d.Keep || n-ns < keep-d.Keep {
		return gaussian.Matrix{}, nil, fmt.Errorf("cannot embed a %d-mode map keeping %d into %d modes keeping %d", ns, d.Keep, n, keep)
	}
	// dest[s] is the big output slot of small output slot s; fresh ancillas fill the rest.
	dest := make([]int, n)
	used := make([]bool, n)
	for s := 0; s < d.Keep; s++ {
		dest[s], used[s] = s, true
	}
	for s := d.Keep; s < ns; s++ {
		slot := -1
		for t := keep; t < n; t++ {
			if !used[t] && t%2 == s%2 {
				slot = t
				break
			}
		}
		if slot < 0 {
			return gaussian.Matrix{}, nil, fmt.Errorf("no discarded slot of parity %d for mode %d", s%2, s)
		}
		dest[s] = slot
		used[slot] = true
	}
	free := []int{}
	for t := 0; t < n; t++ {
		if !used[t] {
			free = append(free, t)
		}
	}
	for s := ns; s < n; s++ {
		dest[s] = free[s-ns]
	}
	big := gaussian.NewMatrix(2*n, 2*n)
	for s := 0; s < n; s++ {
		for q := 0; q < 2; q++ {
			row := 2*dest[s] + q
			if s < ns {
				for j := 0; j < 2*ns; j++ {
					big.Set(row, j, d.S.At(2*s+q, j))
				}
			} else {
				big.Set(row, 2*s+q, 1)
			}
		}
	}
	photons := make([]float64, n-gaussian.EnvModes)
	copy(photons, d.Photons)
	return big, photons, nil
}

// LiftCovariant returns a Covariant family of k ancillas and m kept modes based on the
// phase-covariant dilation d (from a smaller family), and the parameters at which it equals d.
func LiftCovariant(d Dilation, k, m int) (*Covariant, []float64, error) {
	c, err := NewCovariant(k, m)
	if err != nil {
		return nil, nil, err
	}
	base, photons, err := embedDilation(d, 2+k, m)
	if err != nil {
		return nil, nil, err
	}
	c.Base = &base
	p := make([]float64, c.NumParams())
	for a, n := range photons {
		p[len(p)-k+a] = occupationParam(n)
	}
	return c, p, nil
}

// LiftGeneral is LiftCovariant for the General family.
func LiftGeneral(d Dilation, k, m int) (*General, []float64, error) {
	g, err := NewGeneral(k, m)
	if err != nil {
		return nil, nil, err
	}
	base, photons, err := embedDilation(d, 2+k, m)
	if err != nil {
		return nil, nil, err
	}
	g.Base = &base
	p := make([]float64, g.NumParams())
	for a, n := range photons {
		p[len(p)-k+a] = occupationParam(n)
	}
	return g, p, nil
}
