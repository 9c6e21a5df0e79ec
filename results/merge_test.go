package results

import (
	"bytes"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"keyceiling/search"
)

func TestMergeShardsEqualsSingleRun(t *testing.T) {
	ref := referenceRun(t)
	p := sweepTestPlan(t, sweepPlanText)
	dir := filepath.Join(t.TempDir(), "out")
	for i := 0; i < 3; i++ {
		sweepInto(t, dir, p, search.Shard{Index: i, Count: 3}, 1, 0)
	}
	if _, err := os.Stat(filepath.Join(dir, SummaryFile)); !os.IsNotExist(err) {
		t.Error("a shard wrote summary.csv")
	}
	m, err := LoadMerge(dir)
	if err != nil {
		t.Fatal(err)
	}
	if len(m.Missing) != 0 || m.NumRecords() != 6 || m.Duplicates != 0 {
		t.Fatalf("missing %v, %d records, %d duplicates", m.Missing, m.NumRecords(), m.Duplicates)
	}
	if err := m.Write(); err != nil {
		t.Fatal(err)
	}
	got := mustRead(t, filepath.Join(dir, RecordsFile))
	if withoutSeconds(got) != withoutSeconds(mustRead(t, filepath.Join(ref, RecordsFile))) {
		t.Errorf("merged records differ from the single run's")
	}
	if !bytes.Equal(mustRead(t, filepath.Join(dir, SummaryFile)), mustRead(t, filepath.Join(ref, SummaryFile))) {
		t.Errorf("merged summary differs from the single run's")
	}
	if !bytes.Equal(mustRead(t, filepath.Join(dir, PlanFile)), mustRead(t, filepath.Join(ref, PlanFile))) {
		t.Errorf("plan.txt differs")
	}
	// Merging again is idempotent: records.jsonl is read too, its copies are identical.
	m2, err := LoadMerge(dir)
	if err != nil {
		t.Fatal(err)
	}
	if m2.Duplicates != 6 {
		t.Errorf("%d duplicates on the second merge, want 6", m2.Duplicates)
	}
	if err := m2.Write(); err != nil {
		t.Fatal(err)
	}
	if again := mustRead(t, filepath.Join(dir, RecordsFile)); !bytes.Equal(again, got) {
		t.Error("second merge changed records.jsonl")
	}
}

func TestMergeProblems(t *testing.T) {
	ref := referenceRun(t)
	p := sweepTestPlan(t, sweepPlanText)
	base := filepath.Join(t.TempDir(), "base")
	for i := 0; i < 2; i++ {
		sweepInto(t, base, p, search.Shard{Index: i, Count: 2}, 1, 0)
	}
	clone := func(name string) string {
		dir := filepath.Join(filepath.Dir(base), name)
		os.MkdirAll(dir, 0o755)
		ents, _ := os.ReadDir(base)
		for _, e := range ents {
			os.WriteFile(filepath.Join(dir, e.Name()), mustRead(t, filepath.Join(base, e.Name())), 0o644)
		}
		return dir
	}
	// Missing points are listed in plan order and nothing is written.
	dir := clone("missing")
	os.Remove(filepath.Join(dir, "shard-1-of-2.jsonl"))
	m, err := LoadMerge(dir)
	if err != nil {
		t.Fatal(err)
	}
	if len(m.Missing) == 0 || len(m.Missing)+m.NumRecords() != 6 {
		t.Errorf("missing %v with %d records", m.Missing, m.NumRecords())
	}
	if err := m.Write(); err == nil {
		t.Error("Write with missing points succeeded")
	}
	if _, err := os.Stat(filepath.Join(dir, RecordsFile)); !os.IsNotExist(err) {
		t.Error("records.jsonl written with missing points")
	}
	// A shard killed mid-line: the torn line is ignored and reported.
	dir = clone("torn")
	f := filepath.Join(dir, "shard-0-of-2.jsonl")
	b := mustRead(t, f)
	os.WriteFile(f, b[:len(b)-10], 0o644)
	m, err = LoadMerge(dir)
	if err != nil || len(m.Torn) != 1 || len(m.Missing) != 1 {
		t.Errorf("torn: %v, torn %v, missing %v", err, m.Torn, m.Missing)
	}
	bad := []struct {
		name, want string
		prep       func(dir string)
	}{
		{"no plan", "has no plan.txt", func(d string) { os.Remove(filepath.Join(d, PlanFile)) }},
		{"other plan", "record of plan \"0123456789abcdef\"", func(d string) {
			f := filepath.Join(d, "shard-1-of-2.jsonl")
			os.WriteFile(f, bytes.ReplaceAll(mustRead(t, f), []byte(p.Hash()), []byte("0123456789abcdef")), 0o644)
		}},
		{"other version", "record of keyceiling 9.9.9", func(d string) {
			f := filepath.Join(d, "shard-1-of-2.jsonl")
			os.WriteFile(f, bytes.ReplaceAll(mustRead(t, f), []byte(`"version":"`+Version+`"`), []byte(`"version":"9.9.9"`)), 0o644)
		}},
		{"plan.txt of other version", "written by keyceiling 9.9.9", func(d string) {
			f := filepath.Join(d, PlanFile)
			os.WriteFile(f, bytes.Replace(mustRead(t, f), []byte("keyceiling "+Version), []byte("keyceiling 9.9.9"), 1), 0o644)
		}},
		{"conflict", "a different result for", func(d string) {
			recs := mustRead(t, filepath.Join(ref, RecordsFile))
			recs = bytes.Replace(recs, []byte(`"bound":`), []byte(`"bound":1`), 1)
			os.WriteFile(filepath.Join(d, RecordsFile), recs, 0o644)
		}},
		{"malformed", "shard-0-of-2.jsonl line 2: trailing data", func(d string) {
			f := filepath.Join(d, "shard-0-of-2.jsonl")
			lines := bytes.SplitAfter(mustRead(t, f), []byte("\n"))
			lines[1] = []byte("{\"format\":1}x\n")
			os.WriteFile(f, bytes.Join(lines, nil), 0o644)
		}},
		{"foreign point", "is not a searched point of the plan", func(d string) {
			f := filepath.Join(d, "shard-0-of-2.jsonl")
			os.WriteFile(f, bytes.Replace(mustRead(t, f), []byte(`"key":"thermal-loss eta=0.`), []byte(`"key":"thermal-loss eta=0.0`), 1), 0o644)
		}},
	}
	for _, c := range bad {
		dir := clone(strings.ReplaceAll(c.name, " ", "-"))
		c.prep(dir)
		if _, err := LoadMerge(dir); err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: error %v, want %q", c.name, err, c.want)
		}
	}
}
