package squash

import (
	"math"

	"keyceiling/gaussian"
)

// Input is a zero-mean single-mode Gaussian input state for Alice's mode A, purified on A':
// a thermal state with N photons, squeezed by R (diag(e^-R, e^R)) and rotated by Phi. A
// thermal input has R = Phi = 0.
type Input struct {
	N   float64 `json:"n"`
	R   float64 `json:"r"`
	Phi float64 `json:"phi"`
}

// Thermal returns the thermal input with mean photon number n.
func Thermal(n float64) Input { return Input{N: n} }

// Energy is the input's mean photon number.
func (in Input) Energy() float64 { return gaussian.SqueezedThermalEnergy(in.N, in.R) }

// IsThermal reports whether the input is unsqueezed.
func (in Input) IsThermal() bool { return in.R == 0 }

// Purification returns the pure two-mode covariance on (A', A).
func (in Input) Purification() gaussian.Matrix {
	return gaussian.SqueezedThermalPurification(in.N, in.R, in.Phi)
}

// Factor returns the symplectic that prepares the purification from vacuum (a square factor
// of Purification).
func (in Input) Factor() gaussian.Matrix {
	return gaussian.SqueezedThermalFactor(in.N, in.R, in.Phi)
}

// Valid reports whether the input parameters are finite and N >= 0.
func (in Input) Valid() bool {
	return in.N >= 0 && !math.IsInf(in.N, 0) && !math.IsNaN(in.R) && !math.IsInf(in.R, 0) &&
		!math.IsNaN(in.Phi) && !math.IsInf(in.Phi, 0)
}
