package main

import (
	"fmt"
	"io"
	"path/filepath"

	"keyceiling/results"
)

func runMerge(args []string, stdout, stderr io.Writer) error {
	fs := newFlags("merge", "DIR",
		"keyceiling merge paper    # after every `keyceiling sweep --plan paper.plan --out paper --shard I/N` finished", stdout)
	if err := parseFlags(fs, args); err != nil {
		return err
	}
	if fs.NArg() != 1 {
		return badInput("want one output folder (keyceiling merge DIR), got %d arguments", fs.NArg())
	}
	dir := fs.Arg(0)
	m, err := results.LoadMerge(dir)
	if err != nil {
		return badInput("%v", err)
	}
	for _, f := range m.Torn {
		fmt.Fprintf(stderr, "keyceiling merge: %s ends with a line cut by a kill; it is ignored (re-running its shard completes it)\n", f)
	}
	if len(m.Missing) > 0 {
		for _, k := range m.Missing {
			fmt.Fprintf(stderr, "missing: %s\n", k)
		}
		return fmt.Errorf("%d of %d searched points have no record (listed above); nothing written: finish the shards and merge again",
			len(m.Missing), len(m.Missing)+m.NumRecords())
	}
	if err := m.Write(); err != nil {
		return fmt.Errorf("writing %s: %v", dir, err)
	}
	fmt.Fprintf(stdout, "merged %d records from %d files (%d identical duplicates dropped) into %s and %s\n",
		m.NumRecords(), len(m.Files), m.Duplicates, filepath.Join(dir, results.RecordsFile), filepath.Join(dir, results.SummaryFile))
	return nil
}
