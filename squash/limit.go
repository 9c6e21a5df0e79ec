package squash

import (
	"fmt"
	"math"

	"keyceiling/gaussian"
)

// The unconstrained bound is the limit N_S -> infinity of the objective for a thermal
// input. Every entropy grows like log2 N_S and the growth cancels in the CMI; what remains
// is a power series in 1/N_S, because g(x) = log2 x + 1/ln 2 + sum_k c_k x^-k and the
// symplectic eigenvalues are algebraic in N_S. Richardson extrapolation in h = 1/N_S over a
// geometric ladder therefore converges fast and gives an error estimate from the last two
// diagonal entries (Richardson, Phil. Trans. R. Soc. A 210, 307 (1911); see also Press et
// al., Numerical Recipes, 3rd ed., section 3.2).

// LadderBase and LadderRatio define the photon numbers N_k = LadderBase * LadderRatio^k at
// which the objective is evaluated for the unconstrained limit; Richardson extrapolation runs
// over a window of LadderWindow consecutive levels, moving up the ladder until the error
// estimate is below LimitTarget or LadderLevels levels are used. Channels close to the
// identity (eta -> 1) approach the limit only once (1 - eta) N is large, so the window has to
// climb; the square-root form keeps float64 round-off near eps * N (about 1e-8 at the top).
const (
	LadderBase   = 100.0
	LadderRatio  = 4.0
	LadderWindow = 5
	LadderLevels = 13
	LimitTarget  = 1e-10
)

// Ladder evaluates the unconstrained limit for one channel. Evaluators for the levels are
// built on first use and kept. Not safe for concurrent use.
type Ladder struct {
	model gaussian.Model
	evs   [LadderLevels]*Evaluator
	vals  [LadderLevels]float64
	tab   [LadderWindow][LadderWindow]float64
}

// NewLadder prepares the ladder for a model.
func NewLadder(model gaussian.Model) (*Ladder, error) {
	if err := model.Validate(); err != nil {
		return nil, err
	}
	return &Ladder{model: model}, nil
}

func (l *Ladder) level(k int) (*Evaluator, error) {
	if l.evs[k] == nil {
		ev, err := NewEvaluator(l.model, Thermal(LadderBase*math.Pow(LadderRatio, float64(k))))
		if err != nil {
			return nil, err
		}
		l.evs[k] = ev
	}
	return l.evs[k], nil
}

// Half returns the N_S -> infinity limit of 1/2 I(A';B|E') for the map ch and an estimate
// of its extrapolation error. It allocates only when it first climbs to a new level.
func (l *Ladder) Half(ch *gaussian.Channel) (value, errEst float64, err error) {
	errEst = math.Inf(1)
	for k := 0; k < LadderLevels; k++ {
		ev, err := l.level(k)
		if err != nil {
			return math.NaN(), math.Inf(1), err
		}
		if l.vals[k], err = ev.Half(ch); err != nil {
			return math.NaN(), math.Inf(1), err
		}
		if k < LadderWindow-1 {
			continue
		}
		v, est := l.extrapolate(k)
		if est < errEst || k == LadderWindow-1 {
			value, errEst = v, est
		}
		if errEst < LimitTarget {
			break
		}
	}
	if math.IsNaN(value) || math.IsInf(value, 0) {
		return value, errEst, fmt.Errorf("unconstrained limit is not finite")
	}
	return value, errEst, nil
}

// extrapolate runs Richardson's table over levels top-LadderWindow+1 .. top.
func (l *Ladder) extrapolate(top int) (float64, float64) {
	base := top - LadderWindow + 1
	for i := 0; i < LadderWindow; i++ {
		l.tab[i][0] = l.vals[base+i]
		f := 1.0
		for j := 1; j <= i; j++ {
			f *= LadderRatio
			l.tab[i][j] = l.tab[i][j-1] + (l.tab[i][j-1]-l.tab[i-1][j-1])/(f-1)
		}
	}
	K := LadderWindow - 1
	v := l.tab[K][K]
	est := math.Max(math.Abs(v-l.tab[K][K-1]), math.Abs(v-l.tab[K-1][K-1]))
	return v, est
}
