package main

import (
	"fmt"
	"io"
	"runtime"

	"keyceiling/results"
)

func runCheck(args []string, stdout, _ io.Writer) error {
	fs := newFlags("check", "FILE.jsonl|DIR [--workers N]",
		"keyceiling check keyceiling-out    # every *.jsonl in the folder; or: keyceiling check keyceiling-out/records.jsonl", stdout)
	var workers int
	fs.IntVar(&workers, "workers", 0, "records checked at once (0: GOMAXPROCS)")
	if err := parseFlags(fs, args); err != nil {
		return err
	}
	if fs.NArg() != 1 {
		return badInput("want one record file or folder (keyceiling check FILE|DIR), got %d arguments", fs.NArg())
	}
	if workers < 0 || (fs.Changed("workers") && workers == 0) {
		return badInput("--workers %d is out of range (want 1 or more)", workers)
	}
	if workers == 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	files, recs, err := results.ReadCheckInputs(fs.Arg(0))
	if err != nil {
		return badInput("%v", err)
	}
	rep := results.CheckAll(files, recs, workers)
	for _, f := range rep.Failures {
		fmt.Fprintf(stdout, "FAIL %s (%s line %d): %v\n", f.Key, f.File, f.Line, f.Err)
	}
	fmt.Fprintf(stdout, "checked %d records in %d files: %d passed, %d failed\n",
		rep.Records, len(rep.Files), rep.Records-len(rep.Failures), len(rep.Failures))
	fmt.Fprintln(stdout, results.Disclaimer)
	if len(rep.Failures) > 0 {
		return fmt.Errorf("%d of %d records failed the check", len(rep.Failures), rep.Records)
	}
	return nil
}
