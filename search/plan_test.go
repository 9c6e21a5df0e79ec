package search

import (
	"math"
	"os"
	"path/filepath"
	"reflect"
	"slices"
	"strings"
	"testing"

	"keyceiling/gaussian"
)

func mustParse(t *testing.T, text string) *Plan {
	t.Helper()
	p, err := ParsePlan(strings.NewReader(text), "test.plan")
	if err != nil {
		t.Fatalf("ParsePlan: %v\n%s", err, text)
	}
	return p
}

func TestParseAxis(t *testing.T) {
	inf := math.Inf(1)
	cases := []struct {
		name, value string
		want        []float64
	}{
		{"eta", "0.1,0.5,0.9", []float64{0.1, 0.5, 0.9}},
		{"eta", " 0.1 , 0.5 ", []float64{0.1, 0.5}},
		{"noise", "1:10:5", []float64{1, 3.25, 5.5, 7.75, 10}},
		{"noise", "0:1:3", []float64{0, 0.5, 1}},
		{"energy", "0.01:10:7log", []float64{0.01, 0.0316227766017, 0.1, 0.316227766017, 1, 3.16227766017, 10}},
		{"energy", "1, inf", []float64{1, inf}},
		{"energy", "0.5, 1:4:4, inf", []float64{0.5, 1, 2, 3, 4, inf}},
		{"loss-db", "1e1, 2.5E-1", []float64{10, 0.25}},
		{"gain", "1.5:3:2", []float64{1.5, 3}},
		{"xi", "+0.5", []float64{0.5}},
	}
	for _, c := range cases {
		got, err := ParseAxis(c.name, c.value)
		if err != nil {
			t.Errorf("%s %q: %v", c.name, c.value, err)
			continue
		}
		if !reflect.DeepEqual(got, c.want) {
			t.Errorf("%s %q = %v, want %v", c.name, c.value, got, c.want)
		}
	}
}

func TestParseAxisErrors(t *testing.T) {
	cases := []struct{ name, value, want string }{
		{"eta", "1.5", "out of range"},
		{"eta", "0", "out of range"},
		{"eta", "abc", "not a number"},
		{"eta", "nan", "not a number"},
		{"eta", "NaN", "not a number"},
		{"eta", "inf", "only for energy"},
		{"eta", "0x1p-2", "not a number"},
		{"eta", "1_0", "not a number"},
		{"eta", "0.5,,0.6", "empty item"},
		{"eta", "0.5,", "empty item"},
		{"eta", "0.5, 0.5", "appears twice"},
		{"eta", "0.1:0.5:3, 0.3", "appears twice"},
		{"energy", "-1", "out of range"},
		{"energy", "0", "out of range"},
		{"energy", "1e999", "not a finite number"},
		{"energy", "1:inf:3", "TO is not a finite"},
		{"noise", "-0.1", "out of range"},
		{"noise", "1:10", "want FROM:TO:COUNT"},
		{"noise", "1:10:5:2", "want FROM:TO:COUNT"},
		{"noise", "1:10:1", "COUNT 1 is out of range"},
		{"noise", "1:10:x", "not a whole number"},
		{"noise", "1:10:5lin", "not a whole number"},
		{"noise", "10:1:5", "FROM < TO"},
		{"noise", "0:1:5log", "log range needs FROM > 0"},
		{"noise", "1:10:10001", "out of range"},
		{"gain", "1", "out of range"},
		{"xi", "0", "out of range"},
		{"loss-db", "0", "out of range"},
		{"loss-db", "5000", "out of range"},
		{"noise", "1:1.000000000001:3", "closer than"},
	}
	for _, c := range cases {
		_, err := ParseAxis(c.name, c.value)
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s %q: error %v, want one containing %q", c.name, c.value, err, c.want)
		}
	}
}

func TestParsePlanFiles(t *testing.T) {
	files, err := filepath.Glob("../testdata/plans/*.plan")
	if err != nil || len(files) == 0 {
		t.Fatalf("no plan files: %v", err)
	}
	for _, f := range files {
		data, err := os.ReadFile(f)
		if err != nil {
			t.Fatal(err)
		}
		p, err := ParsePlan(strings.NewReader(string(data)), filepath.Base(f))
		bad := strings.HasPrefix(filepath.Base(f), "bad-")
		if bad {
			if err == nil {
				t.Errorf("%s: parsed, want an error", f)
			} else if !strings.HasPrefix(err.Error(), filepath.Base(f)+":") || strings.Contains(err.Error(), "\n") {
				t.Errorf("%s: error %q does not name file:line on one line", f, err)
			}
			continue
		}
		if err != nil {
			t.Errorf("%s: %v", f, err)
			continue
		}
		// The canonical form parses back to the same plan, format and hash.
		q := mustParse(t, p.Format())
		if !reflect.DeepEqual(p, q) || p.Format() != q.Format() || p.Hash() != q.Hash() {
			t.Errorf("%s: canonical form does not round-trip:\n%s\n%s", f, p.Format(), q.Format())
		}
	}
}

func TestPlanExpansion(t *testing.T) {
	data, err := os.ReadFile("../testdata/plans/grid.plan")
	if err != nil {
		t.Fatal(err)
	}
	p := mustParse(t, string(data))
	if p.Channel != gaussian.ThermalLoss || p.Param.Name != "loss-db" || p.Seed != 42 ||
		p.Settings != (Settings{Family: "auto", Method: "nelder-mead", RandomStarts: 2, MaxEvaluations: 3000}) {
		t.Fatalf("plan = %+v", p)
	}
	if want := []float64{0.5, 1.25992104989, 3.17480210394, 8, 10}; !reflect.DeepEqual(p.Param.Values, want) {
		t.Errorf("loss-db = %v, want %v", p.Param.Values, want)
	}
	if want := []float64{0.01, 0.1, 1, 10, 100, math.Inf(1)}; !reflect.DeepEqual(p.Energy.Values, want) {
		t.Errorf("energy = %v, want %v (sorted, inf last)", p.Energy.Values, want)
	}
	pts := p.Points()
	if len(pts) != 5*3*6 || p.NumPoints() != len(pts) {
		t.Fatalf("%d points, want 90", len(pts))
	}
	// Plan order: loss outermost, then noise, then energy ascending.
	if k := pts[0].Point.Key(); k != "thermal-loss eta=0.8912509381337456 nb=0 ns=0.01" {
		t.Errorf("first point %s", k)
	}
	if k := pts[6].Point.Key(); k != "thermal-loss eta=0.8912509381337456 nb=0.05 ns=0.01" {
		t.Errorf("7th point %s", k)
	}
	if pts[0].LossDB != 0.5 {
		t.Errorf("LossDB = %v", pts[0].LossDB)
	}
	chains := p.Chains()
	if len(chains) != 15 {
		t.Fatalf("%d chains, want 15", len(chains))
	}
	seen := 0
	for _, c := range chains {
		if len(c.Points) != 6 {
			t.Errorf("chain %s has %d points", c.Key, len(c.Points))
		}
		for i, pp := range c.Points {
			if pp.Index != seen {
				t.Errorf("chain %s point %d has index %d, want %d (chains in plan order)", c.Key, i, pp.Index, seen)
			}
			seen++
			if ChainKey(pp.Point) != c.Key {
				t.Errorf("point %s in chain %s", pp.Point.Key(), c.Key)
			}
			if i > 0 && !(pp.Point.Energy > c.Points[i-1].Point.Energy) {
				t.Errorf("chain %s not in ascending energy", c.Key)
			}
		}
	}
	// 10 dB (eta = 0.1) with N_B = 0.1 and 0.05... eta/(1-eta) = 0.111: not breaking; check the flag
	// agrees with the threshold everywhere.
	for _, pp := range pts {
		m := pp.Point.Model
		if want := m.NB >= m.Eta/(1-m.Eta); pp.Breaking != want {
			t.Errorf("%s: Breaking = %v, want %v", pp.Point.Key(), pp.Breaking, want)
		}
	}
}

func TestEntanglementBreakingChains(t *testing.T) {
	p := mustParse(t, "keyceiling-plan 1\nchannel thermal-loss\neta 0.1, 0.5\nnoise 0.05, 0.2, 1\nenergy 1, inf\nend\n")
	var breaking []string
	for _, c := range p.Chains() {
		if c.Breaking {
			breaking = append(breaking, c.Key)
		}
		for _, pp := range c.Points {
			if pp.Breaking != c.Breaking {
				t.Errorf("point %s Breaking %v in chain Breaking %v", pp.Point.Key(), pp.Breaking, c.Breaking)
			}
		}
	}
	// eta 0.1: threshold 0.111 (0.2 and 1 break); eta 0.5: threshold 1 (1 breaks, at the threshold).
	want := []string{"thermal-loss eta=0.1 nb=0.2", "thermal-loss eta=0.1 nb=1", "thermal-loss eta=0.5 nb=1"}
	if !reflect.DeepEqual(breaking, want) {
		t.Errorf("breaking chains %v, want %v", breaking, want)
	}
}

func TestParsePlanErrors(t *testing.T) {
	const head = "keyceiling-plan 1\n"
	const ok = "channel thermal-loss\neta 0.5\nenergy 1\n"
	cases := []struct{ text, want string }{
		{"", "t.plan:1: empty plan"},
		{"# only a comment\n", "t.plan:1: empty plan"},
		{"channel thermal-loss\n", "t.plan:1: not a keyceiling plan"},
		{"keyceiling-plan 2\n", "t.plan:1: plan format \"2\""},
		{head + ok, "t.plan:4: the plan ends without its \"end\" line"},
		{head + ok + "en", "t.plan:5: unknown keyword \"en\""},
		{head + ok + "end\nseed 2\n", "t.plan:6: text after the \"end\" line"},
		{head + ok + "end 1\n", "t.plan:5: \"end\" takes no value"},
		{head + ok + "keyceiling-plan 1\nend\n", "t.plan:5: a second"},
		{head + ok + "colour blue\nend\n", "t.plan:5: unknown keyword \"colour\""},
		{head + ok + "Eta 0.4\nend\n", "t.plan:5: unknown keyword \"Eta\""},
		{head + ok + "family\nend\n", "t.plan:5: family needs a value"},
		{head + ok + "eta 0.4\nend\n", "t.plan:5: eta given twice (first at t.plan:3)"},
		{head + "channel thermal-loss\neta 1.5\nenergy 1\nend\n", "t.plan:3: eta 1.5 is out of range"},
		{head + "channel thermal-loss\neta abc\nenergy 1\nend\n", "t.plan:3: eta \"abc\" is not a number"},
		{head + "channel thermal-loss\neta 0.5\nenergy nan\nend\n", "t.plan:4: energy \"nan\" is not a number"},
		{head + "channel thermal-loss\neta 0.5\nenergy -1\nend\n", "t.plan:4: energy -1 is out of range"},
		{head + "channel thermal-loss\neta 0.5\nnoise inf\nenergy 1\nend\n", "t.plan:4: noise \"inf\": inf is allowed only for energy"},
		{head + "channel thermal-lossy\neta 0.5\nenergy 1\nend\n", "t.plan:2: unknown channel \"thermal-lossy\""},
		{head + "eta 0.5\nenergy 1\nend\n", "t.plan:4: missing required keyword \"channel\""},
		{head + "channel thermal-loss\nenergy 1\nend\n", "t.plan:4: missing required keyword \"eta\" or \"loss-db\""},
		{head + "channel thermal-loss\neta 0.5\nend\n", "t.plan:4: missing required keyword \"energy\""},
		{head + "channel amplifier\nenergy 1\nend\n", "t.plan:4: missing required keyword \"gain\""},
		{head + "channel additive\nenergy 1\nend\n", "t.plan:4: missing required keyword \"xi\""},
		{head + "channel thermal-loss\neta 0.5\nloss-db 3\nenergy 1\nend\n", "t.plan:4: give eta or loss-db, not both"},
		{head + "channel thermal-loss\neta 0.5\ngain 2\nenergy 1\nend\n", "t.plan:4: gain does not apply to channel thermal-loss"},
		{head + "channel additive\nxi 0.5\nnoise 0.1\nenergy 1\nend\n", "t.plan:4: noise does not apply to channel additive"},
		{head + ok + "family best\nend\n", "t.plan:5: unknown family \"best\""},
		{head + ok + "method newton\nend\n", "t.plan:5: unknown method \"newton\""},
		{head + ok + "starts -2\nend\n", "t.plan:5: starts -2 is out of range"},
		{head + ok + "starts 1.5\nend\n", "t.plan:5: starts \"1.5\" is not an integer"},
		{head + ok + "ancillas 9\nend\n", "t.plan:5: ancillas 9 is out of range"},
		{head + ok + "evaluations -1\nend\n", "t.plan:5: evaluations -1 is out of range"},
		{head + ok + "seed -1\nend\n", "t.plan:5: seed \"-1\" is not a non-negative integer"},
		{head + ok + "seed 99999999999999999999\nend\n", "t.plan:5: seed \"99999999999999999999\" is out of range"},
		{head + "channel thermal-loss\neta 0.5\nenergy 1, inf\nfamily general\nend\n", "t.plan:4: energy inf needs a phase-covariant family"},
		{head + "channel thermal-loss\neta 0.01:0.99:400\nnoise 0:1:400\nenergy 1\nend\n", "t.plan:6: the plan has 160000 points"},
		{head + "channel thermal-loss\neta " + strings.Repeat("0", MaxPlanLine) + "\n", "t.plan:3: line longer than"},
	}
	for _, c := range cases {
		_, err := ParsePlan(strings.NewReader(c.text), "t.plan")
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("plan %q:\n error %v\n want one containing %q", c.text, err, c.want)
			continue
		}
		if strings.Contains(err.Error(), "\n") {
			t.Errorf("error %q spans lines", err)
		}
	}
}

func TestParsePlanSyntax(t *testing.T) {
	// Comments, blank lines, tabs, CRLF line ends and a missing final newline are fine.
	text := "# header comment\r\n\r\nkeyceiling-plan 1   # version\r\nchannel\tadditive\r\n  xi   0.1 ,0.2\r\nenergy 2 # N_S\r\nend"
	p := mustParse(t, text)
	if p.Channel != gaussian.AdditiveNoise || !slices.Equal(p.Param.Values, []float64{0.1, 0.2}) ||
		len(p.Noise.Values) != 0 || p.Seed != 1 || p.Settings.Family != "auto" {
		t.Errorf("plan = %+v", p)
	}
	if n := len(p.Points()); n != 2 {
		t.Errorf("%d points", n)
	}
}

func TestPlanHash(t *testing.T) {
	a := mustParse(t, "keyceiling-plan 1\nchannel thermal-loss\neta 0.5\nenergy 1\nend\n")
	b := mustParse(t, "keyceiling-plan 1\n# same plan, written differently\nenergy 1\neta 0.50\nchannel thermal-loss\nfamily auto\nseed 1\nend\n")
	c := mustParse(t, "keyceiling-plan 1\nchannel thermal-loss\neta 0.5\nenergy 1\nseed 2\nend\n")
	if a.Hash() != b.Hash() {
		t.Errorf("equal plans have hashes %s and %s", a.Hash(), b.Hash())
	}
	if a.Hash() == c.Hash() {
		t.Errorf("plans with different seeds share the hash %s", a.Hash())
	}
	if len(a.Hash()) != 16 {
		t.Errorf("hash %q", a.Hash())
	}
}

func TestBuildPlanFromFlags(t *testing.T) {
	entries := []Entry{{"channel", "amplifier", "--channel"}, {"gain", "2,3", "--gain"},
		{"energy", "inf", "--energy"}, {"family", "tms-split", "--family"}}
	p, err := BuildPlan(entries, "command line")
	if err != nil {
		t.Fatal(err)
	}
	if p.NumPoints() != 2 || !slices.Equal(p.Noise.Values, []float64{0}) {
		t.Errorf("plan %+v", p)
	}
	_, err = BuildPlan([]Entry{{"channel", "amplifier", "--channel"}, {"gain", "0.5", "--gain"}, {"energy", "1", "--energy"}}, "command line")
	if err == nil || err.Error() != "--gain: gain 0.5 is out of range (want a finite G > 1)" {
		t.Errorf("error %v", err)
	}
}

func TestPlanContinuationLines(t *testing.T) {
	p := mustParse(t, "keyceiling-plan 1\nchannel thermal-loss\neta 0.1, 0.2,  # first\n\n  # a comment\n    0.3,\n 0.4\nenergy 1\nend\n")
	if !slices.Equal(p.Param.Values, []float64{0.1, 0.2, 0.3, 0.4}) {
		t.Errorf("eta = %v", p.Param.Values)
	}
	// A long axis is written on continuation lines and reads back.
	long := mustParse(t, "keyceiling-plan 1\nchannel thermal-loss\neta 0.1:0.2:7000\nenergy 1\nend\n")
	text := long.Format()
	for i, l := range strings.Split(text, "\n") {
		if len(l) > 120 {
			t.Fatalf("canonical line %d has %d bytes", i+1, len(l))
		}
	}
	if back := mustParse(t, text); back.Hash() != long.Hash() {
		t.Error("long plan does not round-trip")
	}
	_, err := ParsePlan(strings.NewReader("keyceiling-plan 1\nchannel thermal-loss\neta 0.1,\n"), "c.plan")
	if err == nil || !strings.Contains(err.Error(), "c.plan:3: the eta list of c.plan:3 ends with a comma but the plan ends") {
		t.Errorf("error %v", err)
	}
}
