package search

import (
	"cmp"
	"context"
	"slices"
	"sync"
	"time"
)

// SweepConfig drives Sweep.
type SweepConfig struct {
	Settings Settings
	Seed     uint64
	// Workers is the number of chains searched at once (at least 1).
	Workers int
	// Stored returns the stages of the stored result of a point finished by an earlier run
	// (ok false when the point has no stored result). Finished points are not searched
	// again, and the next point of the chain is warm-started from these stages, exactly as
	// if the run had not been interrupted. Calls are serialised with those of Done. Nil:
	// nothing is stored.
	Stored func(pp PlanPoint) (stages []Stage, ok bool)
	// Done receives every point searched by this run, with the search's error (nil for a
	// certified result) and the wall-clock seconds it took. Calls are serialised. A non-nil
	// return stops the sweep (no new point is started) and is returned by Sweep.
	Done func(pp PlanPoint, res Result, seconds float64, err error) error
}

// WarmStart returns the warm start that Run derives from a neighbouring point's result:
// only the stages' families and parameters are used, so a warm start rebuilt from a stored
// record's stages is the same warm start as the in-memory result it was written from.
func WarmStart(stages []Stage) *Result {
	if len(stages) == 0 {
		return nil
	}
	w := &Result{Stages: make([]Stage, len(stages))}
	for i, st := range stages {
		w.Stages[i] = Stage{Family: st.Family, Params: slices.Clone(st.Params)}
	}
	return w
}

// Sweep searches the chains' points with cfg.Workers workers. A worker takes one chain at a
// time (the most expensive first, which shortens the tail) and walks it in order: each point
// gets the random source RandFor(seed, point) and the warm start of the previous point of
// the chain (its stored or new result; none when the previous point failed or for the first
// point). A point's result therefore depends only on the plan, the settings and the seed,
// not on the number of workers, the shard split or interruptions. Entanglement-breaking
// chains are skipped. Sweep returns when every chain is done, Done returned an error, or ctx
// is cancelled (points already started finish first).
func Sweep(ctx context.Context, chains []Chain, cfg SweepConfig) error {
	order := make([]int, 0, len(chains))
	for i, c := range chains {
		if !c.Breaking {
			order = append(order, i)
		}
	}
	slices.SortStableFunc(order, func(a, b int) int {
		return cmp.Compare(ChainCost(chains[b], cfg.Settings), ChainCost(chains[a], cfg.Settings))
	})
	queue := make(chan int, len(order))
	for _, i := range order {
		queue <- i
	}
	close(queue)

	var mu sync.Mutex
	var firstErr error
	stop := func() bool {
		mu.Lock()
		defer mu.Unlock()
		return firstErr != nil || ctx.Err() != nil
	}
	done := func(pp PlanPoint, res Result, secs float64, err error) {
		mu.Lock()
		defer mu.Unlock()
		if firstErr != nil {
			return
		}
		if e := cfg.Done(pp, res, secs, err); e != nil {
			firstErr = e
		}
	}
	stored := func(pp PlanPoint) ([]Stage, bool) {
		mu.Lock()
		defer mu.Unlock()
		if cfg.Stored == nil {
			return nil, false
		}
		return cfg.Stored(pp)
	}
	workers := max(1, cfg.Workers)
	var wg sync.WaitGroup
	for range workers {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := range queue {
				var warm *Result
				for _, pp := range chains[i].Points {
					if stop() {
						return
					}
					if stages, ok := stored(pp); ok {
						warm = WarmStart(stages)
						continue
					}
					start := time.Now()
					res, err := Run(pp.Point, cfg.Settings, RandFor(cfg.Seed, pp.Point), warm)
					done(pp, res, time.Since(start).Seconds(), err)
					warm = nil
					if err == nil {
						warm = WarmStart(res.Stages)
					}
				}
			}
		}()
	}
	wg.Wait()
	if firstErr != nil {
		return firstErr
	}
	return ctx.Err()
}
