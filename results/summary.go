package results

import (
	"bytes"
	"encoding/csv"
	"math"
	"slices"
	"strconv"

	"keyceiling/gaussian"
	"keyceiling/search"
	"keyceiling/squash"
)

// Summary statuses besides a record's own ("converged", "stopped-early").
const (
	// StatusBreaking marks an entanglement-breaking point: every two-way assisted capacity
	// is 0, the bound is 0 without a search, and there is no record.
	StatusBreaking = "entanglement-breaking"
	// StatusPending marks a point without a result yet (not reached, or its search failed).
	StatusPending = "pending"
)

// SummaryCSV is summary.csv: a header and one row per point of the plan in plan order.
// Columns: key; channel; the channel's parameters (eta, loss_db when the plan gives losses in
// dB, noise; or gain, noise; or xi); energy ("inf" for unconstrained); bound (ours); one
// column per reference bound at the point, named as in the records, upper bounds first
// (tgw-pure-loss, data-processing, ree, then rci, ci; empty where one does not apply); lower (the best lower
// bound); tightest (the smallest upper bound's name: squashing or a reference); gap
// (tightest minus lower); beats_ree; family; status.
//
// An entanglement-breaking point has bound 0, lower 0, tightest "entanglement-breaking",
// gap 0, no family and status "entanglement-breaking"; a point without a record has empty
// bound, tightest, gap, beats_ree and family and status "pending" (its references and lower
// bound are filled in). Numbers are written in the shortest form that reads back exactly.
func SummaryCSV(plan *search.Plan, recs map[string]Record) ([]byte, error) {
	points := plan.Points()
	refsOf := make([][]squash.Reference, len(points))
	var uppers, lowers []string // reference names, upper bounds first, in order of appearance
	for i, pp := range points {
		refsOf[i] = squash.References(pp.Point.Model, pp.Point.Energy)
		for _, r := range refsOf[i] {
			list := &lowers
			if r.Upper {
				list = &uppers
			}
			if !slices.Contains(*list, r.Name) {
				*list = append(*list, r.Name)
			}
		}
	}
	refNames := append(uppers, lowers...)
	var params []string
	switch plan.Channel {
	case gaussian.ThermalLoss:
		params = []string{"eta"}
		if plan.Param.Name == "loss-db" {
			params = append(params, "loss_db")
		}
		params = append(params, "noise")
	case gaussian.Amplifier:
		params = []string{"gain", "noise"}
	case gaussian.AdditiveNoise:
		params = []string{"xi"}
	}
	header := append([]string{"key", "channel"}, params...)
	header = append(header, "energy", "bound")
	header = append(header, refNames...)
	header = append(header, "lower", "tightest", "gap", "beats_ree", "family", "status")

	var b bytes.Buffer
	w := csv.NewWriter(&b)
	if err := w.Write(header); err != nil {
		return nil, err
	}
	for i, pp := range points {
		p := pp.Point
		m := p.Model
		row := []string{p.Key(), m.Kind.String()}
		for _, name := range params {
			switch name {
			case "eta":
				row = append(row, num(m.Eta))
			case "loss_db":
				row = append(row, num(pp.LossDB))
			case "noise":
				row = append(row, num(m.NB))
			case "gain":
				row = append(row, num(m.Gain))
			case "xi":
				row = append(row, num(m.Xi))
			}
		}
		row = append(row, num(p.Energy))
		rec, done := recs[p.Key()]
		refVal := map[string]string{}
		if done {
			for _, r := range rec.References {
				refVal[r.Name] = num(r.Value)
			}
		} else {
			for _, r := range refsOf[i] {
				refVal[r.Name] = num(r.Value)
			}
		}
		var bound, lower, tightest, gap, beats, family, status string
		switch {
		case done:
			bound, lower, tightest, gap = num(rec.Bound), num(rec.Lower), rec.Tightest, num(rec.Gap)
			beats, family, status = strconv.FormatBool(rec.BeatsREE), rec.Family, rec.Status
		case pp.Breaking:
			bound, lower, tightest, gap, status = "0", "0", StatusBreaking, "0", StatusBreaking
		default:
			lower, status = num(squash.BestLower(refsOf[i])), StatusPending
		}
		row = append(row, bound)
		for _, name := range refNames {
			row = append(row, refVal[name])
		}
		row = append(row, lower, tightest, gap, beats, family, status)
		if err := w.Write(row); err != nil {
			return nil, err
		}
	}
	w.Flush()
	return b.Bytes(), w.Error()
}

// num formats a number exactly and briefly; +Inf is "inf", NaN is empty.
func num(x float64) string {
	switch {
	case math.IsInf(x, 1):
		return "inf"
	case math.IsInf(x, -1):
		return "-inf"
	case math.IsNaN(x):
		return ""
	}
	return strconv.FormatFloat(x, 'g', -1, 64)
}
