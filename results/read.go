package results

import (
	"bufio"
	"bytes"
	"encoding/json"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"sort"
	"strings"
)

// MaxLineBytes bounds one record line; a longer line is a malformed file.
const MaxLineBytes = 1 << 20

// ParseRecords reads JSON-lines records strictly: every line must be one complete record of
// this FormatVersion with a known channel; blank lines are not allowed. name is used in
// errors ("file.jsonl line 3: ...").
func ParseRecords(r io.Reader, name string) ([]Record, error) {
	sc := bufio.NewScanner(r)
	sc.Buffer(make([]byte, 64*1024), MaxLineBytes)
	var out []Record
	line := 0
	for sc.Scan() {
		line++
		b := sc.Bytes()
		if len(bytes.TrimSpace(b)) == 0 {
			return nil, fmt.Errorf("%s line %d: empty line", name, line)
		}
		var rec Record
		dec := json.NewDecoder(bytes.NewReader(b))
		dec.DisallowUnknownFields()
		if err := dec.Decode(&rec); err != nil {
			return nil, fmt.Errorf("%s line %d: not a result record: %v", name, line, err)
		}
		if dec.More() {
			return nil, fmt.Errorf("%s line %d: trailing data after the record", name, line)
		}
		if err := rec.Validate(); err != nil {
			return nil, fmt.Errorf("%s line %d: %v", name, line, err)
		}
		out = append(out, rec)
	}
	if err := sc.Err(); err != nil {
		return nil, fmt.Errorf("%s line %d: %v", name, line+1, err)
	}
	return out, nil
}

// Validate checks a record's structure (not its bound: that is what Check does).
func (r Record) Validate() error {
	if r.Format != FormatVersion {
		return fmt.Errorf("record format %d, this keyceiling reads format %d", r.Format, FormatVersion)
	}
	if r.Tool != "keyceiling" {
		return fmt.Errorf("record of tool %q", r.Tool)
	}
	if _, err := r.Channel.Model(); err != nil {
		return fmt.Errorf("channel: %v", err)
	}
	if !(float64(r.Energy) > 0) {
		return fmt.Errorf("energy %v out of range", float64(r.Energy))
	}
	if r.Key == "" {
		return fmt.Errorf("record without a key")
	}
	m := r.Map.KeptModes
	if m < 1 || len(r.Map.X) != 2*m || len(r.Map.Y) != 2*m {
		return fmt.Errorf("map: X has %d rows and Y %d rows for %d kept modes", len(r.Map.X), len(r.Map.Y), m)
	}
	for i := range r.Map.X {
		if len(r.Map.X[i]) != 4 || len(r.Map.Y[i]) != 2*m {
			return fmt.Errorf("map: row %d has the wrong length", i)
		}
	}
	return nil
}

// ReadRecordsFile reads one JSON-lines result file.
func ReadRecordsFile(path string) ([]Record, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	return ParseRecords(f, filepath.Base(path))
}

// RecordFiles lists the result files of an output folder: every *.jsonl file, sorted by name.
func RecordFiles(dir string) ([]string, error) {
	ents, err := os.ReadDir(dir)
	if err != nil {
		return nil, err
	}
	var out []string
	for _, e := range ents {
		if !e.IsDir() && strings.HasSuffix(e.Name(), ".jsonl") {
			out = append(out, filepath.Join(dir, e.Name()))
		}
	}
	sort.Strings(out)
	return out, nil
}
