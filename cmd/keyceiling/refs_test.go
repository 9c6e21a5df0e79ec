package main

import (
	"encoding/csv"
	"encoding/json"
	"math"
	"strconv"
	"strings"
	"testing"

	"keyceiling/results"
	"keyceiling/squash"
)

// TestRefsCheckValues compares refs output with the check values of the project's physics
// notes (computed there from the closed forms) and with package squash's closed forms.
func TestRefsCheckValues(t *testing.T) {
	code, stdout, stderr := vizRun("refs", "--eta", "0.9", "--noise", "1", "--energy", "1,inf", "--format", "csv")
	if code != 0 || stderr != "" {
		t.Fatalf("exit %d, stderr %q", code, stderr)
	}
	rows, err := csv.NewReader(strings.NewReader(stdout)).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	if got := strings.Join(rows[0], ","); got != "eta,loss-db,noise,energy,ref:data-processing,ref:ree,ref:rci,ref:ci" {
		t.Fatalf("header %q", got)
	}
	if len(rows) != 3 {
		t.Fatalf("%d rows, want 2", len(rows)-1)
	}
	cell := func(row []string, i int) float64 {
		v, err := strconv.ParseFloat(row[i], 64)
		if err != nil {
			t.Fatalf("cell %q: %v", row[i], err)
		}
		return v
	}
	near := func(what string, got, want, tol float64) {
		t.Helper()
		if math.Abs(got-want) > tol {
			t.Errorf("%s = %.7f, want %.7f", what, got, want)
		}
	}
	// Rows sorted by energy: N_S = 1, then unconstrained.
	fin, inf := rows[1], rows[2]
	if fin[3] != "1" || inf[3] != "inf" {
		t.Fatalf("energies %q %q", fin[3], inf[3])
	}
	// Physics notes, thermal loss (0.9, 1): PLOB 1.473931, RCI 1.321928, CI 1.169925,
	// data-processing 3.321928 (unconstrained); data-processing 1.45453 at N_S = 1.
	near("ree", cell(inf, 5), 1.473931, 1e-6)
	near("rci", cell(inf, 6), 1.321928, 1e-6)
	near("ci", cell(inf, 7), 1.169925, 1e-6)
	near("data-processing", cell(inf, 4), 3.321928, 1e-6)
	near("data-processing at N_S = 1", cell(fin, 4), 1.45453, 1e-5)
	near("ree at N_S = 1", cell(fin, 5), 1.473931, 1e-6)

	// Pure loss: the TGW bound against the notes and the closed form.
	code, stdout, _ = vizRun("refs", "--eta", "0.5,0.9", "--energy", "1,10,inf", "--format", "json")
	if code != 0 {
		t.Fatal(code)
	}
	var doc struct {
		Note   string `json:"note"`
		Points []struct {
			Channel    results.ChannelRecord     `json:"channel"`
			Energy     results.Num               `json:"energy"`
			References []results.ReferenceRecord `json:"references"`
			BestLower  float64                   `json:"best_lower"`
		} `json:"points"`
	}
	if err := json.Unmarshal([]byte(stdout), &doc); err != nil {
		t.Fatal(err)
	}
	if doc.Note != results.Disclaimer {
		t.Errorf("json note %q", doc.Note)
	}
	if len(doc.Points) != 6 {
		t.Fatalf("%d points, want 6", len(doc.Points))
	}
	notes := map[[2]float64]float64{
		{0.5, math.Inf(1)}: 1.584963, {0.9, math.Inf(1)}: 4.247928,
		{0.5, 1}: 0.821739, {0.5, 10}: 1.420833, {0.9, 1}: 1.659070,
	}
	for _, p := range doc.Points {
		eta, e := *p.Channel.Eta, float64(p.Energy)
		var tgw float64
		for _, r := range p.References {
			if r.Name == squash.RefTGWPureLoss {
				tgw = r.Value
			}
		}
		near("TGW vs closed form", tgw, squash.TGWPureLoss(eta, e), 1e-12)
		if want, ok := notes[[2]float64{eta, e}]; ok {
			near("TGW vs physics notes", tgw, want, 1e-6)
		}
	}

	// Additive noise xi = 0.1 (notes: PLOB 2.023503, lower 1.879233), text output.
	code, stdout, _ = vizRun("refs", "--channel", "additive", "--xi", "0.1")
	if code != 0 {
		t.Fatal(code)
	}
	if !strings.Contains(stdout, results.Disclaimer) {
		t.Error("text output without the disclaimer")
	}
	lines := strings.Split(stdout, "\n")
	// ree = (xi-1)/ln 2 - log2 xi = 2.0235025581 rounded up, ci = -1/ln 2 - log2 xi =
	// 1.8792330540 rounded down, to 6 decimals.
	if len(lines) < 3 || !strings.Contains(lines[2], "2.023503") || !strings.Contains(lines[2], "1.879233") {
		t.Errorf("additive row %q, want ree 2.023503 and ci 1.879233", lines[min(2, len(lines)-1)])
	}
}

func TestRefsGridAndBadInput(t *testing.T) {
	code, stdout, _ := vizRun("refs", "--loss-db", "1,3,10", "--noise", "0,0.01", "--energy", "0.5,inf", "--format", "csv")
	if code != 0 {
		t.Fatal(code)
	}
	rows, err := csv.NewReader(strings.NewReader(stdout)).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	if len(rows) != 1+3*2*2 {
		t.Errorf("%d rows, want 12", len(rows)-1)
	}
	for _, row := range rows[1:] {
		eta, _ := strconv.ParseFloat(row[0], 64)
		nb, _ := strconv.ParseFloat(row[2], 64)
		ree, _ := strconv.ParseFloat(row[6], 64)
		if want := squash.REEThermalLoss(eta, nb); math.Abs(ree-want) > 1e-12 {
			t.Errorf("row %q: ree %v, closed form %v", row, ree, want)
		}
	}
	for _, c := range []struct {
		args []string
		want string
	}{
		{[]string{"refs", "--eta", "1.5"}, "eta"},
		{[]string{"refs", "--eta", "0.5,,0.7"}, "empty item"},
		{[]string{"refs", "--eta", "0.5", "--loss-db", "3"}, "not both"},
		{[]string{"refs"}, "needs --eta or --loss-db"},
		{[]string{"refs", "--eta", "0.5", "--format", "xml"}, "--format"},
		{[]string{"refs", "--eta", "0.5", "--energy", "0"}, "--energy"},
		{[]string{"refs", "--eta", "0.5", "--digits", "40"}, "--digits"},
		{[]string{"refs", "--channel", "additive", "--xi", "0.1", "--noise", "1"}, "does not apply"},
		{[]string{"refs", "--channel", "laser", "--eta", "0.5"}, "--channel"},
		{[]string{"refs", "--eta", "0.5", "extra"}, "unexpected argument"},
	} {
		code, stdout, stderr := vizRun(c.args...)
		if code != 2 || stdout != "" || strings.Count(stderr, "\n") != 1 || !strings.Contains(stderr, c.want) {
			t.Errorf("%q: exit %d, stdout %q, stderr %q; want exit 2 and one line with %q", c.args, code, stdout, stderr, c.want)
		}
	}
	code, stdout, _ = vizRun("refs", "--help")
	if code != 0 || !strings.Contains(stdout, "Example:") {
		t.Errorf("--help: exit %d\n%s", code, stdout)
	}
}
