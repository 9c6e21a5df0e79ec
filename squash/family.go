package squash

import (
	"fmt"
	"math"

	"keyceiling/gaussian"
)

// Family is a parameterised set of Gaussian squashing maps on the channel's two-mode
// environment. Every member is given by a Stinespring dilation: a symplectic S on the modes
// (env1, env2, ancilla 1, ..., ancilla k), the ancillas in thermal states, and the kept output
// modes 0 .. Kept()-1; the rest are discarded. Built this way every member is completely
// positive by construction; the certificate check re-verifies it from (X, Y) alone.
//
// Parameters are unconstrained reals: the family maps them smoothly onto valid transforms
// (transmissivities through sin^2, squeezing through a bounded tanh, photon numbers
// through a bounded square), so unconstrained optimisers can be used directly.
type Family interface {
	// Name identifies the family and its sizes, as written in result files.
	Name() string
	// NumParams is the length of the parameter vector.
	NumParams() int
	// Ancillas is the number of ancilla modes k.
	Ancillas() int
	// Kept is the number m of kept output modes (E').
	Kept() int
	// PhaseCovariant reports whether every member commutes with input phase rotations up to
	// local unitaries on B and E', so that thermal inputs are optimal (physics notes).
	PhaseCovariant() bool
	// Build writes the dilation symplectic into s (2n x 2n, n = 2 + Ancillas()) and the
	// ancilla photon numbers into anc[:Ancillas()]. It must not allocate.
	Build(params []float64, s *gaussian.Matrix, anc []float64)
	// Starts returns the family's known good starting points.
	Starts() [][]float64
}

// Dilation is a concrete member of a family: its Stinespring form.
type Dilation struct {
	S       gaussian.Matrix
	Photons []float64 // ancilla photon numbers
	Keep    int       // modes 0 .. Keep-1 are E'
}

// BuildDilation returns the member of f at params (allocates; not for the hot path).
func BuildDilation(f Family, params []float64) Dilation {
	d := Dilation{Photons: make([]float64, f.Ancillas()), Keep: f.Kept()}
	f.Build(params, &d.S, d.Photons)
	return d
}

// Channel returns the map (X, Y) on the environment.
func (d *Dilation) Channel() gaussian.Channel {
	var ch gaussian.Channel
	channelOf(&d.S, d.Photons, d.Keep, &ch)
	return ch
}

// MapOf writes the squashing map (X, Y) of f at params into ch. It allocates its scratch
// (the symplectic escapes through the Family interface); hot paths use a MapWork.
func MapOf(f Family, params []float64, ch *gaussian.Channel) {
	var w MapWork
	w.Map(f, params, ch)
}

// MapWork is reusable scratch for building maps without allocating.
type MapWork struct {
	s   gaussian.Matrix
	anc [gaussian.MaxModes]float64
}

// Map writes the squashing map (X, Y) of f at params into ch. It does not allocate.
func (w *MapWork) Map(f Family, params []float64, ch *gaussian.Channel) {
	switch f.(type) {
	case TMSSplit:
		tmsSplitChannel(params, ch)
		return
	case Split:
		splitChannel(params, ch)
		return
	}
	k := f.Ancillas()
	f.Build(params, &w.s, w.anc[:k])
	channelOf(&w.s, w.anc[:k], f.Kept(), ch)
}

// channelOf computes X = S[kept, env] and Y = S[kept, anc] diag((2n_j+1) I) S[kept, anc]^T.
// It reads only the kept rows of S.
func channelOf(s *gaussian.Matrix, photons []float64, keep int, ch *gaussian.Channel) {
	dim, _ := s.Dims()
	sd := s.Data()
	k := len(photons)
	const env2 = 2 * gaussian.EnvModes
	m2 := 2 * keep
	ch.In, ch.Out = gaussian.EnvModes, keep
	ch.X.Reset(m2, env2)
	ch.Y.Reset(m2, m2)
	xd, yd := ch.X.Data(), ch.Y.Data()
	for i := 0; i < m2; i++ {
		copy(xd[i*env2:(i+1)*env2], sd[i*dim:i*dim+env2])
	}
	var w [gaussian.MaxModes]float64
	for a := 0; a < k; a++ {
		w[a] = 2*photons[a] + 1
	}
	for i := 0; i < m2; i++ {
		si := sd[i*dim+env2 : i*dim+env2+2*k]
		for j := i; j < m2; j++ {
			sj := sd[j*dim+env2 : j*dim+env2+2*k]
			v := 0.0
			for a := 0; a < k; a++ {
				v += w[a] * (si[2*a]*sj[2*a] + si[2*a+1]*sj[2*a+1])
			}
			yd[i*m2+j] = v
			yd[j*m2+i] = v
		}
	}
}

// Split is the one-parameter family of Takeoka, Guha, Wilde (Nat. Commun. 5, 5235 (2014)):
// env1 meets a vacuum ancilla on a beam splitter of transmissivity sin^2(p0) and one output
// is kept; env2 is discarded. At p0 = pi/4 (50:50) and N_B = 0 it gives their pure-loss bound.
type Split struct{}

func (Split) Name() string         { return "split" }
func (Split) NumParams() int       { return 1 }
func (Split) Ancillas() int        { return 1 }
func (Split) Kept() int            { return 1 }
func (Split) PhaseCovariant() bool { return true }
func (Split) Starts() [][]float64  { return [][]float64{{math.Pi / 4}} }
func (Split) Build(p []float64, s *gaussian.Matrix, anc []float64) {
	setIdentity(s, 6)
	lmulBeamSplitter(s.Data(), 6, 0, 2, transmissivity(p[0]))
	anc[0] = 0
}

// TMSSplit is the two-mode family: a two-mode squeezer of parameter r between the two
// environment modes, then each mode mixed with its own thermal ancilla on a beam splitter,
// keeping both environment-side outputs (m = 2, k = 2). Parameters:
// (r, t1, t2, n1, n2) through boundedSqueezing, transmissivity and occupation. With r = 0,
// t1 = 1/2, t2 = 0 (env2 swapped out for a vacuum) it is Split's 50:50 map.
type TMSSplit struct{}

func (TMSSplit) Name() string         { return "tms-split" }
func (TMSSplit) NumParams() int       { return 5 }
func (TMSSplit) Ancillas() int        { return 2 }
func (TMSSplit) Kept() int            { return 2 }
func (TMSSplit) PhaseCovariant() bool { return true }
func (TMSSplit) Starts() [][]float64 {
	q := math.Pi / 4
	starts := [][]float64{{0, q, 0, 0, 0}}
	for _, r := range []float64{-1.5, -1, -0.5, 0.5, 1, 1.5} {
		starts = append(starts, []float64{r, q, q, 0, 0}, []float64{r, q, -q, 0, 0})
	}
	return starts
}
func (TMSSplit) Build(p []float64, s *gaussian.Matrix, anc []float64) {
	setIdentity(s, 8)
	d := s.Data()
	lmulTwoModeSqueezing(d, 8, 0, 1, boundedSqueezing(p[0]))
	lmulBeamSplitter(d, 8, 0, 2, transmissivity(p[1]))
	lmulBeamSplitter(d, 8, 1, 3, transmissivity(p[2]))
	anc[0] = occupation(p[3])
	anc[1] = occupation(p[4])
}

// Covariant is the phase-covariant family with k ancillas and m kept modes. The modes fall
// into two groups that rotate oppositely under an input phase rotation: group 1 holds env1
// and the even-numbered ancillas, group 2 holds env2 and the odd-numbered ones (thermal
// ancillas are phase invariant, so either group may hold them; env1 and env2 rotate
// oppositely for all three channels of gaussian.Dilation). The map is
// U' T U Base: U, U' passive unitaries inside each group (Reck decomposition), T two-mode
// squeezers between the i-th modes of the two groups, Base a fixed phase-covariant
// symplectic (identity unless the family was lifted from a smaller one). Passive mixing
// within a group and two-mode squeezing across groups commute with the phase rotation, so
// every member is phase covariant. This is the Cartan decomposition of U(p, q), the group
// of such maps, so the family reaches every phase-covariant Gaussian unitary on the modes.
type Covariant struct {
	K, M  int
	Base  *gaussian.Matrix // nil: identity
	g1    []int
	g2    []int
	nPass int
}

// NewCovariant returns the covariant family with k ancillas and m kept modes.
func NewCovariant(k, m int) (*Covariant, error) {
	if err := checkSizes(k, m); err != nil {
		return nil, err
	}
	c := &Covariant{K: k, M: m}
	c.g1, c.g2 = []int{0}, []int{1}
	for a := 0; a < k; a++ {
		if a%2 == 0 {
			c.g1 = append(c.g1, 2+a)
		} else {
			c.g2 = append(c.g2, 2+a)
		}
	}
	c.nPass = passiveParams(len(c.g1)) + passiveParams(len(c.g2))
	return c, nil
}

func checkSizes(k, m int) error {
	n := gaussian.EnvModes + k
	if k < 0 || n > gaussian.MaxModes-2 {
		return fmt.Errorf("ancillas = %d: want 0..%d", k, gaussian.MaxModes-2-gaussian.EnvModes)
	}
	if m < 1 || m > n || m > gaussian.MaxDim/4 {
		return fmt.Errorf("kept modes = %d: want 1..%d", m, min(n, gaussian.MaxDim/4))
	}
	return nil
}

func (c *Covariant) Name() string {
	return fmt.Sprintf("covariant(ancillas=%d,keep=%d)", c.K, c.M)
}
func (c *Covariant) pairs() int           { return min(len(c.g1), len(c.g2)) }
func (c *Covariant) NumParams() int       { return 2*c.nPass + c.pairs() + c.K }
func (c *Covariant) Ancillas() int        { return c.K }
func (c *Covariant) Kept() int            { return c.M }
func (c *Covariant) PhaseCovariant() bool { return true }
func (c *Covariant) Starts() [][]float64  { return [][]float64{make([]float64, c.NumParams())} }
func (c *Covariant) Build(p []float64, s *gaussian.Matrix, anc []float64) {
	n := 2 + c.K
	dim := 2 * n
	if c.Base != nil {
		*s = *c.Base
	} else {
		setIdentity(s, dim)
	}
	d := s.Data()
	p = lmulPassive(d, dim, c.g1, p)
	p = lmulPassive(d, dim, c.g2, p)
	for i := 0; i < c.pairs(); i++ {
		if p[i] != 0 {
			lmulTwoModeSqueezing(d, dim, c.g1[i], c.g2[i], boundedSqueezing(p[i]))
		}
	}
	p = p[c.pairs():]
	p = lmulPassive(d, dim, c.g1, p)
	p = lmulPassive(d, dim, c.g2, p)
	for a := 0; a < c.K; a++ {
		anc[a] = occupation(p[a])
	}
}

// General is the fully general Stinespring family with k thermal ancillas and m kept modes:
// S = O2 D O1 Base with O1, O2 passive unitaries on all modes (Reck decomposition) and D a
// single-mode squeezer on each mode, the Bloch-Messiah form that reaches every symplectic
// (Braunstein, Phys. Rev. A 71, 055801 (2005)). Its members are not phase covariant, so the
// bound needs the supremum over squeezed inputs.
type General struct {
	K, M int
	Base *gaussian.Matrix // nil: identity
	all  []int
}

// NewGeneral returns the general family with k ancillas and m kept modes.
func NewGeneral(k, m int) (*General, error) {
	if err := checkSizes(k, m); err != nil {
		return nil, err
	}
	g := &General{K: k, M: m}
	for i := 0; i < 2+k; i++ {
		g.all = append(g.all, i)
	}
	return g, nil
}

func (g *General) Name() string {
	return fmt.Sprintf("general(ancillas=%d,keep=%d)", g.K, g.M)
}
func (g *General) n() int               { return 2 + g.K }
func (g *General) NumParams() int       { return 2*passiveParams(g.n()) + g.n() + g.K }
func (g *General) Ancillas() int        { return g.K }
func (g *General) Kept() int            { return g.M }
func (g *General) PhaseCovariant() bool { return false }
func (g *General) Starts() [][]float64  { return [][]float64{make([]float64, g.NumParams())} }
func (g *General) Build(p []float64, s *gaussian.Matrix, anc []float64) {
	dim := 2 * g.n()
	if g.Base != nil {
		*s = *g.Base
	} else {
		setIdentity(s, dim)
	}
	d := s.Data()
	p = lmulPassive(d, dim, g.all, p)
	for i := 0; i < g.n(); i++ {
		if p[i] != 0 {
			lmulSqueezer(d, dim, i, boundedSqueezing(p[i]))
		}
	}
	p = p[g.n():]
	p = lmulPassive(d, dim, g.all, p)
	for a := 0; a < g.K; a++ {
		anc[a] = occupation(p[a])
	}
}
