package results

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"keyceiling/squash"
)

func loadSample(t *testing.T) []Record {
	t.Helper()
	recs, err := ReadRecordsFile(sampleFile)
	if err != nil {
		t.Fatal(err)
	}
	if len(recs) != len(samplePoints()) {
		t.Fatalf("%s has %d records, want %d (rewrite it with KEYCEILING_WRITE_SAMPLE=1)", sampleFile, len(recs), len(samplePoints()))
	}
	return recs
}

// pointKey identifies a record by its parameters as a table shows them.
func pointKey(eta, nb, energy float64) string {
	return strconv.FormatFloat(eta, 'g', -1, 64) + "/" + strconv.FormatFloat(nb, 'g', -1, 64) + "/" + strconv.FormatFloat(energy, 'g', -1, 64)
}

func recordIndex(recs []Record) map[string]Record {
	out := map[string]Record{}
	for _, r := range recs {
		out[pointKey(*r.Channel.Eta, *r.Channel.NB, float64(r.Energy))] = r
	}
	return out
}

func refOf(r Record, name string) (float64, bool) {
	for _, ref := range r.References {
		if ref.Name == name {
			return ref.Value, true
		}
	}
	return 0, false
}

func writeTable(t *testing.T, recs []Record, spec TableSpec, format string, decimals int) string {
	t.Helper()
	tab, err := BuildTable(recs, spec)
	if err != nil {
		t.Fatal(err)
	}
	var buf bytes.Buffer
	if err := tab.Write(&buf, format, decimals); err != nil {
		t.Fatal(err)
	}
	return buf.String()
}

// TestTableCSVReadBack parses the CSV and compares every cell with the records, and the
// reference columns with the closed forms of package squash.
func TestTableCSVReadBack(t *testing.T) {
	recs := loadSample(t)
	cols := []string{"eta", "loss-db", "noise", "energy", "bound", "lower", "gap", "tightest", "beats-ree",
		"ref:tgw-pure-loss", "ref:data-processing", "ref:ree", "family"}
	out := writeTable(t, recs, TableSpec{Columns: cols}, "csv", -1)
	rows, err := csv.NewReader(strings.NewReader(out)).ReadAll()
	if err != nil {
		t.Fatalf("CSV does not parse: %v\n%s", err, out)
	}
	if got := strings.Join(rows[0], ","); got != strings.Join(cols, ",") {
		t.Fatalf("header %q, want %q", got, strings.Join(cols, ","))
	}
	if len(rows)-1 != len(recs) {
		t.Fatalf("%d rows, want %d", len(rows)-1, len(recs))
	}
	if strings.Contains(out, Disclaimer) {
		t.Error("CSV carries the disclaimer; it should be only the header and rows")
	}
	byKey := recordIndex(recs)
	num := func(s string) float64 {
		t.Helper()
		if s == "inf" {
			return math.Inf(1)
		}
		x, err := strconv.ParseFloat(s, 64)
		if err != nil {
			t.Fatalf("cell %q: %v", s, err)
		}
		return x
	}
	var prev [3]float64
	for i, row := range rows[1:] {
		cell := map[string]string{}
		for j, c := range cols {
			cell[c] = row[j]
		}
		eta, nb, e := num(cell["eta"]), num(cell["noise"]), num(cell["energy"])
		r, ok := byKey[pointKey(eta, nb, e)]
		if !ok {
			t.Fatalf("row %d: no record at eta=%v N_B=%v N_S=%v", i, eta, nb, e)
		}
		// Default order: noise, then loss (eta descending), then energy.
		if i > 0 {
			if cur := [3]float64{nb, -eta, e}; cur[0] < prev[0] || cur[0] == prev[0] && (cur[1] < prev[1] || cur[1] == prev[1] && cur[2] <= prev[2]) {
				t.Errorf("row %d out of order: %v after %v", i, cur, prev)
			}
		}
		prev = [3]float64{nb, -eta, e}
		if got, want := num(cell["loss-db"]), -10*math.Log10(eta); math.Abs(got-want) > 1e-12 {
			t.Errorf("row %d: loss-db %v, want %v", i, got, want)
		}
		for _, c := range []struct {
			name string
			want float64
		}{{"bound", r.Bound}, {"lower", r.Lower}, {"gap", r.Gap}} {
			if got := num(cell[c.name]); got != c.want {
				t.Errorf("row %d: %s %v, want the record's %v exactly", i, c.name, got, c.want)
			}
		}
		if cell["tightest"] != r.Tightest || cell["family"] != r.Family {
			t.Errorf("row %d: tightest %q family %q, want %q %q", i, cell["tightest"], cell["family"], r.Tightest, r.Family)
		}
		if want := map[bool]string{true: "yes", false: "no"}[r.BeatsREE]; cell["beats-ree"] != want {
			t.Errorf("row %d: beats-ree %q, want %q", i, cell["beats-ree"], want)
		}
		// The reference columns against the closed forms (not the records' copies).
		if got, want := num(cell["ref:ree"]), squash.REEThermalLoss(eta, nb); math.Abs(got-want) > 1e-12*math.Max(1, want) {
			t.Errorf("row %d: ree %v, closed form %v", i, got, want)
		}
		if nb == 0 {
			if got, want := num(cell["ref:tgw-pure-loss"]), squash.TGWPureLoss(eta, e); math.Abs(got-want) > 1e-12*math.Max(1, want) {
				t.Errorf("row %d: tgw-pure-loss %v, closed form %v", i, got, want)
			}
			if cell["ref:data-processing"] != "" {
				t.Errorf("row %d: data-processing %q at pure loss, want an empty cell", i, cell["ref:data-processing"])
			}
		} else {
			if got, want := num(cell["ref:data-processing"]), squash.DataProcessingThermalLoss(eta, nb, e); math.Abs(got-want) > 1e-12*math.Max(1, want) {
				t.Errorf("row %d: data-processing %v, closed form %v", i, got, want)
			}
			if cell["ref:tgw-pure-loss"] != "" {
				t.Errorf("row %d: tgw-pure-loss %q at N_B > 0, want an empty cell", i, cell["ref:tgw-pure-loss"])
			}
		}
	}
}

// roundedCell checks that cell has exactly decimals decimals and is x rounded up (dir > 0)
// or down (dir < 0): with k the cell times 10^decimals, k-1 < x 10^decimals <= k, or
// k <= x 10^decimals < k+1.
func roundedCell(t *testing.T, what, cell string, x float64, decimals, dir int) {
	t.Helper()
	dot := strings.IndexByte(cell, '.')
	if dot < 0 || len(cell)-dot-1 != decimals {
		t.Errorf("%s: cell %q does not have %d decimals", what, cell, decimals)
		return
	}
	k, err := strconv.ParseInt(strings.Replace(cell, ".", "", 1), 10, 64)
	if err != nil {
		t.Errorf("%s: cell %q: %v", what, cell, err)
		return
	}
	scaled, kf := x*math.Pow10(decimals), float64(k)
	const eps = 1e-6 // far below one unit of the last decimal, far above the float error of scaled
	if dir > 0 && !(kf-1 < scaled+eps && scaled <= kf+eps) {
		t.Errorf("%s: cell %s is not %v rounded up to %d decimals", what, cell, x, decimals)
	}
	if dir < 0 && !(kf-eps <= scaled && scaled < kf+1+eps) {
		t.Errorf("%s: cell %s is not %v rounded down to %d decimals", what, cell, x, decimals)
	}
}

// TestTableLaTeX parses the LaTeX: booktabs rules in order, one & fewer than columns in every
// row, numbers in math mode equal to the records' values rounded outward to --digits.
func TestTableLaTeX(t *testing.T) {
	recs := loadSample(t)
	cols := []string{"loss-db", "noise", "energy", "bound", "ref:ree", "lower", "tightest"}
	const decimals = 4
	out := writeTable(t, recs, TableSpec{Columns: cols}, "latex", decimals)
	lines := strings.Split(strings.TrimRight(out, "\n"), "\n")
	foundDisclaimer := false
	i := 0
	for ; i < len(lines) && strings.HasPrefix(lines[i], "%"); i++ {
		if strings.Contains(lines[i], Disclaimer) {
			foundDisclaimer = true
		}
	}
	if !foundDisclaimer {
		t.Error("no comment line with the disclaimer")
	}
	want := []string{`\begin{tabular}{rrrrrrl}`, `\toprule`}
	if i+3 > len(lines) || lines[i] != want[0] || lines[i+1] != want[1] {
		t.Fatalf("after the comments: %q, want %q", lines[i:min(i+2, len(lines))], want)
	}
	head := lines[i+2]
	if head != `loss (dB) & $N_B$ & $N_S$ & bound & REE & lower & tightest \\` {
		t.Errorf("header %q", head)
	}
	if lines[i+3] != `\midrule` {
		t.Fatalf("line %q, want \\midrule", lines[i+3])
	}
	body := lines[i+4:]
	if n := len(body); n < 2 || body[n-2] != `\bottomrule` || body[n-1] != `\end{tabular}` {
		t.Fatalf("table does not end with \\bottomrule, \\end{tabular}: %q", body[max(0, len(body)-2):])
	}
	body = body[:len(body)-2]
	if len(body) != len(recs) {
		t.Fatalf("%d rows, want %d", len(body), len(recs))
	}
	mathMode := regexp.MustCompile(`^\$(.*)\$$`)
	byLoss := map[string]Record{}
	for _, r := range recs {
		byLoss[strconv.FormatFloat(-10*math.Log10(*r.Channel.Eta), 'f', 4, 64)+"/"+strconv.FormatFloat(*r.Channel.NB, 'g', -1, 64)+"/"+strconv.FormatFloat(float64(r.Energy), 'g', -1, 64)] = r
	}
	for n, row := range body {
		if !strings.HasSuffix(row, ` \\`) {
			t.Errorf("row %d does not end with \\\\: %q", n, row)
			continue
		}
		if c := strings.Count(row, "&"); c != len(cols)-1 {
			t.Errorf("row %d has %d &, want %d: %q", n, c, len(cols)-1, row)
			continue
		}
		cells := strings.Split(strings.TrimSuffix(row, ` \\`), " & ")
		vals := make([]string, len(cells))
		for j, c := range cells {
			if j == len(cells)-1 { // tightest: text
				vals[j] = c
				continue
			}
			m := mathMode.FindStringSubmatch(c)
			if m == nil {
				t.Fatalf("row %d cell %d %q is not in math mode", n, j, c)
			}
			vals[j] = m[1]
		}
		energy := vals[2]
		if energy == `\infty` {
			energy = "+Inf"
		}
		loss, err := strconv.ParseFloat(vals[0], 64)
		if err != nil {
			t.Fatalf("row %d: loss %q", n, vals[0])
		}
		r, ok := byLoss[strconv.FormatFloat(loss, 'f', 4, 64)+"/"+vals[1]+"/"+energy]
		if !ok {
			t.Fatalf("row %d: no record at loss %s dB, N_B %s, N_S %s", n, vals[0], vals[1], energy)
		}
		roundedCell(t, "bound", vals[3], r.Bound, decimals, 1)
		ree, _ := refOf(r, "ree")
		roundedCell(t, "ree", vals[4], ree, decimals, 1)
		roundedCell(t, "lower", vals[5], r.Lower, decimals, -1)
		if vals[6] != texEscape(r.Tightest) {
			t.Errorf("row %d: tightest %q, want %q", n, vals[6], r.Tightest)
		}
	}
}

// TestTableMarkdown counts the Markdown table's rows and columns and checks the note.
func TestTableMarkdown(t *testing.T) {
	recs := loadSample(t)
	out := writeTable(t, recs, TableSpec{Filters: []string{"energy=inf"}}, "markdown", 4)
	var table []string
	rest := ""
	for i, l := range strings.Split(out, "\n") {
		if strings.HasPrefix(l, "|") {
			table = append(table, l)
			continue
		}
		rest = strings.Join(strings.Split(out, "\n")[i:], "\n")
		break
	}
	ids := DefaultTableColumns(recs)
	if len(ids) != 10 { // eta loss-db noise energy bound tgw dp ree lower tightest
		t.Errorf("default columns %v", ids)
	}
	inf := 0
	for _, r := range recs {
		if math.IsInf(float64(r.Energy), 1) {
			inf++
		}
	}
	if len(table) != inf+2 {
		t.Fatalf("%d table lines, want header + rule + %d rows:\n%s", len(table), inf, out)
	}
	for i, l := range table {
		if c := strings.Count(l, "|"); c != len(ids)+1 {
			t.Errorf("line %d has %d |, want %d: %q", i, c, len(ids)+1, l)
		}
	}
	if !regexp.MustCompile(`^\|( -+:? \|)+$`).MatchString(table[1]) {
		t.Errorf("rule line %q", table[1])
	}
	if !strings.Contains(rest, Disclaimer) {
		t.Error("no disclaimer under the table")
	}
	if !strings.Contains(rest, "Bits per channel use") {
		t.Error("no units under the table")
	}
}

func TestTableRowsAndSort(t *testing.T) {
	recs := loadSample(t)
	count := func(f func(r Record) bool) int {
		n := 0
		for _, r := range recs {
			if f(r) {
				n++
			}
		}
		return n
	}
	for _, c := range []struct {
		filters []string
		want    int
	}{
		{[]string{"noise=0.01,energy=inf"}, count(func(r Record) bool { return *r.Channel.NB == 0.01 && math.IsInf(float64(r.Energy), 1) })},
		{[]string{"noise=0.01", "energy=inf"}, count(func(r Record) bool { return *r.Channel.NB == 0.01 && math.IsInf(float64(r.Energy), 1) })},
		{[]string{"loss-db<=3"}, count(func(r Record) bool { return -10*math.Log10(*r.Channel.Eta) <= 3+1e-9 })},
		{[]string{"loss-db=6"}, count(func(r Record) bool { return math.Abs(-10*math.Log10(*r.Channel.Eta)-6) < 1e-9 })},
		{[]string{"energy=0.3|3"}, count(func(r Record) bool { return r.Energy == 0.3 || r.Energy == 3 })},
		{[]string{"energy!=inf"}, count(func(r Record) bool { return !math.IsInf(float64(r.Energy), 1) })},
		{[]string{"tightest=squashing"}, count(func(r Record) bool { return r.Tightest == "squashing" })},
		{[]string{"beats-ree=yes"}, count(func(r Record) bool { return r.BeatsREE })},
		{[]string{"ref:data-processing>0"}, count(func(r Record) bool { return *r.Channel.NB > 0 })},
		{[]string{"gain=2"}, 0}, // thermal-loss rows have no gain
	} {
		tab, err := BuildTable(recs, TableSpec{Filters: c.filters})
		if c.want == 0 {
			if err == nil || !strings.Contains(err.Error(), "no record passes") {
				t.Errorf("%q: error %v, want no record passes", c.filters, err)
			}
			continue
		}
		if err != nil {
			t.Errorf("%q: %v", c.filters, err)
			continue
		}
		if len(tab.Rows) != c.want {
			t.Errorf("%q: %d rows, want %d", c.filters, len(tab.Rows), c.want)
		}
	}
	tab, err := BuildTable(recs, TableSpec{Sort: []string{"-bound"}})
	if err != nil {
		t.Fatal(err)
	}
	for i := 1; i < len(tab.Rows); i++ {
		if tab.Rows[i].Bound > tab.Rows[i-1].Bound {
			t.Fatalf("--sort -bound: row %d bound %v after %v", i, tab.Rows[i].Bound, tab.Rows[i-1].Bound)
		}
	}
	for _, bad := range []TableSpec{
		{Columns: []string{"bound", "nonsense"}},
		{Columns: []string{"ref:nonsense"}},
		{Columns: []string{"bound", "bound"}},
		{Filters: []string{"noise"}},
		{Filters: []string{"noise=abc"}},
		{Filters: []string{"tightest<ree"}},
		{Filters: []string{"nonsense=1"}},
		{Filters: []string{"noise<1|2"}},
		{Filters: []string{"noise=0,"}},
		{Sort: []string{"nonsense"}},
	} {
		if _, err := BuildTable(recs, bad); err == nil {
			t.Errorf("%+v: no error", bad)
		}
	}
}

func TestRoundDecimal(t *testing.T) {
	for _, c := range []struct {
		x        float64
		decimals int
		dir      int
		want     string
	}{
		{0.1234, 4, 1, "0.1234"}, // the double below 0.1234 rounds up to it
		{0.1234, 4, -1, "0.1233"},
		{0.12341, 4, 1, "0.1235"},
		{0.12349, 4, -1, "0.1234"},
		{0.12345, 4, 0, "0.1235"},
		{1, 4, 1, "1.0000"},
		{1, 4, -1, "1.0000"},
		{0, 3, 1, "0.000"},
		{2.5, 0, 1, "3"},
		{2.5, 0, -1, "2"},
		{-0.00001, 2, 1, "0.00"},
		{-0.00001, 2, -1, "-0.01"},
		{123.456, 1, 0, "123.5"},
		{math.Inf(1), 4, 1, "inf"},
	} {
		got := RoundDecimal(c.x, c.decimals, c.dir)
		if got != c.want {
			t.Errorf("RoundDecimal(%v, %d, %d) = %q, want %q", c.x, c.decimals, c.dir, got, c.want)
		}
	}
}

func TestCollectRecords(t *testing.T) {
	dir := t.TempDir()
	data, err := os.ReadFile(sampleFile)
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.SplitAfter(strings.TrimRight(string(data), "\n"), "\n")
	// Two shards and a duplicate of the first record with a lower bound.
	half := len(lines) / 2
	os.WriteFile(filepath.Join(dir, "a.jsonl"), []byte(strings.Join(lines[:half], "")), 0o644)
	os.WriteFile(filepath.Join(dir, "b.jsonl"), []byte(strings.Join(lines[half:], "")+"\n"), 0o644)
	os.WriteFile(filepath.Join(dir, "notes.txt"), []byte("not a result file"), 0o644)
	recs, err := CollectRecords([]string{dir})
	if err != nil {
		t.Fatal(err)
	}
	if len(recs) != len(lines) {
		t.Errorf("%d records from the folder, want %d", len(recs), len(lines))
	}
	first := recs[0]
	better := first
	better.Bound -= 1e-3
	b, err := json.Marshal(better)
	if err != nil {
		t.Fatal(err)
	}
	b = append(b, '\n')
	dup := filepath.Join(t.TempDir(), "dup.jsonl")
	os.WriteFile(dup, b, 0o644)
	recs, err = CollectRecords([]string{dir, dup, dir})
	if err != nil {
		t.Fatal(err)
	}
	if len(recs) != len(lines) {
		t.Errorf("%d records with duplicates, want %d distinct points", len(recs), len(lines))
	}
	for _, r := range recs {
		if r.Key == first.Key && r.Bound != better.Bound {
			t.Errorf("duplicate point kept bound %v, want the lowest %v", r.Bound, better.Bound)
		}
	}
	empty := t.TempDir()
	bad := filepath.Join(t.TempDir(), "bad.jsonl")
	os.WriteFile(bad, []byte("{\"format\":1}\n"), 0o644)
	zero := filepath.Join(t.TempDir(), "zero.jsonl")
	os.WriteFile(zero, nil, 0o644)
	for _, paths := range [][]string{nil, {empty}, {bad}, {zero}, {filepath.Join(dir, "missing.jsonl")}} {
		if _, err := CollectRecords(paths); err == nil {
			t.Errorf("%v: no error", paths)
		}
	}
}
