package main

import (
	"bytes"
	"encoding/csv"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"keyceiling/results"
)

// The sample records are real search results, written by the results package's
// TestWriteSampleRecords.
const (
	vizSample    = "../../results/testdata/records-sample.jsonl"
	vizAmplifier = "../../results/testdata/amplifier-sample.jsonl"
)

// vizRun runs one command line and returns its exit status, stdout and stderr.
func vizRun(args ...string) (int, string, string) {
	var out, errb bytes.Buffer
	code := run(args, &out, &errb)
	return code, out.String(), errb.String()
}

func vizRecords(t *testing.T) []results.Record {
	t.Helper()
	recs, err := results.ReadRecordsFile(vizSample)
	if err != nil {
		t.Fatal(err)
	}
	return recs
}

// TestTableCSVOut writes a CSV file with --out, reads it back with encoding/csv and compares
// the cells with the records as the results package reads them.
func TestTableCSVOut(t *testing.T) {
	recs := vizRecords(t)
	out := filepath.Join(t.TempDir(), "table.csv")
	code, stdout, stderr := vizRun("table", vizSample, "--format", "csv", "--columns", "eta,noise,energy,bound,ref:ree,tightest", "--out", out)
	if code != 0 || stdout != "" || stderr != "" {
		t.Fatalf("exit %d, stdout %q, stderr %q", code, stdout, stderr)
	}
	f, err := os.Open(out)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	rows, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	if len(rows) != len(recs)+1 {
		t.Fatalf("%d lines, want a header and %d rows", len(rows), len(recs))
	}
	want := map[string]results.Record{}
	for _, r := range recs {
		want[strconv.FormatFloat(*r.Channel.Eta, 'g', -1, 64)+" "+strconv.FormatFloat(*r.Channel.NB, 'g', -1, 64)+" "+
			strconv.FormatFloat(float64(r.Energy), 'g', -1, 64)] = r
	}
	for _, row := range rows[1:] {
		energy := row[2]
		if energy == "inf" {
			energy = "+Inf"
		}
		r, ok := want[row[0]+" "+row[1]+" "+energy]
		if !ok {
			t.Fatalf("row %q matches no record", row)
		}
		if b, _ := strconv.ParseFloat(row[3], 64); b != r.Bound {
			t.Errorf("row %q: bound %s, record %v", row, row[3], r.Bound)
		}
		for _, ref := range r.References {
			if ref.Name == "ree" {
				if v, _ := strconv.ParseFloat(row[4], 64); v != ref.Value {
					t.Errorf("row %q: ree %s, record %v", row, row[4], ref.Value)
				}
			}
		}
		if row[5] != r.Tightest {
			t.Errorf("row %q: tightest, record %q", row, r.Tightest)
		}
		delete(want, row[0]+" "+row[1]+" "+energy)
	}
	if len(want) != 0 {
		t.Errorf("%d records not in the table", len(want))
	}
	if entries, _ := os.ReadDir(filepath.Dir(out)); len(entries) != 1 {
		t.Errorf("the output folder holds %d files, want only the table (no temporary left)", len(entries))
	}
}

func TestTableFormatsToStdout(t *testing.T) {
	// From a folder, filtered and sorted: Markdown, LaTeX and text all state the disclaimer.
	dir := t.TempDir()
	data, err := os.ReadFile(vizSample)
	if err != nil {
		t.Fatal(err)
	}
	os.WriteFile(filepath.Join(dir, "points.jsonl"), data, 0o644)
	for _, format := range []string{"markdown", "latex", "text"} {
		code, stdout, stderr := vizRun("table", dir, "--format", format, "--rows", "noise=0.01", "--rows", "energy=inf", "--sort", "-loss-db", "--digits", "3")
		if code != 0 || stderr != "" {
			t.Fatalf("%s: exit %d, stderr %q", format, code, stderr)
		}
		if !strings.Contains(stdout, results.Disclaimer) {
			t.Errorf("%s: no disclaimer in\n%s", format, stdout)
		}
		// Four losses at N_B = 0.01 unconstrained; sorted by loss descending: 10 dB first.
		var rows []string
		for _, l := range strings.Split(stdout, "\n") {
			if strings.Contains(l, "0.01") && (strings.HasPrefix(l, "|") || strings.HasSuffix(l, `\\`) || format == "text") {
				rows = append(rows, l)
			}
		}
		if len(rows) != 4 {
			t.Errorf("%s: %d rows, want 4:\n%s", format, len(rows), stdout)
			continue
		}
		if !strings.Contains(rows[0], "0.1 ") && !strings.Contains(rows[0], "$0.1$") {
			t.Errorf("%s: first row %q, want eta = 0.1 (10 dB) first", format, rows[0])
		}
	}
	code, stdout, _ := vizRun("table", "--help")
	if code != 0 || !strings.Contains(stdout, "Example:") || !strings.Contains(stdout, "ref:NAME") || !strings.Contains(stdout, results.Disclaimer) {
		t.Errorf("--help: exit %d\n%s", code, stdout)
	}
}

// TestTableBadInput: one line naming the problem, exit 2, nothing written.
func TestTableBadInput(t *testing.T) {
	tmp := t.TempDir()
	malformed := filepath.Join(tmp, "bad.jsonl")
	os.WriteFile(malformed, []byte("{\"format\": 1, \"tool\": \"keyceiling\"}\n"), 0o644)
	notJSON := filepath.Join(tmp, "text.jsonl")
	os.WriteFile(notJSON, []byte("hello\n"), 0o644)
	emptyDir := t.TempDir()
	out := filepath.Join(tmp, "out.md")
	for _, c := range []struct {
		args []string
		want string
	}{
		{[]string{"table", vizSample, "--columns", "bound,nonsense"}, "unknown column"},
		{[]string{"table", vizSample, "--columns", "ref:bogus"}, "unknown column"},
		{[]string{"table", vizSample, "--format", "html"}, "--format"},
		{[]string{"table", vizSample, "--digits", "-1"}, "--digits"},
		{[]string{"table", vizSample, "--digits", "x"}, "digits"},
		{[]string{"table", vizSample, "--rows", "noise~1"}, "--rows"},
		{[]string{"table", vizSample, "--rows", "noise=7"}, "no record passes"},
		{[]string{"table", vizSample, "--sort", "colour"}, "--sort"},
		{[]string{"table"}, "no result files"},
		{[]string{"table", filepath.Join(tmp, "missing.jsonl")}, "no such file"},
		{[]string{"table", malformed}, "bad.jsonl line 1"},
		{[]string{"table", notJSON}, "text.jsonl line 1"},
		{[]string{"table", emptyDir}, "no *.jsonl"},
		{[]string{"table", vizSample, "--out", filepath.Join(tmp, "no", "such", "dir", "t.md")}, "--out"},
		{[]string{"table", vizSample, "--out", tmp}, "is a folder"},
		{[]string{"table", vizSample, "--columns", "nonsense", "--out", out}, "unknown column"},
	} {
		code, stdout, stderr := vizRun(c.args...)
		if code != 2 {
			t.Errorf("%q: exit %d, want 2", c.args, code)
		}
		if stdout != "" {
			t.Errorf("%q: wrote %q to stdout", c.args, stdout)
		}
		if strings.Count(stderr, "\n") != 1 || !strings.Contains(stderr, c.want) {
			t.Errorf("%q: stderr %q, want one line with %q", c.args, stderr, c.want)
		}
	}
	if _, err := os.Stat(out); !os.IsNotExist(err) {
		t.Errorf("a failed table wrote %s", out)
	}
	if entries, _ := os.ReadDir(tmp); len(entries) != 2 {
		t.Errorf("%s holds %d files, want only the two inputs", tmp, len(entries))
	}
}

func TestTableDigitsAndCSVPrecision(t *testing.T) {
	recs := vizRecords(t)
	code, stdout, _ := vizRun("table", vizSample, "--format", "csv", "--columns", "bound", "--digits", "2", "--rows", "energy=1,noise=0")
	if code != 0 {
		t.Fatal(code)
	}
	rows, err := csv.NewReader(strings.NewReader(stdout)).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	var want []float64
	for _, r := range recs {
		if r.Energy == 1 && *r.Channel.NB == 0 {
			want = append(want, r.Bound)
		}
	}
	if len(rows) != len(want)+1 {
		t.Fatalf("%d rows, want %d", len(rows)-1, len(want))
	}
	for i, row := range rows[1:] {
		v, err := strconv.ParseFloat(row[0], 64)
		if err != nil || len(row[0]) != len("0.00") || v < want[i] || v-want[i] >= 0.01 {
			t.Errorf("row %d: %q is not %v rounded up to 2 decimals", i, row[0], want[i])
		}
	}
}
