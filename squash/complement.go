package squash

import (
	"fmt"

	"keyceiling/gaussian"
)

// HalfByComplement computes 1/2 I(A';B|E') for the family member d by a second formula:
// for a pure global state, I(A';B|E') = H(B|E') + H(B|Ed), where Ed (E-double-prime in the physics notes) holds everything the
// squashing map's dilation discards (its discarded outputs and the purifications of its
// thermal ancillas). The global state is built explicitly, from vacuum, as the product of
// the preparation of the input, the environment and the ancillas, the channel's dilation and
// the map's dilation; A' never appears in the formula. It shares no code with Evaluator.Half
// beyond the symplectic building blocks, so agreement of the two is a check of both (the
// identity is derived in the project's physics notes). Slow and allocating; for tests and
// certificates, not for searches.
func HalfByComplement(model gaussian.Model, in Input, d Dilation) (float64, error) {
	if err := model.Validate(); err != nil {
		return 0, err
	}
	k := len(d.Photons)
	nOut, _ := d.S.Dims()
	nOut /= 2
	if nOut != gaussian.EnvModes+k {
		return 0, fmt.Errorf("dilation on %d modes for %d ancillas", nOut, k)
	}
	// Vacuum modes: 0 A', 1 A, 2 env1, 3 env2, 4..3+k ancillas, 4+k..3+2k their purifiers.
	n := 4 + 2*k
	dim := 2 * n
	t := identity(dim)
	embed := func(s *gaussian.Matrix, modes []int) {
		r, _ := s.Dims()
		full := identity(dim)
		for a := 0; a < r; a++ {
			for b := 0; b < r; b++ {
				full[2*modes[a/2]+a%2][2*modes[b/2]+b%2] = s.At(a, b)
			}
		}
		t = mul(full, t)
	}
	inF := in.Factor()
	embed(&inF, []int{0, 1})
	dil := model.Dilation()
	embed(&dil.EnvFactor, []int{2, 3})
	for a := 0; a < k; a++ {
		f := gaussian.TMSVFactor(d.Photons[a])
		embed(&f, []int{4 + a, 4 + k + a})
	}
	embed(&dil.U, []int{0, 1, 2, 3})
	sModes := make([]int, nOut)
	for i := range sModes {
		sModes[i] = 2 + i
	}
	embed(&d.S, sModes)
	// Covariance V = T T^T. E' = S outputs 0..Keep-1 (global modes 2..1+Keep).
	var eKept, eDisc []int
	for i := 0; i < nOut; i++ {
		if i < d.Keep {
			eKept = append(eKept, 2+i)
		} else {
			eDisc = append(eDisc, 2+i)
		}
	}
	for a := 0; a < k; a++ {
		eDisc = append(eDisc, 4+k+a)
	}
	entropy := func(modes []int) (float64, error) {
		if 2*len(modes) > gaussian.MaxDim {
			return 0, fmt.Errorf("subsystem of %d modes exceeds %d", len(modes), gaussian.MaxModes)
		}
		v := gaussian.NewMatrix(2*len(modes), 2*len(modes))
		for a := 0; a < 2*len(modes); a++ {
			ra := t[2*modes[a/2]+a%2]
			for b := 0; b < 2*len(modes); b++ {
				rb := t[2*modes[b/2]+b%2]
				s := 0.0
				for j := range ra {
					s += ra[j] * rb[j]
				}
				v.Set(a, b, s)
			}
		}
		return gaussian.Entropy(&v)
	}
	with := func(first int, rest []int) []int { return append([]int{first}, rest...) }
	sBE1, err := entropy(with(1, eKept))
	if err != nil {
		return 0, err
	}
	sE1, err := entropy(eKept)
	if err != nil {
		return 0, err
	}
	sBE2, err := entropy(with(1, eDisc))
	if err != nil {
		return 0, err
	}
	sE2, err := entropy(eDisc)
	if err != nil {
		return 0, err
	}
	return 0.5 * ((sBE1 - sE1) + (sBE2 - sE2)), nil
}

func identity(n int) [][]float64 {
	m := make([][]float64, n)
	for i := range m {
		m[i] = make([]float64, n)
		m[i][i] = 1
	}
	return m
}

func mul(a, b [][]float64) [][]float64 {
	n := len(a)
	c := make([][]float64, n)
	for i := range c {
		c[i] = make([]float64, n)
		for l := 0; l < n; l++ {
			if a[i][l] == 0 {
				continue
			}
			for j := 0; j < n; j++ {
				c[i][j] += a[i][l] * b[l][j]
			}
		}
	}
	return c
}
