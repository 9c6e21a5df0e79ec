package main

import (
	"bytes"
	"encoding/json"
	"fmt"
	"io"
	"strings"

	"github.com/spf13/pflag"

	"keyceiling/gaussian"
	"keyceiling/results"
	"keyceiling/search"
	"keyceiling/squash"
)

// maxRefsPoints bounds the grid of one refs command.
const maxRefsPoints = 100000

// refsPoint is one point of `refs --format json`.
type refsPoint struct {
	Key        string                    `json:"key"`
	Channel    results.ChannelRecord     `json:"channel"`
	Energy     results.Num               `json:"energy"`
	References []results.ReferenceRecord `json:"references"`
	BestLower  float64                   `json:"best_lower"`
	BestUpper  results.ReferenceRecord   `json:"best_upper"`
}

func runRefs(args []string, stdout, _ io.Writer) error {
	fs := newFlags("refs", "[--channel KIND] [--eta LIST | --loss-db LIST] [--gain LIST] [--noise LIST] [--xi LIST] [--energy LIST] [--format text|csv|json] [--digits N] [--out FILE]",
		"keyceiling refs --channel thermal-loss --loss-db 1,3,5,10 --noise 0,0.01 --energy 1,inf --format csv", stdout)
	var cf channelFlags
	var format, out string
	var digits int
	cf.register(fs, true)
	fs.StringVar(&format, "format", "text", "output: text (a table with the sources and the disclaimer), csv or json")
	fs.IntVar(&digits, "digits", 6, "decimals of text output; upper bounds are rounded up and lower bounds down (csv: full precision unless --digits is given; json: always full precision)")
	fs.StringVar(&out, "out", "", "write to FILE (atomically) instead of standard output")
	if err := parseFlags(fs, args); err != nil {
		return err
	}
	if fs.NArg() > 0 {
		return badInput("unexpected argument %q", fs.Arg(0))
	}
	if format != "text" && format != "csv" && format != "json" {
		return badInput("--format %q: want text, csv or json", format)
	}
	if digits < 0 || digits > 17 {
		return badInput("--digits %d is out of range (want 0 to 17)", digits)
	}
	if format == "csv" && !fs.Changed("digits") {
		digits = -1
	}
	points, err := refsGrid(cf, fs)
	if err != nil {
		return err
	}
	var recs []results.Record
	var pts []refsPoint
	for _, p := range points {
		refs, err := squash.CheckedReferences(p.Model, p.Energy)
		if err != nil {
			return fmt.Errorf("references at %s: %v", p.Key(), err)
		}
		rec := results.Record{Key: p.Key(), Channel: results.ChannelOf(p.Model), Energy: results.Num(p.Energy),
			Lower: squash.BestLower(refs)}
		for _, r := range refs {
			rec.References = append(rec.References, results.ReferenceRecord{Name: r.Name, Value: r.Value, Upper: r.Upper, Source: r.Source})
		}
		recs = append(recs, rec)
		bu := squash.BestUpperReference(refs)
		pts = append(pts, refsPoint{Key: rec.Key, Channel: rec.Channel, Energy: rec.Energy, References: rec.References,
			BestLower: rec.Lower, BestUpper: results.ReferenceRecord{Name: bu.Name, Value: bu.Value, Upper: true, Source: bu.Source}})
	}
	var buf bytes.Buffer
	if format == "json" {
		results.SortRecords(recs)
		order := map[string]int{}
		for i, r := range recs {
			order[r.Key] = i
		}
		sorted := make([]refsPoint, len(pts))
		for _, p := range pts {
			sorted[order[p.Key]] = p
		}
		enc := json.NewEncoder(&buf)
		enc.SetIndent("", "  ")
		if err := enc.Encode(struct {
			Tool    string      `json:"tool"`
			Version string      `json:"version"`
			Note    string      `json:"note"`
			Points  []refsPoint `json:"points"`
		}{"keyceiling", results.Version, results.Disclaimer, sorted}); err != nil {
			return err
		}
		return writeOutput(out, buf.Bytes(), stdout)
	}
	cols := refsColumns(points[0].Model.Kind)
	seen := map[string]bool{}
	for _, r := range recs {
		for _, ref := range r.References {
			seen[ref.Name] = true
		}
	}
	for _, name := range []string{squash.RefTGWPureLoss, squash.RefDataProcessing, squash.RefREE, squash.RefRCI, squash.RefCI} {
		if seen[name] {
			cols = append(cols, "ref:"+name)
		}
	}
	t, err := results.BuildTable(recs, results.TableSpec{Columns: cols})
	if err != nil {
		return err
	}
	if err := t.Write(&buf, format, digits); err != nil {
		return err
	}
	return writeOutput(out, buf.Bytes(), stdout)
}

// refsColumns are the parameter columns of a channel kind.
func refsColumns(k gaussian.Kind) []string {
	switch k {
	case gaussian.ThermalLoss:
		return []string{"eta", "loss-db", "noise", "energy"}
	case gaussian.Amplifier:
		return []string{"gain", "noise", "energy"}
	}
	return []string{"xi", "energy"}
}

// splitList splits a comma list; an empty flag stays one empty value (so that the channel
// flags report it as missing).
func splitList(name, s string) ([]string, error) {
	if s == "" {
		return []string{""}, nil
	}
	parts := strings.Split(s, ",")
	for i := range parts {
		parts[i] = strings.TrimSpace(parts[i])
		if parts[i] == "" {
			return nil, badInput("--%s %q: empty item in the list", name, s)
		}
	}
	return parts, nil
}

// refsGrid expands comma lists of the channel flags into the points of their product, each
// validated as by the bound command.
func refsGrid(cf channelFlags, fs *pflag.FlagSet) ([]search.Point, error) {
	lists := map[string][]string{}
	for _, f := range []struct {
		name string
		val  string
	}{{"eta", cf.eta}, {"loss-db", cf.lossDB}, {"gain", cf.gain}, {"noise", cf.noise}, {"xi", cf.xi}, {"energy", cf.energy}} {
		l, err := splitList(f.name, f.val)
		if err != nil {
			return nil, err
		}
		lists[f.name] = l
	}
	n := 1
	for _, l := range lists {
		n *= len(l)
		if n > maxRefsPoints {
			return nil, badInput("the grid has more than %d points", maxRefsPoints)
		}
	}
	var out []search.Point
	seen := map[string]bool{}
	for _, nb := range lists["noise"] {
		for _, eta := range lists["eta"] {
			for _, db := range lists["loss-db"] {
				for _, g := range lists["gain"] {
					for _, xi := range lists["xi"] {
						for _, e := range lists["energy"] {
							one := cf
							one.noise, one.eta, one.lossDB, one.gain, one.xi, one.energy = nb, eta, db, g, xi, e
							p, err := one.point(fs)
							if err != nil {
								return nil, err
							}
							if !seen[p.Key()] { // a value listed twice
								seen[p.Key()] = true
								out = append(out, p)
							}
						}
					}
				}
			}
		}
	}
	return out, nil
}
