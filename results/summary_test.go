package results

import (
	"bytes"
	"encoding/csv"
	"math"
	"path/filepath"
	"strconv"
	"testing"
)

func TestSummaryCSVReadsBack(t *testing.T) {
	ref := referenceRun(t)
	p := sweepTestPlan(t, sweepPlanText)
	rows, err := csv.NewReader(bytes.NewReader(mustRead(t, filepath.Join(ref, SummaryFile)))).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	header := rows[0]
	want := []string{"key", "channel", "eta", "noise", "energy", "bound", "tgw-pure-loss", "ree", "data-processing",
		"rci", "ci", "lower", "tightest", "gap", "beats_ree", "family", "status"}
	if len(header) != len(want) {
		t.Fatalf("header %v, want %v", header, want)
	}
	for i := range want {
		if header[i] != want[i] {
			t.Fatalf("header %v, want %v", header, want)
		}
	}
	col := map[string]int{}
	for i, h := range header {
		col[h] = i
	}
	pts := p.Points()
	if len(rows) != 1+len(pts) {
		t.Fatalf("%d rows, want %d", len(rows), 1+len(pts))
	}
	recs := map[string]Record{}
	for _, r := range referenceRecords(t) {
		recs[r.Key] = r
	}
	for i, pp := range pts {
		row := rows[1+i]
		if row[col["key"]] != pp.Point.Key() {
			t.Errorf("row %d is %s, want %s (plan order)", i+1, row[0], pp.Point.Key())
		}
		eta, _ := strconv.ParseFloat(row[col["eta"]], 64)
		if eta != pp.Point.Model.Eta {
			t.Errorf("row %d: eta %s", i+1, row[col["eta"]])
		}
		if math.IsInf(pp.Point.Energy, 1) != (row[col["energy"]] == "inf") {
			t.Errorf("row %d: energy %s", i+1, row[col["energy"]])
		}
		if pp.Breaking {
			if row[col["bound"]] != "0" || row[col["tightest"]] != StatusBreaking || row[col["status"]] != StatusBreaking ||
				row[col["family"]] != "" || row[col["gap"]] != "0" {
				t.Errorf("entanglement-breaking row %v", row)
			}
			if row[col["ree"]] != "0" {
				t.Errorf("entanglement-breaking row has ree %s", row[col["ree"]])
			}
			continue
		}
		rec := recs[pp.Point.Key()]
		bound, err := strconv.ParseFloat(row[col["bound"]], 64)
		if err != nil || bound != rec.Bound {
			t.Errorf("row %d: bound %s, record %v", i+1, row[col["bound"]], rec.Bound)
		}
		gap, _ := strconv.ParseFloat(row[col["gap"]], 64)
		if gap != rec.Gap || row[col["tightest"]] != rec.Tightest || row[col["family"]] != "split" ||
			row[col["status"]] != rec.Status {
			t.Errorf("row %d: %v vs record %+v", i+1, row, rec)
		}
		for _, r := range rec.References {
			v, _ := strconv.ParseFloat(row[col[r.Name]], 64)
			if v != r.Value {
				t.Errorf("row %d: %s = %s, record %v", i+1, r.Name, row[col[r.Name]], r.Value)
			}
		}
	}
}

func TestSummaryPendingAndLossDB(t *testing.T) {
	p := sweepTestPlan(t, "keyceiling-plan 1\nchannel thermal-loss\nloss-db 3, 10\nenergy 1\nend\n")
	data, err := SummaryCSV(p, nil)
	if err != nil {
		t.Fatal(err)
	}
	rows, err := csv.NewReader(bytes.NewReader(data)).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	if len(rows) != 3 || rows[0][3] != "loss_db" || rows[1][3] != "3" || rows[2][3] != "10" {
		t.Fatalf("rows %v", rows)
	}
	last := len(rows[1]) - 1
	if rows[1][last] != StatusPending || rows[1][6] != "" {
		t.Errorf("pending row %v", rows[1])
	}
	amp := sweepTestPlan(t, "keyceiling-plan 1\nchannel amplifier\ngain 2\nenergy inf\nend\n")
	data, _ = SummaryCSV(amp, nil)
	rows, _ = csv.NewReader(bytes.NewReader(data)).ReadAll()
	if got := rows[0][:5]; got[2] != "gain" || got[3] != "noise" || got[4] != "energy" {
		t.Errorf("amplifier header %v", rows[0])
	}
}
