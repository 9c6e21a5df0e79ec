// Command gobench evaluates keyceiling's squashing objective for the TMSSplit family at the
// parameter vectors of a points file and times it: the Go side of bench/compare.sh, which
// runs bench/objective.py (NumPy) on the same file.
//
// Usage: gobench [--eta 0.9] [--nb 1] [--ns 1] [--min-seconds 2] [--window 0.05] POINTS_FILE
//
// POINTS_FILE has one parameter vector of squash.TMSSplit (5 numbers) per line. gobench
// prints one objective value per line (%.17g; squash.Target.Value, i.e. the map built from
// the parameters plus 1/2 I(A';B|E') for the thermal input of N_S photons on the thermal-loss
// channel), then "# evals_per_sec X" measured over repeated passes through the points for
// at least --min-seconds and "# best_window_evals_per_sec Y", the best rate over windows of
// whole passes lasting at least --window seconds.
package main

import (
	"bufio"
	"flag"
	"fmt"
	"os"
	"strconv"
	"strings"
	"time"

	"keyceiling/gaussian"
	"keyceiling/squash"
)

func main() {
	eta := flag.Float64("eta", 0.9, "transmissivity of the thermal-loss channel")
	nb := flag.Float64("nb", 1, "thermal photon number N_B of the environment")
	ns := flag.Float64("ns", 1, "mean photon number N_S of the thermal input")
	minSeconds := flag.Float64("min-seconds", 2, "time the evaluations for at least this long")
	window := flag.Float64("window", 0.05, "also report the best rate over windows of at least this many seconds")
	flag.Parse()
	if flag.NArg() != 1 {
		fmt.Fprintln(os.Stderr, "usage: gobench [--eta E] [--nb N] [--ns N] [--min-seconds S] [--window S] POINTS_FILE")
		os.Exit(2)
	}
	pts, err := readPoints(flag.Arg(0), squash.TMSSplit{}.NumParams())
	if err != nil {
		fmt.Fprintln(os.Stderr, "gobench:", err)
		os.Exit(1)
	}
	model := gaussian.Model{Kind: gaussian.ThermalLoss, Eta: *eta, NB: *nb}
	t, err := squash.NewTarget(model, *ns, squash.TMSSplit{})
	if err != nil {
		fmt.Fprintln(os.Stderr, "gobench:", err)
		os.Exit(1)
	}
	w := bufio.NewWriter(os.Stdout)
	defer w.Flush()
	for _, p := range pts {
		fmt.Fprintf(w, "%.17g\n", t.Value(p))
	}
	// Whole passes through the points for at least --min-seconds; the rate over all of it,
	// and the best rate over windows of whole passes lasting at least --window seconds (the
	// same window as the NumPy side's, so that both get the same chances at undisturbed time
	// on a shared machine).
	n, wn := 0, 0
	sink, best := 0.0, 0.0
	start := time.Now()
	wstart := start
	var el time.Duration
	for {
		for _, p := range pts {
			sink += t.Value(p)
		}
		n += len(pts)
		wn += len(pts)
		now := time.Now()
		if ws := now.Sub(wstart).Seconds(); ws >= *window {
			best = max(best, float64(wn)/ws)
			wn, wstart = 0, now
		}
		if el = now.Sub(start); el.Seconds() >= *minSeconds {
			break
		}
	}
	rate := float64(n) / el.Seconds()
	fmt.Fprintf(w, "# evals_per_sec %.6g\n", rate)
	fmt.Fprintf(w, "# best_window_evals_per_sec %.6g\n", max(best, rate))
	if sink == 0 {
		fmt.Fprintln(w, "# (all values zero)")
	}
}

func readPoints(path string, want int) ([][]float64, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	var pts [][]float64
	sc := bufio.NewScanner(f)
	for line := 1; sc.Scan(); line++ {
		fields := strings.Fields(sc.Text())
		if len(fields) == 0 || strings.HasPrefix(fields[0], "#") {
			continue
		}
		if len(fields) != want {
			return nil, fmt.Errorf("%s:%d: %d numbers, want %d", path, line, len(fields), want)
		}
		p := make([]float64, want)
		for i, s := range fields {
			if p[i], err = strconv.ParseFloat(s, 64); err != nil {
				return nil, fmt.Errorf("%s:%d: %v", path, line, err)
			}
		}
		pts = append(pts, p)
	}
	if err := sc.Err(); err != nil {
		return nil, err
	}
	if len(pts) == 0 {
		return nil, fmt.Errorf("%s: no points", path)
	}
	return pts, nil
}
