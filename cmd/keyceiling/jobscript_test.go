package main

import (
	"bytes"
	"fmt"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strings"
	"testing"

	"keyceiling/search"
)

// jobscriptFor runs "keyceiling jobscript" with args and returns the script, failing the
// test on a non-zero exit.
func jobscriptFor(t *testing.T, args ...string) string {
	t.Helper()
	var out, errb bytes.Buffer
	if code := run(append([]string{"jobscript"}, args...), &out, &errb); code != exitOK {
		t.Fatalf("jobscript %v: exit %d: %s", args, code, errb.String())
	}
	return out.String()
}

func TestJobscriptIsBashWithArrayAndDependency(t *testing.T) {
	if _, err := exec.LookPath("bash"); err != nil {
		t.Skip("bash not installed")
	}
	dir := t.TempDir()
	plan := jsWritePlan(t, dir, "forty.plan", plan40Chains)
	script := jobscriptFor(t, "--plan", plan, "--out", filepath.Join(dir, "out dir"), "--tasks", "4",
		"--cpus-per-task", "2", "--partition", "short", "--binary", "/opt/kc/keyceiling")
	path := filepath.Join(dir, "job.sh")
	if err := os.WriteFile(path, []byte(script), 0o644); err != nil {
		t.Fatal(err)
	}
	if out, err := exec.Command("bash", "-n", path).CombinedOutput(); err != nil {
		t.Fatalf("bash -n: %v\n%s\n%s", err, out, script)
	}
	for _, want := range []string{
		"#!/bin/bash\n",
		"\n#SBATCH --array=0-3\n",
		"\n#SBATCH --cpus-per-task=2\n",
		"\n#SBATCH --time=0-00:05:00\n", // 640 s / (4 x 2) = 80 s; x 3 = 4 min -> 5
		"--dependency=afterok:\"$ARRAY_JOB\" --kill-on-invalid-dep=yes",
		"\nTASKS=4 ",
		"SBATCH_COMMON=(--partition=short)",
		"KEYCEILING=/opt/kc/keyceiling ",
		"OUT='" + filepath.Join(dir, "out dir") + "'",
		`sweep --plan "$PLAN" --out "$OUT" --shard "$SLURM_ARRAY_TASK_ID/$TASKS"`,
		"merge %q",
	} {
		if !strings.Contains(script, want) {
			t.Errorf("script lacks %q", want)
		}
	}
	if t.Failed() {
		t.Log(script)
	}
}

// Plans with hand-computable time limits. With the default family a point to search costs
// 4 units (4 s) at finite energy and 8 units (8 s) at inf.
const (
	// 40 chains of 3 points: 4 + 4 + 8 = 16 s each, 640 s in all.
	plan40Chains = "keyceiling-plan 1\nchannel thermal-loss\neta 0.5:0.9:40\nenergy 1, 2, inf\nend\n"
	// One chain of 60 finite energies and inf: 60 x 4 + 8 = 248 s.
	planOneChain = "keyceiling-plan 1\nchannel thermal-loss\neta 0.5\nenergy 0.1:10:60, inf\nend\n"
	// 7 chains of one point: 28 s.
	planSmall = "keyceiling-plan 1\nchannel additive\nxi 0.1:0.7:7\nenergy 1\nend\n"
	// Two chains, one of them entanglement breaking (N_B = 5 >= eta/(1-eta) = 1): 4 + 8 = 12 s.
	planBreaking = "keyceiling-plan 1\nchannel thermal-loss\neta 0.5\nnoise 0, 5\nenergy 1, inf\nend\n"
	// tms-split: 1 unit (1 s) per finite point, 2 units (2 s) at inf; 200 chains of 10
	// finite points and inf: 12 s each, 2400 s in all.
	planTMS = "keyceiling-plan 1\nchannel amplifier\ngain 1.01:3:200\nenergy 0.1:1:10, inf\nfamily tms-split\nend\n"
)

func TestEstimateTime(t *testing.T) {
	for _, c := range []struct {
		name, plan          string
		tasks, cpus         int
		finite, inf, chains int
		wall                float64
		minutes             int
		minimum             bool
		empty               int
	}{
		// one task, 2 CPUs: 640 / 2 = 320 s; x 3 = 960 s = 16 min.
		{"40 chains on 1x2", plan40Chains, 1, 2, 80, 40, 40, 320, 16, false, 0},
		// 4 tasks: equal chains split 10 per shard (the split's cap, mean + 5%, admits no
		// 11th); 160 s; x 3 = 480 s = 8 min.
		{"40 chains on 4x1", plan40Chains, 4, 1, 80, 40, 40, 160, 8, false, 0},
		// The naive points/(tasks x cpus) would give 248 / 16 s; the chain runs in order on
		// one CPU: 248 s x 3 = 744 s = 12.4 min -> 13.
		{"one chain on 4x4", planOneChain, 4, 4, 60, 1, 1, 248, 13, false, 3},
		// 28 s x 3 = 84 s -> 2 min -> the minimum, 5.
		{"small", planSmall, 1, 1, 7, 0, 7, 28, 5, true, 0},
		{"breaking", planBreaking, 1, 1, 1, 1, 2, 12, 5, true, 0},
		// 2400 s over 2 tasks x 3 CPUs: the split's cap, mean + min(5% of the mean, largest
		// chain) = 1200 + 12 s, lets one shard take 101 chains: 1212 / 3 = 404 s; x 3 =
		// 1212 s = 20.2 min -> 21.
		{"tms-split on 2x3", planTMS, 2, 3, 2000, 200, 200, 404, 21, false, 0},
	} {
		plan, err := search.ParsePlan(strings.NewReader(c.plan), c.name)
		if err != nil {
			t.Fatalf("%s: %v", c.name, err)
		}
		e := estimateTime(plan, c.tasks, c.cpus)
		if e.Finite != c.finite || e.Inf != c.inf || e.Chains != c.chains || math.Abs(e.WallSeconds-c.wall) > 1e-9 ||
			e.Minutes != c.minutes || e.MinimumHeld != c.minimum || e.EmptyShards != c.empty {
			t.Errorf("%s: got %+v;\nwant %d finite, %d inf, %d chains, wall %g s, %d min (minimum %v), %d empty",
				c.name, e, c.finite, c.inf, c.chains, c.wall, c.minutes, c.minimum, c.empty)
		}
	}
	for m, want := range map[int]string{5: "0-00:05:00", 90: "0-01:30:00", 1500: "1-01:00:00"} {
		if got := slurmTime(m); got != want {
			t.Errorf("slurmTime(%d) = %q, want %q", m, got, want)
		}
	}
}

// TestJobscriptTimeFromPlan checks the --time line of generated scripts against the hand
// computations above.
func TestJobscriptTimeFromPlan(t *testing.T) {
	dir := t.TempDir()
	plan := jsWritePlan(t, dir, "forty.plan", plan40Chains)
	script := jobscriptFor(t, "--plan", plan, "--tasks", "4", "--binary", "kc")
	for _, want := range []string{"\n#SBATCH --time=0-00:08:00\n", "\n#SBATCH --array=0-3\n", "640 CPU-seconds in all",
		"max(160 CPU-s / 1 CPU(s), longest chain 16 s) = 160 s"} {
		if !strings.Contains(script, want) {
			t.Errorf("40 chains on 4 tasks: script lacks %q:\n%s", want, script)
		}
	}
	script = jobscriptFor(t, "--plan", plan, "--tasks", "1", "--cpus-per-task", "2", "--binary", "kc")
	if !strings.Contains(script, "\n#SBATCH --time=0-00:16:00\n") || !strings.Contains(script, "\n#SBATCH --array=0-0\n") {
		t.Errorf("40 chains on 1 task x 2 CPUs: want --time=0-00:16:00 and --array=0-0:\n%s", script)
	}
	var out, errb bytes.Buffer
	one := jsWritePlan(t, dir, "one.plan", planOneChain)
	if code := run([]string{"jobscript", "--plan", one, "--tasks", "4", "--cpus-per-task", "4", "--binary", "kc"}, &out, &errb); code != exitOK {
		t.Fatalf("one chain: exit %d: %s", code, errb.String())
	}
	if !strings.Contains(out.String(), "\n#SBATCH --time=0-00:13:00\n") || !strings.Contains(out.String(), "NOTE: 3 of the 4 tasks get no chain") {
		t.Errorf("one chain on 4 x 4: want --time=0-00:13:00 and a note:\n%s", out.String())
	}
	if !strings.Contains(errb.String(), "3 of the 4 tasks get no chain") {
		t.Errorf("one chain on 4 tasks: no note on stderr: %q", errb.String())
	}
	// Default tasks: the chains, at most 8.
	small := jsWritePlan(t, dir, "small.plan", planSmall)
	if s := jobscriptFor(t, "--plan", small, "--binary", "kc"); !strings.Contains(s, "\n#SBATCH --array=0-6\n") {
		t.Errorf("7 chains: want 7 tasks by default")
	}
	if s := jobscriptFor(t, "--plan", plan, "--binary", "kc"); !strings.Contains(s, "\n#SBATCH --array=0-7\n") {
		t.Errorf("40 chains: want 8 tasks by default")
	}
}

func TestJobscriptBadInput(t *testing.T) {
	dir := t.TempDir()
	plan := jsWritePlan(t, dir, "small.plan", planSmall)
	unreadable := filepath.Join(dir, "unreadable.plan")
	if err := os.WriteFile(unreadable, []byte("x"), 0o000); err != nil {
		t.Fatal(err)
	}
	garbage := jsWritePlan(t, dir, "garbage.plan", "this is not a plan\n{}\n")
	truncated := jsWritePlan(t, dir, "truncated.plan", strings.TrimSuffix(planSmall, "end\n"))
	cases := [][]string{
		{},
		{"--tasks", "2"},
		{"--plan", filepath.Join(dir, "missing.plan")},
		{"--plan", dir},
		{"--plan", garbage},
		{"--plan", truncated},
		{"--plan", plan, "--partition", "a b"},
		{"--plan", plan, "--tasks", "0"},
		{"--plan", plan, "--tasks", "-3"},
		{"--plan", plan, "--cpus-per-task", "0"},
		{"--plan", plan, "--cpus-per-task", "x"},
		{"--plan", plan, "--out", "a\nb"},
		{"--plan", plan, "extra"},
	}
	if os.Geteuid() != 0 { // root reads mode-000 files
		cases = append(cases, []string{"--plan", unreadable})
	}
	for _, args := range cases {
		var out, errb bytes.Buffer
		code := run(append([]string{"jobscript"}, args...), &out, &errb)
		if code != exitUsage {
			t.Errorf("jobscript %q: exit %d, want %d (stderr %q)", args, code, exitUsage, errb.String())
			continue
		}
		if msg := errb.String(); strings.Count(msg, "\n") != 1 || !strings.HasPrefix(msg, "keyceiling jobscript: ") {
			t.Errorf("jobscript %q: want one line on stderr, got %q", args, msg)
		}
		if out.Len() != 0 {
			t.Errorf("jobscript %q: printed a script on bad input", args)
		}
	}
}

// TestJobscriptRuns runs the generated script with stand-ins for sbatch and keyceiling: as
// the submitter it must submit the array, then the merge with the array's id in its
// dependency; re-running one task must pass --array; as an array task it must run the shard
// named by SLURM_ARRAY_TASK_ID out of TASKS, whatever the array's size.
func TestJobscriptRuns(t *testing.T) {
	if _, err := exec.LookPath("bash"); err != nil {
		t.Skip("bash not installed")
	}
	dir := t.TempDir()
	bin := filepath.Join(dir, "bin")
	if err := os.Mkdir(bin, 0o755); err != nil {
		t.Fatal(err)
	}
	log := filepath.Join(dir, "calls.log")
	// Fake sbatch: log the arguments and the script on stdin; answer job ids 100, 101, ...
	fakeSbatch := `#!/bin/bash
n=$(( $(grep -c '^sbatch' "$CALLS" 2>/dev/null || true) + 100 ))
echo "sbatch $*" >>"$CALLS"
if [ ! -f "${!#}" ]; then sed 's/^/stdin: /' >>"$CALLS"; fi
echo "$n"
`
	fakeKC := `#!/bin/bash
echo "keyceiling $*" >>"$CALLS"
`
	for name, body := range map[string]string{"sbatch": fakeSbatch, "fake-keyceiling": fakeKC} {
		if err := os.WriteFile(filepath.Join(bin, name), []byte(body), 0o755); err != nil {
			t.Fatal(err)
		}
	}
	plan := jsWritePlan(t, dir, "small.plan", planSmall)
	out := filepath.Join(dir, "res")
	script := jobscriptFor(t, "--plan", plan, "--out", out, "--tasks", "3", "--binary", filepath.Join(bin, "fake-keyceiling"))
	job := filepath.Join(dir, "job.sh")
	if err := os.WriteFile(job, []byte(script), 0o644); err != nil {
		t.Fatal(err)
	}
	env := append(os.Environ(), "PATH="+bin+":"+os.Getenv("PATH"), "CALLS="+log)
	bash := func(extraEnv []string, args ...string) string {
		t.Helper()
		cmd := exec.Command("bash", append([]string{job}, args...)...)
		cmd.Env = append(jsFilterEnv(env, "SLURM_"), extraEnv...)
		cmd.Dir = dir
		b, err := cmd.CombinedOutput()
		if err != nil {
			t.Fatalf("bash job.sh %v: %v\n%s", args, err, b)
		}
		return string(b)
	}
	calls := func() string {
		b, _ := os.ReadFile(log)
		os.Remove(log)
		return string(b)
	}

	printed := bash(nil)
	got := calls()
	if !regexp.MustCompile(`(?m)^array job 100: .*\nmerge job 101: `).MatchString(printed) {
		t.Errorf("submitter printed:\n%s", printed)
	}
	lines := strings.Split(strings.TrimSpace(got), "\n")
	if len(lines) < 3 || !strings.HasPrefix(lines[0], "sbatch --parsable --output="+out+"/logs/sweep-%A_%a.log "+job) {
		t.Fatalf("first sbatch call: want the array job from the script file, got:\n%s", got)
	}
	if strings.Contains(lines[0], "--array") {
		t.Errorf("a full submission should take --array from the #SBATCH line: %s", lines[0])
	}
	if !strings.Contains(lines[1], "--dependency=afterok:100 --kill-on-invalid-dep=yes") {
		t.Errorf("second sbatch call: want the merge after job 100, got %s", lines[1])
	}
	if want := fmt.Sprintf("stdin: exec %s merge %s", filepath.Join(bin, "fake-keyceiling"), out); lines[len(lines)-1] != want {
		t.Errorf("merge job body: got %q, want %q", lines[len(lines)-1], want)
	}
	if fi, err := os.Stat(filepath.Join(out, "logs")); err != nil || !fi.IsDir() {
		t.Errorf("the submitter did not create %s/logs", out)
	}

	bash(nil, "1")
	got = calls()
	if !strings.Contains(got, "--array=1 --output=") || !strings.Contains(got, "--dependency=afterok:100 ") {
		t.Errorf("re-running task 1: got\n%s", got)
	}

	// An array task of a re-run (array of size 1, task 2) still runs shard 2 of 3.
	bash([]string{"SLURM_ARRAY_TASK_ID=2", "SLURM_ARRAY_TASK_COUNT=1", "SLURM_ARRAY_TASK_MIN=2", "SLURM_CPUS_PER_TASK=1"})
	got = calls()
	if want := fmt.Sprintf("keyceiling sweep --plan %s --out %s --shard 2/3\n", plan, out); got != want {
		t.Errorf("array task 2: got %q, want %q", got, want)
	}
	// A task outside the shards fails without running anything.
	cmd := exec.Command("bash", job)
	cmd.Env = append(jsFilterEnv(env, "SLURM_"), "SLURM_ARRAY_TASK_ID=3")
	if b, err := cmd.CombinedOutput(); err == nil || !strings.Contains(string(b), "outside the 3 shards") {
		t.Errorf("task 3 of 3 shards: err %v, output %s", err, b)
	}
	if got := calls(); got != "" {
		t.Errorf("task 3 ran %q", got)
	}
}

// jsFilterEnv drops the variables whose names start with prefix.
func jsFilterEnv(env []string, prefix string) []string {
	var out []string
	for _, kv := range env {
		if !strings.HasPrefix(kv, prefix) {
			out = append(out, kv)
		}
	}
	return out
}

// jsWritePlan writes a plan file and returns its path.
func jsWritePlan(t *testing.T, dir, name, text string) string {
	t.Helper()
	p := filepath.Join(dir, name)
	if err := os.WriteFile(p, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	return p
}
