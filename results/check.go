package results

import (
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"sync"

	"keyceiling/gaussian"
	"keyceiling/search"
)

// Tolerances of `keyceiling check`.
const (
	// CheckTolerance is the largest difference between a stored bound and its recomputation,
	// relative to max(1, |bound|), on top of the recomputation's own error estimate
	// (Recheck.PreciseError, the N_S -> inf extrapolation error).
	CheckTolerance = 1e-8
)

// CheckRecord re-verifies one record on its own and returns why it fails (nil: it passes).
// It rebuilds the channel from the record and the map (X, Y) from its entries, checks that
// the key names that channel and energy, tests a claim of phase covariance by turning the
// squeezing angle of squeezed inputs (the objective must not change), then runs
// search.Certify: complete positivity in extended precision, the supremum over inputs, the
// extended-precision recomputation and the lower-bound comparison. The recomputed bound
// must equal the stored one within CheckTolerance * max(1, |bound|) + PreciseError.
func CheckRecord(rec Record) error {
	model, err := rec.Channel.Model()
	if err != nil {
		return fmt.Errorf("channel: %v", err)
	}
	p := search.Point{Model: model, Energy: float64(rec.Energy)}
	if err := p.Validate(); err != nil {
		return err
	}
	if p.Key() != rec.Key {
		return fmt.Errorf("key %q does not name the record's channel and energy (%s)", rec.Key, p.Key())
	}
	x, err := gaussian.FromRows(rec.Map.X)
	if err != nil {
		return fmt.Errorf("map X: %v", err)
	}
	y, err := gaussian.FromRows(rec.Map.Y)
	if err != nil {
		return fmt.Errorf("map Y: %v", err)
	}
	ch, err := gaussian.NewChannel(x, y)
	if err != nil {
		return fmt.Errorf("map: %v", err)
	}
	if ch.In != gaussian.EnvModes {
		return fmt.Errorf("map acts on %d modes, the environment has %d", ch.In, gaussian.EnvModes)
	}
	// Certify also tests a claim of phase covariance (search.CheckCovariance) before it
	// grants the thermal-input supremum.
	rc, _, err := search.Certify(p, &ch, rec.Covariant)
	if err != nil {
		return err
	}
	tol := CheckTolerance*math.Max(1, math.Abs(rec.Bound)) + rc.PreciseError
	if d := math.Abs(rc.Precise - rec.Bound); !(d <= tol) {
		return fmt.Errorf("stored bound %.12g differs from the recomputed %.12g by %.3g (tolerance %.3g)", rec.Bound, rc.Precise, d, tol)
	}
	return nil
}

// CheckFailure is one record that failed its check.
type CheckFailure struct {
	File string
	Line int
	Key  string
	Err  error
}

// CheckReport is the outcome of checking files.
type CheckReport struct {
	Files    []string
	Records  int
	Failures []CheckFailure
}

// ReadCheckInputs lists the record files of a path: the file itself, or a folder's *.jsonl
// files. It reads every file strictly before any check runs; a malformed file, a folder
// without record files or an unreadable path is an error (bad input).
func ReadCheckInputs(path string) ([]string, [][]Record, error) {
	st, err := os.Stat(path)
	if err != nil {
		return nil, nil, err
	}
	files := []string{path}
	if st.IsDir() {
		// A merged (or unsharded) folder has records.jsonl holding every point; its shard
		// files would only repeat them. Without it, every *.jsonl (the shards) is checked.
		if merged := filepath.Join(path, "records.jsonl"); fileExists(merged) {
			files = []string{merged}
		} else if files, err = RecordFiles(path); err != nil {
			return nil, nil, err
		}
		if len(files) == 0 {
			return nil, nil, fmt.Errorf("%s holds no *.jsonl record files", path)
		}
	}
	recs := make([][]Record, len(files))
	for i, f := range files {
		r, err := os.Open(f)
		if err != nil {
			return nil, nil, err
		}
		recs[i], err = ParseRecords(r, filepath.Base(f))
		r.Close()
		if err != nil {
			return nil, nil, err
		}
		if len(recs[i]) == 0 && !st.IsDir() {
			return nil, nil, errors.New(f + ": no records")
		}
	}
	return files, recs, nil
}

// CheckAll runs CheckRecord on every record with the given number of workers and returns
// the failures in file and line order.
func CheckAll(files []string, recs [][]Record, workers int) CheckReport {
	type job struct{ f, i int }
	var jobs []job
	for f := range recs {
		for i := range recs[f] {
			jobs = append(jobs, job{f, i})
		}
	}
	errs := make([]error, len(jobs))
	next := make(chan int)
	var wg sync.WaitGroup
	for range max(1, workers) {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for j := range next {
				errs[j] = CheckRecord(recs[jobs[j].f][jobs[j].i])
			}
		}()
	}
	for j := range jobs {
		next <- j
	}
	close(next)
	wg.Wait()
	rep := CheckReport{Files: files, Records: len(jobs)}
	for j, err := range errs {
		if err != nil {
			jb := jobs[j]
			rep.Failures = append(rep.Failures, CheckFailure{File: files[jb.f], Line: jb.i + 1,
				Key: recs[jb.f][jb.i].Key, Err: err})
		}
	}
	return rep
}

func fileExists(path string) bool {
	st, err := os.Stat(path)
	return err == nil && st.Mode().IsRegular()
}
