package main

import (
	"bufio"
	"bytes"
	"encoding/json"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"reflect"
	"regexp"
	"sort"
	"strings"
	"testing"
	"time"
)

// TestSlurmArrayEndToEnd runs a plan on a real Slurm cluster through the script of
// "keyceiling jobscript" and compares the merged records with a single-process sweep of the
// same plan. It then cancels one array task mid-run, checks that Slurm cancels the merge job
// and that "keyceiling merge" lists the missing points, re-runs that task alone and checks
// that nothing is lost.
//
// It needs a cluster whose nodes see this machine's /tmp (scripts/slurm-up.sh starts a
// one-node one here) and runs only when asked:
//
//	bash scripts/slurm-up.sh /tmp/slurm-state && . /tmp/slurm-state/env &&
//	KEYCEILING_SLURM=1 go test ./cmd/keyceiling -run Slurm -v -timeout 20m
//
// KEYCEILING_SLURM_PLAN overrides the plan (default: demo.plan, the built-in demo of sweep:
// 30 points in 15 chains).
func TestSlurmArrayEndToEnd(t *testing.T) {
	if os.Getenv("KEYCEILING_SLURM") != "1" {
		t.Skip("set KEYCEILING_SLURM=1 to run on the Slurm cluster of SLURM_CONF (see scripts/slurm-up.sh)")
	}
	for _, tool := range []string{"sbatch", "scontrol", "scancel", "bash"} {
		if _, err := exec.LookPath(tool); err != nil {
			t.Fatalf("KEYCEILING_SLURM=1 but %s is not on PATH: the cluster the test was promised is missing", tool)
		}
	}
	began := time.Now()
	dir := t.TempDir()
	if err := os.Chmod(dir, 0o755); err != nil { // the jobs may run as another user
		t.Fatal(err)
	}
	bin := filepath.Join(dir, "keyceiling")
	if out, err := exec.Command("go", "build", "-o", bin, ".").CombinedOutput(); err != nil {
		t.Fatalf("go build: %v\n%s", err, out)
	}
	plan := os.Getenv("KEYCEILING_SLURM_PLAN")
	if plan == "" {
		plan = "demo.plan"
	}
	plan, _ = filepath.Abs(plan)
	if _, err := os.Stat(plan); err != nil {
		t.Fatalf("plan: %v", err)
	}

	// The reference: one process, the plan's whole grid.
	ref := filepath.Join(dir, "single")
	start := time.Now()
	if out, err := exec.Command(bin, "sweep", "--plan", plan, "--out", ref, "--quiet").CombinedOutput(); err != nil {
		t.Fatalf("single-process sweep: %v\n%s", err, out)
	}
	want := slurmReadRecords(t, filepath.Join(ref, "records.jsonl"))
	t.Logf("single-process sweep: %d records in %.1f s", len(want), time.Since(start).Seconds())
	if len(want) == 0 {
		t.Fatal("the single-process sweep wrote no records")
	}

	// 1. The whole array and the merge, as a user submits them.
	outA := filepath.Join(dir, "array")
	jobA := slurmWriteJobScript(t, bin, plan, outA, dir, "job-a.sh")
	start = time.Now()
	arrayID, mergeID := slurmSubmitJobScript(t, jobA, dir)
	if st := slurmWaitJob(t, mergeID, 8*time.Minute); st != "COMPLETED" {
		slurmDumpLogs(t, outA)
		t.Fatalf("merge job %s ended %s", mergeID, st)
	}
	for task, st := range slurmJobStates(t, arrayID) {
		if st != "COMPLETED" {
			t.Errorf("array task %s ended %s", task, st)
		}
	}
	t.Logf("array of 4 tasks + merge: %.1f s", time.Since(start).Seconds())
	slurmCompareRecords(t, "array run", slurmReadRecords(t, filepath.Join(outA, "records.jsonl")), want)
	slurmCompareFiles(t, filepath.Join(outA, "summary.csv"), filepath.Join(ref, "summary.csv"))
	if t.Failed() {
		slurmDumpLogs(t, outA)
		return
	}

	// 2. A task cancelled mid-run: the merge job must be cancelled, merge must list what is
	// missing, and re-running the task alone must complete the results. So that the cancel
	// lands mid-run however fast the search is, the jobs run keyceiling through a gate: the
	// first run of the victim task freezes its sweep (SIGSTOP) as soon as the first point is
	// in the shard file, and waits there to be cancelled; every other run is plain keyceiling.
	const victim = "1"
	outB := filepath.Join(dir, "cancelled")
	shard := filepath.Join(outB, "shard-"+victim+"-of-4.jsonl")
	gate := filepath.Join(dir, "gate")
	wrapper := filepath.Join(dir, "keyceiling-gated")
	if err := os.WriteFile(wrapper, []byte(fmt.Sprintf(slurmGateScript, bin, victim, gate, shard)), 0o755); err != nil {
		t.Fatal(err)
	}
	jobB := slurmWriteJobScript(t, wrapper, plan, outB, dir, "job-b.sh")
	start = time.Now()
	arrayID, mergeID = slurmSubmitJobScript(t, jobB, dir)
	victimJob := arrayID + "_" + victim
	deadline := time.Now().Add(3 * time.Minute)
	for {
		b, err := os.ReadFile(filepath.Join(gate, "state"))
		if err == nil && strings.TrimSpace(string(b)) == "stopped" {
			break
		}
		if err == nil && strings.TrimSpace(string(b)) != "" {
			slurmDumpLogs(t, outB)
			t.Fatalf("task %s finished its shard before the gate could stop it (%s)", victimJob, b)
		}
		if st := slurmJobStates(t, arrayID)[victim]; time.Now().After(deadline) || slurmIsFinal(st) {
			slurmDumpLogs(t, outB)
			t.Fatalf("task %s did not reach the gate (state %s): %v", victimJob, st, slurmJobStates(t, arrayID))
		}
		time.Sleep(100 * time.Millisecond)
	}
	if st := slurmJobStates(t, arrayID)[victim]; st != "RUNNING" {
		t.Fatalf("task %s is %s at the gate, want RUNNING", victimJob, st)
	}
	if out, err := exec.Command("scancel", victimJob).CombinedOutput(); err != nil {
		t.Fatalf("scancel %s: %v\n%s", victimJob, err, out)
	}
	t.Logf("cancelled %s after %.1f s with %d record(s) in its shard file", victimJob,
		time.Since(start).Seconds(), slurmCountLines(shard))
	if st := slurmWaitJob(t, mergeID, 8*time.Minute); st != "CANCELLED" {
		slurmDumpLogs(t, outB)
		t.Fatalf("merge job %s ended %s; want CANCELLED (its dependency can no longer be met)", mergeID, st)
	}
	states := slurmJobStates(t, arrayID)
	if states[victim] != "CANCELLED" {
		t.Errorf("task %s ended %s, want CANCELLED", victimJob, states[victim])
	}
	// The points the cancelled task finished, with their timings: a re-run must keep them.
	var before []map[string]any
	if slurmCountLines(shard) > 0 {
		before = slurmReadRecordsWithSeconds(t, shard)
	}
	if _, err := os.Stat(filepath.Join(outB, "records.jsonl")); err == nil {
		t.Errorf("records.jsonl exists although the merge job was cancelled")
	}
	var mergeOut bytes.Buffer
	cmd := exec.Command(bin, "merge", outB)
	cmd.Stdout, cmd.Stderr = &mergeOut, &mergeOut
	err := cmd.Run()
	if ee, ok := err.(*exec.ExitError); !ok || ee.ExitCode() != exitFailure {
		t.Errorf("merge with a cancelled shard: %v, want exit %d\n%s", err, exitFailure, mergeOut.String())
	}
	// Every point without a record is listed, and only those.
	refKeys := map[string]bool{}
	for _, r := range want {
		refKeys[fmt.Sprint(r["key"])] = true
	}
	have := 0
	shards, _ := filepath.Glob(filepath.Join(outB, "shard-*-of-4.jsonl"))
	for _, f := range shards {
		have += len(slurmReadRecords(t, f))
	}
	var missing []string
	for _, line := range strings.Split(mergeOut.String(), "\n") {
		if k, ok := strings.CutPrefix(line, "missing: "); ok {
			missing = append(missing, k)
			if !refKeys[k] {
				t.Errorf("merge lists %q as missing; the plan has no such point", k)
			}
		}
	}
	if len(missing) == 0 || len(missing)+have != len(want) {
		t.Errorf("merge lists %d missing points and the shard files hold %d records; the plan has %d:\n%s",
			len(missing), have, len(want), mergeOut.String())
	}
	t.Logf("merge after the cancel says:\n%s", slurmFirstLines(mergeOut.String(), 6))

	rerunID, mergeID := slurmSubmitJobScript(t, jobB, dir, victim)
	if st := slurmWaitJob(t, mergeID, 8*time.Minute); st != "COMPLETED" {
		slurmDumpLogs(t, outB)
		t.Fatalf("merge job %s after re-running task %s ended %s", mergeID, victim, st)
	}
	if st := slurmJobStates(t, rerunID); len(st) != 1 || st[victim] != "COMPLETED" {
		t.Errorf("re-run of task %s: %v", victim, st)
	}
	after := map[string]any{}
	for _, r := range slurmReadRecordsWithSeconds(t, shard) {
		after[fmt.Sprint(r["key"])] = r["seconds"]
	}
	for _, r := range before {
		if k := fmt.Sprint(r["key"]); after[k] != r["seconds"] {
			t.Errorf("the re-run searched %s again (seconds %v, before the cancel %v): it should resume", k, after[k], r["seconds"])
		}
	}
	t.Logf("cancel, re-run (resuming after %d record(s)) and merge: %.1f s", len(before), time.Since(start).Seconds())
	slurmCompareRecords(t, "after the re-run", slurmReadRecords(t, filepath.Join(outB, "records.jsonl")), want)
	slurmCompareFiles(t, filepath.Join(outB, "summary.csv"), filepath.Join(ref, "summary.csv"))
	if t.Failed() {
		slurmDumpLogs(t, outB)
	}
	t.Logf("total %.1f s", time.Since(began).Seconds())
}

// slurmGateScript is the keyceiling used by the cancel scenario (fmt arguments: the real
// binary, the victim task, the gate folder and the victim's shard file). The first run of
// the victim's sweep (the one that creates the gate folder) runs in the background; once the
// shard file holds a record the sweep is frozen with SIGSTOP, "stopped" is written to
// GATE/state and the script waits to be cancelled. If the sweep ends first, "finished" is
// written instead. Any other run is the real keyceiling.
const slurmGateScript = `#!/bin/bash
real=%[1]q victim=%[2]q gate=%[3]q shard=%[4]q
if [[ "${SLURM_ARRAY_TASK_ID:-}" == "$victim" && "${1:-}" == sweep ]] && mkdir "$gate" 2>/dev/null; then
	"$real" "$@" &
	pid=$!
	while kill -0 "$pid" 2>/dev/null && [[ ! -s "$shard" ]]; do sleep 0.02; done
	kill -STOP "$pid" 2>/dev/null
	sleep 0.1
	if [[ "$(sed 's/^.*) //' "/proc/$pid/stat" 2>/dev/null | cut -d' ' -f1)" == T ]]; then
		echo stopped >"$gate/state"
	else
		echo finished >"$gate/state"
	fi
	wait "$pid"
	exit $?
fi
exec "$real" "$@"
`

// slurmWriteJobScript writes the script of "keyceiling jobscript" for 4 one-CPU tasks.
func slurmWriteJobScript(t *testing.T, bin, plan, out, dir, name string) string {
	t.Helper()
	script, err := exec.Command(bin, "jobscript", "--plan", plan, "--out", out, "--tasks", "4",
		"--cpus-per-task", "1", "--binary", bin).Output()
	if err != nil {
		t.Fatalf("jobscript: %v", err)
	}
	path := filepath.Join(dir, name)
	if err := os.WriteFile(path, script, 0o644); err != nil {
		t.Fatal(err)
	}
	return path
}

var slurmSubmittedRE = regexp.MustCompile(`(?m)^array job (\d+): .*\nmerge job (\d+): `)

// slurmSubmitJobScript runs "bash job.sh [tasks]" and returns the array and merge job ids.
func slurmSubmitJobScript(t *testing.T, job, dir string, args ...string) (arrayID, mergeID string) {
	t.Helper()
	cmd := exec.Command("bash", append([]string{job}, args...)...)
	cmd.Dir = dir
	cmd.Env = jsFilterEnv(os.Environ(), "SLURM_ARRAY_")
	out, err := cmd.CombinedOutput()
	if err != nil {
		t.Fatalf("bash %s %v: %v\n%s", job, args, err, out)
	}
	m := slurmSubmittedRE.FindStringSubmatch(string(out))
	if m == nil {
		t.Fatalf("bash %s %v printed no job ids:\n%s", job, args, out)
	}
	return m[1], m[2]
}

var (
	slurmStateRE = regexp.MustCompile(`\bJobState=(\S+)`)
	slurmTaskRE  = regexp.MustCompile(`\bArrayTaskId=(\S+)`)
)

// slurmJobStates returns the state of a job from "scontrol -o show job": one entry per array task
// (keyed by task id; pending tasks of an array may be grouped, e.g. "2-3"), or one entry
// keyed "" for a plain job.
func slurmJobStates(t *testing.T, id string) map[string]string {
	t.Helper()
	out, err := exec.Command("scontrol", "-o", "show", "job", id).CombinedOutput()
	if err != nil {
		t.Fatalf("scontrol show job %s: %v\n%s", id, err, out)
	}
	states := map[string]string{}
	for _, line := range strings.Split(strings.TrimSpace(string(out)), "\n") {
		st := slurmStateRE.FindStringSubmatch(line)
		if st == nil {
			continue
		}
		task := ""
		if m := slurmTaskRE.FindStringSubmatch(line); m != nil {
			task = m[1]
		}
		states[task] = st[1]
	}
	return states
}

func slurmIsFinal(state string) bool {
	switch state {
	case "", "PENDING", "RUNNING", "CONFIGURING", "COMPLETING", "SUSPENDED", "REQUEUED", "RESIZING", "SIGNALING", "STAGE_OUT":
		return false
	}
	return true
}

// slurmWaitJob waits until the plain job id is in a final state and returns that state.
func slurmWaitJob(t *testing.T, id string, timeout time.Duration) string {
	t.Helper()
	deadline := time.Now().Add(timeout)
	for {
		st := slurmJobStates(t, id)[""]
		if slurmIsFinal(st) {
			return st
		}
		if time.Now().After(deadline) {
			exec.Command("scancel", id).Run()
			t.Fatalf("job %s still %s after %v", id, st, timeout)
		}
		time.Sleep(500 * time.Millisecond)
	}
}

// slurmReadRecords parses a JSON-lines file into maps, without the timing field "seconds".
func slurmReadRecords(t *testing.T, path string) []map[string]any {
	t.Helper()
	recs := slurmReadRecordsWithSeconds(t, path)
	for _, m := range recs {
		delete(m, "seconds")
	}
	return recs
}

// slurmReadRecordsWithSeconds parses a JSON-lines file into maps. A last line without its newline
// (cut by a kill) is ignored, as merge ignores it.
func slurmReadRecordsWithSeconds(t *testing.T, path string) []map[string]any {
	t.Helper()
	data, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	data = data[:bytes.LastIndexByte(data, '\n')+1]
	var recs []map[string]any
	sc := bufio.NewScanner(bytes.NewReader(data))
	sc.Buffer(nil, 1<<24)
	for sc.Scan() {
		if strings.TrimSpace(sc.Text()) == "" {
			continue
		}
		var m map[string]any
		if err := json.Unmarshal(sc.Bytes(), &m); err != nil {
			t.Fatalf("%s:%d: %v", path, len(recs)+1, err)
		}
		recs = append(recs, m)
	}
	if err := sc.Err(); err != nil {
		t.Fatal(err)
	}
	return recs
}

// slurmCompareRecords requires the same records in the same order.
func slurmCompareRecords(t *testing.T, what string, got, want []map[string]any) {
	t.Helper()
	if len(got) != len(want) {
		t.Errorf("%s: %d records, the single-process run has %d", what, len(got), len(want))
	}
	for i := 0; i < min(len(got), len(want)); i++ {
		if !reflect.DeepEqual(got[i], want[i]) {
			g, _ := json.Marshal(got[i])
			w, _ := json.Marshal(want[i])
			t.Errorf("%s: record %d differs from the single-process run:\n got  %s\n want %s", what, i+1, g, w)
			return
		}
	}
}

// slurmCompareFiles requires identical files, apart from a "seconds" column of a CSV file.
func slurmCompareFiles(t *testing.T, got, want string) {
	t.Helper()
	g, err1 := os.ReadFile(got)
	w, err2 := os.ReadFile(want)
	if err1 != nil || err2 != nil {
		t.Errorf("compare %s with %s: %v %v", got, want, err1, err2)
		return
	}
	if strings.HasSuffix(got, ".csv") {
		g, w = slurmDropCSVColumn(g, "seconds"), slurmDropCSVColumn(w, "seconds")
	}
	if !bytes.Equal(g, w) {
		t.Errorf("%s differs from the single-process %s:\n%s\n---\n%s", got, want, slurmFirstLines(string(g), 5), slurmFirstLines(string(w), 5))
	}
}

// slurmDropCSVColumn removes the named column of a simple CSV (no quoted commas in that column).
func slurmDropCSVColumn(b []byte, name string) []byte {
	lines := strings.Split(string(b), "\n")
	if len(lines) == 0 {
		return b
	}
	col := -1
	for i, h := range strings.Split(lines[0], ",") {
		if h == name {
			col = i
		}
	}
	if col < 0 {
		return b
	}
	for i, l := range lines {
		if l == "" {
			continue
		}
		f := strings.Split(l, ",")
		if col < len(f) {
			f = append(f[:col], f[col+1:]...)
		}
		lines[i] = strings.Join(f, ",")
	}
	return []byte(strings.Join(lines, "\n"))
}

func slurmCountLines(path string) int {
	b, err := os.ReadFile(path)
	if err != nil {
		return 0
	}
	return bytes.Count(b, []byte("\n"))
}

func slurmFirstLines(s string, n int) string {
	lines := strings.SplitN(s, "\n", n+1)
	if len(lines) > n {
		lines = append(lines[:n], "...")
	}
	return strings.Join(lines, "\n")
}

// slurmDumpLogs prints the jobs' log files.
func slurmDumpLogs(t *testing.T, out string) {
	t.Helper()
	logs, _ := filepath.Glob(filepath.Join(out, "logs", "*"))
	sort.Strings(logs)
	for _, l := range logs {
		b, _ := os.ReadFile(l)
		t.Logf("==== %s\n%s", l, slurmFirstLines(string(b), 40))
	}
	entries, _ := os.ReadDir(out)
	var names []string
	for _, e := range entries {
		names = append(names, fmt.Sprintf("%s(%d lines)", e.Name(), slurmCountLines(filepath.Join(out, e.Name()))))
	}
	t.Logf("files in %s: %s", out, strings.Join(names, " "))
}
