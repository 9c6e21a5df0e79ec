package search

import (
	"fmt"
	"math"
)

// Settings controls one point search. The zero value is the documented default everywhere.
type Settings struct {
	// Family is the map family: "auto" (the default, ""), "split", "tms-split",
	// "covariant" or "general". "auto" runs tms-split, then the covariant family lifted from
	// its optimum, then (at finite energy) the general family lifted from the best so far, and
	// reports the best map with the family that produced it.
	Family string `json:"family"`
	// Ancillas and Keep size the covariant and general families (zero: 3 ancillas, 2 kept
	// modes for "covariant" and for the covariant stage of "auto"; 2 and 2 for "general").
	Ancillas int `json:"ancillas"`
	Keep     int `json:"keep"`
	// RandomStarts is how many seeded random starts are added to the family's known starts
	// (zero: DefaultRandomStarts; negative: none).
	RandomStarts int `json:"random_starts"`
	// MaxEvaluations bounds the objective evaluations of each local run (zero: 6000).
	MaxEvaluations int `json:"max_evaluations"`
	// Tolerance is the absolute improvement in bits below which a local run counts as
	// converged after StallIterations iterations without it (zero: 1e-11).
	Tolerance float64 `json:"tolerance"`
	// Method is the local optimiser: "nelder-mead" (default) or "bfgs" (with central
	// finite-difference gradients).
	Method string `json:"method"`
	// Rounds bounds the cutting-plane rounds for maps that are not phase covariant (zero: 3).
	Rounds int `json:"rounds"`
}

// DefaultRandomStarts is the number of random starts used when Settings.RandomStarts is 0.
const DefaultRandomStarts = 4

// StallIterations is how many iterations without an improvement beyond Tolerance end a
// local run as converged.
const StallIterations = 60

// Effective returns the settings with every zero value replaced by its default (Ancillas
// and Keep stay 0, which means each stage's own default). It is idempotent, and it is what
// result records store, so that a record states the settings that made it.
func (s Settings) Effective() Settings { return s.withDefaults() }

func (s Settings) withDefaults() Settings {
	if s.Family == "" {
		s.Family = "auto"
	}
	if s.RandomStarts == 0 {
		s.RandomStarts = DefaultRandomStarts
	}
	if s.MaxEvaluations == 0 {
		s.MaxEvaluations = 6000
	}
	if s.Tolerance == 0 {
		s.Tolerance = 1e-11
	}
	if s.Method == "" {
		s.Method = "nelder-mead"
	}
	if s.Rounds == 0 {
		s.Rounds = 3
	}
	return s
}

// Validate reports a setting outside its domain.
func (s Settings) Validate() error {
	switch s.Family {
	case "", "auto", "split", "tms-split", "covariant", "general":
	default:
		return fmt.Errorf("unknown family %q (want auto, split, tms-split, covariant or general)", s.Family)
	}
	switch s.Method {
	case "", "nelder-mead", "bfgs":
	default:
		return fmt.Errorf("unknown method %q (want nelder-mead or bfgs)", s.Method)
	}
	if s.Ancillas < 0 || s.Ancillas > 4 {
		return fmt.Errorf("ancillas = %d is out of range (want 0..4)", s.Ancillas)
	}
	if s.Keep < 0 || s.Keep > 4 {
		return fmt.Errorf("keep = %d is out of range (want 1..4)", s.Keep)
	}
	if s.MaxEvaluations < 0 {
		return fmt.Errorf("max evaluations = %d is negative", s.MaxEvaluations)
	}
	if s.Tolerance < 0 || math.IsNaN(s.Tolerance) {
		return fmt.Errorf("tolerance = %v is out of range", s.Tolerance)
	}
	if s.Rounds < 0 {
		return fmt.Errorf("rounds = %d is negative", s.Rounds)
	}
	return nil
}
