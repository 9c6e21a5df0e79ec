package search

import (
	"context"
	"errors"
	"reflect"
	"sync"
	"testing"
)

// sweepPlan is fast (the split family) and has 4 chains of 3 points, plus an
// entanglement-breaking chain (eta 0.3 with N_B = 0.5 >= 0.3/0.7).
const sweepPlan = `keyceiling-plan 1
channel thermal-loss
eta 0.3, 0.7
noise 0, 0.05, 0.5
energy 0.5, 2, inf
family split
seed 3
end
`

// outcome is what a point's search produced, minus timing.
type outcome struct {
	Bound  float64
	Params []float64
	Stages []Stage
	X, Y   [][]float64
	Evals  int
}

func runSweep(t *testing.T, p *Plan, chains []Chain, workers int, stored map[string][]Stage) map[string]outcome {
	t.Helper()
	var mu sync.Mutex
	got := map[string]outcome{}
	cfg := SweepConfig{Settings: p.Settings, Seed: p.Seed, Workers: workers,
		Stored: func(pp PlanPoint) ([]Stage, bool) {
			st, ok := stored[pp.Point.Key()]
			return st, ok
		},
		Done: func(pp PlanPoint, res Result, _ float64, err error) error {
			if err != nil {
				t.Errorf("%s: %v", pp.Point.Key(), err)
				return nil
			}
			mu.Lock()
			defer mu.Unlock()
			if _, dup := got[pp.Point.Key()]; dup {
				t.Errorf("%s searched twice", pp.Point.Key())
			}
			got[pp.Point.Key()] = outcome{res.Bound, res.Params, res.Stages, res.Map.X.Rows(), res.Map.Y.Rows(), res.Evaluations}
			return nil
		}}
	if err := Sweep(context.Background(), chains, cfg); err != nil {
		t.Fatal(err)
	}
	return got
}

func TestSweepIndependentOfWorkersAndResume(t *testing.T) {
	p := mustParse(t, sweepPlan)
	chains := p.Chains()
	one := runSweep(t, p, chains, 1, nil)
	searched := 0
	for _, pp := range p.Points() {
		_, ok := one[pp.Point.Key()]
		if ok == pp.Breaking {
			t.Errorf("%s: searched %v, entanglement breaking %v", pp.Point.Key(), ok, pp.Breaking)
		}
		if ok {
			searched++
		}
	}
	if searched != 15 {
		t.Fatalf("%d points searched, want 15", searched)
	}
	three := runSweep(t, p, chains, 3, nil)
	if !reflect.DeepEqual(one, three) {
		t.Errorf("1 and 3 workers differ")
	}
	// Resume: the first point of every chain, and the first two of one chain, are stored.
	stored := map[string][]Stage{}
	for i, c := range chains {
		if c.Breaking {
			continue
		}
		for j := 0; j < 1+i%2; j++ {
			k := c.Points[j].Point.Key()
			stored[k] = one[k].Stages
		}
	}
	resumed := runSweep(t, p, chains, 2, stored)
	for k, o := range one {
		r, ok := resumed[k]
		if _, was := stored[k]; was {
			if ok {
				t.Errorf("%s: stored point searched again", k)
			}
			continue
		}
		if !reflect.DeepEqual(o, r) {
			t.Errorf("%s: resumed result differs:\n%+v\n%+v", k, o, r)
		}
	}
	// Shards: each shard alone gives the same results.
	for i := 0; i < 3; i++ {
		part := runSweep(t, p, p.ChainsOf(Shard{Index: i, Count: 3}), 1, nil)
		for k, o := range part {
			if !reflect.DeepEqual(o, one[k]) {
				t.Errorf("shard %d: %s differs", i, k)
			}
		}
	}
}

func TestSweepWarmStartMatters(t *testing.T) {
	// Warm starts are used: the second point of a chain searched cold can differ in its
	// evaluation count from the warm one (the warm start is an extra start).
	p := mustParse(t, sweepPlan)
	c := p.Chains()[0]
	first, err := Run(c.Points[0].Point, p.Settings, RandFor(p.Seed, c.Points[0].Point), nil)
	if err != nil {
		t.Fatal(err)
	}
	second := c.Points[1].Point
	warm, err := Run(second, p.Settings, RandFor(p.Seed, second), WarmStart(first.Stages))
	if err != nil {
		t.Fatal(err)
	}
	cold, err := Run(second, p.Settings, RandFor(p.Seed, second), nil)
	if err != nil {
		t.Fatal(err)
	}
	if warm.Evaluations == cold.Evaluations {
		t.Errorf("warm start not used: %d evaluations both ways", warm.Evaluations)
	}
	got := runSweep(t, p, []Chain{c}, 1, nil)
	if got[second.Key()].Evals != warm.Evaluations {
		t.Errorf("sweep's second point: %d evaluations, warm-started Run: %d", got[second.Key()].Evals, warm.Evaluations)
	}
}

func TestSweepStopsOnDoneError(t *testing.T) {
	p := mustParse(t, sweepPlan)
	boom := errors.New("disk full")
	calls := 0
	err := Sweep(context.Background(), p.Chains(), SweepConfig{Settings: p.Settings, Workers: 1,
		Done: func(PlanPoint, Result, float64, error) error { calls++; return boom }})
	if !errors.Is(err, boom) || calls != 1 {
		t.Errorf("err %v after %d calls", err, calls)
	}
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	err = Sweep(ctx, p.Chains(), SweepConfig{Settings: p.Settings, Workers: 2,
		Done: func(PlanPoint, Result, float64, error) error { t.Error("searched after cancel"); return nil }})
	if !errors.Is(err, context.Canceled) {
		t.Errorf("err %v", err)
	}
}

func TestWarmStart(t *testing.T) {
	if WarmStart(nil) != nil {
		t.Error("WarmStart(nil) != nil")
	}
	st := []Stage{{Family: "tms-split", Value: 1, Params: []float64{1, 2}, Evaluations: 9, Status: "x"}}
	w := WarmStart(st)
	st[0].Params[0] = 5
	if w.Stages[0].Family != "tms-split" || w.Stages[0].Params[0] != 1 || w.Stages[0].Evaluations != 0 {
		t.Errorf("WarmStart = %+v", w.Stages)
	}
}
