package results

import (
	"bytes"
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// FuzzParseRecords checks that no input makes ParseRecords panic or print a multi-line
// error, and that accepted records survive a write-read round trip unchanged. Seeds: the
// record files in ../testdata/records, the corpus in testdata/fuzz/FuzzParseRecords and the
// literals below.
func FuzzParseRecords(f *testing.F) {
	files, _ := filepath.Glob("../testdata/records/*.jsonl")
	for _, file := range files {
		data, err := os.ReadFile(file)
		if err != nil {
			continue
		}
		f.Add(data)
		lines := bytes.SplitAfter(data, []byte("\n"))
		f.Add(lines[0])
		f.Add(lines[0][:len(lines[0])/2]) // a torn line
		f.Add(bytes.Replace(lines[0], []byte(`"energy":1`), []byte(`"energy":"inf"`), 1))
		f.Add(bytes.Replace(lines[0], []byte(`"format":1`), []byte(`"format":2`), 1))
	}
	f.Add([]byte(""))
	f.Add([]byte("\n"))
	f.Add([]byte("{}\n"))
	f.Add([]byte(`{"format":1,"tool":"keyceiling","energy":"-inf"}` + "\n"))
	f.Add([]byte(`{"format":1} {"format":1}`))
	f.Fuzz(func(t *testing.T, data []byte) {
		recs, err := ParseRecords(bytes.NewReader(data), "f.jsonl")
		if err != nil {
			if msg := err.Error(); strings.Contains(msg, "\n") || !strings.HasPrefix(msg, "f.jsonl line ") {
				t.Fatalf("error %q is not one line naming f.jsonl line N", msg)
			}
			return
		}
		var out bytes.Buffer
		for _, r := range recs {
			line, err := json.Marshal(r)
			if err != nil {
				return // e.g. a NaN that JSON cannot hold (it cannot be read either)
			}
			out.Write(line)
			out.WriteByte('\n')
		}
		again, err := ParseRecords(bytes.NewReader(out.Bytes()), "again")
		if err != nil {
			t.Fatalf("written records do not read back: %v", err)
		}
		var out2 bytes.Buffer
		for _, r := range again {
			line, _ := json.Marshal(r)
			out2.Write(line)
			out2.WriteByte('\n')
		}
		if !bytes.Equal(out.Bytes(), out2.Bytes()) {
			t.Fatalf("round trip changed the records:\n%s\n%s", out.Bytes(), out2.Bytes())
		}
	})
}
