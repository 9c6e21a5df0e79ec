package main

// End-to-end tests of sweep, merge and check: they build the real binary once (TestMain)
// and run it as a user would, checking exit statuses, files and bytes.

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"encoding/xml"
	"fmt"
	"image/png"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strings"
	"sync"
	"testing"
	"time"

	"keyceiling/results"
)

// e2eBin is the keyceiling binary built by TestMain.
var e2eBin string

func TestMain(m *testing.M) {
	dir, err := os.MkdirTemp("", "keyceiling-e2e-")
	if err != nil {
		fmt.Fprintln(os.Stderr, err)
		os.Exit(1)
	}
	e2eBin = filepath.Join(dir, "keyceiling")
	if out, err := exec.Command("go", "build", "-o", e2eBin, ".").CombinedOutput(); err != nil {
		fmt.Fprintf(os.Stderr, "go build: %v\n%s", err, out)
		os.RemoveAll(dir)
		os.Exit(1)
	}
	code := m.Run()
	os.RemoveAll(dir)
	os.Exit(code)
}

// e2ePlan is a small fast plan: tms-split without random starts, 8 points in 4 chains.
var e2ePlan, _ = filepath.Abs("../../testdata/plans/small.plan")

// e2eEnv is the environment without Slurm's variables (a test run inside a Slurm job must
// not become a shard), plus extra.
func e2eEnv(extra ...string) []string {
	var env []string
	for _, kv := range os.Environ() {
		if !strings.HasPrefix(kv, "SLURM_") {
			env = append(env, kv)
		}
	}
	return append(env, extra...)
}

type e2eResult struct {
	stdout, stderr string
	code           int
}

// e2eRun runs the binary in dir with args and the environment env (nil: e2eEnv()).
func e2eRun(t *testing.T, dir string, env []string, args ...string) e2eResult {
	t.Helper()
	cmd := exec.Command(e2eBin, args...)
	cmd.Dir = dir
	if env == nil {
		env = e2eEnv()
	}
	cmd.Env = env
	var out, errb bytes.Buffer
	cmd.Stdout, cmd.Stderr = &out, &errb
	err := cmd.Run()
	code := 0
	if ee, ok := err.(*exec.ExitError); ok {
		code = ee.ExitCode()
	} else if err != nil {
		t.Fatalf("keyceiling %v: %v", args, err)
	}
	return e2eResult{out.String(), errb.String(), code}
}

func e2eRead(t *testing.T, path string) []byte {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	return b
}

var e2eSeconds = regexp.MustCompile(`"seconds":[^,}]*`)

// e2eNoSeconds blanks the timing field, the only part of a record that may differ between runs.
func e2eNoSeconds(b []byte) string { return e2eSeconds.ReplaceAllString(string(b), `"seconds":0`) }

// e2eKeys returns the keys of a records file's lines.
func e2eKeys(t *testing.T, b []byte) []string {
	t.Helper()
	recs, err := results.ParseRecords(bytes.NewReader(b), "records")
	if err != nil {
		t.Fatal(err)
	}
	var keys []string
	for _, r := range recs {
		keys = append(keys, r.Key)
	}
	return keys
}

// The reference: an uninterrupted sweep of e2ePlan with 2 workers, made once.
var (
	e2eRefOnce sync.Once
	e2eRefDir  string
	e2eRefErr  string
)

func e2eReference(t *testing.T) string {
	t.Helper()
	e2eRefOnce.Do(func() {
		dir := filepath.Join(filepath.Dir(e2eBin), "reference")
		r := e2eRun(t, filepath.Dir(e2eBin), nil, "sweep", "--plan", e2ePlan, "--out", dir, "--workers", "2")
		if r.code != 0 {
			e2eRefErr = fmt.Sprintf("reference sweep: exit %d\n%s", r.code, r.stderr)
			return
		}
		e2eRefDir = dir
	})
	if e2eRefDir == "" {
		t.Fatal(e2eRefErr)
	}
	return e2eRefDir
}

// TestE2ESweepKillResume: the files of a sweep do not depend on the number of workers
// (seconds aside), and a sweep killed with SIGKILL after its first finished point and run
// again keeps the finished points, duplicates none, and ends with the files of an
// uninterrupted run.
func TestE2ESweepKillResume(t *testing.T) {
	ref := e2eReference(t)
	want := e2eRead(t, filepath.Join(ref, "records.jsonl"))
	if keys := e2eKeys(t, want); len(keys) != 8 {
		t.Fatalf("reference has %d records, want 8", len(keys))
	}
	dir := t.TempDir()
	// An uninterrupted run with 1 worker writes the bytes of the 2-worker reference.
	one := filepath.Join(dir, "one")
	if r := e2eRun(t, dir, nil, "sweep", "--plan", e2ePlan, "--out", one, "--workers", "1", "--quiet"); r.code != 0 || r.stderr != "" {
		t.Fatalf("1-worker sweep: exit %d\n%s", r.code, r.stderr)
	}
	if got := e2eRead(t, filepath.Join(one, "records.jsonl")); e2eNoSeconds(got) != e2eNoSeconds(want) {
		t.Errorf("records.jsonl of 1 and 2 workers differ:\n%s\nwant\n%s", got, want)
	}
	if !bytes.Equal(e2eRead(t, filepath.Join(one, "summary.csv")), e2eRead(t, filepath.Join(ref, "summary.csv"))) {
		t.Error("summary.csv of 1 and 2 workers differ")
	}

	out := filepath.Join(dir, "out")
	args := []string{"sweep", "--plan", e2ePlan, "--out", out, "--workers", "1"}
	cmd := exec.Command(e2eBin, args...)
	cmd.Dir, cmd.Env = dir, e2eEnv()
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	recFile := filepath.Join(out, "records.jsonl")
	deadline := time.Now().Add(2 * time.Minute)
	for {
		b, _ := os.ReadFile(recFile)
		if bytes.Count(b, []byte("\n")) >= 1 {
			break
		}
		if time.Now().After(deadline) {
			cmd.Process.Kill()
			cmd.Wait()
			t.Fatal("no record after 2 minutes")
		}
		time.Sleep(5 * time.Millisecond)
	}
	if err := cmd.Process.Kill(); err != nil {
		t.Fatal(err)
	}
	cmd.Wait()
	partial := e2eRead(t, recFile)
	done := bytes.Count(partial, []byte("\n"))
	if done >= 8 {
		t.Fatalf("the sweep finished all %d points before the kill: the test shows nothing", done)
	}
	t.Logf("killed after %d of 8 points", done)

	r := e2eRun(t, dir, nil, args...)
	if r.code != 0 {
		t.Fatalf("resumed sweep: exit %d\n%s", r.code, r.stderr)
	}
	if !strings.Contains(r.stderr, fmt.Sprintf("resuming: %d already done", done)) {
		t.Errorf("resumed sweep does not say it resumes %d points:\n%s", done, r.stderr)
	}
	got := e2eRead(t, recFile)
	// Finished points are kept as they were written (with their own seconds).
	for _, line := range bytes.SplitAfter(partial, []byte("\n")) {
		if len(line) > 0 && !bytes.Contains(got, line) {
			t.Errorf("a line of the killed run was not kept verbatim")
		}
	}
	keys := e2eKeys(t, got)
	seen := map[string]bool{}
	for _, k := range keys {
		if seen[k] {
			t.Errorf("point %s recorded twice", k)
		}
		seen[k] = true
	}
	if e2eNoSeconds(got) != e2eNoSeconds(want) {
		t.Errorf("records.jsonl differs from the uninterrupted 2-worker run:\n%s\nwant\n%s", got, want)
	}
	for _, f := range []string{"summary.csv", "plan.txt"} {
		if !bytes.Equal(e2eRead(t, filepath.Join(out, f)), e2eRead(t, filepath.Join(ref, f))) {
			t.Errorf("%s differs from the uninterrupted run", f)
		}
	}
	// Running the finished sweep again searches nothing and changes nothing.
	r = e2eRun(t, dir, nil, args...)
	if r.code != 0 || !strings.Contains(r.stderr, "(0 now, 8 earlier)") {
		t.Errorf("re-run of a finished sweep: exit %d\n%s", r.code, r.stderr)
	}
	if again := e2eRead(t, recFile); !bytes.Equal(again, got) {
		t.Error("re-running a finished sweep changed records.jsonl")
	}
}

// TestE2EShardsAndMerge: three shards run at once into one folder (one of them given its
// shard by Slurm's array variables), then merge writes the files of a single run.
func TestE2EShardsAndMerge(t *testing.T) {
	ref := e2eReference(t)
	dir := t.TempDir()
	out := filepath.Join(dir, "out")
	var wg sync.WaitGroup
	res := make([]e2eResult, 3)
	for i := 0; i < 3; i++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			args := []string{"sweep", "--plan", e2ePlan, "--out", out, "--workers", "1", "--quiet"}
			env := e2eEnv()
			if i == 1 { // array 4-6: task 5 is shard 1 of 3
				env = e2eEnv("SLURM_ARRAY_TASK_ID=5", "SLURM_ARRAY_TASK_MIN=4", "SLURM_ARRAY_TASK_COUNT=3", "SLURM_CPUS_PER_TASK=1")
			} else {
				args = append(args, "--shard", fmt.Sprintf("%d/3", i))
			}
			res[i] = e2eRun(t, dir, env, args...)
		}()
	}
	wg.Wait()
	for i, r := range res {
		if r.code != 0 || r.stderr != "" {
			t.Fatalf("shard %d: exit %d, stderr %q", i, r.code, r.stderr)
		}
		if _, err := os.Stat(filepath.Join(out, fmt.Sprintf("shard-%d-of-3.jsonl", i))); err != nil {
			t.Errorf("shard %d: %v", i, err)
		}
	}
	// A missing shard: merge lists the missing points and writes nothing.
	hidden := filepath.Join(dir, "shard-2-of-3.jsonl")
	if err := os.Rename(filepath.Join(out, "shard-2-of-3.jsonl"), hidden); err != nil {
		t.Fatal(err)
	}
	missing := bytes.Count(e2eRead(t, hidden), []byte("\n"))
	r := e2eRun(t, dir, nil, "merge", out)
	if r.code != 1 || strings.Count(r.stderr, "missing: thermal-loss ") != missing {
		t.Errorf("merge with a missing shard: exit %d, want 1 and %d missing keys\n%s", r.code, missing, r.stderr)
	}
	if _, err := os.Stat(filepath.Join(out, "records.jsonl")); !os.IsNotExist(err) {
		t.Error("merge wrote records.jsonl with points missing")
	}
	os.Rename(hidden, filepath.Join(out, "shard-2-of-3.jsonl"))

	r = e2eRun(t, dir, nil, "merge", out)
	if r.code != 0 || !strings.Contains(r.stdout, "merged 8 records from 3 files") {
		t.Fatalf("merge: exit %d\n%s%s", r.code, r.stdout, r.stderr)
	}
	merged := e2eRead(t, filepath.Join(out, "records.jsonl"))
	if e2eNoSeconds(merged) != e2eNoSeconds(e2eRead(t, filepath.Join(ref, "records.jsonl"))) {
		t.Error("merged records.jsonl differs from a single run's")
	}
	for _, f := range []string{"summary.csv", "plan.txt"} {
		if !bytes.Equal(e2eRead(t, filepath.Join(out, f)), e2eRead(t, filepath.Join(ref, f))) {
			t.Errorf("merged %s differs from a single run's", f)
		}
	}
	// Idempotent.
	r = e2eRun(t, dir, nil, "merge", out)
	if r.code != 0 || !bytes.Equal(e2eRead(t, filepath.Join(out, "records.jsonl")), merged) {
		t.Errorf("second merge: exit %d, or records.jsonl changed", r.code)
	}
	// A shard of another plan is refused.
	other := filepath.Join(dir, "other")
	r = e2eRun(t, dir, nil, "sweep", "--eta", "0.5", "--energy", "1", "--family", "split", "--out", other, "--quiet", "--shard", "0/2")
	if r.code != 0 {
		t.Fatalf("other sweep: %d %s", r.code, r.stderr)
	}
	os.WriteFile(filepath.Join(out, "shard-0-of-2.jsonl"), e2eRead(t, filepath.Join(other, "shard-0-of-2.jsonl")), 0o644)
	r = e2eRun(t, dir, nil, "merge", out)
	if r.code != 2 || !strings.Contains(r.stderr, "record of plan") {
		t.Errorf("merge with a foreign shard: exit %d\n%s", r.code, r.stderr)
	}
}

// TestE2ECheck: check passes good records and fails altered ones (exit 1, one line per
// failure naming the key), and refuses malformed files (exit 2).
func TestE2ECheck(t *testing.T) {
	ref := e2eReference(t)
	r := e2eRun(t, ref, nil, "check", ref)
	if r.code != 0 || !strings.Contains(r.stdout, "checked 8 records in 1 files: 8 passed, 0 failed") {
		t.Fatalf("check of good records: exit %d\n%s%s", r.code, r.stdout, r.stderr)
	}
	lines := bytes.SplitAfter(e2eRead(t, filepath.Join(ref, "records.jsonl")), []byte("\n"))
	alter := func(name string, i int, edit func(rec map[string]any)) (string, string) {
		var rec map[string]any
		dec := json.NewDecoder(bytes.NewReader(lines[i]))
		dec.UseNumber()
		if err := dec.Decode(&rec); err != nil {
			t.Fatal(err)
		}
		edit(rec)
		b, err := json.Marshal(rec)
		if err != nil {
			t.Fatal(err)
		}
		var all []byte
		for j, l := range lines {
			if j == i {
				l = append(b, '\n')
			}
			all = append(all, l...)
		}
		path := filepath.Join(t.TempDir(), name)
		if err := os.WriteFile(path, all, 0o644); err != nil {
			t.Fatal(err)
		}
		return path, rec["key"].(string)
	}
	num := func(v any) float64 {
		f, err := v.(json.Number).Float64()
		if err != nil {
			t.Fatal(err)
		}
		return f
	}
	lowered, key1 := alter("lowered.jsonl", 2, func(rec map[string]any) { rec["bound"] = num(rec["bound"]) - 0.01 })
	xEdited, key2 := alter("x.jsonl", 5, func(rec map[string]any) {
		x := rec["map"].(map[string]any)["X"].([]any)
		row := x[0].([]any)
		row[1] = num(row[1]) + 0.02
	})
	for _, c := range []struct{ path, key string }{{lowered, key1}, {xEdited, key2}} {
		r := e2eRun(t, ref, nil, "check", c.path)
		if r.code != 1 || !strings.Contains(r.stdout, "FAIL "+c.key+" (") || !strings.Contains(r.stdout, "8 records in 1 files: 7 passed, 1 failed") {
			t.Errorf("check %s: exit %d, want 1 with a failure for %s\n%s%s", filepath.Base(c.path), r.code, c.key, r.stdout, r.stderr)
		}
	}
	bad := filepath.Join(t.TempDir(), "bad.jsonl")
	os.WriteFile(bad, append(append([]byte(nil), lines[0]...), []byte("{\"format\":1,\n")...), 0o644)
	if r := e2eRun(t, ref, nil, "check", bad); r.code != 2 || strings.Count(r.stderr, "\n") != 1 {
		t.Errorf("check of a malformed file: exit %d, stderr %q", r.code, r.stderr)
	}
}

// TestE2EBadInput: every bad input exits 2 with one line on stderr and creates nothing.
func TestE2EBadInput(t *testing.T) {
	dir := t.TempDir()
	plans, _ := filepath.Abs("../../testdata/plans")
	file := filepath.Join(dir, "regular-file")
	os.WriteFile(file, []byte("x"), 0o644)
	badJSONL := filepath.Join(dir, "bad.jsonl")
	os.WriteFile(badJSONL, []byte("{\"format\":1}\nnot json\n"), 0o644)
	existing := filepath.Join(dir, "existing")
	if r := e2eRun(t, dir, nil, "sweep", "--eta", "0.5", "--energy", "1", "--family", "split", "--out", existing, "--quiet"); r.code != 0 {
		t.Fatalf("setup sweep: %d %s", r.code, r.stderr)
	}
	existingBefore := e2eTree(t, existing)
	out := filepath.Join(dir, "out")
	cases := []struct {
		name string
		env  []string
		args []string
		want string
	}{
		{"unknown channel", nil, []string{"sweep", "--channel", "warp-drive", "--eta", "0.5", "--out", out}, "unknown channel"},
		{"eta out of range", nil, []string{"sweep", "--eta", "1.5", "--out", out}, "eta 1.5 is out of range"},
		{"eta not a number", nil, []string{"sweep", "--eta", "abc", "--out", out}, "\"abc\" is not a number"},
		{"energy nan", nil, []string{"sweep", "--eta", "0.5", "--energy", "nan", "--out", out}, "\"nan\" is not a number"},
		{"energy negative", nil, []string{"sweep", "--eta", "0.5", "--energy", "-1", "--out", out}, "energy -1 is out of range"},
		{"unknown family", nil, []string{"sweep", "--eta", "0.5", "--family", "best", "--out", out}, "unknown family"},
		{"bad range", nil, []string{"sweep", "--eta", "0.9:0.1:3", "--out", out}, "want FROM < TO"},
		{"flag for another channel", nil, []string{"sweep", "--eta", "0.5", "--gain", "2", "--out", out}, "gain does not apply"},
		{"malformed plan", nil, []string{"sweep", "--plan", filepath.Join(plans, "bad-unknown.plan"), "--out", out}, "bad-unknown.plan:5: unknown keyword \"temperature\""},
		{"truncated plan", nil, []string{"sweep", "--plan", filepath.Join(plans, "bad-truncated.plan"), "--out", out}, "truncated"},
		{"plan cut mid-line", nil, []string{"sweep", "--plan", filepath.Join(plans, "bad-cut-mid-line.plan"), "--out", out}, "bad-cut-mid-line.plan:4"},
		{"missing plan", nil, []string{"sweep", "--plan", filepath.Join(dir, "nope.plan"), "--out", out}, "no such file"},
		{"plan and grid flags", nil, []string{"sweep", "--plan", e2ePlan, "--eta", "0.5", "--out", out}, "cannot be combined with --plan"},
		{"bad search flag in plan mode", nil, []string{"sweep", "--plan", e2ePlan, "--starts", "-5", "--out", out}, "--starts: starts -5 is out of range"},
		{"out under a regular file", nil, []string{"sweep", "--plan", e2ePlan, "--out", filepath.Join(file, "out")}, "is not a directory"},
		{"out is a regular file", nil, []string{"sweep", "--plan", e2ePlan, "--out", file}, "is not a directory"},
		{"folder of another plan", nil, []string{"sweep", "--plan", e2ePlan, "--out", existing}, "holds a different plan"},
		{"shard 3/2", nil, []string{"sweep", "--plan", e2ePlan, "--shard", "3/2", "--out", out}, "want I/N"},
		{"shard garbage", nil, []string{"sweep", "--plan", e2ePlan, "--shard", "x", "--out", out}, "want I/N"},
		{"workers 0", nil, []string{"sweep", "--plan", e2ePlan, "--workers", "0", "--out", out}, "--workers 0"},
		{"bad SLURM_CPUS_PER_TASK", e2eEnv("SLURM_CPUS_PER_TASK=many"), []string{"sweep", "--plan", e2ePlan, "--out", out}, "SLURM_CPUS_PER_TASK"},
		{"bad Slurm array task", e2eEnv("SLURM_ARRAY_TASK_ID=7", "SLURM_ARRAY_TASK_MIN=0", "SLURM_ARRAY_TASK_COUNT=4"), []string{"sweep", "--plan", e2ePlan, "--out", out}, "does not name a shard"},
		{"stray argument", nil, []string{"sweep", "--plan", e2ePlan, "--out", out, "extra"}, "unexpected argument"},
		{"unknown flag", nil, []string{"sweep", "--colour", "blue", "--out", out}, "unknown flag"},
		{"check malformed jsonl", nil, []string{"check", badJSONL}, "bad.jsonl line 1: record of tool"},
		{"check missing file", nil, []string{"check", filepath.Join(dir, "nope.jsonl")}, "no such file"},
		{"check no argument", nil, []string{"check"}, "want one record file"},
		{"merge missing folder", nil, []string{"merge", filepath.Join(dir, "nope")}, "no such file"},
		{"merge folder without plan", nil, []string{"merge", dir}, "has no plan.txt"},
		{"bound general at inf", nil, []string{"bound", "--eta", "0.5", "--family", "general", "--energy", "inf"}, "needs a finite --energy"},
		{"bound eta missing", nil, []string{"bound", "--energy", "1"}, "needs --eta or --loss-db"},
		{"bound loss and eta", nil, []string{"bound", "--eta", "0.5", "--loss-db", "3"}, "not both"},
		{"bound gain too small", nil, []string{"bound", "--channel", "amplifier", "--gain", "0.5"}, "gain = 0.5 is out of range"},
		{"bound xi nan", nil, []string{"bound", "--channel", "additive", "--xi", "NaN"}, "not a finite number"},
		{"bound bad format", nil, []string{"bound", "--eta", "0.5", "--format", "yaml"}, "--format"},
		{"bound bad method", nil, []string{"bound", "--eta", "0.5", "--method", "annealing"}, "unknown method"},
		{"bound negative noise", nil, []string{"bound", "--eta", "0.5", "--noise", "-0.1"}, "noise = -0.1 is out of range"},
	}
	for _, c := range cases {
		before := e2eTree(t, dir)
		r := e2eRun(t, dir, c.env, c.args...)
		if r.code != 2 {
			t.Errorf("%s: exit %d, want 2\n%s", c.name, r.code, r.stderr)
		}
		if strings.Count(r.stderr, "\n") != 1 || !strings.HasSuffix(r.stderr, "\n") || !strings.Contains(r.stderr, c.want) {
			t.Errorf("%s: stderr %q, want one line containing %q", c.name, r.stderr, c.want)
		}
		if r.stdout != "" {
			t.Errorf("%s: stdout %q", c.name, r.stdout)
		}
		if after := e2eTree(t, dir); after != before {
			t.Errorf("%s: files changed:\n%s\n--- before:\n%s", c.name, after, before)
		}
	}
	if _, err := os.Stat(out); !os.IsNotExist(err) {
		t.Error("an output folder was created")
	}
	if e2eTree(t, existing) != existingBefore {
		t.Error("the existing folder changed")
	}
}

// e2eTree lists every file under dir with its contents.
func e2eTree(t *testing.T, dir string) string {
	var b strings.Builder
	filepath.Walk(dir, func(path string, info os.FileInfo, err error) error {
		if err != nil {
			return err
		}
		fmt.Fprintf(&b, "%s %v\n", path, info.Mode())
		if info.Mode().IsRegular() {
			data, _ := os.ReadFile(path)
			b.Write(data)
		}
		return nil
	})
	return b.String()
}

func TestE2EHelp(t *testing.T) {
	for _, c := range []string{"sweep", "merge", "check"} {
		r := e2eRun(t, t.TempDir(), nil, c, "--help")
		if r.code != 0 || !strings.Contains(r.stdout, "Usage: keyceiling "+c) || !strings.Contains(r.stdout, "Example:\n  keyceiling "+c) {
			t.Errorf("%s --help: exit %d\n%s", c, r.code, r.stdout)
		}
	}
	r := e2eRun(t, t.TempDir(), nil, "--help")
	for _, c := range []string{"sweep", "merge", "check"} {
		if !strings.Contains(r.stdout, "\n  "+c+" ") {
			t.Errorf("keyceiling --help does not list %s", c)
		}
	}
}

// TestE2EDemo runs `keyceiling sweep` without arguments: the built-in demo plan, which must
// finish (under two minutes on two cores) and write its files into ./keyceiling-out. It is
// the slowest test here; -short skips it (CI runs it).
func TestE2EDemo(t *testing.T) {
	if testing.Short() {
		t.Skip("the demo sweep takes about a minute; run without -short")
	}
	dir := t.TempDir()
	start := time.Now()
	r := e2eRun(t, dir, nil, "sweep")
	secs := time.Since(start).Seconds()
	t.Logf("demo sweep: %.1f s\n%s", secs, r.stderr)
	if r.code != 0 {
		t.Fatalf("demo sweep: exit %d\n%s", r.code, r.stderr)
	}
	out := filepath.Join(dir, "keyceiling-out")
	// 5 losses x 3 noise levels x 6 energies; 80 km at N_B = 0.05 is entanglement breaking
	// (N_B >= eta/(1-eta)), so its 6 points are not searched.
	if keys := e2eKeys(t, e2eRead(t, filepath.Join(out, "records.jsonl"))); len(keys) != 84 {
		t.Errorf("%d records, want 84", len(keys))
	}
	rows, err := csv.NewReader(bytes.NewReader(e2eRead(t, filepath.Join(out, "summary.csv")))).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	breaking := 0
	for _, row := range rows[1:] {
		if row[len(row)-1] == "entanglement-breaking" {
			breaking++
		}
	}
	if len(rows) != 91 || breaking != 6 {
		t.Errorf("summary.csv: %d rows, %d entanglement breaking; want 91 and 6", len(rows), breaking)
	}
	// The demo's table and figures, read back.
	md := string(e2eRead(t, filepath.Join(out, "table.md")))
	if n := strings.Count(md, "\n|"); n != 85 { // header rule + 84 rows after the header line
		t.Errorf("table.md has %d table lines after the header, want 85", n)
	}
	for _, name := range []string{"bounds-vs-loss-ns1", "bounds-vs-loss-unconstrained", "crossover"} {
		img, err := png.Decode(bytes.NewReader(e2eRead(t, filepath.Join(out, name+".png"))))
		if err != nil {
			t.Errorf("%s.png: %v", name, err)
			continue
		}
		if b := img.Bounds(); b.Dx() < 600 || b.Dy() < 400 {
			t.Errorf("%s.png is %v", name, b)
		}
		if err := xml.Unmarshal(e2eRead(t, filepath.Join(out, name+".svg")), new(struct{})); err != nil {
			t.Errorf("%s.svg is not XML: %v", name, err)
		}
	}
	if !strings.Contains(string(e2eRead(t, filepath.Join(out, "plan.txt"))), "loss-db 1, 2, 4, 8, 16\n") {
		t.Error("plan.txt is not the demo plan")
	}
	if c := e2eRun(t, dir, nil, "check", "keyceiling-out"); c.code != 0 {
		t.Errorf("check of the demo: exit %d\n%s", c.code, c.stdout)
	}
	if secs > 120 {
		t.Logf("WARNING: the demo took %.0f s, more than the two minutes it is sized for", secs)
	}
}

// `bound --format json` prints one record on one line, so its output appended to a file is a
// record file that check and table accept.
func TestE2EBoundRecordsAreCheckable(t *testing.T) {
	dir := t.TempDir()
	var lines []byte
	for _, energy := range []string{"2", "inf"} {
		r := e2eRun(t, dir, nil, "bound", "--eta", "0.7", "--noise", "0.1", "--energy", energy,
			"--family", "tms-split", "--starts", "-1", "--format", "json")
		if r.code != 0 || strings.Count(r.stdout, "\n") != 1 {
			t.Fatalf("bound --energy %s: exit %d, stdout %d lines\n%s", energy, r.code, strings.Count(r.stdout, "\n"), r.stderr)
		}
		lines = append(lines, r.stdout...)
	}
	if err := os.WriteFile(filepath.Join(dir, "mine.jsonl"), lines, 0o644); err != nil {
		t.Fatal(err)
	}
	if c := e2eRun(t, dir, nil, "check", "mine.jsonl"); c.code != 0 || !strings.Contains(c.stdout, "2 passed, 0 failed") {
		t.Errorf("check: exit %d\n%s%s", c.code, c.stdout, c.stderr)
	}
}
