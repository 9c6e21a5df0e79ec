package main

import (
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"strings"
	"text/template"

	"keyceiling/search"
)

// Time limit of the array tasks. The relative point costs are search.PointCost's (one unit is
// a finite-energy tms-split search; the default family "auto" is 4 units at finite energy and
// 8 at N_S = inf; entanglement-breaking points cost nothing, they are not searched), and
// secondsPerCostUnit turns them into CPU-seconds. Measured with "keyceiling bound" on the
// 2-core development machine (CPU time of one point, 4 random starts): tms-split about 1 s at
// finite energy and 2-2.5 s at inf; auto 2.2-3 s and 3-7.5 s. Inside a sweep, with warm
// starts and a loaded machine, tms-split points of the demo plan took 1.7 s and 6.6 s of wall
// time. One second per unit is therefore a middle value, not a bound; the safety factor
// below is what keeps tasks inside their limit.
//
// A sweep task runs whole chains (the points of one channel, in energy order, each
// warm-started from the previous one), its --cpus-per-task workers one chain each, and the
// plan's chains are split over the tasks by search.ShardChains. So the wall time of a task
// is about
//
//	max( cost of its chains / cpus, cost of its longest chain )
//
// and the limit is the largest over the tasks, times timeSafety, rounded up to whole
// minutes, and at least minJobMinutes. For a plan of many short chains this is the plain
// "points x seconds per point / (tasks x cpus) x safety"; a plan with few long chains gets
// the time its longest chain needs, however many CPUs it is given. The safety factor leaves
// room for slower cores, the imbalance of list scheduling and points that need more local
// runs: a task past its limit is killed, and its shard must then be resumed.
const (
	secondsPerCostUnit = 1.0
	timeSafety         = 3.0
	minJobMinutes      = 5
	mergeMinutes       = 10 // time limit of the merge job
)

// timeEstimate is the arithmetic behind a job script's --time, kept for its comment.
type timeEstimate struct {
	Points, Chains    int     // of the plan
	Finite, Inf       int     // points searched (not entanglement breaking), by energy
	CPUSeconds        float64 // sum of the point costs
	Busiest           int     // the shard with the longest estimated wall time
	BusiestSeconds    float64 // CPU-seconds of its chains
	BusiestChain      float64 // CPU-seconds of its longest chain
	WallSeconds       float64 // estimated wall time of the busiest task
	Minutes           int     // the limit: rounded up, at least minJobMinutes
	MinimumHeld       bool    // the limit is minJobMinutes because the estimate is smaller
	EmptyShards       int     // tasks with no chain
	Tasks, CPUs       int
	SecondsPerUnit    float64
	Safety            float64
	MinMinutesAllowed int
}

func estimateTime(plan *search.Plan, tasks, cpus int) timeEstimate {
	t := timeEstimate{Points: plan.NumPoints(), Tasks: tasks, CPUs: cpus,
		SecondsPerUnit: secondsPerCostUnit, Safety: timeSafety, MinMinutesAllowed: minJobMinutes}
	chains := plan.Chains()
	t.Chains = len(chains)
	assign := search.ShardChains(chains, tasks, plan.Settings)
	load := make([]float64, tasks)
	longest := make([]float64, tasks)
	used := make([]bool, tasks)
	for i, c := range chains {
		secs := 0.0
		for _, pp := range c.Points {
			if pp.Breaking {
				continue
			}
			if math.IsInf(pp.Point.Energy, 1) {
				t.Inf++
			} else {
				t.Finite++
			}
			secs += search.PointCost(pp, plan.Settings) * secondsPerCostUnit
		}
		k := assign[i]
		used[k] = true
		load[k] += secs
		longest[k] = max(longest[k], secs)
		t.CPUSeconds += secs
	}
	for k := range tasks {
		if !used[k] {
			t.EmptyShards++
		}
		wall := max(load[k]/float64(cpus), longest[k])
		if k == 0 || wall > t.WallSeconds {
			t.Busiest, t.BusiestSeconds, t.BusiestChain, t.WallSeconds = k, load[k], longest[k], wall
		}
	}
	t.Minutes = int(math.Ceil(t.WallSeconds * timeSafety / 60))
	if t.Minutes < minJobMinutes {
		t.Minutes, t.MinimumHeld = minJobMinutes, true
	}
	return t
}

// readPlan reads and checks a plan file; every problem is bad input.
func readPlan(path string) (*search.Plan, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, badInput("cannot read the plan: %v", err)
	}
	defer f.Close()
	if fi, err := f.Stat(); err == nil && fi.IsDir() {
		return nil, badInput("plan %s is a folder, not a file", path)
	}
	plan, err := search.ParsePlan(f, path)
	if err != nil {
		return nil, badInput("%v", err)
	}
	return plan, nil
}

// slurmTime formats minutes as Slurm's D-HH:MM:SS.
func slurmTime(minutes int) string {
	return fmt.Sprintf("%d-%02d:%02d:00", minutes/(24*60), minutes/60%24, minutes%60)
}

// shellQuote quotes s for bash: as is when it is plainly safe, else in single quotes.
func shellQuote(s string) string {
	if s != "" && strings.Trim(s, "abcdefghijklmnopqrstuvwxyzABCDEFGHIJKLMNOPQRSTUVWXYZ0123456789_-./+:,=@%") == "" {
		return s
	}
	return "'" + strings.ReplaceAll(s, "'", `'\''`) + "'"
}

type jobScript struct {
	Version           string
	Binary, Plan, Out string
	PlanName          string
	Tasks, CPUs       int
	Time, MergeTime   string
	Partition         string
	Est               timeEstimate
	Q                 func(string) string
}

func runJobscript(args []string, stdout, stderr io.Writer) error {
	fs := newFlags("jobscript", "--plan FILE [--out DIR] [--tasks N] [--cpus-per-task C] [--partition P] [--binary PATH]",
		"keyceiling jobscript --plan tables.plan --out tables --tasks 16 --cpus-per-task 4 > job.sh && bash job.sh", stdout)
	var planPath, out, partition, binary string
	var tasks, cpus int
	fs.StringVar(&planPath, "plan", "", "plan file of the sweep (required; see docs/plan-format.md)")
	fs.StringVar(&out, "out", "", "result folder of the sweep (default: the plan's file name without .plan, plus -results)")
	fs.IntVar(&tasks, "tasks", 0, "array tasks, one shard of the plan each (default: the plan's chains, at most 8)")
	fs.IntVar(&cpus, "cpus-per-task", 1, "CPUs per task: the sweep's workers within a task")
	fs.StringVar(&partition, "partition", "", "Slurm partition of both jobs (default: the cluster's default)")
	fs.StringVar(&binary, "binary", "", "keyceiling binary the jobs run, as the compute nodes see it (default: this binary)")
	if err := parseFlags(fs, args); err != nil {
		return err
	}
	if fs.NArg() > 0 {
		return badInput("unexpected argument %q", fs.Arg(0))
	}
	if planPath == "" {
		return badInput("--plan FILE is required")
	}
	if fs.Changed("tasks") && (tasks < 1 || tasks > maxArrayTasks) {
		return badInput("--tasks %d is out of range (want 1..%d)", tasks, maxArrayTasks)
	}
	if cpus < 1 || cpus > maxCPUsPerTask {
		return badInput("--cpus-per-task %d is out of range (want 1..%d)", cpus, maxCPUsPerTask)
	}
	if partition != "" && strings.Trim(partition, "abcdefghijklmnopqrstuvwxyzABCDEFGHIJKLMNOPQRSTUVWXYZ0123456789_-.,") != "" {
		return badInput("--partition %q is not a partition name (letters, digits, _ - . and commas)", partition)
	}
	for _, p := range []string{binary, planPath, out} {
		if strings.ContainsAny(p, "\n\r") {
			return badInput("path %q contains a line break", p)
		}
	}
	plan, err := readPlan(planPath)
	if err != nil {
		return err
	}
	if !fs.Changed("tasks") {
		tasks = max(1, min(len(plan.Chains()), 8))
	}
	if out == "" {
		stem := strings.TrimSuffix(filepath.Base(planPath), filepath.Ext(planPath))
		out = stem + "-results"
	}
	if binary == "" {
		if binary, err = os.Executable(); err != nil {
			return badInput("cannot locate this binary (%v): give --binary PATH", err)
		}
		if b, err := filepath.EvalSymlinks(binary); err == nil {
			binary = b
		}
	}
	abs := func(p string) string {
		if a, err := filepath.Abs(p); err == nil {
			return a
		}
		return p
	}
	if strings.ContainsRune(binary, '/') { // a bare name is looked up on the nodes' PATH
		binary = abs(binary)
	}
	js := jobScript{
		Version: versionString(), Binary: binary, Plan: abs(planPath), Out: abs(out),
		PlanName: filepath.Base(planPath), Tasks: tasks, CPUs: cpus, Partition: partition,
		Est: estimateTime(plan, tasks, cpus), MergeTime: slurmTime(mergeMinutes), Q: shellQuote,
	}
	js.Time = slurmTime(js.Est.Minutes)
	if js.Est.EmptyShards > 0 {
		fmt.Fprintf(stderr, "keyceiling jobscript: note: %d of the %d tasks get no chain of the plan (it has %d chains)\n",
			js.Est.EmptyShards, tasks, js.Est.Chains)
	}
	return jobTemplate.Execute(stdout, js)
}

// Sanity limits of jobscript's flags (Slurm's own MaxArraySize default is 1001).
const (
	maxArrayTasks  = 100000
	maxCPUsPerTask = 4096
)

func minus1(n int) int { return n - 1 }

var jobTemplate = template.Must(template.New("job").Funcs(template.FuncMap{"minus1": minus1}).Parse(
	`#!/bin/bash
#
# keyceiling sweep of {{.PlanName}} as a Slurm job array, plus a merge job that waits for it.
# Written by "keyceiling jobscript" (keyceiling {{.Version}}); edit it as you need.
#   plan:    {{.Plan}} ({{.Est.Points}} points)
#   results: {{.Out}} (OUT below)
#
# SUBMIT (one command, on a login node, from any folder):
#
#     bash THIS_FILE          e.g.  bash job.sh
#
# Run by bash, outside Slurm, this file submits itself; it calls sbatch twice and prints the
# two job ids:
#   1. the array job: tasks 0..{{minus1 .Tasks}}; task K runs shard K of {{.Tasks}} of the plan
#      ("keyceiling sweep --shard K/{{.Tasks}}") with {{.CPUs}} worker(s) and writes
#      OUT/shard-K-of-{{.Tasks}}.jsonl;
#   2. the merge job, submitted with --dependency=afterok:<array job> --kill-on-invalid-dep=yes:
#      it starts only once every task has succeeded and runs "keyceiling merge OUT", which
#      writes OUT/records.jsonl and OUT/summary.csv. If a task fails, is cancelled or runs out
#      of time, the dependency can never be met and Slurm cancels the merge job rather than
#      leaving it pending forever.
# Inside Slurm (SLURM_ARRAY_TASK_ID set), this same file is the body of one array task.
#
# WATCH:   squeue -u "$USER"      (logs: OUT/logs/sweep-<job>_<task>.log, merge-<job>.log)
# REDO:    bash THIS_FILE 3       (or 3,5 or 2-4) submits only those tasks, and a new merge job;
#          shard files are kept, and a re-run task skips the points its shard file already
#          holds. "keyceiling merge OUT" lists the points still missing.
# CHECK:   keyceiling check OUT/records.jsonl   re-verifies every certificate, on its own.
#
# Plain "sbatch THIS_FILE" submits the array alone (logs go to slurm-<job>_<task>.out in the
# current folder); run "keyceiling merge OUT" yourself once it has finished.
#
# TIME LIMIT (--time below), estimated from the plan ({{.Est.Points}} points in {{.Est.Chains}} chains):
#   {{.Est.Finite}} finite-energy and {{.Est.Inf}} unconstrained point(s) to search, {{printf "%.4g" .Est.CPUSeconds}} CPU-seconds in all
#   ({{.Est.SecondsPerUnit}} s of one core per unit of search.PointCost: a finite-energy point costs
#   4 units with the default family "auto", 1 with tms-split; an unconstrained one twice that);
#   busiest task (shard {{.Est.Busiest}}): max({{printf "%.4g" .Est.BusiestSeconds}} CPU-s / {{.CPUs}} CPU(s), longest chain {{printf "%.4g" .Est.BusiestChain}} s) = {{printf "%.4g" .Est.WallSeconds}} s;
#   x safety factor {{.Est.Safety}}, rounded up to whole minutes{{if .Est.MinimumHeld}}, raised to the minimum of {{.Est.MinMinutesAllowed}}{{else}} (at least {{.Est.MinMinutesAllowed}}){{end}}: {{.Est.Minutes}} min.
# Raise it for slow nodes or heavier settings: a task past its limit is killed. Its finished
# points are kept in its shard file, and "bash THIS_FILE K" resumes shard K where it stopped.
{{- if .Est.EmptyShards}}
# NOTE: {{.Est.EmptyShards}} of the {{.Tasks}} tasks get no chain (the plan has {{.Est.Chains}}); fewer tasks would do.
{{- end}}
#
# To change the number of tasks, change both --array (0..N-1) and TASKS below.
# Options for both jobs (account, QOS, partition, ...) go into SBATCH_COMMON below; options of
# the array alone can also be added as #SBATCH lines here.
#
#SBATCH --job-name=keyceiling-sweep
#SBATCH --array=0-{{minus1 .Tasks}}
#SBATCH --ntasks=1
#SBATCH --cpus-per-task={{.CPUs}}
#SBATCH --time={{.Time}}

set -euo pipefail

# ---- settings -------------------------------------------------------------------------------
KEYCEILING={{call .Q .Binary}}   # the binary, as the compute nodes see it
PLAN={{call .Q .Plan}}
OUT={{call .Q .Out}}
TASKS={{.Tasks}}                  # shards of the plan; the array is 0..TASKS-1
MERGE_TIME={{.MergeTime}}     # time limit of the merge job
SBATCH_COMMON=({{if .Partition}}--partition={{call .Q .Partition}}{{end}})  # sbatch options for both jobs, e.g. --account=abc

# ---- one array task: one shard ------------------------------------------------------------
if [[ -n "${SLURM_ARRAY_TASK_ID:-}" ]]; then
	if (( SLURM_ARRAY_TASK_ID >= TASKS )); then
		echo "task $SLURM_ARRAY_TASK_ID is outside the $TASKS shards: change --array and TASKS together" >&2
		exit 2
	fi
	# The shard is given explicitly (not derived from the array's size), so that a re-run of
	# only some tasks still computes the right shards. Workers default to the task's CPUs.
	echo "keyceiling shard $SLURM_ARRAY_TASK_ID/$TASKS of $PLAN on $(hostname), ${SLURM_CPUS_PER_TASK:-1} CPU(s)"
	exec "$KEYCEILING" sweep --plan "$PLAN" --out "$OUT" --shard "$SLURM_ARRAY_TASK_ID/$TASKS"
fi

# ---- submitter: run by bash on a login node ----------------------------------------------
case "${1:-}" in
-h | --help)
	sed -n '2,/^#SBATCH/p' "${BASH_SOURCE[0]}" | sed '$d'
	exit 0
	;;
'') ARRAY=() ; WHAT="tasks 0-$((TASKS - 1))" ;;
*[!0-9,-]*)
	echo "usage: bash ${BASH_SOURCE[0]} [TASKS]   (TASKS: e.g. 3, 3,5 or 2-4; default: all)" >&2
	exit 2
	;;
*) ARRAY=(--array="$1") ; WHAT="tasks $1 (re-run)" ;;
esac
command -v sbatch >/dev/null || { echo "sbatch not found: run this on a Slurm login node" >&2; exit 2; }
[[ -r "$PLAN" ]] || { echo "cannot read the plan $PLAN" >&2; exit 2; }
mkdir -p "$OUT/logs"

ARRAY_JOB=$(sbatch --parsable ${SBATCH_COMMON[@]+"${SBATCH_COMMON[@]}"} ${ARRAY[@]+"${ARRAY[@]}"} \
	--output="$OUT/logs/sweep-%A_%a.log" "${BASH_SOURCE[0]}")
ARRAY_JOB=${ARRAY_JOB%%;*} # "id;cluster" on multi-cluster sites

MERGE_JOB=$(printf '#!/bin/bash\nexec %q merge %q\n' "$KEYCEILING" "$OUT" |
	sbatch --parsable ${SBATCH_COMMON[@]+"${SBATCH_COMMON[@]}"} --job-name=keyceiling-merge \
		--dependency=afterok:"$ARRAY_JOB" --kill-on-invalid-dep=yes \
		--ntasks=1 --cpus-per-task=1 --time="$MERGE_TIME" --output="$OUT/logs/merge-%j.log")
MERGE_JOB=${MERGE_JOB%%;*}

echo "array job $ARRAY_JOB: $WHAT of $PLAN; shard files in $OUT"
echo "merge job $MERGE_JOB: runs once all of them succeed; writes $OUT/records.jsonl and summary.csv"
echo "watch: squeue -j $ARRAY_JOB,$MERGE_JOB    logs: $OUT/logs"
`))
