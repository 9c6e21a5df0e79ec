package gaussian

import (
	"fmt"
	"math"
)

// Kind names a single-mode phase-insensitive channel family.
type Kind int

const (
	// ThermalLoss is V -> eta V + (1-eta)(2 N_B + 1) I; pure loss when N_B = 0.
	ThermalLoss Kind = iota + 1
	// Amplifier is V -> G V + (G-1)(2 N_B + 1) I; quantum-limited when N_B = 0.
	Amplifier
	// AdditiveNoise is V -> V + 2 xi I (xi in units where the vacuum variance is 1/2, as in
	// Pirandola et al., Nat. Commun. 8, 15043 (2017)).
	AdditiveNoise
)

// String returns the name used on the command line and in result files.
func (k Kind) String() string {
	switch k {
	case ThermalLoss:
		return "thermal-loss"
	case Amplifier:
		return "amplifier"
	case AdditiveNoise:
		return "additive"
	}
	return fmt.Sprintf("Kind(%d)", int(k))
}

// ParseKind is the inverse of Kind.String.
func ParseKind(s string) (Kind, error) {
	for _, k := range []Kind{ThermalLoss, Amplifier, AdditiveNoise} {
		if k.String() == s {
			return k, nil
		}
	}
	return 0, fmt.Errorf("unknown channel %q (want thermal-loss, amplifier or additive)", s)
}

// Model is one phase-insensitive single-mode channel with its parameters. Only the fields of
// its Kind are used: Eta and NB for ThermalLoss, Gain and NB for Amplifier, Xi for
// AdditiveNoise.
type Model struct {
	Kind Kind
	Eta  float64 // transmissivity in (0, 1)
	Gain float64 // amplifier gain > 1
	NB   float64 // thermal photon number of the environment >= 0
	Xi   float64 // added noise > 0
}

// Validate reports a parameter outside the model's domain.
func (m Model) Validate() error {
	bad := func(name string, v float64, want string) error {
		return fmt.Errorf("%s = %v is out of range (want %s)", name, v, want)
	}
	finite := func(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }
	switch m.Kind {
	case ThermalLoss:
		if !finite(m.Eta) || m.Eta <= 0 || m.Eta >= 1 {
			return bad("eta", m.Eta, "0 < eta < 1")
		}
		if !finite(m.NB) || m.NB < 0 {
			return bad("noise", m.NB, "a finite N_B >= 0")
		}
	case Amplifier:
		if !finite(m.Gain) || m.Gain <= 1 {
			return bad("gain", m.Gain, "a finite G > 1")
		}
		if !finite(m.NB) || m.NB < 0 {
			return bad("noise", m.NB, "a finite N_B >= 0")
		}
	case AdditiveNoise:
		if !finite(m.Xi) || m.Xi <= 0 {
			return bad("xi", m.Xi, "a finite xi > 0")
		}
	default:
		return fmt.Errorf("unknown channel kind %d", int(m.Kind))
	}
	return nil
}

// String describes the model with its parameters.
func (m Model) String() string {
	switch m.Kind {
	case ThermalLoss:
		return fmt.Sprintf("thermal-loss(eta=%g, N_B=%g)", m.Eta, m.NB)
	case Amplifier:
		return fmt.Sprintf("amplifier(G=%g, N_B=%g)", m.Gain, m.NB)
	case AdditiveNoise:
		return fmt.Sprintf("additive(xi=%g)", m.Xi)
	}
	return m.Kind.String()
}

// Action returns the single-mode channel (X, Y) = (sqrt(k) I, y I).
func (m Model) Action() Channel {
	var sx, y float64
	switch m.Kind {
	case ThermalLoss:
		sx, y = math.Sqrt(m.Eta), (1-m.Eta)*(2*m.NB+1)
	case Amplifier:
		sx, y = math.Sqrt(m.Gain), (m.Gain-1)*(2*m.NB+1)
	case AdditiveNoise:
		sx, y = 1, 2*m.Xi
	}
	x := Identity(2)
	x.Scale(sx)
	yy := Identity(2)
	yy.Scale(y)
	return Channel{In: 1, Out: 1, X: x, Y: yy}
}

// EnvModes is the number of environment output modes of every dilation here.
const EnvModes = 2

// Dilation describes a Stinespring dilation on four modes ordered (A', A, env1, env2): the
// environment input state EnvIn (4x4, on env1, env2) and the symplectic U (8x8) that acts on
// all four modes (identity on A'). After U the modes are (A', B, env1', env2').
//
//   - ThermalLoss: env1 = e thermal(N_B), env2 = f its purification (TMSV(N_B) on e, f); U is
//     the beam splitter eta on (A, e). Environment output (e', f).
//   - Amplifier: the same environment; U is the two-mode squeezer G with signal A, idler e.
//   - AdditiveNoise: env1, env2 vacua; U is the beam splitter t = 1/(1+xi) on (A, env1) followed
//     by the two-mode squeezer G = 1+xi on (A, env2). Environment output (loss env, amplifier env).
type Dilation struct {
	EnvIn Matrix
	// EnvFactor is a square factor of EnvIn (EnvIn = EnvFactor EnvFactor^T): the symplectic
	// that prepares the environment from vacuum.
	EnvFactor Matrix
	U         Matrix
}

// Dilation returns the model's Stinespring dilation (see the Dilation type).
func (m Model) Dilation() Dilation {
	switch m.Kind {
	case ThermalLoss:
		return Dilation{EnvIn: TMSV(m.NB), EnvFactor: TMSVFactor(m.NB), U: BeamSplitter(4, 1, 2, m.Eta)}
	case Amplifier:
		return Dilation{EnvIn: TMSV(m.NB), EnvFactor: TMSVFactor(m.NB), U: TwoModeSqueezer(4, 1, 2, m.Gain)}
	case AdditiveNoise:
		bs := BeamSplitter(4, 1, 2, 1/(1+m.Xi))
		amp := TwoModeSqueezer(4, 1, 3, 1+m.Xi)
		var u Matrix
		u.Mul(&amp, &bs)
		return Dilation{EnvIn: Vacuum(2), EnvFactor: Identity(4), U: u}
	}
	panic("gaussian: dilation of an invalid model")
}

// Joint sets out to the covariance of (A', B, env1', env2') when the pure two-mode state in
// (on A', A) is sent through the dilation. It allocates nothing.
func (d *Dilation) Joint(in *Matrix, out *Matrix) {
	var v0, tmp Matrix
	v0.DirectSum(in, &d.EnvIn)
	out.Congruence(&d.U, &v0, &tmp)
	out.Symmetrize()
}

// JointFactor sets out to a factor F of the joint covariance (A', B, env1', env2') = F F^T,
// given a factor inFactor of the pure input state on (A', A): F = U (inFactor (+) EnvFactor).
// Factors keep the small symplectic eigenvalues accurate at large energies (see
// FactorSpectrum). It allocates nothing.
func (d *Dilation) JointFactor(inFactor *Matrix, out *Matrix) {
	var f0 Matrix
	f0.DirectSum(inFactor, &d.EnvFactor)
	out.Mul(&d.U, &f0)
}
