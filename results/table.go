package results

import (
	"bytes"
	"encoding/csv"
	"fmt"
	"io"
	"math"
	"math/big"
	"os"
	"slices"
	"sort"
	"strconv"
	"strings"
	"unicode/utf8"

	"keyceiling/gaussian"
	"keyceiling/squash"
)

// Tables. A table has one row per point (channel and energy) and columns chosen from a fixed
// set (TableColumnHelp). Numbers are in bits per channel use. When rounded to a number of
// decimals, upper bounds (our bound, the upper references, the gap) are rounded up and lower
// bounds (lower, rci, ci) down, so that every printed number is still a bound; the channel
// parameters are printed exactly, or to 6 significant digits when longer (an eta computed from
// a loss in dB); the loss in dB is rounded to nearest with trailing zeros trimmed. CSV without
// a number of decimals has every number in its shortest exact form.

// TableFormats are the formats of Table.Write.
var TableFormats = []string{"markdown", "csv", "latex", "text"}

// TableColumnHelp documents the column names accepted by BuildTable (for --help).
const TableColumnHelp = `  channel     channel kind (thermal-loss, amplifier, additive)
  eta         transmissivity (thermal-loss)
  loss-db     loss in dB, -10 log10(eta) (thermal-loss)
  gain        gain G (amplifier)
  noise       thermal photon number N_B (thermal-loss, amplifier)
  xi          added noise xi (additive)
  energy      input mean photon number bound N_S (inf: unconstrained)
  bound       our certified squashing-map upper bound
  lower       best lower bound (achievable rate) among the references
  gap         tightest upper bound minus lower
  tightest    which upper bound is tightest: squashing or a reference name
  beats-ree   yes if our bound is below the relative-entropy (ree) bound
  family      map family of our bound
  status      converged or stopped-early
  key         the point's key
  ref:NAME    a reference bound: ref:tgw-pure-loss, ref:data-processing, ref:ree (upper);
              ref:rci, ref:ci (lower)`

// cellMode tells how a numeric cell is rounded.
type cellMode int

const (
	modeExact   cellMode = iota // an input parameter: exact, or 6 significant digits if longer
	modeDerived                 // a derived parameter: nearest, trailing zeros trimmed
	modeUp                      // an upper bound: rounded up
	modeDown                    // a lower bound: rounded down
)

// Column is one column of a table.
type Column struct {
	// ID is the name used in --columns, --rows and --sort, and the CSV header.
	ID string
	// Header is the header in Markdown and text; TeX the header in LaTeX.
	Header, TeX string
	// Numeric columns are right-aligned and compared as numbers.
	Numeric bool
	num     func(r *Record) (float64, cellMode, bool)
	text    func(r *Record) string
}

// Value returns a numeric column's value in r; ok is false when r has none (e.g. gain of a
// thermal-loss channel, or a reference that does not apply).
func (c Column) Value(r *Record) (v float64, ok bool) {
	if c.num == nil {
		return 0, false
	}
	v, _, ok = c.num(r)
	return v, ok
}

// Text returns a text column's value in r.
func (c Column) Text(r *Record) string {
	if c.text == nil {
		return ""
	}
	return c.text(r)
}

func param(p *float64) (float64, cellMode, bool) {
	if p == nil {
		return 0, modeExact, false
	}
	return *p, modeExact, true
}

// LossDB returns the loss -10 log10(eta) in dB of a transmissivity.
func LossDB(eta float64) float64 { return -10 * math.Log10(eta) }

var baseColumns = []Column{
	{ID: "channel", Header: "channel", TeX: "channel", text: func(r *Record) string { return r.Channel.Kind }},
	{ID: "eta", Header: "η", TeX: `$\eta$`, Numeric: true,
		num: func(r *Record) (float64, cellMode, bool) { return param(r.Channel.Eta) }},
	{ID: "loss-db", Header: "loss (dB)", TeX: "loss (dB)", Numeric: true,
		num: func(r *Record) (float64, cellMode, bool) {
			if r.Channel.Eta == nil {
				return 0, modeDerived, false
			}
			return LossDB(*r.Channel.Eta), modeDerived, true
		}},
	{ID: "gain", Header: "G", TeX: `$G$`, Numeric: true,
		num: func(r *Record) (float64, cellMode, bool) { return param(r.Channel.Gain) }},
	{ID: "noise", Header: "N_B", TeX: `$N_B$`, Numeric: true,
		num: func(r *Record) (float64, cellMode, bool) { return param(r.Channel.NB) }},
	{ID: "xi", Header: "ξ", TeX: `$\xi$`, Numeric: true,
		num: func(r *Record) (float64, cellMode, bool) { return param(r.Channel.Xi) }},
	{ID: "energy", Header: "N_S", TeX: `$N_S$`, Numeric: true,
		num: func(r *Record) (float64, cellMode, bool) { return float64(r.Energy), modeExact, true }},
	{ID: "bound", Header: "bound", TeX: "bound", Numeric: true,
		num: func(r *Record) (float64, cellMode, bool) { return r.Bound, modeUp, true }},
	{ID: "lower", Header: "lower", TeX: "lower", Numeric: true,
		num: func(r *Record) (float64, cellMode, bool) { return r.Lower, modeDown, true }},
	{ID: "gap", Header: "gap", TeX: "gap", Numeric: true,
		num: func(r *Record) (float64, cellMode, bool) { return r.Gap, modeUp, true }},
	{ID: "tightest", Header: "tightest", TeX: "tightest", text: func(r *Record) string { return r.Tightest }},
	{ID: "beats-ree", Header: "beats REE", TeX: "beats REE", text: func(r *Record) string {
		if r.BeatsREE {
			return "yes"
		}
		return "no"
	}},
	{ID: "family", Header: "family", TeX: "family", text: func(r *Record) string { return r.Family }},
	{ID: "status", Header: "status", TeX: "status", text: func(r *Record) string { return r.Status }},
	{ID: "key", Header: "key", TeX: "key", text: func(r *Record) string { return r.Key }},
}

// knownRefs are the reference names of package squash, in the order tables show them.
var knownRefs = []string{squash.RefTGWPureLoss, squash.RefDataProcessing, squash.RefREE, squash.RefRCI, squash.RefCI}

// refLabel is the short header of a reference column.
func refLabel(name string) string {
	switch name {
	case squash.RefTGWPureLoss:
		return "TGW"
	case squash.RefDataProcessing:
		return "DP"
	case squash.RefREE:
		return "REE"
	case squash.RefRCI:
		return "RCI"
	case squash.RefCI:
		return "CI"
	}
	return name
}

func refColumn(name string) Column {
	return Column{ID: "ref:" + name, Header: refLabel(name), TeX: texEscape(refLabel(name)), Numeric: true,
		num: func(r *Record) (float64, cellMode, bool) {
			for _, ref := range r.References {
				if ref.Name == name {
					if ref.Upper {
						return ref.Value, modeUp, true
					}
					return ref.Value, modeDown, true
				}
			}
			return 0, modeUp, false
		}}
}

// LookupColumn returns the column named id; recs supply reference names beyond the known ones.
func LookupColumn(id string, recs []Record) (Column, error) {
	for _, c := range baseColumns {
		if c.ID == id {
			return c, nil
		}
	}
	if name, ok := strings.CutPrefix(id, "ref:"); ok {
		names := refNames(recs, false)
		for _, n := range append(append([]string(nil), knownRefs...), names...) {
			if n == name {
				return refColumn(name), nil
			}
		}
		return Column{}, fmt.Errorf("unknown column %q (reference names: %s)", id,
			strings.Join(mergeNames(knownRefs, names), ", "))
	}
	return Column{}, fmt.Errorf("unknown column %q (see --help for the columns)", id)
}

func mergeNames(a, b []string) []string {
	seen := map[string]bool{}
	var out []string
	for _, s := range append(append([]string(nil), a...), b...) {
		if !seen[s] {
			seen[s] = true
			out = append(out, s)
		}
	}
	return out
}

// refNames lists the reference names in recs (only upper bounds if upperOnly): the known ones
// in their order, then others sorted.
func refNames(recs []Record, upperOnly bool) []string {
	present := map[string]bool{}
	for i := range recs {
		for _, ref := range recs[i].References {
			if ref.Upper || !upperOnly {
				present[ref.Name] = true
			}
		}
	}
	var out, other []string
	for _, n := range knownRefs {
		if present[n] {
			out = append(out, n)
			delete(present, n)
		}
	}
	for n := range present {
		other = append(other, n)
	}
	sort.Strings(other)
	return append(out, other...)
}

// DefaultTableColumns returns the columns shown without --columns: the channel (when kinds
// are mixed) and its parameters, energy, bound, the upper references present, lower and
// tightest.
func DefaultTableColumns(recs []Record) []string {
	kinds := map[string]bool{}
	for i := range recs {
		kinds[recs[i].Channel.Kind] = true
	}
	var ids []string
	if len(kinds) > 1 {
		ids = append(ids, "channel")
	}
	has := func(k gaussian.Kind) bool { return kinds[k.String()] }
	if has(gaussian.ThermalLoss) {
		ids = append(ids, "eta", "loss-db")
	}
	if has(gaussian.Amplifier) {
		ids = append(ids, "gain")
	}
	if has(gaussian.ThermalLoss) || has(gaussian.Amplifier) {
		ids = append(ids, "noise")
	}
	if has(gaussian.AdditiveNoise) {
		ids = append(ids, "xi")
	}
	ids = append(ids, "energy", "bound")
	for _, n := range refNames(recs, true) {
		ids = append(ids, "ref:"+n)
	}
	return append(ids, "lower", "tightest")
}

// TableSpec chooses a table's columns, rows and order.
type TableSpec struct {
	// Columns are column IDs in order; empty: DefaultTableColumns.
	Columns []string
	// Filters are row filters (ParseRowFilter syntax); a row is kept if it passes all.
	Filters []string
	// Sort are column IDs, each optionally prefixed by "-" for descending order, applied
	// after the default order (channel kind, noise, loss, gain, xi, energy, key).
	Sort []string
}

// Table is a built table: its columns and its rows in order.
type Table struct {
	Columns []Column
	Rows    []Record
}

// BuildTable selects, filters and orders records into a table. It fails on an unknown
// column, a malformed filter or sort key, or when no row is left.
func BuildTable(recs []Record, spec TableSpec) (*Table, error) {
	if len(recs) == 0 {
		return nil, fmt.Errorf("no records")
	}
	var conds []rowCondition
	for _, f := range spec.Filters {
		c, err := parseRowFilter(f, recs)
		if err != nil {
			return nil, err
		}
		conds = append(conds, c...)
	}
	var rows []Record
	for i := range recs {
		keep := true
		for _, c := range conds {
			if !c.match(&recs[i]) {
				keep = false
				break
			}
		}
		if keep {
			rows = append(rows, recs[i])
		}
	}
	if len(rows) == 0 {
		return nil, fmt.Errorf("no record passes the row filter %q (of %d records)", strings.Join(spec.Filters, " "), len(recs))
	}
	ids := spec.Columns
	if len(ids) == 0 {
		ids = DefaultTableColumns(rows)
	}
	t := &Table{}
	seen := map[string]bool{}
	for _, id := range ids {
		id = strings.TrimSpace(id)
		c, err := LookupColumn(id, recs)
		if err != nil {
			return nil, err
		}
		if seen[id] {
			return nil, fmt.Errorf("column %q given twice", id)
		}
		seen[id] = true
		t.Columns = append(t.Columns, c)
	}
	SortRecords(rows)
	if err := sortBy(rows, spec.Sort, recs); err != nil {
		return nil, err
	}
	t.Rows = rows
	return t, nil
}

// kindOrder orders channel kinds as package gaussian does.
func kindOrder(kind string) int {
	k, err := gaussian.ParseKind(kind)
	if err != nil {
		return math.MaxInt
	}
	return int(k)
}

func optional(p *float64) float64 {
	if p == nil {
		return math.Inf(-1)
	}
	return *p
}

// SortRecords orders records deterministically: by channel kind, noise N_B, loss (eta
// descending), gain, xi, energy (unconstrained last), then key and bound.
func SortRecords(recs []Record) {
	sort.SliceStable(recs, func(i, j int) bool {
		a, b := &recs[i], &recs[j]
		if ka, kb := kindOrder(a.Channel.Kind), kindOrder(b.Channel.Kind); ka != kb {
			return ka < kb
		}
		type pair struct{ x, y float64 }
		for _, p := range []pair{
			{optional(a.Channel.NB), optional(b.Channel.NB)},
			{-optional(a.Channel.Eta), -optional(b.Channel.Eta)},
			{optional(a.Channel.Gain), optional(b.Channel.Gain)},
			{optional(a.Channel.Xi), optional(b.Channel.Xi)},
			{float64(a.Energy), float64(b.Energy)},
		} {
			if p.x != p.y {
				return p.x < p.y
			}
		}
		if a.Key != b.Key {
			return a.Key < b.Key
		}
		return a.Bound < b.Bound
	})
}

// sortBy stably sorts rows by keys ("col" ascending, "-col" descending); rows without a value
// in a key column go last.
func sortBy(rows []Record, keys []string, recs []Record) error {
	type sortKey struct {
		col  Column
		desc bool
	}
	var sk []sortKey
	for _, k := range keys {
		k = strings.TrimSpace(k)
		desc := false
		if rest, ok := strings.CutPrefix(k, "-"); ok {
			k, desc = rest, true
		} else {
			k = strings.TrimPrefix(k, "+")
		}
		c, err := LookupColumn(k, recs)
		if err != nil {
			return fmt.Errorf("--sort: %v", err)
		}
		sk = append(sk, sortKey{c, desc})
	}
	if len(sk) == 0 {
		return nil
	}
	sort.SliceStable(rows, func(i, j int) bool {
		for _, k := range sk {
			var cmp int
			if k.col.Numeric {
				x, okx := k.col.Value(&rows[i])
				y, oky := k.col.Value(&rows[j])
				switch {
				case okx != oky:
					return okx // a present value before a missing one
				case !okx:
					continue
				case x < y:
					cmp = -1
				case x > y:
					cmp = 1
				}
			} else {
				cmp = strings.Compare(k.col.Text(&rows[i]), k.col.Text(&rows[j]))
			}
			if k.desc {
				cmp = -cmp
			}
			if cmp != 0 {
				return cmp < 0
			}
		}
		return false
	})
	return nil
}

// RowFilterHelp documents the --rows syntax.
const RowFilterHelp = `COND[,COND...], every COND must hold (--rows may be repeated: all must hold).
COND is COLUMN OP VALUE with OP one of = != < <= > >=, e.g. noise=0.01, energy=inf,
loss-db<=10, tightest=squashing, beats-ree=yes. With = and != VALUE may list
alternatives: noise=0|0.01. Numbers compare equal to 9 significant digits; a row
without a value in COLUMN (gain of a thermal-loss channel) fails the condition.`

type rowCondition struct {
	col  Column
	op   string
	nums []float64
	strs []string
	src  string
}

var rowOps = []string{"<=", ">=", "!=", "=", "<", ">"}

// parseRowFilter parses one --rows value (ParseRowFilter syntax).
func parseRowFilter(s string, recs []Record) ([]rowCondition, error) {
	var out []rowCondition
	for _, part := range strings.Split(s, ",") {
		part = strings.TrimSpace(part)
		if part == "" {
			return nil, fmt.Errorf("--rows %q: empty condition", s)
		}
		at, op := -1, ""
		for i := 0; i < len(part) && at < 0; i++ {
			for _, o := range rowOps {
				if strings.HasPrefix(part[i:], o) {
					at, op = i, o
					break
				}
			}
		}
		if at <= 0 {
			return nil, fmt.Errorf("--rows %q: want COLUMN OP VALUE with OP one of = != < <= > >=", part)
		}
		name, val := strings.TrimSpace(part[:at]), strings.TrimSpace(part[at+len(op):])
		col, err := LookupColumn(name, recs)
		if err != nil {
			return nil, fmt.Errorf("--rows %q: %v", part, err)
		}
		if val == "" {
			return nil, fmt.Errorf("--rows %q: no value", part)
		}
		c := rowCondition{col: col, op: op, src: part}
		alts := strings.Split(val, "|")
		if len(alts) > 1 && op != "=" && op != "!=" {
			return nil, fmt.Errorf("--rows %q: alternatives (|) need = or !=", part)
		}
		for _, a := range alts {
			a = strings.TrimSpace(a)
			if col.Numeric {
				x, err := parseTableNumber(a)
				if err != nil {
					return nil, fmt.Errorf("--rows %q: %q is not a number or inf", part, a)
				}
				c.nums = append(c.nums, x)
			} else {
				if op != "=" && op != "!=" {
					return nil, fmt.Errorf("--rows %q: column %s is text: use = or !=", part, name)
				}
				c.strs = append(c.strs, a)
			}
		}
		out = append(out, c)
	}
	return out, nil
}

func parseTableNumber(s string) (float64, error) {
	switch strings.ToLower(s) {
	case "inf", "+inf", "infinity":
		return math.Inf(1), nil
	}
	x, err := strconv.ParseFloat(s, 64)
	if err != nil || math.IsNaN(x) || math.IsInf(x, 0) {
		return 0, fmt.Errorf("not a number")
	}
	return x, nil
}

// sameNumber compares to 9 significant digits (a loss in dB recomputed from eta is not exact).
func sameNumber(a, b float64) bool {
	if a == b {
		return true
	}
	if math.IsInf(a, 0) || math.IsInf(b, 0) {
		return false
	}
	return math.Abs(a-b) <= 1e-9*math.Max(math.Abs(a), math.Abs(b))
}

func (c rowCondition) match(r *Record) bool {
	if !c.col.Numeric {
		v := c.col.Text(r)
		in := false
		for _, s := range c.strs {
			if c.col.ID == "beats-ree" {
				switch strings.ToLower(s) {
				case "true", "yes":
					s = "yes"
				case "false", "no":
					s = "no"
				}
			}
			if v == s {
				in = true
			}
		}
		return in == (c.op == "=")
	}
	v, ok := c.col.Value(r)
	if !ok {
		return false
	}
	switch c.op {
	case "=", "!=":
		in := false
		for _, x := range c.nums {
			if sameNumber(v, x) {
				in = true
			}
		}
		return in == (c.op == "=")
	case "<":
		return v < c.nums[0] && !sameNumber(v, c.nums[0])
	case "<=":
		return v <= c.nums[0] || sameNumber(v, c.nums[0])
	case ">":
		return v > c.nums[0] && !sameNumber(v, c.nums[0])
	case ">=":
		return v >= c.nums[0] || sameNumber(v, c.nums[0])
	}
	return false
}

// RoundDecimal formats x with the given number of decimals, rounding the exact binary value
// of x up (dir > 0), down (dir < 0) or to nearest, ties away from zero (dir == 0).
func RoundDecimal(x float64, decimals, dir int) string {
	if math.IsInf(x, 1) {
		return "inf"
	}
	if math.IsInf(x, -1) {
		return "-inf"
	}
	if math.IsNaN(x) {
		return "NaN"
	}
	r := new(big.Rat).SetFloat64(x)
	scale := new(big.Int).Exp(big.NewInt(10), big.NewInt(int64(decimals)), nil)
	r.Mul(r, new(big.Rat).SetInt(scale))
	num, den := r.Num(), r.Denom()
	q, m := new(big.Int).QuoRem(num, den, new(big.Int)) // truncated toward zero
	if m.Sign() != 0 {
		switch {
		case dir > 0 && num.Sign() > 0:
			q.Add(q, big.NewInt(1))
		case dir < 0 && num.Sign() < 0:
			q.Sub(q, big.NewInt(1))
		case dir == 0:
			twice := new(big.Int).Mul(new(big.Int).Abs(m), big.NewInt(2))
			if twice.Cmp(den) >= 0 {
				q.Add(q, big.NewInt(int64(num.Sign())))
			}
		}
	}
	neg := q.Sign() < 0
	digits := new(big.Int).Abs(q).String()
	if len(digits) <= decimals {
		digits = strings.Repeat("0", decimals-len(digits)+1) + digits
	}
	s := digits
	if decimals > 0 {
		s = digits[:len(digits)-decimals] + "." + digits[len(digits)-decimals:]
	}
	if neg {
		s = "-" + s
	}
	return s
}

// formatCell formats a numeric value. decimals < 0 gives the shortest exact form.
func formatCell(v float64, mode cellMode, decimals int) string {
	if math.IsInf(v, 1) {
		return "inf"
	}
	if decimals < 0 {
		return strconv.FormatFloat(v, 'g', -1, 64)
	}
	if mode == modeExact {
		return shortParam(v)
	}
	switch mode {
	case modeUp:
		return RoundDecimal(v, decimals, 1)
	case modeDown:
		return RoundDecimal(v, decimals, -1)
	}
	s := RoundDecimal(v, decimals, 0)
	if strings.Contains(s, ".") {
		s = strings.TrimRight(strings.TrimRight(s, "0"), ".")
	}
	if s == "-0" {
		s = "0"
	}
	return s
}

// shortParam formats a channel parameter exactly when that takes at most 6 significant
// digits (0.01, 0.5, 100), else to 6 significant digits (an eta from a loss in dB).
func shortParam(v float64) string {
	s := strconv.FormatFloat(v, 'g', -1, 64)
	mant := s
	if i := strings.IndexAny(mant, "eE"); i >= 0 {
		mant = mant[:i]
	}
	if len(strings.Trim(strings.NewReplacer(".", "", "-", "").Replace(mant), "0")) <= 6 {
		return s
	}
	return strconv.FormatFloat(v, 'g', 6, 64)
}

// Cell returns the text of column c in row r: "" when the row has no value there.
func (c Column) Cell(r *Record, decimals int) string {
	if !c.Numeric {
		return c.Text(r)
	}
	v, mode, ok := c.num(r)
	if !ok {
		return ""
	}
	return formatCell(v, mode, decimals)
}

// Write writes the table in format (markdown, csv, latex or text). decimals is the number of
// decimals of the bounds (< 0: shortest exact form). Markdown, text and LaTeX carry a note
// with the units, the rounding, the sources of the references and Disclaimer; CSV is only
// the header and the rows.
func (t *Table) Write(w io.Writer, format string, decimals int) error {
	var buf bytes.Buffer
	switch format {
	case "csv":
		cw := csv.NewWriter(&buf)
		var head []string
		for _, c := range t.Columns {
			head = append(head, c.ID)
		}
		cw.Write(head)
		for i := range t.Rows {
			cw.Write(t.cells(i, decimals))
		}
		cw.Flush()
		if err := cw.Error(); err != nil {
			return err
		}
	case "markdown", "text":
		t.writeAligned(&buf, format == "markdown", decimals)
		buf.WriteString("\n")
		for _, line := range t.notes(decimals) {
			buf.WriteString(line + "\n")
		}
	case "latex":
		t.writeLaTeX(&buf, decimals)
	default:
		return fmt.Errorf("unknown table format %q (want %s)", format, strings.Join(TableFormats, ", "))
	}
	_, err := w.Write(buf.Bytes())
	return err
}

func (t *Table) cells(i int, decimals int) []string {
	out := make([]string, len(t.Columns))
	for j, c := range t.Columns {
		out[j] = c.Cell(&t.Rows[i], decimals)
	}
	return out
}

// notes are the lines under a table: units and rounding, the references' sources, Disclaimer.
func (t *Table) notes(decimals int) []string {
	var lines []string
	units := "Bits per channel use."
	for _, c := range t.Columns {
		if c.ID == "bound" {
			units = "Bits per channel use; bound: certified squashing-map upper bound (keyceiling " + Version + ")."
		}
	}
	if decimals >= 0 {
		units += fmt.Sprintf(" Upper bounds are rounded up and lower bounds down to %d decimals.", decimals)
	}
	lines = append(lines, units)
	for _, c := range t.Columns {
		name, ok := strings.CutPrefix(c.ID, "ref:")
		if !ok {
			continue
		}
		var srcs []string
		kind := "upper"
		for i := range t.Rows {
			for _, ref := range t.Rows[i].References {
				if ref.Name == name {
					if !slices.Contains(srcs, ref.Source) {
						srcs = append(srcs, ref.Source)
					}
					if !ref.Upper {
						kind = "lower"
					}
				}
			}
		}
		src := strings.Join(srcs, "; or ")
		if src == "" {
			src = "not present in these records"
		}
		lines = append(lines, fmt.Sprintf("%s (%s, %s bound): %s.", c.Header, name, kind, src))
	}
	return append(lines, Disclaimer)
}

func (t *Table) writeAligned(w *bytes.Buffer, markdown bool, decimals int) {
	rows := [][]string{}
	head := make([]string, len(t.Columns))
	for j, c := range t.Columns {
		head[j] = c.Header
		if markdown {
			head[j] = mdEscape(head[j])
		}
	}
	rows = append(rows, head)
	for i := range t.Rows {
		cells := t.cells(i, decimals)
		if markdown {
			for j := range cells {
				cells[j] = mdEscape(cells[j])
			}
		}
		rows = append(rows, cells)
	}
	width := make([]int, len(t.Columns))
	for _, r := range rows {
		for j, s := range r {
			width[j] = max(width[j], utf8.RuneCountInString(s), 3)
		}
	}
	pad := func(s string, j int) string {
		n := width[j] - utf8.RuneCountInString(s)
		if t.Columns[j].Numeric {
			return strings.Repeat(" ", n) + s
		}
		return s + strings.Repeat(" ", n)
	}
	for i, r := range rows {
		var parts []string
		for j, s := range r {
			parts = append(parts, pad(s, j))
		}
		if markdown {
			w.WriteString("| " + strings.Join(parts, " | ") + " |\n")
		} else {
			w.WriteString(strings.TrimRight(strings.Join(parts, "  "), " ") + "\n")
		}
		if i == 0 {
			var rule []string
			for j, c := range t.Columns {
				if markdown && c.Numeric {
					rule = append(rule, strings.Repeat("-", width[j]-1)+":")
				} else {
					rule = append(rule, strings.Repeat("-", width[j]))
				}
			}
			if markdown {
				w.WriteString("| " + strings.Join(rule, " | ") + " |\n")
			} else {
				w.WriteString(strings.Join(rule, "  ") + "\n")
			}
		}
	}
}

func mdEscape(s string) string { return strings.ReplaceAll(s, "|", `\|`) }

var texReplacer = strings.NewReplacer(`\`, `\textbackslash{}`, `&`, `\&`, `%`, `\%`, `$`, `\$`, `#`, `\#`,
	`_`, `\_`, `{`, `\{`, `}`, `\}`, `~`, `\textasciitilde{}`, `^`, `\textasciicircum{}`)

func texEscape(s string) string { return texReplacer.Replace(s) }

func (t *Table) writeLaTeX(w *bytes.Buffer, decimals int) {
	fmt.Fprintf(w, "%% keyceiling %s table of %d points; needs \\usepackage{booktabs}.\n", Version, len(t.Rows))
	for _, line := range t.notes(decimals) {
		w.WriteString("% " + line + "\n")
	}
	spec := ""
	for _, c := range t.Columns {
		if c.Numeric {
			spec += "r"
		} else {
			spec += "l"
		}
	}
	w.WriteString(`\begin{tabular}{` + spec + "}\n")
	w.WriteString("\\toprule\n")
	var head []string
	for _, c := range t.Columns {
		head = append(head, c.TeX)
	}
	w.WriteString(strings.Join(head, " & ") + ` \\` + "\n")
	w.WriteString("\\midrule\n")
	for i := range t.Rows {
		cells := t.cells(i, decimals)
		for j, c := range t.Columns {
			switch {
			case cells[j] == "":
			case c.Numeric && cells[j] == "inf":
				cells[j] = `$\infty$`
			case c.Numeric:
				cells[j] = "$" + cells[j] + "$"
			default:
				cells[j] = texEscape(cells[j])
			}
		}
		w.WriteString(strings.Join(cells, " & ") + ` \\` + "\n")
	}
	w.WriteString("\\bottomrule\n\\end{tabular}\n")
}

// CollectRecords reads the records of the given files and folders (a folder: its *.jsonl
// files, RecordFiles). Records of the same point (same key) are merged into the one with the
// lowest bound (each is certified, so the lowest is the best bound); ties keep the first read.
// It fails on an unreadable or malformed file, a folder without result files, or no records.
func CollectRecords(paths []string) ([]Record, error) {
	if len(paths) == 0 {
		return nil, fmt.Errorf("no result files given")
	}
	var all []Record
	for _, p := range paths {
		st, err := os.Stat(p)
		if err != nil {
			return nil, err
		}
		files := []string{p}
		if st.IsDir() {
			if files, err = RecordFiles(p); err != nil {
				return nil, err
			}
			if len(files) == 0 {
				return nil, fmt.Errorf("%s: no *.jsonl result files", p)
			}
		}
		for _, f := range files {
			recs, err := ReadRecordsFile(f)
			if err != nil {
				return nil, err
			}
			all = append(all, recs...)
		}
	}
	if len(all) == 0 {
		return nil, fmt.Errorf("no records in %s", strings.Join(paths, ", "))
	}
	at := map[string]int{}
	var out []Record
	for _, r := range all {
		if i, ok := at[r.Key]; ok {
			if r.Bound < out[i].Bound {
				out[i] = r
			}
			continue
		}
		at[r.Key] = len(out)
		out = append(out, r)
	}
	return out, nil
}
