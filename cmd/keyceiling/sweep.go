package main

import (
	"bytes"
	"context"
	_ "embed"
	"fmt"
	"io"
	"math"
	"os"
	"os/signal"
	"path/filepath"
	"runtime"
	"strconv"
	"strings"
	"sync"
	"syscall"
	"time"

	"github.com/spf13/pflag"

	"keyceiling/results"
	"keyceiling/search"
)

// demoPlan is the plan `keyceiling sweep` runs without a plan or grid flags.
//
//go:embed demo.plan
var demoPlan []byte

// gridFlags are sweep's channel grid: like channelFlags, but every parameter takes a list
// of values and ranges (search.ParseAxis).
type gridFlags struct {
	channel, eta, lossDB, gain, noise, xi, energy string
}

var gridNames = []string{"channel", "eta", "loss-db", "gain", "noise", "xi", "energy"}

func (g *gridFlags) register(fs *pflag.FlagSet) {
	fs.StringVar(&g.channel, "channel", "thermal-loss", "channel: thermal-loss, amplifier or additive")
	fs.StringVar(&g.eta, "eta", "", "transmissivities of thermal-loss (list/range, 0 < eta < 1)")
	fs.StringVar(&g.lossDB, "loss-db", "", "losses in dB instead of --eta (list/range, eta = 10^(-dB/10))")
	fs.StringVar(&g.gain, "gain", "", "amplifier gains G > 1 (list/range)")
	fs.StringVar(&g.noise, "noise", "0", "thermal photon numbers N_B (list/range; thermal-loss, amplifier)")
	fs.StringVar(&g.xi, "xi", "", "added noise xi > 0 of the additive channel (list/range)")
	fs.StringVar(&g.energy, "energy", "inf", "input energy bounds N_S (list/range, and/or inf)")
}

func (g *gridFlags) value(name string) string {
	switch name {
	case "channel":
		return g.channel
	case "eta":
		return g.eta
	case "loss-db":
		return g.lossDB
	case "gain":
		return g.gain
	case "noise":
		return g.noise
	case "xi":
		return g.xi
	}
	return g.energy
}

// settingEntries turns the search flags into plan entries; with onlyChanged, only the flags
// given on the command line (they override a plan file's settings).
func (s *searchFlags) settingEntries(fs *pflag.FlagSet, onlyChanged bool) []search.Entry {
	vals := []struct{ key, value string }{
		{"family", s.family}, {"method", s.method}, {"ancillas", strconv.Itoa(s.ancillas)},
		{"keep", strconv.Itoa(s.keep)}, {"starts", strconv.Itoa(s.starts)},
		{"evaluations", strconv.Itoa(s.evaluations)}, {"seed", strconv.FormatUint(s.seed, 10)},
	}
	var out []search.Entry
	for _, v := range vals {
		if onlyChanged && !fs.Changed(v.key) {
			continue
		}
		out = append(out, search.Entry{Key: v.key, Value: v.value, Where: "--" + v.key})
	}
	return out
}

// override replaces entries with the same keys as over (or appends them).
func override(entries, over []search.Entry) []search.Entry {
	for _, o := range over {
		found := false
		for i := range entries {
			if entries[i].Key == o.Key {
				entries[i], found = o, true
			}
		}
		if !found {
			entries = append(entries, o)
		}
	}
	return entries
}

const sweepExample = `keyceiling sweep --channel thermal-loss --loss-db 1:20:5 --noise 0,0.01 --energy 1,10,inf --family tms-split --out fibre
  keyceiling sweep --plan paper.plan --out paper --workers 8
  keyceiling sweep --plan paper.plan --out paper --shard 0/4    # one of four shards; then: keyceiling merge paper
  keyceiling sweep                                             # the built-in demo (metropolitan fibre), into keyceiling-out

Lists and ranges: "0.1,0.5,0.9"; "1:10:5" is 5 points from 1 to 10; "0.01:10:7log" is 7 points
evenly spaced in log; items can be mixed: "0.5, 1:4:4, inf". Plan files: docs/plan-format.md.
Without --plan and grid flags, sweep runs the built-in demo plan.`

func runSweep(args []string, stdout, stderr io.Writer) error {
	fs := newFlags("sweep", "[--plan FILE | grid flags] [search flags] [--out DIR] [--workers N] [--shard I/N] [--quiet]",
		sweepExample, stdout)
	var g gridFlags
	var sf searchFlags
	var planPath, outDir, shardText string
	var workers int
	var quiet bool
	g.register(fs)
	sf.register(fs)
	fs.StringVar(&planPath, "plan", "", "plan file (see docs/plan-format.md); search flags given override its settings")
	fs.StringVar(&outDir, "out", "keyceiling-out", "output folder: plan.txt, records.jsonl or shard-I-of-N.jsonl, summary.csv")
	fs.IntVar(&workers, "workers", 0, "chains searched at once (0: $SLURM_CPUS_PER_TASK if set, else GOMAXPROCS)")
	fs.StringVar(&shardText, "shard", "", "run shard I of N (0-based), e.g. 2/8 (default inside a Slurm array task: the task's index)")
	fs.BoolVar(&quiet, "quiet", false, "no progress or summary on stderr (errors only)")
	if err := parseFlags(fs, args); err != nil {
		return err
	}
	if fs.NArg() > 0 {
		return badInput("unexpected argument %q (a plan file goes after --plan)", fs.Arg(0))
	}
	if outDir == "" {
		return badInput("--out: empty folder name")
	}
	grid := false
	for _, n := range gridNames {
		if fs.Changed(n) {
			grid = true
		}
	}
	if workers < 0 || (fs.Changed("workers") && workers == 0) {
		return badInput("--workers %d is out of range (want 1 or more)", workers)
	}
	if workers == 0 {
		w, err := defaultWorkers()
		if err != nil {
			return err
		}
		workers = w
	}
	shard, err := shardOf(shardText, fs.Changed("shard"))
	if err != nil {
		return err
	}

	var plan *search.Plan
	demo := false
	switch {
	case planPath != "" && grid:
		for _, n := range gridNames {
			if fs.Changed(n) {
				return badInput("--%s cannot be combined with --plan (set it in the plan file)", n)
			}
		}
		return badInput("grid flags cannot be combined with --plan")
	case planPath != "":
		data, err := os.ReadFile(planPath)
		if err != nil {
			return badInput("--plan: %v", err)
		}
		plan, err = planWithOverrides(data, planPath, sf.settingEntries(fs, true))
		if err != nil {
			return badInput("%v", err)
		}
	case grid:
		var entries []search.Entry
		for _, n := range gridNames {
			v := g.value(n)
			if v == "" || (n == "noise" && !fs.Changed(n)) {
				continue
			}
			entries = append(entries, search.Entry{Key: n, Value: v, Where: "--" + n})
		}
		entries = append(entries, sf.settingEntries(fs, false)...)
		if plan, err = search.BuildPlan(entries, "command line"); err != nil {
			return badInput("%v", err)
		}
	default:
		demo = true
		if plan, err = planWithOverrides(demoPlan, "demo.plan", sf.settingEntries(fs, true)); err != nil {
			return badInput("%v", err)
		}
	}

	out, err := results.PrepareOutput(outDir, plan, shard)
	if err != nil {
		return badInput("%v", err)
	}
	// Nothing has been written so far; from here on a failure is not bad input.
	if err := out.Open(); err != nil {
		return fmt.Errorf("output folder %s: %v", outDir, err)
	}
	var chains []search.Chain
	breaking := 0
	for _, c := range plan.ChainsOf(shard) {
		if c.Breaking {
			breaking += len(c.Points)
		}
		chains = append(chains, c)
	}
	stored := out.NumStored()
	total := out.NumToSearch()
	prog := newProgress(stderr, quiet, total, stored, bestGap(out.Records()))
	if !quiet {
		what := "plan " + planPath
		switch {
		case demo:
			what = "the built-in demo plan (metropolitan fibre link, 5-80 km; see `keyceiling sweep --help`)"
		case grid:
			what = "the command-line grid"
		}
		fmt.Fprintf(stderr, "keyceiling sweep: %s: %d points to search", what, total)
		if shard.Sharded() {
			fmt.Fprintf(stderr, " in shard %s", shard)
		}
		if breaking > 0 {
			fmt.Fprintf(stderr, ", %d entanglement-breaking (bound 0, not searched)", breaking)
		}
		if stored > 0 {
			fmt.Fprintf(stderr, "; resuming: %d already done", stored)
		}
		fmt.Fprintf(stderr, "; workers: %d; writing %s\n", workers, outDir)
	}

	sigs := make(chan os.Signal, 1)
	signal.Notify(sigs, os.Interrupt, syscall.SIGTERM)
	defer signal.Stop(sigs)
	go func() {
		if _, ok := <-sigs; !ok {
			return
		}
		out.Hold() // no record line is cut: the process exits between two appends
		prog.stop()
		fmt.Fprintf(stderr, "keyceiling sweep: interrupted; finished points are saved in %s: run the same command again to resume\n", outDir)
		os.Exit(130)
	}()

	prog.start()
	var failed []string
	cfg := search.SweepConfig{
		Settings: plan.Settings, Seed: plan.Seed, Workers: workers,
		Stored: func(pp search.PlanPoint) ([]search.Stage, bool) {
			rec, ok := out.Stored(pp.Point.Key())
			return rec.Stages, ok
		},
		Done: func(pp search.PlanPoint, res search.Result, secs float64, err error) error {
			if err != nil {
				failed = append(failed, pp.Point.Key())
				prog.printf("keyceiling sweep: no certified bound for %s: %v\n", pp.Point.Key(), err)
				prog.point(math.NaN(), true)
				return nil
			}
			rec := results.NewRecord(res, plan.Settings, plan.Seed, secs)
			rec.Plan = out.Hash
			if err := out.Append(rec); err != nil {
				return err
			}
			prog.point(rec.Gap, false)
			return nil
		},
	}
	sweepErr := search.Sweep(context.Background(), chains, cfg)
	prog.stop()
	if sweepErr != nil {
		out.Close()
		return fmt.Errorf("output folder %s: %v", outDir, sweepErr)
	}
	if err := out.Finish(); err != nil {
		return fmt.Errorf("output folder %s: %v", outDir, err)
	}
	if !quiet {
		newly := out.NumStored() - stored
		fmt.Fprintf(stderr, "keyceiling sweep: %d points searched (%d now, %d earlier), %d entanglement-breaking (bound 0, not searched), %d failed; %s\n",
			out.NumStored(), newly, stored, breaking, len(failed), prog.elapsed())
		if shard.Sharded() {
			fmt.Fprintf(stderr, "keyceiling sweep: wrote %s; when every shard is done: keyceiling merge %s\n", out.RecordsPath(), outDir)
		} else {
			fmt.Fprintf(stderr, "keyceiling sweep: wrote %s and %s\n", out.RecordsPath(), filepath.Join(outDir, results.SummaryFile))
		}
	}
	if len(failed) > 0 {
		return fmt.Errorf("%d points have no certified bound (listed above); re-running the command retries them", len(failed))
	}
	if demo && !shard.Sharded() {
		files, err := writeDemoExtras(outDir, out.Records())
		if err != nil {
			return fmt.Errorf("demo table and figures: %v", err)
		}
		if !quiet {
			fmt.Fprintf(stderr, "keyceiling sweep: wrote %s\n", strings.Join(files, ", "))
		}
	}
	if !quiet {
		fmt.Fprintln(stderr, "keyceiling sweep: "+results.Disclaimer)
	}
	return nil
}

// writeDemoExtras writes the demo's table (Markdown) and figures: bound versus loss at each
// finite energy and unconstrained, and the crossover energy below which the squashing bound
// beats the relative-entropy bound. It returns the files written.
func writeDemoExtras(dir string, byKey map[string]results.Record) ([]string, error) {
	recs := make([]results.Record, 0, len(byKey))
	for _, r := range byKey {
		recs = append(recs, r)
	}
	results.SortRecords(recs)
	var written []string
	tab, err := results.BuildTable(recs, results.TableSpec{})
	if err != nil {
		return written, err
	}
	var buf bytes.Buffer
	if err := tab.Write(&buf, "markdown", 4); err != nil {
		return written, err
	}
	path := filepath.Join(dir, "table.md")
	if err := results.WriteFileAtomic(path, buf.Bytes()); err != nil {
		return written, err
	}
	written = append(written, path)
	energies := map[float64]bool{}
	for _, r := range recs {
		energies[float64(r.Energy)] = true
	}
	type fig struct {
		name string
		spec results.PlotSpec
	}
	var figs []fig
	if energies[1] {
		figs = append(figs, fig{"bounds-vs-loss-ns1", results.PlotSpec{Kind: "bound-vs-loss", Energy: 1}})
	}
	if energies[math.Inf(1)] {
		figs = append(figs, fig{"bounds-vs-loss-unconstrained", results.PlotSpec{Kind: "bound-vs-loss", Energy: math.Inf(1)}})
	}
	if len(energies) >= 2 {
		figs = append(figs, fig{"crossover", results.PlotSpec{Kind: "crossover"}})
	}
	for _, f := range figs {
		fg, err := results.NewFigure(recs, f.spec)
		if err != nil {
			return written, fmt.Errorf("%s: %v", f.name, err)
		}
		for _, format := range []string{"png", "svg"} {
			data, err := fg.Render(format)
			if err != nil {
				return written, err
			}
			path := filepath.Join(dir, f.name+"."+format)
			if err := results.WriteFileAtomic(path, data); err != nil {
				return written, err
			}
			written = append(written, path)
		}
	}
	return written, nil
}

// planWithOverrides parses a plan file and applies the search flags given on the command line.
func planWithOverrides(data []byte, name string, over []search.Entry) (*search.Plan, error) {
	entries, last, err := search.ParsePlanEntries(bytes.NewReader(data), name)
	if err != nil {
		return nil, err
	}
	return search.BuildPlan(override(entries, over), last)
}

// defaultWorkers is $SLURM_CPUS_PER_TASK when set, else GOMAXPROCS.
func defaultWorkers() (int, error) {
	if v, ok := os.LookupEnv("SLURM_CPUS_PER_TASK"); ok && v != "" {
		n, err := strconv.Atoi(v)
		if err != nil || n < 1 {
			return 0, badInput("SLURM_CPUS_PER_TASK=%q is not a positive whole number (set --workers)", v)
		}
		return n, nil
	}
	return runtime.GOMAXPROCS(0), nil
}

// shardOf parses --shard, or derives the shard of a Slurm array task: index
// SLURM_ARRAY_TASK_ID - SLURM_ARRAY_TASK_MIN of SLURM_ARRAY_TASK_COUNT.
func shardOf(text string, given bool) (search.Shard, error) {
	if given {
		sh, err := search.ParseShard(text)
		if err != nil {
			return sh, badInput("--%v", err)
		}
		return sh, nil
	}
	id, ok := os.LookupEnv("SLURM_ARRAY_TASK_ID")
	if !ok || id == "" {
		return search.Shard{}, nil
	}
	get := func(name string) (int, error) {
		v := os.Getenv(name)
		n, err := strconv.Atoi(v)
		if err != nil || n < 0 {
			return 0, badInput("inside a Slurm array task, %s=%q is not a whole number (set --shard I/N)", name, v)
		}
		return n, nil
	}
	i, err := get("SLURM_ARRAY_TASK_ID")
	if err != nil {
		return search.Shard{}, err
	}
	lo, err := get("SLURM_ARRAY_TASK_MIN")
	if err != nil {
		return search.Shard{}, err
	}
	n, err := get("SLURM_ARRAY_TASK_COUNT")
	if err != nil {
		return search.Shard{}, err
	}
	if n < 1 || i < lo || i-lo >= n {
		return search.Shard{}, badInput("Slurm array task %d (min %d, count %d) does not name a shard: use an array 0-%d without steps, or set --shard I/N", i, lo, n, n-1)
	}
	return search.Shard{Index: i - lo, Count: n}, nil
}

func bestGap(recs map[string]results.Record) float64 {
	best := math.NaN()
	for _, r := range recs {
		if math.IsNaN(best) || r.Gap < best {
			best = r.Gap
		}
	}
	return best
}

// progress shows a sweep's progress on stderr: a live line redrawn twice a second on a
// terminal, a plain line every ProgressInterval otherwise.
type progress struct {
	w                   io.Writer
	quiet, tty          bool
	mu                  sync.Mutex
	total, done, before int
	failed              int
	gap                 float64
	begin               time.Time
	quit                chan struct{}
	stopOnce            sync.Once
	wg                  sync.WaitGroup
	drawn               bool
}

// ProgressInterval is the period of the plain progress lines when stderr is not a terminal.
const ProgressInterval = 10 * time.Second

func newProgress(w io.Writer, quiet bool, total, before int, gap float64) *progress {
	p := &progress{w: w, quiet: quiet, total: total, done: before, before: before, gap: gap,
		quit: make(chan struct{})}
	if f, ok := w.(*os.File); ok {
		if st, err := f.Stat(); err == nil && st.Mode()&os.ModeCharDevice != 0 {
			p.tty = true
		}
	}
	return p
}

func (p *progress) start() {
	p.begin = time.Now()
	if p.quiet {
		return
	}
	period := ProgressInterval
	if p.tty {
		period = 500 * time.Millisecond
	}
	p.wg.Add(1)
	go func() {
		defer p.wg.Done()
		t := time.NewTicker(period)
		defer t.Stop()
		for {
			select {
			case <-p.quit:
				return
			case <-t.C:
				p.mu.Lock()
				p.draw()
				p.mu.Unlock()
			}
		}
	}()
}

// point counts one finished point (failed or with its gap).
func (p *progress) point(gap float64, failed bool) {
	p.mu.Lock()
	defer p.mu.Unlock()
	p.done++
	if failed {
		p.failed++
	} else if math.IsNaN(p.gap) || gap < p.gap {
		p.gap = gap
	}
	if p.tty && !p.quiet {
		p.draw()
	}
}

// printf prints a message line (not suppressed by --quiet), clearing the live line first.
func (p *progress) printf(format string, a ...any) {
	p.mu.Lock()
	defer p.mu.Unlock()
	p.clear()
	fmt.Fprintf(p.w, format, a...)
}

func (p *progress) clear() {
	if p.tty && p.drawn {
		fmt.Fprint(p.w, "\r\x1b[K")
		p.drawn = false
	}
}

func (p *progress) line() string {
	el := time.Since(p.begin).Seconds()
	now := p.done - p.before
	s := fmt.Sprintf("%d/%d points", p.done, p.total)
	if now > 0 && el > 0 {
		rate := float64(now) / el
		s += fmt.Sprintf(", %.2f points/s, about %s left", rate, fmtDuration(float64(p.total-p.done)/rate))
	}
	if !math.IsNaN(p.gap) {
		s += fmt.Sprintf(", smallest gap %.4g bits", p.gap)
	}
	if p.failed > 0 {
		s += fmt.Sprintf(", %d failed", p.failed)
	}
	return s
}

func (p *progress) draw() {
	if p.tty {
		fmt.Fprint(p.w, "\r\x1b[Ksweep: "+p.line())
		p.drawn = true
		return
	}
	fmt.Fprintln(p.w, "keyceiling sweep: "+p.line())
}

func (p *progress) stop() {
	p.stopOnce.Do(func() {
		close(p.quit)
		p.wg.Wait()
		p.mu.Lock()
		defer p.mu.Unlock()
		p.clear()
	})
}

func (p *progress) elapsed() string {
	return fmtDuration(time.Since(p.begin).Seconds())
}

func fmtDuration(s float64) string {
	switch {
	case s < 60:
		return fmt.Sprintf("%.1f s", s)
	case s < 3600:
		return fmt.Sprintf("%d min %02d s", int(s)/60, int(s)%60)
	}
	return fmt.Sprintf("%d h %02d min", int(s)/3600, (int(s)%3600)/60)
}
