package results

import (
	"bytes"
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"

	"keyceiling/search"
)

// Merged is the union of an output folder's record files, checked against its plan.txt.
type Merged struct {
	Dir  string
	Plan *search.Plan
	Hash string
	// Files are the record files read, in name order.
	Files []string
	// Missing lists the keys of searched points without a record, in plan order.
	Missing []string
	// Duplicates counts records dropped as identical copies of another (seconds aside).
	Duplicates int
	// Torn lists files whose last line was cut by a kill; that line is ignored.
	Torn []string

	lines map[string][]byte
	recs  map[string]Record
}

// LoadMerge reads dir's plan.txt and every *.jsonl file in it (records.jsonl and the shard
// files), in name order. It refuses (with an error, all of which are bad input) a folder
// without plan.txt, a plan.txt of another version, malformed files, records of another plan
// or version, records of points not in the plan, and two different results for one point;
// identical copies (seconds aside) are kept once, the first in name order.
func LoadMerge(dir string) (*Merged, error) {
	st, err := os.Stat(dir)
	if err != nil {
		return nil, err
	}
	if !st.IsDir() {
		return nil, fmt.Errorf("%s is not a directory", dir)
	}
	pf := filepath.Join(dir, PlanFile)
	if _, err := os.Stat(pf); errors.Is(err, fs.ErrNotExist) {
		return nil, fmt.Errorf("%s has no %s: not a keyceiling output folder", dir, PlanFile)
	}
	plan, version, hash, err := ReadPlanFile(pf)
	if version != "" && version != Version {
		return nil, fmt.Errorf("%s was written by keyceiling %s, this is %s", pf, version, Version)
	}
	if err != nil {
		return nil, err
	}
	m := &Merged{Dir: dir, Plan: plan, Hash: hash, lines: map[string][]byte{}, recs: map[string]Record{}}
	searched := map[string]bool{}
	for _, pp := range plan.Points() {
		if !pp.Breaking {
			searched[pp.Point.Key()] = true
		}
	}
	files, err := RecordFiles(dir)
	if err != nil {
		return nil, err
	}
	m.Files = files
	where := map[string]string{}
	for _, path := range files {
		data, err := os.ReadFile(path)
		if err != nil {
			return nil, err
		}
		if i := bytes.LastIndexByte(data, '\n'); i+1 < len(data) {
			data = data[:i+1]
			m.Torn = append(m.Torn, path)
		}
		recs, lines, err := parseLines(data, path)
		if err != nil {
			return nil, err
		}
		for i, rec := range recs {
			at := fmt.Sprintf("%s line %d", path, i+1)
			switch {
			case rec.Version != Version:
				return nil, fmt.Errorf("%s: record of keyceiling %s, this is %s", at, rec.Version, Version)
			case rec.Plan != hash:
				return nil, fmt.Errorf("%s: record of plan %q, %s has plan %s", at, rec.Plan, pf, hash)
			case !searched[rec.Key]:
				return nil, fmt.Errorf("%s: point %s is not a searched point of the plan", at, rec.Key)
			}
			if prev, ok := m.recs[rec.Key]; ok {
				if !SameResult(prev, rec) {
					return nil, fmt.Errorf("%s: a different result for %s than %s", at, rec.Key, where[rec.Key])
				}
				m.Duplicates++
				continue
			}
			m.recs[rec.Key], m.lines[rec.Key], where[rec.Key] = rec, lines[i], at
		}
	}
	for _, pp := range plan.Points() {
		if k := pp.Point.Key(); searched[k] && m.lines[k] == nil {
			m.Missing = append(m.Missing, k)
		}
	}
	return m, nil
}

// NumRecords is the number of distinct points with a record.
func (m *Merged) NumRecords() int { return len(m.recs) }

// Write writes records.jsonl (every record once, in plan order) and summary.csv, each
// atomically; the bytes are those a single unsharded run of the plan writes (each record
// keeps its own seconds). It refuses while points are missing, so that records.jsonl made by
// merge is always complete.
func (m *Merged) Write() error {
	if len(m.Missing) > 0 {
		return fmt.Errorf("%d points have no record", len(m.Missing))
	}
	var b bytes.Buffer
	for _, pp := range m.Plan.Points() {
		if line, ok := m.lines[pp.Point.Key()]; ok {
			b.Write(line)
			b.WriteByte('\n')
		}
	}
	if err := WriteFileAtomic(filepath.Join(m.Dir, RecordsFile), b.Bytes()); err != nil {
		return err
	}
	sum, err := SummaryCSV(m.Plan, m.recs)
	if err != nil {
		return err
	}
	return WriteFileAtomic(filepath.Join(m.Dir, SummaryFile), sum)
}
