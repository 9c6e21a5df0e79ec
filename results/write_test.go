package results

import (
	"bytes"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"keyceiling/search"
)

func TestSweepOutputFiles(t *testing.T) {
	ref := referenceRun(t)
	p := sweepTestPlan(t, sweepPlanText)
	plan := mustRead(t, filepath.Join(ref, PlanFile))
	if string(plan) != PlanText(p) || !strings.HasPrefix(string(plan), "# keyceiling "+Version+" resolved plan; plan-hash "+p.Hash()+"\n") {
		t.Errorf("plan.txt:\n%s", plan)
	}
	// plan.txt is itself a plan file for the same plan.
	back, version, hash, err := ReadPlanFile(filepath.Join(ref, PlanFile))
	if err != nil || version != Version || hash != p.Hash() || back.Hash() != p.Hash() {
		t.Errorf("ReadPlanFile: %v %s %s", err, version, hash)
	}
	recs := referenceRecords(t)
	if len(recs) != 6 {
		t.Fatalf("%d records, want 6 (8 points, 2 entanglement breaking)", len(recs))
	}
	i := 0
	for _, pp := range p.Points() {
		if pp.Breaking {
			continue
		}
		if recs[i].Key != pp.Point.Key() || recs[i].Plan != p.Hash() {
			t.Errorf("record %d is %s (plan %s), want %s in plan order", i, recs[i].Key, recs[i].Plan, pp.Point.Key())
		}
		i++
	}
	// No temporary files are left behind.
	ents, _ := os.ReadDir(ref)
	var names []string
	for _, e := range ents {
		names = append(names, e.Name())
	}
	if strings.Join(names, " ") != "plan.txt records.jsonl summary.csv" {
		t.Errorf("folder holds %v", names)
	}
}

func TestResumeAfterTornLine(t *testing.T) {
	want := mustRead(t, filepath.Join(referenceRun(t), RecordsFile))
	wantSummary := mustRead(t, filepath.Join(referenceRun(t), SummaryFile))
	p := sweepTestPlan(t, sweepPlanText)
	dir := filepath.Join(t.TempDir(), "out")
	sweepInto(t, dir, p, search.Shard{}, 2, 3) // "killed" after 3 points
	path := filepath.Join(dir, RecordsFile)
	data := mustRead(t, path)
	if n := bytes.Count(data, []byte("\n")); n != 3 {
		t.Fatalf("%d lines after the interrupted run", n)
	}
	// A kill during a write leaves part of a line.
	torn := append(append([]byte(nil), data...), data[:len(data)/5]...)
	if err := os.WriteFile(path, torn, 0o644); err != nil {
		t.Fatal(err)
	}
	out, err := PrepareOutput(dir, p, search.Shard{})
	if err != nil {
		t.Fatalf("a torn last line must be accepted: %v", err)
	}
	if out.NumStored() != 3 {
		t.Errorf("%d stored points, want 3", out.NumStored())
	}
	if got := mustRead(t, path); !bytes.Equal(got, torn) {
		t.Error("PrepareOutput wrote")
	}
	if err := out.Open(); err != nil {
		t.Fatal(err)
	}
	if got := mustRead(t, path); !bytes.Equal(got, data) {
		t.Errorf("Open did not cut the torn line back to the last complete one")
	}
	out.Close()
	sweepInto(t, dir, p, search.Shard{}, 2, 0)
	if got := mustRead(t, path); withoutSeconds(got) != withoutSeconds(want) {
		t.Errorf("resumed records differ from an uninterrupted run:\n%s\n%s", got, want)
	}
	// The three records of the first run are kept as they were (their own seconds).
	got := mustRead(t, path)
	for _, line := range bytes.SplitAfter(data, []byte("\n")) {
		if len(line) > 0 && !bytes.Contains(got, line) {
			t.Errorf("line of the first run not kept verbatim")
		}
	}
	if got := mustRead(t, filepath.Join(dir, SummaryFile)); !bytes.Equal(got, wantSummary) {
		t.Errorf("summary differs:\n%s\n%s", got, wantSummary)
	}
	// Running again changes nothing.
	sweepInto(t, dir, p, search.Shard{}, 1, 0)
	if again := mustRead(t, path); !bytes.Equal(again, got) {
		t.Error("a finished run re-run rewrote its records")
	}
}

func TestPrepareOutputRefusals(t *testing.T) {
	p := sweepTestPlan(t, sweepPlanText)
	other := sweepTestPlan(t, strings.Replace(sweepPlanText, "seed 5", "seed 6", 1))
	tmp := t.TempDir()
	file := filepath.Join(tmp, "file")
	if err := os.WriteFile(file, []byte("x"), 0o644); err != nil {
		t.Fatal(err)
	}
	copyRef := func(name string) string {
		dir := filepath.Join(tmp, name)
		if err := os.MkdirAll(dir, 0o755); err != nil {
			t.Fatal(err)
		}
		for _, f := range []string{PlanFile, RecordsFile} {
			if err := os.WriteFile(filepath.Join(dir, f), mustRead(t, filepath.Join(referenceRun(t), f)), 0o644); err != nil {
				t.Fatal(err)
			}
		}
		return dir
	}
	edit := func(dir, name, old, new string) {
		b := mustRead(t, filepath.Join(dir, name))
		if !bytes.Contains(b, []byte(old)) {
			t.Fatalf("%s has no %q", name, old)
		}
		if err := os.WriteFile(filepath.Join(dir, name), bytes.Replace(b, []byte(old), []byte(new), 1), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	cases := []struct {
		name string
		dir  func() string
		plan *search.Plan
		want string
	}{
		{"regular file", func() string { return file }, p, "is not a directory"},
		{"under a regular file", func() string { return filepath.Join(file, "out") }, p, "is not a directory"},
		{"different plan", func() string { return copyRef("a") }, other, "holds a different plan"},
		{"different version", func() string {
			d := copyRef("b")
			edit(d, PlanFile, "keyceiling "+Version+" resolved", "keyceiling 0.0.1 resolved")
			return d
		}, p, "written by keyceiling 0.0.1"},
		{"hand-edited plan", func() string {
			d := copyRef("c")
			edit(d, PlanFile, "seed 5", "seed 7")
			return d
		}, p, "edited by hand"},
		{"not a plan.txt", func() string {
			d := copyRef("d")
			os.WriteFile(filepath.Join(d, PlanFile), []byte("hello\n"), 0o644)
			return d
		}, p, "not a plan.txt written by keyceiling"},
		{"records without plan", func() string {
			d := copyRef("e")
			os.Remove(filepath.Join(d, PlanFile))
			return d
		}, p, "holds result files but no plan.txt"},
		{"malformed records", func() string {
			d := copyRef("f")
			edit(d, RecordsFile, `"format":1`, `"format":"one"`)
			return d
		}, p, "records.jsonl line 1: not a result record"},
		{"record of another plan", func() string {
			d := copyRef("g")
			edit(d, RecordsFile, `"plan_hash":"`+p.Hash()+`"`, `"plan_hash":"0123456789abcdef"`)
			return d
		}, p, "record of plan \"0123456789abcdef\""},
		{"conflicting duplicate", func() string {
			d := copyRef("h")
			b := mustRead(t, filepath.Join(d, RecordsFile))
			first := b[:bytes.IndexByte(b, '\n')+1]
			changed := bytes.Replace(first, []byte(`"evaluations":`), []byte(`"evaluations":1`), 1)
			os.WriteFile(filepath.Join(d, RecordsFile), append(b, changed...), 0o644)
			return d
		}, p, "a second, different result"},
	}
	for _, c := range cases {
		dir := c.dir()
		before := treeSnapshot(t, tmp)
		_, err := PrepareOutput(dir, c.plan, search.Shard{})
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: error %v, want %q", c.name, err, c.want)
		}
		if after := treeSnapshot(t, tmp); after != before {
			t.Errorf("%s: PrepareOutput changed the files", c.name)
		}
	}
	// Identical duplicates (seconds aside) are accepted and kept once.
	d := copyRef("dup")
	b := mustRead(t, filepath.Join(d, RecordsFile))
	first := b[:bytes.IndexByte(b, '\n')+1]
	dup := secondsRE.ReplaceAll(first, []byte(`"seconds":99`))
	os.WriteFile(filepath.Join(d, RecordsFile), append(b, dup...), 0o644)
	out, err := PrepareOutput(d, p, search.Shard{})
	if err != nil || out.NumStored() != 6 {
		t.Errorf("identical duplicate: %v", err)
	}
}

// treeSnapshot describes every file under dir with its size and contents' hash.
func treeSnapshot(t *testing.T, dir string) string {
	var b strings.Builder
	filepath.Walk(dir, func(path string, info os.FileInfo, err error) error {
		if err != nil {
			return err
		}
		b.WriteString(path)
		if !info.IsDir() {
			data, _ := os.ReadFile(path)
			b.Write(data)
		}
		b.WriteByte('\n')
		return nil
	})
	return b.String()
}

func TestCreatableDoesNotCreate(t *testing.T) {
	tmp := t.TempDir()
	p := sweepTestPlan(t, sweepPlanText)
	dir := filepath.Join(tmp, "a", "b", "c")
	if _, err := PrepareOutput(dir, p, search.Shard{}); err != nil {
		t.Fatal(err)
	}
	if _, err := os.Stat(filepath.Join(tmp, "a")); !os.IsNotExist(err) {
		t.Error("PrepareOutput created a folder")
	}
}

func TestWriteFileAtomic(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "f.csv")
	for _, s := range []string{"one\n", "two\n"} {
		if err := WriteFileAtomic(path, []byte(s)); err != nil {
			t.Fatal(err)
		}
		if got := mustRead(t, path); string(got) != s {
			t.Errorf("got %q", got)
		}
	}
	ents, _ := os.ReadDir(dir)
	if len(ents) != 1 {
		t.Errorf("%d files left", len(ents))
	}
	if err := WriteFileAtomic(filepath.Join(dir, "missing", "f"), nil); err == nil {
		t.Error("no error for a missing folder")
	}
}

func TestShardFileNames(t *testing.T) {
	for sh, want := range map[search.Shard]string{{}: "records.jsonl", {Index: 0, Count: 1}: "records.jsonl",
		{Index: 2, Count: 5}: "shard-2-of-5.jsonl"} {
		if got := RecordsFileOf(sh); got != want {
			t.Errorf("%v: %s, want %s", sh, got, want)
		}
	}
}
