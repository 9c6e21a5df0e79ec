package main

import (
	"bytes"
	"io"
	"os"
	"path/filepath"
	"slices"
	"strings"

	"keyceiling/results"
)

func runTable(args []string, stdout, _ io.Writer) error {
	fs := newFlags("table", "FILE|DIR... [--format markdown|csv|latex|text] [--columns LIST] [--rows COND] [--sort LIST] [--digits N] [--out FILE]",
		"keyceiling table out/ --rows noise=0.01,energy=inf --columns loss-db,bound,ref:ree,ref:data-processing,lower --format latex --out table.tex", stdout)
	var format, columns, sortKeys, out string
	var rows []string
	var digits int
	fs.StringVar(&format, "format", "markdown", "output: markdown, csv, latex (booktabs) or text; csv has no note, so keep the disclaimer with it yourself: "+results.Disclaimer)
	fs.StringVar(&columns, "columns", "", "comma-separated columns, in order (default: the channel parameters, energy, bound, upper references, lower, tightest); the columns are:\n"+results.TableColumnHelp+"\n")
	fs.StringArrayVar(&rows, "rows", nil, "keep only rows where "+results.RowFilterHelp+"\n")
	fs.StringVar(&sortKeys, "sort", "", "comma-separated columns to sort by, -COLUMN for descending (default order: channel, noise, loss, gain, xi, energy)")
	fs.IntVar(&digits, "digits", 4, "decimals of the bounds; upper bounds are rounded up and lower bounds down (csv: full precision unless --digits is given)")
	fs.StringVar(&out, "out", "", "write to FILE (atomically) instead of standard output")
	if err := parseFlags(fs, args); err != nil {
		return err
	}
	if !slices.Contains(results.TableFormats, format) {
		return badInput("--format %q: want %s", format, strings.Join(results.TableFormats, ", "))
	}
	if digits < 0 || digits > 17 {
		return badInput("--digits %d is out of range (want 0 to 17)", digits)
	}
	if format == "csv" && !fs.Changed("digits") {
		digits = -1
	}
	if fs.NArg() == 0 {
		return badInput("no result files given (want FILE|DIR...)")
	}
	recs, err := results.CollectRecords(fs.Args())
	if err != nil {
		return badInput("%v", err)
	}
	spec := results.TableSpec{Filters: rows}
	if columns != "" {
		spec.Columns = strings.Split(columns, ",")
	}
	if sortKeys != "" {
		spec.Sort = strings.Split(sortKeys, ",")
	}
	t, err := results.BuildTable(recs, spec)
	if err != nil {
		return badInput("%v", err)
	}
	var buf bytes.Buffer
	if err := t.Write(&buf, format, digits); err != nil {
		return err
	}
	return writeOutput(out, buf.Bytes(), stdout)
}

// writeOutput writes data to stdout when path is empty, else to path atomically
// (results.WriteFileAtomic: a temporary file renamed over path), so that a failure leaves
// nothing behind. An unwritable path is bad input.
func writeOutput(path string, data []byte, stdout io.Writer) error {
	if path == "" {
		_, err := stdout.Write(data)
		return err
	}
	if st, err := os.Stat(path); err == nil && st.IsDir() {
		return badInput("--out %s is a folder", path)
	}
	if err := results.WriteFileAtomic(path, data); err != nil {
		return badInput("--out %s: %v", path, err)
	}
	return nil
}

// outputExt returns the lower-case extension of path without the dot.
func outputExt(path string) string {
	return strings.TrimPrefix(strings.ToLower(filepath.Ext(path)), ".")
}
