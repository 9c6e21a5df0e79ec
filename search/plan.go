package search

import (
	"bufio"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"io"
	"math"
	"slices"
	"strconv"
	"strings"

	"keyceiling/gaussian"
	"keyceiling/squash"
)

// A plan describes a sweep: one channel kind, a grid of channel parameters and input energies,
// the search settings and the seed. Its text form (the "keyceiling plan" format, version 1) is
// documented in docs/plan-format.md; in short:
//
//	keyceiling-plan 1            # first line: format marker and version
//	channel thermal-loss         # one KEYWORD VALUE pair per line, '#' starts a comment
//	loss-db 1, 2, 4:16:3log      # axes: lists of numbers and ranges FROM:TO:COUNT[log];
//	        20, 25               # a line ending with a comma continues on the next
//	noise 0.001, 0.01
//	energy 1, inf
//	family tms-split
//	seed 1
//	end                          # last line: marks the file as complete
//
// ParsePlan reads that text strictly; BuildPlan builds a plan from keyword-value entries
// (the command line's grid flags use it too, with the flag names as positions in errors).

// PlanFormatVersion is the version of the plan text format written on the header line.
const PlanFormatVersion = 1

// Plan limits: a range has at most MaxRangeCount points and a plan at most MaxPlanPoints.
const (
	MaxRangeCount = 10000
	MaxPlanPoints = 100000
	// MaxPlanLine is the longest accepted plan line in bytes.
	MaxPlanLine = 64 * 1024
	// rangeDigits is the number of significant decimal digits range points are rounded to,
	// so that 0.01:10:7log gives 0.1 and not 0.10000000000000002.
	rangeDigits = 12
)

// Axis is one grid axis: its keyword and its values in plan order.
type Axis struct {
	Name   string
	Values []float64
}

// Plan is a resolved sweep description.
type Plan struct {
	Channel gaussian.Kind
	// Param is the first channel-parameter axis: "eta" or "loss-db" (thermal loss), "gain"
	// (amplifier) or "xi" (additive noise).
	Param Axis
	// Noise is the N_B axis of thermal loss and the amplifier ({0} when not given); empty
	// for additive noise.
	Noise Axis
	// Energy is the N_S axis, sorted ascending with +Inf last.
	Energy   Axis
	Settings Settings
	Seed     uint64
}

// PlanPoint is one point of a plan with its position in plan order.
type PlanPoint struct {
	Index int
	Point Point
	// LossDB is the loss in dB the transmissivity was given as (NaN when given as eta or
	// not a thermal-loss plan).
	LossDB float64
	// Breaking is true for an entanglement-breaking channel: every two-way assisted capacity
	// is 0 there, so the point is not searched (squash.EntanglementBreaking).
	Breaking bool
}

// Chain is a run of points sharing every channel parameter, ordered by energy ascending
// (finite energies, then inf): a sweep searches them in order, each warm-started from the
// previous one's result.
type Chain struct {
	// Key is the channel part of the points' keys (Point.Key without " ns=...").
	Key    string
	Points []PlanPoint
	// Breaking is true when the chain's channel is entanglement breaking (no point is searched).
	Breaking bool
}

// Entry is one keyword-value setting with the position it came from ("plan.txt:4" or
// "--eta"), used in error messages.
type Entry struct {
	Key, Value, Where string
}

// axisKeywords are the keywords whose values are lists (and may continue over lines).
var axisKeywords = []string{"eta", "loss-db", "gain", "xi", "noise", "energy"}

// keywords lists every plan keyword (besides the header and "end") in canonical order.
var keywords = []string{"channel", "eta", "loss-db", "gain", "xi", "noise", "energy",
	"family", "method", "ancillas", "keep", "starts", "evaluations", "seed"}

// ParsePlan reads a plan in the text format. name is used in errors ("name:LINE: problem").
// Every problem is reported as an error naming the line: an unknown or repeated keyword, a
// malformed or out-of-range value, a missing header, a missing required keyword, or a file
// that ends before its "end" line (a truncated file).
func ParsePlan(r io.Reader, name string) (*Plan, error) {
	entries, last, err := ParsePlanEntries(r, name)
	if err != nil {
		return nil, err
	}
	return BuildPlan(entries, last)
}

// ParsePlanEntries reads the text format's lines into entries without interpreting the
// values (ParsePlan = ParsePlanEntries + BuildPlan). It checks the header, the "end" line and
// the line syntax; last is the position to report missing keywords at (the last line).
func ParsePlanEntries(r io.Reader, name string) (entries []Entry, last string, err error) {
	sc := bufio.NewScanner(r)
	sc.Buffer(make([]byte, 4096), MaxPlanLine)
	line := 0
	header, ended := false, false
	continued := false // the last entry's value ended with a comma: this line continues it
	var parts []string // the lines of a continued value
	for sc.Scan() {
		line++
		where := fmt.Sprintf("%s:%d", name, line)
		text := sc.Text()
		if i := strings.IndexByte(text, '#'); i >= 0 {
			text = text[:i]
		}
		text = strings.TrimSpace(text)
		if text == "" {
			continue
		}
		if continued {
			parts = append(parts, text)
			if continued = strings.HasSuffix(text, ","); !continued {
				entries[len(entries)-1].Value = strings.Join(parts, " ")
			}
			continue
		}
		if ended {
			return nil, "", fmt.Errorf("%s: text after the \"end\" line", where)
		}
		key, value := text, ""
		if i := strings.IndexAny(text, " \t"); i >= 0 {
			key, value = text[:i], strings.TrimSpace(text[i+1:])
		}
		if !header {
			if key != "keyceiling-plan" {
				return nil, "", fmt.Errorf("%s: not a keyceiling plan: the first line must be \"keyceiling-plan %d\"", where, PlanFormatVersion)
			}
			if value != strconv.Itoa(PlanFormatVersion) {
				return nil, "", fmt.Errorf("%s: plan format %q, this keyceiling reads format %d", where, value, PlanFormatVersion)
			}
			header = true
			continue
		}
		switch key {
		case "keyceiling-plan":
			return nil, "", fmt.Errorf("%s: a second \"keyceiling-plan\" header", where)
		case "end":
			if value != "" {
				return nil, "", fmt.Errorf("%s: \"end\" takes no value", where)
			}
			ended = true
			continue
		}
		if value == "" {
			if slices.Contains(keywords, key) {
				return nil, "", fmt.Errorf("%s: %s needs a value", where, key)
			}
			return nil, "", fmt.Errorf("%s: unknown keyword %q", where, key)
		}
		entries = append(entries, Entry{Key: key, Value: value, Where: where})
		if continued = strings.HasSuffix(value, ",") && slices.Contains(axisKeywords, key); continued {
			parts = []string{value}
		}
	}
	if err := sc.Err(); err != nil {
		if errors.Is(err, bufio.ErrTooLong) {
			return nil, "", fmt.Errorf("%s:%d: line longer than %d bytes", name, line+1, MaxPlanLine)
		}
		return nil, "", fmt.Errorf("%s:%d: %v", name, line+1, err)
	}
	last = fmt.Sprintf("%s:%d", name, max(line, 1))
	if !header {
		return nil, "", fmt.Errorf("%s: empty plan: the first line must be \"keyceiling-plan %d\"", last, PlanFormatVersion)
	}
	if continued {
		e := entries[len(entries)-1]
		return nil, "", fmt.Errorf("%s: the %s list of %s ends with a comma but the plan ends (truncated file?)", last, e.Key, e.Where)
	}
	if !ended {
		return nil, "", fmt.Errorf("%s: the plan ends without its \"end\" line (truncated file?)", last)
	}
	return entries, last, nil
}

// BuildPlan builds and validates a plan from keyword-value entries. Each error names the
// entry's Where; a missing required keyword is reported at missingWhere.
func BuildPlan(entries []Entry, missingWhere string) (*Plan, error) {
	seen := map[string]Entry{}
	for _, e := range entries {
		if !slices.Contains(keywords, e.Key) {
			return nil, fmt.Errorf("%s: unknown keyword %q", e.Where, e.Key)
		}
		if first, ok := seen[e.Key]; ok {
			return nil, fmt.Errorf("%s: %s given twice (first at %s)", e.Where, e.Key, first.Where)
		}
		seen[e.Key] = e
	}
	p := &Plan{Seed: 1}
	ch, ok := seen["channel"]
	if !ok {
		return nil, fmt.Errorf("%s: missing required keyword \"channel\"", missingWhere)
	}
	kind, err := gaussian.ParseKind(ch.Value)
	if err != nil {
		return nil, fmt.Errorf("%s: %v", ch.Where, err)
	}
	p.Channel = kind
	var allowed []string
	switch kind {
	case gaussian.ThermalLoss:
		allowed = []string{"eta", "loss-db", "noise"}
		eta, hasEta := seen["eta"]
		db, hasDB := seen["loss-db"]
		switch {
		case hasEta && hasDB:
			return nil, fmt.Errorf("%s: give eta or loss-db, not both (eta at %s)", db.Where, eta.Where)
		case !hasEta && !hasDB:
			return nil, fmt.Errorf("%s: missing required keyword \"eta\" or \"loss-db\" for channel thermal-loss", missingWhere)
		case hasEta:
			p.Param, err = parseAxisEntry(eta)
		default:
			p.Param, err = parseAxisEntry(db)
		}
	case gaussian.Amplifier:
		allowed = []string{"gain", "noise"}
		p.Param, err = requiredAxis(seen, "gain", missingWhere, kind)
	case gaussian.AdditiveNoise:
		allowed = []string{"xi"}
		p.Param, err = requiredAxis(seen, "xi", missingWhere, kind)
	}
	if err != nil {
		return nil, err
	}
	for _, k := range []string{"eta", "loss-db", "gain", "xi", "noise"} {
		if e, ok := seen[k]; ok && !slices.Contains(allowed, k) {
			return nil, fmt.Errorf("%s: %s does not apply to channel %s", e.Where, k, kind)
		}
	}
	if slices.Contains(allowed, "noise") {
		p.Noise = Axis{Name: "noise", Values: []float64{0}}
		if e, ok := seen["noise"]; ok {
			if p.Noise, err = parseAxisEntry(e); err != nil {
				return nil, err
			}
		}
	}
	e, ok := seen["energy"]
	if !ok {
		return nil, fmt.Errorf("%s: missing required keyword \"energy\"", missingWhere)
	}
	if p.Energy, err = parseAxisEntry(e); err != nil {
		return nil, err
	}
	// Energies are searched in ascending order along a chain; plan order follows.
	slices.Sort(p.Energy.Values)
	if err := p.parseSettings(seen, missingWhere); err != nil {
		return nil, err
	}
	if p.Settings.Family == "general" && math.IsInf(p.Energy.Values[len(p.Energy.Values)-1], 1) {
		return nil, fmt.Errorf("%s: energy inf needs a phase-covariant family: family general is searched at finite energies only", e.Where)
	}
	if n := p.NumPoints(); n > MaxPlanPoints {
		return nil, fmt.Errorf("%s: the plan has %d points, at most %d are allowed", missingWhere, n, MaxPlanPoints)
	}
	if err := p.Validate(); err != nil {
		return nil, fmt.Errorf("%s: %v", missingWhere, err)
	}
	return p, nil
}

func requiredAxis(seen map[string]Entry, key, missingWhere string, kind gaussian.Kind) (Axis, error) {
	e, ok := seen[key]
	if !ok {
		return Axis{}, fmt.Errorf("%s: missing required keyword %q for channel %s", missingWhere, key, kind)
	}
	return parseAxisEntry(e)
}

func (p *Plan) parseSettings(seen map[string]Entry, where string) error {
	s := &p.Settings
	s.Family, s.Method = "auto", "nelder-mead"
	if e, ok := seen["family"]; ok {
		s.Family = e.Value
		if err := (Settings{Family: e.Value}).Validate(); err != nil {
			return fmt.Errorf("%s: %v", e.Where, err)
		}
	}
	if e, ok := seen["method"]; ok {
		s.Method = e.Value
		if err := (Settings{Method: e.Value}).Validate(); err != nil {
			return fmt.Errorf("%s: %v", e.Where, err)
		}
	}
	ints := []struct {
		key    string
		dst    *int
		lo, hi int
		want   string
	}{
		{"ancillas", &s.Ancillas, 0, 4, "0..4; 0 for the family's default"},
		{"keep", &s.Keep, 0, 4, "1..4, or 0 for the family's default"},
		{"starts", &s.RandomStarts, -1, 1000, fmt.Sprintf("-1 (none), 0 (default %d) or up to 1000", DefaultRandomStarts)},
		{"evaluations", &s.MaxEvaluations, 0, 100000000, "0 (default) or a positive count"},
	}
	for _, it := range ints {
		e, ok := seen[it.key]
		if !ok {
			continue
		}
		v, err := parseInt(e.Value)
		if err != nil {
			return fmt.Errorf("%s: %s %q is not an integer", e.Where, it.key, e.Value)
		}
		if v < it.lo || v > it.hi {
			return fmt.Errorf("%s: %s %d is out of range (want %s)", e.Where, it.key, v, it.want)
		}
		*it.dst = v
	}
	if e, ok := seen["seed"]; ok {
		if !isDigits(e.Value) {
			return fmt.Errorf("%s: seed %q is not a non-negative integer", e.Where, e.Value)
		}
		v, err := strconv.ParseUint(e.Value, 10, 64)
		if err != nil {
			return fmt.Errorf("%s: seed %q is out of range (want 0..%d)", e.Where, e.Value, uint64(math.MaxUint64))
		}
		p.Seed = v
	}
	if err := s.Validate(); err != nil {
		return fmt.Errorf("%s: %v", where, err)
	}
	return nil
}

func isDigits(s string) bool {
	if s == "" {
		return false
	}
	for _, c := range s {
		if c < '0' || c > '9' {
			return false
		}
	}
	return true
}

func parseInt(s string) (int, error) {
	t := strings.TrimPrefix(s, "-")
	if !isDigits(t) || len(t) > 12 {
		return 0, errors.New("not an integer")
	}
	return strconv.Atoi(s)
}

// axisDomain checks one axis value; it returns "" or the wanted domain.
func axisDomain(name string, x float64) string {
	switch name {
	case "eta":
		if !(x > 0 && x < 1) {
			return "0 < eta < 1"
		}
	case "loss-db":
		if !(x > 0) || math.IsInf(x, 0) {
			return "a finite loss > 0 dB"
		}
		if eta := math.Pow(10, -x/10); !(eta > 0) {
			return "a loss small enough that 10^(-dB/10) > 0"
		}
	case "gain":
		if !(x > 1) || math.IsInf(x, 0) {
			return "a finite G > 1"
		}
	case "xi":
		if !(x > 0) || math.IsInf(x, 0) {
			return "a finite xi > 0"
		}
	case "noise":
		if !(x >= 0) || math.IsInf(x, 0) {
			return "a finite N_B >= 0"
		}
	case "energy":
		if !(x > 0) {
			return "N_S > 0, or inf"
		}
	}
	return ""
}

func parseAxisEntry(e Entry) (Axis, error) {
	vals, err := ParseAxis(e.Key, e.Value)
	if err != nil {
		return Axis{}, fmt.Errorf("%s: %v", e.Where, err)
	}
	return Axis{Name: e.Key, Values: vals}, nil
}

// ParseAxis parses an axis value: a comma-separated list of items, each a decimal number or
// a range. "FROM:TO:COUNT" is COUNT points from FROM to TO, evenly spaced; "FROM:TO:COUNTlog"
// is COUNT points evenly spaced in log(x) (FROM, TO > 0). COUNT is 2..MaxRangeCount and
// FROM < TO; interior range points are rounded to 12 significant digits, the end points are
// exact. "inf" is allowed on the energy axis only. Every value must lie in the axis's domain
// and appear once. name is the axis keyword: eta, loss-db, gain, xi, noise or energy.
func ParseAxis(name, value string) ([]float64, error) {
	var out []float64
	seen := map[float64]bool{}
	items := strings.Split(value, ",")
	for _, raw := range items {
		item := strings.TrimSpace(raw)
		if item == "" {
			return nil, fmt.Errorf("%s: empty item in %q", name, value)
		}
		var vals []float64
		if strings.Contains(item, ":") {
			var err error
			if vals, err = parseRange(name, item); err != nil {
				return nil, err
			}
		} else {
			x, err := parseAxisNumber(name, item)
			if err != nil {
				return nil, err
			}
			vals = []float64{x}
		}
		for _, x := range vals {
			if want := axisDomain(name, x); want != "" {
				return nil, fmt.Errorf("%s %s is out of range (want %s)", name, fmtNum(x), want)
			}
			if seen[x] {
				return nil, fmt.Errorf("%s %s appears twice", name, fmtNum(x))
			}
			seen[x] = true
			if len(out) >= MaxPlanPoints {
				return nil, fmt.Errorf("%s has more than %d values", name, MaxPlanPoints)
			}
			out = append(out, x)
		}
	}
	return out, nil
}

// parseAxisNumber parses one decimal number (no hex, no underscores, no NaN), or "inf" on the
// energy axis.
func parseAxisNumber(name, s string) (float64, error) {
	if s == "inf" {
		if name == "energy" {
			return math.Inf(1), nil
		}
		return 0, fmt.Errorf("%s %q: inf is allowed only for energy", name, s)
	}
	if !isDecimal(s) {
		return 0, fmt.Errorf("%s %q is not a number", name, s)
	}
	x, err := strconv.ParseFloat(s, 64)
	if err != nil || math.IsInf(x, 0) {
		return 0, fmt.Errorf("%s %q is not a finite number", name, s)
	}
	return x, nil
}

// isDecimal reports whether s is [+-]digits[.digits][e[+-]digits] with at least one digit in
// the mantissa.
func isDecimal(s string) bool {
	i := 0
	if i < len(s) && (s[i] == '+' || s[i] == '-') {
		i++
	}
	digits := 0
	for i < len(s) && s[i] >= '0' && s[i] <= '9' {
		i++
		digits++
	}
	if i < len(s) && s[i] == '.' {
		i++
		for i < len(s) && s[i] >= '0' && s[i] <= '9' {
			i++
			digits++
		}
	}
	if digits == 0 {
		return false
	}
	if i < len(s) && (s[i] == 'e' || s[i] == 'E') {
		i++
		if i < len(s) && (s[i] == '+' || s[i] == '-') {
			i++
		}
		exp := 0
		for i < len(s) && s[i] >= '0' && s[i] <= '9' {
			i++
			exp++
		}
		if exp == 0 || exp > 4 {
			return false
		}
	}
	return i == len(s)
}

func parseRange(name, item string) ([]float64, error) {
	parts := strings.Split(item, ":")
	if len(parts) != 3 {
		return nil, fmt.Errorf("%s range %q: want FROM:TO:COUNT or FROM:TO:COUNTlog", name, item)
	}
	from, err := parseAxisNumber(name, strings.TrimSpace(parts[0]))
	if err != nil || math.IsInf(from, 0) {
		return nil, fmt.Errorf("%s range %q: FROM is not a finite number", name, item)
	}
	to, err := parseAxisNumber(name, strings.TrimSpace(parts[1]))
	if err != nil || math.IsInf(to, 0) {
		return nil, fmt.Errorf("%s range %q: TO is not a finite number", name, item)
	}
	cs := strings.TrimSpace(parts[2])
	logScale := strings.HasSuffix(cs, "log")
	cs = strings.TrimSuffix(cs, "log")
	if !isDigits(cs) || len(cs) > 6 {
		return nil, fmt.Errorf("%s range %q: COUNT %q is not a whole number", name, item, cs)
	}
	n, _ := strconv.Atoi(cs)
	if n < 2 || n > MaxRangeCount {
		return nil, fmt.Errorf("%s range %q: COUNT %d is out of range (want 2..%d)", name, item, n, MaxRangeCount)
	}
	if !(from < to) {
		return nil, fmt.Errorf("%s range %q: want FROM < TO", name, item)
	}
	if logScale && !(from > 0) {
		return nil, fmt.Errorf("%s range %q: a log range needs FROM > 0", name, item)
	}
	out := make([]float64, n)
	for i := range out {
		f := float64(i) / float64(n-1)
		var x float64
		switch {
		case i == 0:
			x = from
		case i == n-1:
			x = to
		case logScale:
			x = math.Exp(math.Log(from) + f*(math.Log(to)-math.Log(from)))
		default:
			x = from + f*(to-from)
		}
		if i > 0 && i < n-1 {
			x, _ = strconv.ParseFloat(strconv.FormatFloat(x, 'g', rangeDigits, 64), 64)
		}
		out[i] = x
	}
	for i := 1; i < n; i++ {
		if !(out[i] > out[i-1]) {
			return nil, fmt.Errorf("%s range %q: points closer than %d significant digits", name, item, rangeDigits)
		}
	}
	return out, nil
}

// NumPoints is the number of grid points.
func (p *Plan) NumPoints() int {
	n := len(p.Param.Values) * len(p.Energy.Values)
	if len(p.Noise.Values) > 0 {
		n *= len(p.Noise.Values)
	}
	return n
}

// model returns the channel of parameter value a and noise nb.
func (p *Plan) model(a, nb float64) gaussian.Model {
	m := gaussian.Model{Kind: p.Channel}
	switch p.Param.Name {
	case "eta":
		m.Eta, m.NB = a, nb
	case "loss-db":
		m.Eta, m.NB = math.Pow(10, -a/10), nb
	case "gain":
		m.Gain, m.NB = a, nb
	case "xi":
		m.Xi = a
	}
	return m
}

// Points expands the plan in plan order: the channel-parameter axis (eta, loss-db, gain or
// xi) outermost in the order given, then noise in the order given, then energy ascending
// with inf last. Points sharing the channel parameters are therefore contiguous and form
// the chains.
func (p *Plan) Points() []PlanPoint {
	noise := p.Noise.Values
	if len(noise) == 0 {
		noise = []float64{0}
	}
	out := make([]PlanPoint, 0, p.NumPoints())
	for _, a := range p.Param.Values {
		for _, nb := range noise {
			m := p.model(a, nb)
			breaking := squash.EntanglementBreaking(m)
			db := math.NaN()
			if p.Param.Name == "loss-db" {
				db = a
			}
			for _, ns := range p.Energy.Values {
				out = append(out, PlanPoint{Index: len(out), Point: Point{Model: m, Energy: ns},
					LossDB: db, Breaking: breaking})
			}
		}
	}
	return out
}

// ChainKey is the channel part of a point's key: Key without the energy.
func ChainKey(p Point) string {
	k := p.Key()
	if i := strings.LastIndex(k, " ns="); i >= 0 {
		return k[:i]
	}
	return k
}

// Chains groups the plan's points into chains, in plan order.
func (p *Plan) Chains() []Chain {
	var out []Chain
	for _, pp := range p.Points() {
		k := ChainKey(pp.Point)
		if len(out) == 0 || out[len(out)-1].Key != k {
			out = append(out, Chain{Key: k, Breaking: pp.Breaking})
		}
		c := &out[len(out)-1]
		c.Points = append(c.Points, pp)
	}
	return out
}

// Validate checks that two points of the plan do not share a key (two loss values that give
// the same transmissivity, for example) and that every point is in its domain.
func (p *Plan) Validate() error {
	seen := map[string]bool{}
	for _, pp := range p.Points() {
		if err := pp.Point.Validate(); err != nil {
			return fmt.Errorf("point %s: %v", pp.Point.Key(), err)
		}
		k := pp.Point.Key()
		if seen[k] {
			return fmt.Errorf("two grid values give the same point %s", k)
		}
		seen[k] = true
	}
	return nil
}

// axisWidth is the width at which Format wraps a long axis onto continuation lines.
const axisWidth = 96

func fmtAxis(a Axis) string {
	var b strings.Builder
	b.WriteString(a.Name + " ")
	indent := strings.Repeat(" ", len(a.Name)+1)
	col := b.Len()
	for i, x := range a.Values {
		v := fmtNum(x)
		if i > 0 {
			if col+2+len(v) > axisWidth {
				b.WriteString(",\n" + indent)
				col = len(indent)
			} else {
				b.WriteString(", ")
				col += 2
			}
		}
		b.WriteString(v)
		col += len(v)
	}
	return b.String()
}

// Format returns the plan in the text format with every axis as an explicit list and every
// setting written out: the canonical form. ParsePlan(Format()) gives the same plan back.
func (p *Plan) Format() string {
	var b strings.Builder
	fmt.Fprintf(&b, "keyceiling-plan %d\n", PlanFormatVersion)
	fmt.Fprintf(&b, "channel %s\n", p.Channel)
	fmt.Fprintln(&b, fmtAxis(p.Param))
	if len(p.Noise.Values) > 0 {
		fmt.Fprintln(&b, fmtAxis(p.Noise))
	}
	fmt.Fprintln(&b, fmtAxis(p.Energy))
	s := p.Settings
	fmt.Fprintf(&b, "family %s\nmethod %s\nancillas %d\nkeep %d\nstarts %d\nevaluations %d\nseed %d\nend\n",
		s.Family, s.Method, s.Ancillas, s.Keep, s.RandomStarts, s.MaxEvaluations, p.Seed)
	return b.String()
}

// Hash identifies the plan: the first 16 hex digits of the SHA-256 of its canonical form
// followed by the keys of its points (so that a platform computing a different
// transmissivity from the same loss in dB gives a different hash, not silently different
// points).
func (p *Plan) Hash() string {
	h := sha256.New()
	io.WriteString(h, p.Format())
	for _, pp := range p.Points() {
		io.WriteString(h, pp.Point.Key())
		io.WriteString(h, "\n")
	}
	return hex.EncodeToString(h.Sum(nil))[:16]
}
