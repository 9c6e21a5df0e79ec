package search

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// FuzzParsePlan checks that no input makes ParsePlan panic or print a multi-line error, and
// that every accepted plan survives the round trip through its canonical form with the same
// points and hash. Seeds: the plan files in ../testdata/plans, the corpus in
// testdata/fuzz/FuzzParsePlan and the literals below.
func FuzzParsePlan(f *testing.F) {
	files, _ := filepath.Glob("../testdata/plans/*.plan")
	for _, file := range files {
		if data, err := os.ReadFile(file); err == nil {
			f.Add(string(data))
		}
	}
	f.Add("keyceiling-plan 1\nchannel thermal-loss\neta 0.5\nenergy 1\nend\n")
	f.Add("keyceiling-plan 1\nchannel amplifier\ngain 1.5:4:3log\nnoise 0,1\nenergy inf\nend")
	f.Add("keyceiling-plan 1\nchannel additive\nxi 0.1\nenergy 0.5:2:3, inf\nstarts -1\nseed 18446744073709551615\nend\n")
	f.Add("keyceiling-plan 1\nchannel thermal-loss\nloss-db 3\nenergy 1\nend\nend\n")
	f.Add("keyceiling-plan 1\r\nchannel thermal-loss # c\r\neta 1e-3:0.5:2\r\nenergy 1e+2\r\nend\r\n")
	f.Fuzz(func(t *testing.T, text string) {
		p, err := ParsePlan(strings.NewReader(text), "f.plan")
		if err != nil {
			if msg := err.Error(); strings.Contains(msg, "\n") || !strings.HasPrefix(msg, "f.plan:") {
				t.Fatalf("error %q is not one line naming f.plan:LINE", msg)
			}
			return
		}
		n := p.NumPoints()
		if n < 1 || n > MaxPlanPoints {
			t.Fatalf("%d points", n)
		}
		if n > 5000 {
			return // big plans parse fine (TestPlanContinuationLines); keep the fuzzer fast
		}
		q, err := ParsePlan(strings.NewReader(p.Format()), "canonical")
		if err != nil {
			t.Fatalf("canonical form rejected: %v\n%s", err, p.Format())
		}
		if q.Format() != p.Format() || q.Hash() != p.Hash() {
			t.Fatalf("round trip changed the plan:\n%s\n%s", p.Format(), q.Format())
		}
		pts := p.Points()
		if len(pts) != n {
			t.Fatalf("%d points, NumPoints %d", len(pts), n)
		}
		for _, pp := range pts {
			if err := pp.Point.Validate(); err != nil {
				t.Fatalf("point %s: %v", pp.Point.Key(), err)
			}
		}
	})
}
