package main

import (
	"io"
	"math"
	"slices"
	"strings"

	"gonum.org/v1/plot/vg"

	"keyceiling/results"
)

func runPlot(args []string, stdout, _ io.Writer) error {
	fs := newFlags("plot", "FILE|DIR... --kind KIND --out FILE.svg|.png|.pdf [--energy N_S|inf] [--width IN] [--height IN]",
		"keyceiling plot out/ --kind bound-vs-loss --energy 1 --out bounds.svg", stdout)
	var kind, out, energy string
	var width, height float64
	fs.StringVar(&kind, "kind", "", "figure kind (required):\n"+results.PlotKindHelp+"\n")
	fs.StringVar(&out, "out", "", "output file (required), written atomically; the format is its extension: svg, png or pdf.\nEvery figure's caption states: "+results.Disclaimer)
	fs.StringVar(&energy, "energy", "", "input energy N_S or inf of bound-vs-loss and gap-map (default: the only energy in the records, else inf)")
	fs.Float64Var(&width, "width", 7, "figure width in inches")
	fs.Float64Var(&height, "height", 5, "figure height in inches")
	if err := parseFlags(fs, args); err != nil {
		return err
	}
	if kind == "" {
		return badInput("--kind is required (want %s)", strings.Join(results.PlotKinds, ", "))
	}
	if !slices.Contains(results.PlotKinds, kind) {
		return badInput("--kind %q: want %s", kind, strings.Join(results.PlotKinds, ", "))
	}
	if out == "" {
		return badInput("--out FILE.svg|.png|.pdf is required")
	}
	format := outputExt(out)
	if !slices.Contains(results.PlotFormats, format) {
		return badInput("--out %s: unknown figure format %q (want a .svg, .png or .pdf file)", out, format)
	}
	for _, d := range []struct {
		name string
		v    float64
	}{{"width", width}, {"height", height}} {
		if !(d.v >= 2 && d.v <= 100) {
			return badInput("--%s %v is out of range (want 2 to 100 inches)", d.name, d.v)
		}
	}
	spec := results.PlotSpec{Kind: kind, Energy: math.NaN(), Width: vg.Length(width) * vg.Inch, Height: vg.Length(height) * vg.Inch}
	if energy != "" {
		if kind == "crossover" {
			return badInput("--energy does not apply to --kind crossover (it uses every energy)")
		}
		e, err := parseNumber("energy", energy, true)
		if err != nil {
			return err
		}
		if e <= 0 {
			return badInput("--energy %v is out of range (want N_S > 0, or inf)", e)
		}
		spec.Energy = e
	}
	if fs.NArg() == 0 {
		return badInput("no result files given (want FILE|DIR...)")
	}
	recs, err := results.CollectRecords(fs.Args())
	if err != nil {
		return badInput("%v", err)
	}
	fig, err := results.NewFigure(recs, spec)
	if err != nil {
		return badInput("%v", err)
	}
	data, err := fig.Render(format)
	if err != nil {
		return err
	}
	return writeOutput(out, data, stdout)
}
