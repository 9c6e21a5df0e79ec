package results

import (
	"keyceiling/search"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"keyceiling/gaussian"
	"keyceiling/squash"
)

func TestCheckRecord(t *testing.T) {
	recs := referenceRecords(t)
	for _, r := range recs {
		if err := CheckRecord(r); err != nil {
			t.Errorf("%s: %v", r.Key, err)
		}
	}
	clone := func(r Record) Record {
		r.Map.X = copyRows(r.Map.X)
		r.Map.Y = copyRows(r.Map.Y)
		return r
	}
	cases := []struct {
		name, want string
		edit       func(r *Record)
	}{
		{"bound lowered by 0.01", "stored bound", func(r *Record) { r.Bound -= 0.01 }},
		{"bound raised by 1e-6", "stored bound", func(r *Record) { r.Bound += 1e-6 }},
		{"X entry altered", "", func(r *Record) { r.Map.X[0][0] += 0.05 }},
		{"Y not symmetric", "not symmetric", func(r *Record) { r.Map.Y[0][1] += 0.1 }},
		{"key of another point", "does not name", func(r *Record) { r.Key = strings.Replace(r.Key, "ns=", "ns=1", 1) }},
		{"energy changed", "", func(r *Record) { r.Energy = 7; r.Key = strings.Split(r.Key, " ns=")[0] + " ns=7" }},
	}
	for _, c := range cases {
		for _, r := range recs[:2] { // one finite energy, one unconstrained
			bad := clone(r)
			c.edit(&bad)
			err := CheckRecord(bad)
			if err == nil || !strings.Contains(err.Error(), c.want) {
				t.Errorf("%s (%s): error %v, want one containing %q", c.name, r.Key, err, c.want)
			}
			if err := CheckRecord(r); err != nil {
				t.Fatalf("the edit changed the original: %v", err)
			}
		}
	}
}

func copyRows(a [][]float64) [][]float64 {
	out := make([][]float64, len(a))
	for i := range a {
		out[i] = append([]float64(nil), a[i]...)
	}
	return out
}

func TestCheckRefutesFalseCovariance(t *testing.T) {
	rec := referenceRecords(t)[0]
	fam, err := squash.NewGeneral(2, 2)
	if err != nil {
		t.Fatal(err)
	}
	params := make([]float64, fam.NumParams())
	for i := range params {
		params[i] = 0.3 + 0.1*float64(i%5)
	}
	var ch gaussian.Channel
	squash.MapOf(fam, params, &ch)
	rec.Map.X, rec.Map.Y, rec.Map.KeptModes = ch.X.Rows(), ch.Y.Rows(), ch.Out
	rec.Covariant = true
	err = CheckRecord(rec)
	if err == nil || !strings.Contains(err.Error(), "map claimed phase covariant is not") {
		t.Errorf("error %v", err)
	}
	model, _ := rec.Channel.Model()
	if err := search.CheckCovariance(model, &ch); err == nil {
		t.Error("a general map passed the covariance test")
	}
}

func TestCheckFilesAndFolders(t *testing.T) {
	ref := referenceRun(t)
	files, recs, err := ReadCheckInputs(ref)
	if err != nil || len(files) != 1 || len(recs[0]) != 6 {
		t.Fatalf("%v %v", files, err)
	}
	rep := CheckAll(files, recs, 3)
	if rep.Records != 6 || len(rep.Failures) != 0 {
		t.Errorf("report %+v", rep)
	}
	recs[0][4].Bound -= 0.01
	rep = CheckAll(files, recs, 2)
	if len(rep.Failures) != 1 || rep.Failures[0].Line != 5 || rep.Failures[0].Key != recs[0][4].Key {
		t.Errorf("report %+v", rep)
	}
	tmp := t.TempDir()
	bad := filepath.Join(tmp, "bad.jsonl")
	os.WriteFile(bad, []byte("{\"format\": 1}\n"), 0o644)
	empty := filepath.Join(tmp, "empty")
	os.Mkdir(empty, 0o755)
	for _, path := range []string{bad, empty, filepath.Join(tmp, "missing.jsonl"), tmp} {
		if _, _, err := ReadCheckInputs(path); err == nil {
			t.Errorf("%s: no error", path)
		}
	}
}
