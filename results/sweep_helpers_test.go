package results

import (
	"context"
	"errors"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"

	"keyceiling/search"
)

// sweepPlanText is fast (the split family): 3 chains of 2 searched points, and one
// entanglement-breaking chain (eta 0.3 with N_B = 0.5 >= 0.3/0.7).
const sweepPlanText = `keyceiling-plan 1
channel thermal-loss
eta 0.3, 0.7
noise 0, 0.5
energy 2, inf
family split
seed 5
end
`

func sweepTestPlan(t *testing.T, text string) *search.Plan {
	t.Helper()
	p, err := search.ParsePlan(strings.NewReader(text), "test.plan")
	if err != nil {
		t.Fatal(err)
	}
	return p
}

var errStopSweep = errors.New("stop")

// sweepInto runs the plan's shard into dir the way `keyceiling sweep` does. With limit > 0 it
// stops after that many new points and leaves the folder as a killed run would (no Finish).
func sweepInto(t *testing.T, dir string, p *search.Plan, sh search.Shard, workers, limit int) {
	t.Helper()
	out, err := PrepareOutput(dir, p, sh)
	if err != nil {
		t.Fatal(err)
	}
	if err := out.Open(); err != nil {
		t.Fatal(err)
	}
	n := 0
	cfg := search.SweepConfig{Settings: p.Settings, Seed: p.Seed, Workers: workers,
		Stored: func(pp search.PlanPoint) ([]search.Stage, bool) {
			rec, ok := out.Stored(pp.Point.Key())
			return rec.Stages, ok
		},
		Done: func(pp search.PlanPoint, res search.Result, secs float64, err error) error {
			if err != nil {
				t.Errorf("%s: %v", pp.Point.Key(), err)
				return nil
			}
			rec := NewRecord(res, p.Settings, p.Seed, secs)
			rec.Plan = out.Hash
			if err := out.Append(rec); err != nil {
				return err
			}
			n++
			if limit > 0 && n >= limit {
				return errStopSweep
			}
			return nil
		}}
	err = search.Sweep(context.Background(), p.ChainsOf(sh), cfg)
	if limit > 0 && errors.Is(err, errStopSweep) {
		out.Close()
		return
	}
	if err != nil {
		t.Fatal(err)
	}
	if err := out.Finish(); err != nil {
		t.Fatal(err)
	}
}

var secondsRE = regexp.MustCompile(`"seconds":[^,}]*`)

// withoutSeconds blanks the timing field of every record line.
func withoutSeconds(b []byte) string {
	return secondsRE.ReplaceAllString(string(b), `"seconds":0`)
}

func mustRead(t *testing.T, path string) []byte {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	return b
}

// referenceRun is an uninterrupted unsharded run of sweepPlanText with one worker, made once.
var referenceRunDir string

func referenceRun(t *testing.T) string {
	t.Helper()
	if referenceRunDir == "" {
		dir, err := os.MkdirTemp("", "keyceiling-results-ref-")
		if err != nil {
			t.Fatal(err)
		}
		sweepInto(t, dir, sweepTestPlan(t, sweepPlanText), search.Shard{}, 1, 0)
		referenceRunDir = dir
	}
	return referenceRunDir
}

func TestMain(m *testing.M) {
	code := m.Run()
	if referenceRunDir != "" {
		os.RemoveAll(referenceRunDir)
	}
	os.Exit(code)
}

func referenceRecords(t *testing.T) []Record {
	recs, err := ReadRecordsFile(filepath.Join(referenceRun(t), RecordsFile))
	if err != nil {
		t.Fatal(err)
	}
	return recs
}
