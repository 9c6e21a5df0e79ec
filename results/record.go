// Package results writes and reads keyceiling's result files (one JSON record per line),
// and makes tables and figures from them. A record is a complete certificate: the channel,
// the energy, the squashing map (X, Y) and the settings and seed that produced it, so that
// `keyceiling check` can re-verify it without trusting anything else in the file.
package results

import (
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"strconv"

	"keyceiling/gaussian"
	"keyceiling/search"
	"keyceiling/squash"
)

// Version is keyceiling's version, written into every record.
const Version = "0.1.0"

// FormatVersion identifies the record layout; readers refuse other layouts.
const FormatVersion = 1

// Disclaimer is printed with human-readable output and stored in every record.
const Disclaimer = "Upper bounds on capacities of an idealised channel model; not a security claim for any deployed link (see the QKD standards, e.g. ETSI GS QKD and ISO/IEC 23837)."

// Num is a float64 that encodes +Inf and -Inf as the JSON strings "inf" and "-inf" (JSON
// has no infinities), and NaN as an error.
type Num float64

// MarshalJSON implements json.Marshaler.
func (x Num) MarshalJSON() ([]byte, error) {
	f := float64(x)
	switch {
	case math.IsInf(f, 1):
		return []byte(`"inf"`), nil
	case math.IsInf(f, -1):
		return []byte(`"-inf"`), nil
	case math.IsNaN(f):
		return nil, errors.New("NaN in a result record")
	}
	return strconv.AppendFloat(nil, f, 'g', -1, 64), nil
}

// UnmarshalJSON implements json.Unmarshaler.
func (x *Num) UnmarshalJSON(b []byte) error {
	switch string(b) {
	case `"inf"`:
		*x = Num(math.Inf(1))
		return nil
	case `"-inf"`:
		*x = Num(math.Inf(-1))
		return nil
	}
	var f float64
	if err := json.Unmarshal(b, &f); err != nil {
		return fmt.Errorf("not a number: %s", b)
	}
	*x = Num(f)
	return nil
}

// ChannelRecord is the channel of a record, with only its kind's parameters set.
type ChannelRecord struct {
	Kind string   `json:"kind"`
	Eta  *float64 `json:"eta,omitempty"`
	Gain *float64 `json:"gain,omitempty"`
	NB   *float64 `json:"noise,omitempty"`
	Xi   *float64 `json:"xi,omitempty"`
}

// MapRecord is a squashing map on the environment: X is 2m x 4 and Y is 2m x 2m, acting on
// the environment modes in the order of gaussian.Dilation, quadratures xpxp, shot-noise
// units (see package gaussian).
type MapRecord struct {
	X          [][]float64 `json:"X"`
	Y          [][]float64 `json:"Y"`
	KeptModes  int         `json:"kept_modes"`
	Ancillas   int         `json:"ancillas"`
	Dilation   [][]float64 `json:"dilation_symplectic"`
	AncPhotons []float64   `json:"ancilla_photons"`
}

// InputRecord is the input at which the supremum was attained.
type InputRecord struct {
	N   Num     `json:"n"`
	R   float64 `json:"r"`
	Phi float64 `json:"phi"`
}

// ReferenceRecord is one closed-form bound at the point.
type ReferenceRecord struct {
	Name   string  `json:"name"`
	Value  float64 `json:"value"`
	Upper  bool    `json:"upper"`
	Source string  `json:"source"`
}

// Record is one finished point: everything `bound --format json` prints, plus provenance.
type Record struct {
	Format     int               `json:"format"`
	Tool       string            `json:"tool"`
	Version    string            `json:"version"`
	Plan       string            `json:"plan_hash,omitempty"` // search.Plan.Hash of a sweep's record; empty from `bound`
	Key        string            `json:"key"`
	Channel    ChannelRecord     `json:"channel"`
	Energy     Num               `json:"energy"`
	Bound      float64           `json:"bound"`
	Lower      float64           `json:"lower"`
	Tightest   string            `json:"tightest"`
	Gap        float64           `json:"gap"`
	BeatsREE   bool              `json:"beats_ree"`
	References []ReferenceRecord `json:"references"`
	Map        MapRecord         `json:"map"`
	Covariant  bool              `json:"phase_covariant"`
	Family     string            `json:"family"`
	Params     []float64         `json:"params"`
	Input      InputRecord       `json:"sup_input"`
	SupMethod  string            `json:"sup_method"`
	Seed       uint64            `json:"seed"`
	Settings   search.Settings   `json:"settings"`
	Evals      int               `json:"evaluations"`
	Status     string            `json:"status"`
	StopReason string            `json:"stop_reason"`
	Stages     []search.Stage    `json:"stages"`
	Recheck    search.Recheck    `json:"recheck"`
	Seconds    float64           `json:"seconds"`
	Note       string            `json:"note"`
}

func ptr(x float64) *float64 { return &x }

// ChannelOf returns the record form of a model.
func ChannelOf(m gaussian.Model) ChannelRecord {
	c := ChannelRecord{Kind: m.Kind.String()}
	switch m.Kind {
	case gaussian.ThermalLoss:
		c.Eta, c.NB = ptr(m.Eta), ptr(m.NB)
	case gaussian.Amplifier:
		c.Gain, c.NB = ptr(m.Gain), ptr(m.NB)
	case gaussian.AdditiveNoise:
		c.Xi = ptr(m.Xi)
	}
	return c
}

// Model rebuilds the channel model, validating it.
func (c ChannelRecord) Model() (gaussian.Model, error) {
	k, err := gaussian.ParseKind(c.Kind)
	if err != nil {
		return gaussian.Model{}, err
	}
	m := gaussian.Model{Kind: k}
	need := func(p *float64, name string) (float64, error) {
		if p == nil {
			return 0, fmt.Errorf("channel %s lacks %q", c.Kind, name)
		}
		return *p, nil
	}
	switch k {
	case gaussian.ThermalLoss:
		if m.Eta, err = need(c.Eta, "eta"); err == nil {
			m.NB, err = need(c.NB, "noise")
		}
	case gaussian.Amplifier:
		if m.Gain, err = need(c.Gain, "gain"); err == nil {
			m.NB, err = need(c.NB, "noise")
		}
	case gaussian.AdditiveNoise:
		m.Xi, err = need(c.Xi, "xi")
	}
	if err != nil {
		return m, err
	}
	return m, m.Validate()
}

// NewRecord builds the record of a certified search result.
func NewRecord(res search.Result, s search.Settings, seed uint64, seconds float64) Record {
	p := res.Point
	refs := squash.References(p.Model, p.Energy)
	r := Record{
		Format: FormatVersion, Tool: "keyceiling", Version: Version, Key: p.Key(),
		Channel: ChannelOf(p.Model), Energy: Num(p.Energy), Bound: res.Bound,
		Lower: squash.BestLower(refs), Covariant: res.PhaseCovariant, Family: res.Family,
		Params: res.Params, Seed: seed, Settings: s.Effective(), Evals: res.Evaluations,
		Status: res.Status.String(), StopReason: res.StopReason, Stages: res.Stages,
		Recheck: res.Recheck, Seconds: seconds, SupMethod: res.Sup.Method,
		Input: InputRecord{N: Num(res.Sup.Input.N), R: res.Sup.Input.R, Phi: res.Sup.Input.Phi},
		Map: MapRecord{X: res.Map.X.Rows(), Y: res.Map.Y.Rows(), KeptModes: res.Map.Out,
			Ancillas: len(res.Dilation.Photons), Dilation: res.Dilation.S.Rows(),
			AncPhotons: res.Dilation.Photons},
	}
	for _, ref := range refs {
		r.References = append(r.References, ReferenceRecord{ref.Name, ref.Value, ref.Upper, ref.Source})
	}
	r.Tightest, r.Gap, r.BeatsREE = Compare(r.Bound, r.Lower, r.References)
	r.Note = Disclaimer
	return r
}

// Compare names the tightest upper bound among ours ("squashing") and the references,
// the gap between it and the best lower bound, and whether ours beats the relative-entropy
// bound.
func Compare(bound, lower float64, refs []ReferenceRecord) (tightest string, gap float64, beatsREE bool) {
	tightest, best := "squashing", bound
	beatsREE = true
	for _, ref := range refs {
		if !ref.Upper {
			continue
		}
		if ref.Name == "ree" && ref.Value <= bound {
			beatsREE = false
		}
		if ref.Value < best {
			tightest, best = ref.Name, ref.Value
		}
	}
	return tightest, best - lower, beatsREE
}
