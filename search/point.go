package search

import (
	"fmt"
	"hash/fnv"
	"math"
	"math/rand/v2"
	"strconv"

	"keyceiling/gaussian"
)

// Point is one channel and one input-energy bound: the unit of work of a search.
type Point struct {
	Model gaussian.Model
	// Energy is the mean photon number bound N_S on the input; +Inf for the unconstrained
	// bound.
	Energy float64
}

// Validate reports a point outside the domain.
func (p Point) Validate() error {
	if err := p.Model.Validate(); err != nil {
		return err
	}
	if math.IsNaN(p.Energy) || p.Energy <= 0 {
		return fmt.Errorf("energy = %v is out of range (want N_S > 0, or inf)", p.Energy)
	}
	return nil
}

func fmtNum(x float64) string {
	if math.IsInf(x, 1) {
		return "inf"
	}
	return strconv.FormatFloat(x, 'g', -1, 64)
}

// Key is a canonical text for the point (exact float values), used to identify it in result
// files and to derive its random source.
func (p Point) Key() string {
	m := p.Model
	switch m.Kind {
	case gaussian.ThermalLoss:
		return fmt.Sprintf("thermal-loss eta=%s nb=%s ns=%s", fmtNum(m.Eta), fmtNum(m.NB), fmtNum(p.Energy))
	case gaussian.Amplifier:
		return fmt.Sprintf("amplifier gain=%s nb=%s ns=%s", fmtNum(m.Gain), fmtNum(m.NB), fmtNum(p.Energy))
	case gaussian.AdditiveNoise:
		return fmt.Sprintf("additive xi=%s ns=%s", fmtNum(m.Xi), fmtNum(p.Energy))
	}
	return "invalid"
}

// RandFor returns the random source of a point: PCG seeded by the user's seed and a hash
// of the point's key, so that a point's random starts depend on nothing else (not on the
// order of points, the number of workers, or whether the run was resumed).
func RandFor(seed uint64, p Point) *rand.Rand {
	h := fnv.New64a()
	h.Write([]byte(p.Key()))
	return rand.New(rand.NewPCG(seed, h.Sum64()))
}
