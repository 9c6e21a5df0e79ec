package gaussian

import (
	"fmt"
	"math"
)

// Vacuum returns the n-mode vacuum covariance, the identity.
func Vacuum(n int) Matrix { return Identity(2 * n) }

// Thermal returns the single-mode thermal covariance (2N+1) I.
func Thermal(meanPhotons float64) Matrix {
	m := Identity(2)
	m.Scale(2*meanPhotons + 1)
	return m
}

// TMSV returns the two-mode squeezed vacuum [[a I, c Z], [c Z, a I]], a = 2N+1,
// c = 2 sqrt(N(N+1)): the purification of Thermal(N) on either mode.
func TMSV(meanPhotons float64) Matrix {
	a := 2*meanPhotons + 1
	c := 2 * math.Sqrt(meanPhotons*(meanPhotons+1))
	m := NewMatrix(4, 4)
	m.Set(0, 0, a)
	m.Set(1, 1, a)
	m.Set(2, 2, a)
	m.Set(3, 3, a)
	m.Set(0, 2, c)
	m.Set(2, 0, c)
	m.Set(1, 3, -c)
	m.Set(3, 1, -c)
	return m
}

// TMSVFactor returns the two-mode squeezer of gain N+1, which prepares TMSV(N) from vacuum:
// TMSV(N) = F F^T exactly, with entries of size sqrt(N) instead of N.
func TMSVFactor(meanPhotons float64) Matrix {
	return TwoModeSqueezer(2, 0, 1, meanPhotons+1)
}

// SqueezedThermalFactor returns the symplectic R(phi) S(r) on A times TMSVFactor(n): a factor
// of SqueezedThermalPurification(n, r, phi).
func SqueezedThermalFactor(n, r, phi float64) Matrix {
	f := TMSVFactor(n)
	if r == 0 && phi == 0 {
		return f
	}
	s := Squeezer(2, 1, r)
	rot := PhaseRotation(2, 1, phi)
	var t, u Matrix
	t.Mul(&rot, &s)
	u.Mul(&t, &f)
	return u
}

// SqueezedThermalPurification returns a pure two-mode covariance on (A', A) whose A marginal
// is the squeezed thermal state R(phi) S(r) Thermal(n) S(r)^T R(phi)^T: TMSV(n) with the
// squeezer and rotation applied to mode A (index 1). Its A marginal has mean photon number
// SqueezedThermalEnergy(n, r).
func SqueezedThermalPurification(n, r, phi float64) Matrix {
	v := TMSV(n)
	if r == 0 && phi == 0 {
		return v
	}
	s := Squeezer(2, 1, r)
	rot := PhaseRotation(2, 1, phi)
	var t, u, w Matrix
	t.Mul(&rot, &s)
	u.Congruence(&t, &v, &w)
	u.Symmetrize()
	return u
}

// SqueezedThermalEnergy is the mean photon number ((2n+1) cosh 2r - 1)/2 of a squeezed
// thermal state.
func SqueezedThermalEnergy(n, r float64) float64 {
	return ((2*n+1)*math.Cosh(2*r) - 1) / 2
}

// PhysicalDefect returns 1 - min_k nu_k for a covariance v: at most zero (up to round-off)
// iff V + i Omega >= 0, by Williamson's theorem (Williamson, Am. J. Math. 58, 141 (1936)).
func PhysicalDefect(v *Matrix) (float64, error) {
	var sp Spectrum
	if err := SymplecticSpectrum(v, &sp); err != nil {
		return math.Inf(1), err
	}
	lo := math.Inf(1)
	for k := 0; k < sp.N; k++ {
		lo = math.Min(lo, sp.Nu[k])
	}
	return 1 - lo, nil
}

// CheckPhysical returns an error wrapping ErrUnphysical unless v is a physical covariance
// within PurityTolerance.
func CheckPhysical(v *Matrix) error {
	d, err := PhysicalDefect(v)
	if err != nil {
		return err
	}
	if d > purityAllowance(v) {
		return fmt.Errorf("gaussian: smallest symplectic eigenvalue is 1 - %.3g: %w", d, ErrUnphysical)
	}
	return nil
}

// Modes returns the mode count of a square covariance matrix.
func Modes(v *Matrix) int { return v.rows / 2 }
