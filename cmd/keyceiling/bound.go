package main

import (
	"encoding/json"
	"fmt"
	"io"
	"math"
	"time"

	"keyceiling/results"
	"keyceiling/search"
	"keyceiling/squash"
)

func runBound(args []string, stdout, _ io.Writer) error {
	fs := newFlags("bound", "--channel KIND [channel flags] [--energy N_S|inf] [search flags]",
		"keyceiling bound --channel thermal-loss --eta 0.9 --noise 1 --energy 1 --format json", stdout)
	var cf channelFlags
	var sf searchFlags
	var format string
	cf.register(fs, true)
	sf.register(fs)
	fs.StringVar(&format, "format", "text", "output: text, or json (one record on one line: append it to a .jsonl file and check, table and plot read it)")
	if err := parseFlags(fs, args); err != nil {
		return err
	}
	if fs.NArg() > 0 {
		return badInput("unexpected argument %q", fs.Arg(0))
	}
	if format != "text" && format != "json" {
		return badInput("--format %q: want text or json", format)
	}
	p, err := cf.point(fs)
	if err != nil {
		return err
	}
	st, err := sf.settings()
	if err != nil {
		return err
	}
	if math.IsInf(p.Energy, 1) && st.Family == "general" {
		return badInput("--family general needs a finite --energy: the supremum over squeezed inputs is computed only at finite energy")
	}
	start := time.Now()
	res, err := search.Run(p, st, search.RandFor(sf.seed, p), nil)
	if err != nil {
		return fmt.Errorf("no certified bound for %s: %v", p.Key(), err)
	}
	rec := results.NewRecord(res, st, sf.seed, time.Since(start).Seconds())
	if format == "json" {
		enc := json.NewEncoder(stdout)
		return enc.Encode(rec)
	}
	printRecord(stdout, rec)
	return nil
}

func fmtEnergy(x results.Num) string {
	if math.IsInf(float64(x), 1) {
		return "unconstrained (N_S -> inf)"
	}
	return fmt.Sprintf("N_S = %g", float64(x))
}

// printRecord writes a record for a person to read.
func printRecord(w io.Writer, r results.Record) {
	m, _ := r.Channel.Model()
	fmt.Fprintf(w, "channel      %v, input %s\n", m, fmtEnergy(r.Energy))
	fmt.Fprintf(w, "bound        %.6f bits per channel use  (squashing map, family %s)\n", r.Bound, r.Family)
	fmt.Fprintf(w, "lower        %.6f  (best achievable rate among the references)\n", r.Lower)
	for _, ref := range r.References {
		kind := "lower"
		if ref.Upper {
			kind = "upper"
		}
		fmt.Fprintf(w, "  %-16s %s %.6f  %s\n", ref.Name, kind, ref.Value, ref.Source)
	}
	fmt.Fprintf(w, "tightest     %s; gap to the lower bound %.6f\n", r.Tightest, r.Gap)
	if squash.EntanglementBreaking(m) {
		fmt.Fprintln(w, "note         the channel is entanglement breaking: its secret-key and quantum capacities are 0")
	}
	if r.BeatsREE {
		fmt.Fprintln(w, "note         this squashing bound is below the relative-entropy (PLOB) bound here")
	}
	fmt.Fprintf(w, "map          keeps %d mode(s), %d ancilla(s), phase covariant: %v\n", r.Map.KeptModes, r.Map.Ancillas, r.Covariant)
	fmt.Fprintf(w, "certificate  CP margin %.2e, extended-precision difference %.1e, sup over inputs by %s\n",
		r.Recheck.CPMargin, r.Recheck.Difference, r.SupMethod)
	fmt.Fprintf(w, "search       %s; %d evaluations; seed %d; %.2f s\n", r.StopReason, r.Evals, r.Seed, r.Seconds)
	fmt.Fprintln(w, "\n"+results.Disclaimer)
}
