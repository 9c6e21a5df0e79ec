package results

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"regexp"
	"slices"
	"strings"
	"sync"
	"syscall"
	"time"

	"keyceiling/search"
)

// File names in an output folder.
const (
	PlanFile    = "plan.txt"
	RecordsFile = "records.jsonl"
	SummaryFile = "summary.csv"
)

// RecordsFileOf is the records file of a run: records.jsonl unsharded, shard-I-of-N.jsonl
// for shard I (0-based) of N.
func RecordsFileOf(sh search.Shard) string {
	if !sh.Sharded() {
		return RecordsFile
	}
	return fmt.Sprintf("shard-%d-of-%d.jsonl", sh.Index, sh.Count)
}

// planHeader is the first line of plan.txt; it carries the version and the plan hash.
var planHeader = regexp.MustCompile(`^# keyceiling ([^ ]+) resolved plan; plan-hash ([0-9a-f]{16})$`)

// PlanText is the contents of plan.txt: a header comment with keyceiling's version and the
// plan hash, a comment with the point counts, then the plan in canonical form (which
// `keyceiling sweep --plan plan.txt` accepts).
func PlanText(p *search.Plan) string {
	pts := p.Points()
	breaking := 0
	for _, pp := range pts {
		if pp.Breaking {
			breaking++
		}
	}
	var b strings.Builder
	fmt.Fprintf(&b, "# keyceiling %s resolved plan; plan-hash %s\n", Version, p.Hash())
	fmt.Fprintf(&b, "# %d points in %d chains; %d entanglement-breaking (bound 0, not searched)\n",
		len(pts), len(p.Chains()), breaking)
	b.WriteString(p.Format())
	return b.String()
}

// ReadPlanFile reads an output folder's plan.txt: the plan, and the version and plan hash
// of its header. It fails on a file that is not a plan.txt written by keyceiling, and on one
// whose plan does not have the hash its header states.
func ReadPlanFile(path string) (plan *search.Plan, version, hash string, err error) {
	data, err := os.ReadFile(path)
	if err != nil {
		return nil, "", "", err
	}
	first, _, _ := strings.Cut(string(data), "\n")
	m := planHeader.FindStringSubmatch(first)
	if m == nil {
		return nil, "", "", fmt.Errorf("%s:1: not a plan.txt written by keyceiling (no \"# keyceiling VERSION resolved plan; plan-hash HASH\" header)", path)
	}
	version, hash = m[1], m[2]
	plan, err = search.ParsePlan(bytes.NewReader(data), path)
	if err != nil {
		return nil, version, hash, err
	}
	if version == Version && plan.Hash() != hash {
		return nil, version, hash, fmt.Errorf("%s: the plan's hash is %s, its header says %s (edited by hand?)", path, plan.Hash(), hash)
	}
	return plan, version, hash, nil
}

// checkPlanFile compares an existing plan.txt with the plan of this run.
func checkPlanFile(path string, plan *search.Plan) error {
	_, version, hash, err := ReadPlanFile(path)
	if err != nil && version == "" {
		return err
	}
	if version != Version {
		return fmt.Errorf("%s was written by keyceiling %s, this is %s: use a new output folder", path, version, Version)
	}
	if err != nil {
		return err
	}
	if hash != plan.Hash() {
		return fmt.Errorf("%s holds a different plan (hash %s; this run's plan has hash %s): use a new output folder", path, hash, plan.Hash())
	}
	return nil
}

// Output is the output folder of one sweep run (one shard, or the whole plan). Create it
// with PrepareOutput, which only reads; then Open, Append each finished point, and Finish.
// Its methods may be called from several goroutines.
type Output struct {
	Dir   string
	Plan  *search.Plan
	Hash  string
	Shard search.Shard

	points  []search.PlanPoint      // every point of the plan, in plan order
	mine    map[string]int          // keys of this run's searched points -> plan index
	stored  map[string]storedRecord // records in the file, by key
	keep    int64                   // bytes of complete lines in the existing file
	torn    bool                    // the existing file ends with a torn line
	exists  bool                    // the records file exists
	planOK  bool                    // plan.txt exists and matches
	file    *os.File
	mu      sync.Mutex
	summary time.Time // last summary write
	closed  bool
}

type storedRecord struct {
	rec  Record
	line []byte // the line as written, without its newline
}

// SummaryInterval is the shortest time between two rewrites of summary.csv during a run.
const SummaryInterval = time.Second

// PrepareOutput checks the output folder dir for a run of plan (shard sh) without writing
// anything: dir must be a directory or creatable, and writable; an existing plan.txt must hold
// the same plan written by the same version; an existing records file is read strictly (a
// torn last line, left by a killed run, is allowed and will be cut by Open), and its records
// must belong to this plan and shard, with identical duplicates tolerated and conflicting
// ones refused. Every error is bad input.
func PrepareOutput(dir string, plan *search.Plan, sh search.Shard) (*Output, error) {
	o := &Output{Dir: dir, Plan: plan, Hash: plan.Hash(), Shard: sh, mine: map[string]int{},
		stored: map[string]storedRecord{}}
	o.points = plan.Points()
	for _, c := range plan.ChainsOf(sh) {
		if c.Breaking {
			continue
		}
		for _, pp := range c.Points {
			o.mine[pp.Point.Key()] = pp.Index
		}
	}
	st, err := os.Stat(dir)
	switch {
	case err == nil && !st.IsDir():
		return nil, fmt.Errorf("output folder %s is not a directory", dir)
	case err == nil:
		if err := writable(dir); err != nil {
			return nil, fmt.Errorf("output folder %s is not writable: %v", dir, err)
		}
	case errors.Is(err, fs.ErrNotExist):
		if err := creatable(dir); err != nil {
			return nil, err
		}
		return o, nil
	default:
		// ENOTDIR (a path under a regular file) and the like: name the culprit.
		if cerr := creatable(dir); cerr != nil {
			return nil, cerr
		}
		return nil, fmt.Errorf("output folder: %v", err)
	}
	pf := filepath.Join(dir, PlanFile)
	if _, err := os.Stat(pf); err == nil {
		if err := checkPlanFile(pf, plan); err != nil {
			return nil, err
		}
		o.planOK = true
	} else if !errors.Is(err, fs.ErrNotExist) {
		return nil, err
	} else if files, _ := RecordFiles(dir); len(files) > 0 {
		return nil, fmt.Errorf("output folder %s holds result files but no %s: use a new output folder", dir, PlanFile)
	}
	path := filepath.Join(dir, RecordsFileOf(sh))
	data, err := os.ReadFile(path)
	if errors.Is(err, fs.ErrNotExist) {
		return o, nil
	}
	if err != nil {
		return nil, err
	}
	o.exists = true
	complete := data
	if i := bytes.LastIndexByte(data, '\n'); i+1 < len(data) {
		complete = data[:i+1]
		o.torn = true
	}
	o.keep = int64(len(complete))
	recs, lines, err := parseLines(complete, path)
	if err != nil {
		return nil, err
	}
	for i, rec := range recs {
		where := fmt.Sprintf("%s line %d", path, i+1)
		if err := o.belongs(rec); err != nil {
			return nil, fmt.Errorf("%s: %v", where, err)
		}
		if prev, ok := o.stored[rec.Key]; ok {
			if !SameResult(prev.rec, rec) {
				return nil, fmt.Errorf("%s: a second, different result for %s", where, rec.Key)
			}
			continue
		}
		o.stored[rec.Key] = storedRecord{rec, lines[i]}
	}
	return o, nil
}

// parseLines parses complete JSON lines strictly and returns the records with their lines.
func parseLines(data []byte, name string) ([]Record, [][]byte, error) {
	recs, err := ParseRecords(bytes.NewReader(data), name)
	if err != nil {
		return nil, nil, err
	}
	lines := bytes.Split(bytes.TrimSuffix(data, []byte("\n")), []byte("\n"))
	if len(data) == 0 {
		lines = nil
	}
	if len(lines) != len(recs) {
		return nil, nil, fmt.Errorf("%s: %d lines but %d records", name, len(lines), len(recs))
	}
	return recs, lines, nil
}

// belongs checks a stored record against the run's plan and shard.
func (o *Output) belongs(rec Record) error {
	if rec.Version != Version {
		return fmt.Errorf("record of keyceiling %s, this is %s", rec.Version, Version)
	}
	if rec.Plan != o.Hash {
		return fmt.Errorf("record of plan %q, this run's plan has hash %s", rec.Plan, o.Hash)
	}
	if _, ok := o.mine[rec.Key]; !ok {
		return fmt.Errorf("point %s is not a searched point of this plan%s", rec.Key, o.shardNote())
	}
	return nil
}

func (o *Output) shardNote() string {
	if o.Shard.Sharded() {
		return " and shard " + o.Shard.String()
	}
	return ""
}

// SameResult reports whether two records are the same result: equal in every field but the
// timing (seconds).
func SameResult(a, b Record) bool {
	a.Seconds, b.Seconds = 0, 0
	ja, errA := json.Marshal(a)
	jb, errB := json.Marshal(b)
	return errA == nil && errB == nil && bytes.Equal(ja, jb)
}

// creatable checks, without creating anything, that dir can be created: its nearest existing
// ancestor must be a writable directory.
func creatable(dir string) error {
	p := filepath.Clean(dir)
	for {
		parent := filepath.Dir(p)
		st, err := os.Stat(parent)
		if err == nil {
			if !st.IsDir() {
				return fmt.Errorf("cannot create output folder %s: %s is not a directory", dir, parent)
			}
			if err := writable(parent); err != nil {
				return fmt.Errorf("cannot create output folder %s: %s is not writable: %v", dir, parent, err)
			}
			return nil
		}
		if !errors.Is(err, fs.ErrNotExist) && !errors.Is(err, syscall.ENOTDIR) {
			return fmt.Errorf("cannot create output folder %s: %v", dir, err)
		}
		if parent == p {
			return fmt.Errorf("cannot create output folder %s", dir)
		}
		p = parent
	}
}

// Stored returns the stored result of a point finished by an earlier run.
func (o *Output) Stored(key string) (Record, bool) {
	o.mu.Lock()
	defer o.mu.Unlock()
	s, ok := o.stored[key]
	return s.rec, ok
}

// NumStored is the number of this run's points with a result on disk.
func (o *Output) NumStored() int {
	o.mu.Lock()
	defer o.mu.Unlock()
	return len(o.stored)
}

// NumToSearch is the number of this run's points that are searched (not entanglement
// breaking), finished or not.
func (o *Output) NumToSearch() int { return len(o.mine) }

// RecordsPath is the path of this run's records file.
func (o *Output) RecordsPath() string { return filepath.Join(o.Dir, RecordsFileOf(o.Shard)) }

// Open creates the folder and plan.txt when missing, cuts a torn last line off the records
// file, opens it for appending, and (unsharded) writes summary.csv.
func (o *Output) Open() error {
	o.mu.Lock()
	defer o.mu.Unlock()
	if err := os.MkdirAll(o.Dir, 0o755); err != nil {
		return err
	}
	if !o.planOK {
		if err := WriteFileAtomic(filepath.Join(o.Dir, PlanFile), []byte(PlanText(o.Plan))); err != nil {
			return err
		}
	}
	path := o.RecordsPath()
	if o.torn {
		if err := os.Truncate(path, o.keep); err != nil {
			return fmt.Errorf("cutting the torn last line of %s: %v", path, err)
		}
	}
	f, err := os.OpenFile(path, os.O_WRONLY|os.O_APPEND|os.O_CREATE, 0o644)
	if err != nil {
		return err
	}
	if err := f.Sync(); err != nil {
		f.Close()
		return err
	}
	if !o.exists {
		if err := syncDir(o.Dir); err != nil {
			f.Close()
			return err
		}
	}
	o.file = f
	return o.writeSummary(true)
}

// Append writes one finished point's record as one line with a single write, then syncs
// the file: a kill at any moment leaves either the whole line or a torn tail that the next
// Open cuts off. The summary is rewritten at most every SummaryInterval.
func (o *Output) Append(rec Record) error {
	o.mu.Lock()
	defer o.mu.Unlock()
	if o.closed {
		return errors.New("output is closed")
	}
	if _, ok := o.mine[rec.Key]; !ok {
		return fmt.Errorf("point %s is not a searched point of this run", rec.Key)
	}
	line, err := json.Marshal(rec)
	if err != nil {
		return fmt.Errorf("record of %s: %v", rec.Key, err)
	}
	buf := append(slices.Clip(line), '\n')
	if _, err := o.file.Write(buf); err != nil {
		return fmt.Errorf("writing %s: %v", o.RecordsPath(), err)
	}
	if err := o.file.Sync(); err != nil {
		return fmt.Errorf("syncing %s: %v", o.RecordsPath(), err)
	}
	o.stored[rec.Key] = storedRecord{rec, line}
	return o.writeSummary(false)
}

// Close closes the records file without Finish (after a failure; the next run resumes).
func (o *Output) Close() error {
	o.mu.Lock()
	defer o.mu.Unlock()
	if o.closed || o.file == nil {
		return nil
	}
	o.closed = true
	return o.file.Close()
}

// Hold blocks every later write (used before exiting on a signal, so that no line is cut).
func (o *Output) Hold() { o.mu.Lock() }

// Finish rewrites the records file in plan order (atomically, when its order differs) and
// writes summary.csv (unsharded runs), then closes the file.
func (o *Output) Finish() error {
	o.mu.Lock()
	defer o.mu.Unlock()
	if o.closed {
		return nil
	}
	o.closed = true
	if err := o.file.Close(); err != nil {
		return err
	}
	want := o.orderedRecords()
	path := o.RecordsPath()
	have, err := os.ReadFile(path)
	if err != nil {
		return err
	}
	if !bytes.Equal(have, want) {
		if err := WriteFileAtomic(path, want); err != nil {
			return err
		}
	}
	return o.writeSummary(true)
}

// orderedRecords is the records file in plan order.
func (o *Output) orderedRecords() []byte {
	var b bytes.Buffer
	for _, pp := range o.points {
		if s, ok := o.stored[pp.Point.Key()]; ok {
			b.Write(s.line)
			b.WriteByte('\n')
		}
	}
	return b.Bytes()
}

// Records returns the records of this run's points, finished so far, by key.
func (o *Output) Records() map[string]Record {
	o.mu.Lock()
	defer o.mu.Unlock()
	out := make(map[string]Record, len(o.stored))
	for k, s := range o.stored {
		out[k] = s.rec
	}
	return out
}

// writeSummary rewrites summary.csv (unsharded runs only; a shard's summary is made by
// merge). Without force it skips when the last write is recent.
func (o *Output) writeSummary(force bool) error {
	if o.Shard.Sharded() {
		return nil
	}
	if !force && time.Since(o.summary) < SummaryInterval {
		return nil
	}
	recs := make(map[string]Record, len(o.stored))
	for k, s := range o.stored {
		recs[k] = s.rec
	}
	data, err := SummaryCSV(o.Plan, recs)
	if err != nil {
		return err
	}
	if err := WriteFileAtomic(filepath.Join(o.Dir, SummaryFile), data); err != nil {
		return err
	}
	o.summary = time.Now()
	return nil
}

// WriteFileAtomic replaces path with data: it writes a temporary file in the same folder,
// syncs it, renames it over path and syncs the folder, so that readers see the old or the
// new file, never a part of one.
func WriteFileAtomic(path string, data []byte) error {
	dir, base := filepath.Split(path)
	if dir == "" {
		dir = "."
	}
	f, err := os.CreateTemp(dir, "."+base+".tmp-*")
	if err != nil {
		return err
	}
	tmp := f.Name()
	fail := func(err error) error {
		f.Close()
		os.Remove(tmp)
		return err
	}
	if _, err := f.Write(data); err != nil {
		return fail(err)
	}
	if err := f.Chmod(0o644); err != nil {
		return fail(err)
	}
	if err := f.Sync(); err != nil {
		return fail(err)
	}
	if err := f.Close(); err != nil {
		os.Remove(tmp)
		return err
	}
	if err := os.Rename(tmp, path); err != nil {
		os.Remove(tmp)
		return err
	}
	return syncDir(dir)
}

func syncDir(dir string) error {
	d, err := os.Open(dir)
	if err != nil {
		return err
	}
	defer d.Close()
	if err := d.Sync(); err != nil && !errors.Is(err, os.ErrInvalid) {
		return err
	}
	return nil
}
