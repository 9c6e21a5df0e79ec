package results

import (
	"bytes"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"testing"

	"keyceiling/gaussian"
	"keyceiling/search"
)

// The sample record files in testdata are real search results. They are written by
// TestWriteSampleRecords when KEYCEILING_WRITE_SAMPLE=1 (about a minute):
//
//	KEYCEILING_WRITE_SAMPLE=1 go test ./results -run TestWriteSampleRecords
const (
	sampleFile    = "testdata/records-sample.jsonl"
	amplifierFile = "testdata/amplifier-sample.jsonl"
)

// samplePoints are thermal-loss points at losses 1, 3, 6, 10 dB and N_B = 0, 0.01 at
// N_S = 1 and unconstrained, plus N_S = 0.3 and 3 at N_B = 0.01 for the crossover figure.
func samplePoints() []search.Point {
	var pts []search.Point
	for _, nb := range []float64{0, 0.01} {
		for _, db := range []float64{1, 3, 6, 10} {
			energies := []float64{1, math.Inf(1)}
			if nb > 0 {
				energies = []float64{0.3, 1, 3, math.Inf(1)}
			}
			for _, e := range energies {
				m := gaussian.Model{Kind: gaussian.ThermalLoss, Eta: math.Pow(10, -db/10), NB: nb}
				pts = append(pts, search.Point{Model: m, Energy: e})
			}
		}
	}
	return pts
}

func writeSample(t *testing.T, path string, pts []search.Point) {
	st := search.Settings{Family: "tms-split", RandomStarts: -1}
	var buf bytes.Buffer
	for _, p := range pts {
		res, err := search.Run(p, st, search.RandFor(1, p), nil)
		if err != nil {
			t.Fatalf("%s: %v", p.Key(), err)
		}
		line, err := json.Marshal(NewRecord(res, st, 1, 0))
		if err != nil {
			t.Fatal(err)
		}
		buf.Write(append(line, '\n'))
	}
	if err := os.MkdirAll(filepath.Dir(path), 0o755); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(path, buf.Bytes(), 0o644); err != nil {
		t.Fatal(err)
	}
}

func TestWriteSampleRecords(t *testing.T) {
	if os.Getenv("KEYCEILING_WRITE_SAMPLE") != "1" {
		t.Skip("set KEYCEILING_WRITE_SAMPLE=1 to rewrite " + sampleFile)
	}
	writeSample(t, sampleFile, samplePoints())
	amp := gaussian.Model{Kind: gaussian.Amplifier, Gain: 2, NB: 0.1}
	writeSample(t, amplifierFile, []search.Point{{Model: amp, Energy: 1}})
}
