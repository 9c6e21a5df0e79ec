package results

import (
	"bytes"
	"fmt"
	"image/color"
	"math"
	"slices"
	"sort"
	"strconv"
	"strings"
	"time"

	"codeberg.org/go-pdf/fpdf"
	"gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/palette"
	"gonum.org/v1/plot/palette/moreland"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
	"gonum.org/v1/plot/vg/vgpdf"
	"gonum.org/v1/plot/vg/vgsvg"

	"keyceiling/gaussian"
	"keyceiling/squash"
)

// Figures. Every figure is of thermal-loss records (its x axis is the loss in dB) and carries
// a caption with Disclaimer under the plot.

// PlotKinds are the figure kinds of NewFigure.
var PlotKinds = []string{"bound-vs-loss", "gap-map", "crossover"}

// PlotKindHelp documents the figure kinds (for --help).
const PlotKindHelp = `  bound-vs-loss  bits per channel use (log scale) against loss in dB: one solid line of our
                 bound per noise level N_B, with the relative-entropy bound (ree, dashed), the
                 data-processing/TGW bound (dash-dot) and the best lower bound (dotted) in the
                 same colour; at one energy (--energy)
  gap-map        the (loss, N_B) grid coloured by the gap between the tightest upper bound
                 and the best lower bound, each cell labelled; at one energy (--energy)
  crossover      for each (loss, N_B) with records at several energies: the largest sampled
                 N_S at which our bound is below the ree bound, against loss`

// PlotFormats are the output formats of Figure.Render, chosen by the file extension. SVG
// and PNG output is byte-for-byte deterministic; so is PDF, whose dates are fixed at the Unix
// epoch.
var PlotFormats = []string{"svg", "png", "pdf"}

// PlotSpec chooses a figure.
type PlotSpec struct {
	// Kind is one of PlotKinds.
	Kind string
	// Energy selects the records of bound-vs-loss and gap-map; NaN: the only energy present,
	// else +Inf if present.
	Energy float64
	// Width and Height of the figure; zero: 7 x 5 inches.
	Width, Height vg.Length
}

// Figure is a plot ready to render: the main plot, an optional colour bar and a caption.
type Figure struct {
	Main    *plot.Plot
	Bar     *plot.Plot
	Caption string
	Width   vg.Length
	Height  vg.Length
}

// PNGDPI is the resolution of PNG output.
const PNGDPI = 150

// Okabe-Ito colours, distinguishable with the common colour-vision deficiencies.
var seriesColors = []color.Color{
	color.RGBA{0, 114, 178, 255},   // blue
	color.RGBA{213, 94, 0, 255},    // vermillion
	color.RGBA{0, 158, 115, 255},   // bluish green
	color.RGBA{204, 121, 167, 255}, // reddish purple
	color.RGBA{230, 159, 0, 255},   // orange
	color.RGBA{86, 180, 233, 255},  // sky blue
	color.RGBA{0, 0, 0, 255},       // black
}

func seriesColor(i int) color.Color { return seriesColors[i%len(seriesColors)] }

// seriesGlyphs are hollow marker shapes, so that coinciding points of two series stay visible.
var seriesGlyphs = []draw.GlyphDrawer{draw.RingGlyph{}, draw.SquareGlyph{}, draw.TriangleGlyph{},
	invertedTriangle{}, draw.PlusGlyph{}, draw.CrossGlyph{}}

func seriesGlyph(i int, col color.Color) draw.GlyphStyle {
	return draw.GlyphStyle{Color: col, Radius: vg.Points(3), Shape: seriesGlyphs[i%len(seriesGlyphs)]}
}

// Line styles of the reference curves.
var (
	dashREE   = []vg.Length{vg.Points(6), vg.Points(3)}
	dashDP    = []vg.Length{vg.Points(8), vg.Points(2.5), vg.Points(1.5), vg.Points(2.5)}
	dashLower = []vg.Length{vg.Points(1.5), vg.Points(2)}
)

// NewFigure makes a figure of the records. It fails for an unknown kind, records of another
// channel kind than thermal-loss or of mixed kinds, or too few records for the figure.
func NewFigure(recs []Record, spec PlotSpec) (*Figure, error) {
	if !slices.Contains(PlotKinds, spec.Kind) {
		return nil, fmt.Errorf("unknown plot kind %q (want %s)", spec.Kind, strings.Join(PlotKinds, ", "))
	}
	if len(recs) == 0 {
		return nil, fmt.Errorf("no records")
	}
	if err := singleKind(recs, gaussian.ThermalLoss, spec.Kind); err != nil {
		return nil, err
	}
	f := &Figure{Width: spec.Width, Height: spec.Height}
	if f.Width == 0 {
		f.Width = 7 * vg.Inch
	}
	if f.Height == 0 {
		f.Height = 5 * vg.Inch
	}
	if f.Width < 2*vg.Inch || f.Height < 2*vg.Inch || f.Width > 100*vg.Inch || f.Height > 100*vg.Inch {
		return nil, fmt.Errorf("figure size %.3g x %.3g in is out of range (want 2 to 100 inches)", f.Width/vg.Inch, f.Height/vg.Inch)
	}
	var err error
	switch spec.Kind {
	case "bound-vs-loss":
		err = f.boundVsLoss(recs, spec.Energy)
	case "gap-map":
		err = f.gapMap(recs, spec.Energy)
	case "crossover":
		err = f.crossover(recs)
	}
	if err != nil {
		return nil, err
	}
	return f, nil
}

// singleKind checks that every record is of the channel kind the figure needs.
func singleKind(recs []Record, want gaussian.Kind, fig string) error {
	var kinds []string
	for i := range recs {
		if !slices.Contains(kinds, recs[i].Channel.Kind) {
			kinds = append(kinds, recs[i].Channel.Kind)
		}
	}
	sort.Strings(kinds)
	if len(kinds) > 1 {
		return fmt.Errorf("plot %s needs records of one channel kind, found %s (select files of one kind)", fig, strings.Join(kinds, " and "))
	}
	if kinds[0] != want.String() {
		return fmt.Errorf("plot %s needs %s records (its x axis is the loss in dB), found %s", fig, want, kinds[0])
	}
	return nil
}

func fmtEnergyValue(e float64) string {
	if math.IsInf(e, 1) {
		return "inf"
	}
	return strconv.FormatFloat(e, 'g', -1, 64)
}

func energyLabel(e float64) string {
	if math.IsInf(e, 1) {
		return "unconstrained input energy (N_S → ∞)"
	}
	return "input energy N_S = " + shortParam(e)
}

// atEnergy returns the records at energy want (NaN: the only energy present, else +Inf).
func atEnergy(recs []Record, want float64, fig string) ([]Record, float64, error) {
	var es []float64
	for i := range recs {
		if e := float64(recs[i].Energy); !slices.Contains(es, e) {
			es = append(es, e)
		}
	}
	sort.Float64s(es)
	var names []string
	for _, e := range es {
		names = append(names, fmtEnergyValue(e))
	}
	if math.IsNaN(want) {
		switch {
		case len(es) == 1:
			want = es[0]
		case slices.Contains(es, math.Inf(1)):
			want = math.Inf(1)
		default:
			return nil, 0, fmt.Errorf("plot %s: records at several energies (%s): choose one with --energy", fig, strings.Join(names, ", "))
		}
	}
	var out []Record
	for i := range recs {
		if sameNumber(float64(recs[i].Energy), want) {
			out = append(out, recs[i])
		}
	}
	if len(out) == 0 {
		return nil, 0, fmt.Errorf("plot %s: no records at N_S = %s (energies present: %s)", fig, fmtEnergyValue(want), strings.Join(names, ", "))
	}
	return out, want, nil
}

// byNoise groups thermal-loss records by N_B (ascending), each group by loss (ascending).
func byNoise(recs []Record) (nbs []float64, groups [][]Record) {
	at := map[float64]int{}
	for _, r := range recs {
		nb := *r.Channel.NB
		i, ok := at[nb]
		if !ok {
			i = len(nbs)
			at[nb] = i
			nbs = append(nbs, nb)
			groups = append(groups, nil)
		}
		groups[i] = append(groups[i], r)
	}
	idx := make([]int, len(nbs))
	for i := range idx {
		idx[i] = i
	}
	sort.Slice(idx, func(a, b int) bool { return nbs[idx[a]] < nbs[idx[b]] })
	sn, sg := make([]float64, len(nbs)), make([][]Record, len(nbs))
	for k, i := range idx {
		sn[k], sg[k] = nbs[i], groups[i]
		SortRecords(sg[k])
	}
	return sn, sg
}

func noiseLabel(nb float64) string {
	if nb == 0 {
		return "N_B = 0 (pure loss)"
	}
	return "N_B = " + shortParam(nb)
}

func refValue(r *Record, names ...string) (float64, bool) {
	for _, n := range names {
		for _, ref := range r.References {
			if ref.Name == n {
				return ref.Value, true
			}
		}
	}
	return 0, false
}

// positiveSegments splits (x, y) points into runs of positive finite y (a log axis cannot
// show 0), each run one line, with y replaced by log10 y: figures draw log axes as linear
// axes of log10 y with logarithmic tick labels (gonum's LogScale misplaces a long y label).
func positiveSegments(xs, ys []float64) []plotter.XYs {
	var out []plotter.XYs
	var cur plotter.XYs
	for i := range xs {
		if ys[i] > 0 && !math.IsInf(ys[i], 0) && !math.IsNaN(ys[i]) {
			cur = append(cur, plotter.XY{X: xs[i], Y: math.Log10(ys[i])})
			continue
		}
		if len(cur) > 0 {
			out = append(out, cur)
			cur = nil
		}
	}
	if len(cur) > 0 {
		out = append(out, cur)
	}
	return out
}

func newPlot(title, xlabel, ylabel string) *plot.Plot {
	p := plot.New()
	p.Title.Text = title
	p.Title.Padding = vg.Points(8)
	p.X.Label.Text = xlabel
	p.Y.Label.Text = ylabel
	p.Legend.Left = true // bottom left: the emptiest corner of falling curves
	p.Legend.XOffs, p.Legend.YOffs = vg.Points(8), vg.Points(6)
	p.Legend.Padding = vg.Points(1.5)
	p.Legend.ThumbnailWidth = vg.Points(28)
	p.Legend.TextStyle.Font.Size = vg.Points(9)
	p.Add(plotter.NewGrid())
	return p
}

func lossOf(r *Record) float64 { return LossDB(*r.Channel.Eta) }

func (f *Figure) boundVsLoss(recs []Record, want float64) error {
	sel, e, err := atEnergy(recs, want, "bound-vs-loss")
	if err != nil {
		return err
	}
	p := newPlot("Upper bounds on the two-way secret-key capacity, thermal-loss channel\n"+energyLabel(e),
		"loss (dB) = −10 log10 η", "bits per channel use (log scale)")
	nbs, groups := byNoise(sel)
	ymin, ymax := math.Inf(1), math.Inf(-1)
	anyLine := false
	addLine := func(xs, ys []float64, sty draw.LineStyle, glyph *draw.GlyphStyle) (thumbs []plot.Thumbnailer) {
		for _, seg := range positiveSegments(xs, ys) {
			l, err := plotter.NewLine(seg)
			if err != nil {
				continue
			}
			l.LineStyle = sty
			p.Add(l)
			thumbs, anyLine = []plot.Thumbnailer{l}, true
			if len(seg) == 1 && glyph == nil { // a line of one point is invisible: mark it
				if s, err := plotter.NewScatter(seg); err == nil {
					s.GlyphStyle = draw.GlyphStyle{Color: sty.Color, Radius: vg.Points(1.5), Shape: draw.CircleGlyph{}}
					p.Add(s)
				}
			}
			for _, pt := range seg {
				ymin, ymax = math.Min(ymin, math.Pow(10, pt.Y)), math.Max(ymax, math.Pow(10, pt.Y))
			}
			if glyph != nil {
				s, err := plotter.NewScatter(seg)
				if err == nil {
					s.GlyphStyle = *glyph
					p.Add(s)
					thumbs = append(thumbs, s)
				}
			}
		}
		return thumbs
	}
	var refsUsed [3]bool
	for i, g := range groups {
		col := seriesColor(i)
		n := len(g)
		xs := make([]float64, n)
		bound, ree, dp, low := make([]float64, n), make([]float64, n), make([]float64, n), make([]float64, n)
		for k := range g {
			xs[k] = lossOf(&g[k])
			bound[k], low[k] = g[k].Bound, g[k].Lower
			var ok bool
			if ree[k], ok = refValue(&g[k], squash.RefREE); !ok {
				ree[k] = math.NaN()
			}
			if dp[k], ok = refValue(&g[k], squash.RefDataProcessing, squash.RefTGWPureLoss); !ok {
				dp[k] = math.NaN()
			}
		}
		thin := draw.LineStyle{Color: col, Width: vg.Points(1.1)}
		if addLine(xs, ree, withDashes(thin, dashREE), nil) != nil {
			refsUsed[0] = true
		}
		if addLine(xs, dp, withDashes(thin, dashDP), nil) != nil {
			refsUsed[1] = true
		}
		if addLine(xs, low, withDashes(thin, dashLower), nil) != nil {
			refsUsed[2] = true
		}
		gs := seriesGlyph(i, col)
		if th := addLine(xs, bound, draw.LineStyle{Color: col, Width: vg.Points(1.8)}, &gs); th != nil {
			p.Legend.Add(noiseLabel(nbs[i])+": squashing bound (ours)", th...)
		}
	}
	if !anyLine {
		return fmt.Errorf("plot bound-vs-loss: every value is 0 (entanglement-breaking points), nothing to draw on a log axis")
	}
	black := draw.LineStyle{Color: color.Black, Width: vg.Points(1.1)}
	legendRefs := []struct {
		label string
		dash  []vg.Length
	}{
		{"relative-entropy bound (ree, PLOB 2017)", dashREE},
		{"data-processing / TGW bound", dashDP},
		{"best lower bound (rci, ci)", dashLower},
	}
	for k, lr := range legendRefs {
		if refsUsed[k] {
			p.Legend.Add(lr.label, &plotter.Line{LineStyle: withDashes(black, lr.dash)})
		}
	}
	setLogRange(&p.Y, ymin, ymax)
	padLinear(&p.X)
	f.Main = p
	f.Caption = "Solid: certified squashing-map upper bounds (keyceiling); dashed: relative-entropy bound " +
		"(Pirandola et al. 2017); dash-dot: data-processing/TGW bound (Takeoka et al. 2014); dotted: best " +
		"lower bound (reverse/coherent information). Zeros are not drawn on the log axis. " + Disclaimer
	return nil
}

func withDashes(s draw.LineStyle, d []vg.Length) draw.LineStyle {
	s.Dashes = d
	return s
}

// setLogRange sets an axis of log10 values to show [lo, hi] (linear values) widened to 1-2-5
// steps, with logarithmic tick labels.
func setLogRange(a *plot.Axis, lo, hi float64) {
	lo, hi = stepBelow(lo), stepAbove(hi)
	if lo == hi {
		lo, hi = lo/2, hi*2
	}
	a.Min, a.Max = math.Log10(lo), math.Log10(hi)
	a.Tick.Marker = log10Ticker{}
}

var steps125 = []float64{1, 2, 5, 10}

func stepBelow(x float64) float64 {
	k := math.Floor(math.Log10(x))
	for i := len(steps125) - 1; i >= 0; i-- {
		if v := decimal(steps125[i], k); v <= x*(1+1e-12) {
			return v
		}
	}
	return decimal(1, k-1)
}

func stepAbove(x float64) float64 {
	k := math.Floor(math.Log10(x))
	for _, m := range steps125 {
		if v := decimal(m, k); v >= x*(1-1e-12) {
			return v
		}
	}
	return decimal(1, k+1)
}

// decimal returns m * 10^k rounded to the nearest float64 (so 3e-1 is 0.3, not 0.30000000000000004).
func decimal(m, k float64) float64 {
	v, _ := strconv.ParseFloat(fmt.Sprintf("%ge%d", m, int(k)), 64)
	return v
}

// logTicker labels powers of ten, and also 2 and 5 times them when the axis spans fewer than
// three decades; minor ticks at the other integers times powers of ten.
type logTicker struct{}

func (logTicker) Ticks(lo, hi float64) []plot.Tick {
	if !(lo > 0) || !(hi > lo) {
		return nil
	}
	labelled := []float64{1}
	if hi/lo < 1000 {
		labelled = []float64{1, 2, 5}
	}
	var ticks []plot.Tick
	for k := math.Floor(math.Log10(lo)); k <= math.Ceil(math.Log10(hi)); k++ {
		for m := 1.0; m <= 9; m++ {
			v := decimal(m, k)
			if v < lo*(1-1e-9) || v > hi*(1+1e-9) {
				continue
			}
			t := plot.Tick{Value: v}
			if slices.Contains(labelled, m) {
				t.Label = strconv.FormatFloat(v, 'g', -1, 64)
			}
			ticks = append(ticks, t)
		}
	}
	return ticks
}

// gridAxis is the categorical axis of a gap map: the distinct values in order.
type gridAxis []float64

func (g gridAxis) index(v float64) int {
	for i, x := range g {
		if x == v {
			return i
		}
	}
	return -1
}

type gapGrid struct {
	z          [][]float64 // z[col][row]
	cols, rows int
}

func (g *gapGrid) Dims() (int, int)        { return g.cols, g.rows }
func (g *gapGrid) Z(c, r int) float64      { return g.z[c][r] }
func (g *gapGrid) X(c int) float64         { return float64(c) }
func (g *gapGrid) Y(r int) float64         { return float64(r) }
func (g *gapGrid) Min() (m float64)        { return g.extreme(math.Min, math.Inf(1)) }
func (g *gapGrid) Max() (m float64)        { return g.extreme(math.Max, math.Inf(-1)) }
func (g *gapGrid) set(c, r int, v float64) { g.z[c][r] = v }
func (g *gapGrid) extreme(f func(a, b float64) float64, m float64) float64 {
	for _, col := range g.z {
		for _, v := range col {
			if !math.IsNaN(v) {
				m = f(m, v)
			}
		}
	}
	return m
}

// categoryTicks labels the indices 0..n-1 with labels, thinning them to at most about 12.
func categoryTicks(labels []string) plot.ConstantTicks {
	step := max(1, (len(labels)+11)/12)
	var ticks plot.ConstantTicks
	for i, l := range labels {
		t := plot.Tick{Value: float64(i)}
		if i%step == 0 {
			t.Label = l
		}
		ticks = append(ticks, t)
	}
	return ticks
}

func (f *Figure) gapMap(recs []Record, want float64) error {
	sel, e, err := atEnergy(recs, want, "gap-map")
	if err != nil {
		return err
	}
	var etas, nbs gridAxis
	for i := range sel {
		if eta := *sel[i].Channel.Eta; etas.index(eta) < 0 {
			etas = append(etas, eta)
		}
		if nb := *sel[i].Channel.NB; nbs.index(nb) < 0 {
			nbs = append(nbs, nb)
		}
	}
	sort.Sort(sort.Reverse(sort.Float64Slice(etas))) // loss ascending
	sort.Float64s(nbs)
	g := &gapGrid{cols: len(etas), rows: len(nbs)}
	g.z = make([][]float64, g.cols)
	for c := range g.z {
		g.z[c] = make([]float64, g.rows)
		for r := range g.z[c] {
			g.z[c][r] = math.NaN()
		}
	}
	for i := range sel {
		g.set(etas.index(*sel[i].Channel.Eta), nbs.index(*sel[i].Channel.NB), math.Max(0, sel[i].Gap))
	}
	lo, hi := g.Min(), g.Max()
	minPos := math.Inf(1)
	for _, col := range g.z {
		for _, v := range col {
			if v > 0 {
				minPos = math.Min(minPos, v)
			}
		}
	}
	// A log colour scale when the gaps span more than a factor 30.
	logScale := !math.IsInf(minPos, 1) && hi/minPos > 30
	zOf := func(v float64) float64 { return v }
	if logScale {
		zOf = func(v float64) float64 { return math.Log10(math.Max(v, minPos)) }
		lo, hi = math.Log10(minPos), math.Log10(hi)
	}
	if !(hi > lo) {
		lo, hi = lo-0.5, hi+0.5
		if !logScale && lo < 0 {
			lo, hi = 0, hi-lo
		}
	}
	zg := &gapGrid{cols: g.cols, rows: g.rows, z: make([][]float64, g.cols)}
	for c := range g.z {
		zg.z[c] = make([]float64, g.rows)
		for r, v := range g.z[c] {
			zg.z[c][r] = math.NaN()
			if !math.IsNaN(v) {
				zg.z[c][r] = zOf(v)
			}
		}
	}
	cm := gapColors()
	cm.SetMin(lo)
	cm.SetMax(hi)
	pal := cm.Palette(255)
	hm := plotter.NewHeatMap(zg, pal)
	hm.Min, hm.Max = lo, hi
	hm.NaN = color.Gray{Y: 225}
	hm.Underflow, hm.Overflow = pal.Colors()[0], pal.Colors()[len(pal.Colors())-1]

	p := plot.New()
	p.Title.Text = "Gap between the tightest upper bound and the best lower bound\nthermal-loss channel, " + energyLabel(e)
	p.Title.Padding = vg.Points(8)
	p.X.Label.Text = "loss (dB) = −10 log10 η"
	p.Y.Label.Text = "thermal noise N_B (mean photons)"
	p.Add(hm)
	var xl, yl []string
	for _, eta := range etas {
		xl = append(xl, formatCell(LossDB(eta), modeDerived, 2))
	}
	for _, nb := range nbs {
		yl = append(yl, shortParam(nb))
	}
	p.X.Tick.Marker = categoryTicks(xl)
	p.Y.Tick.Marker = categoryTicks(yl)
	if g.cols*g.rows <= 200 {
		var xys plotter.XYs
		var labels []string
		var styles []text.Style
		base := text.Style{Font: font.From(plot.DefaultFont, 8), XAlign: draw.XCenter, YAlign: draw.YCenter, Handler: plot.DefaultTextHandler}
		for c := range g.z {
			for r, v := range g.z[c] {
				if math.IsNaN(v) {
					continue
				}
				xys = append(xys, plotter.XY{X: float64(c), Y: float64(r)})
				labels = append(labels, strconv.FormatFloat(v, 'g', 2, 64))
				st := base
				st.Color = color.Black
				if cl, err := cm.At(math.Min(hi, math.Max(lo, zOf(v)))); err == nil && luminance(cl) < 0.45 {
					st.Color = color.White
				}
				styles = append(styles, st)
			}
		}
		if lab, err := plotter.NewLabels(plotter.XYLabels{XYs: xys, Labels: labels}); err == nil {
			lab.TextStyle = styles
			p.Add(lab)
		}
	}
	f.Main = p

	bar := plot.New()
	bar.Add(&plotter.ColorBar{ColorMap: cm, Colors: 255})
	bar.HideY()
	bar.X.Padding, bar.Y.Padding = 0, 0
	bar.X.Label.Text = "gap (bits per channel use)"
	bar.X.Tick.Marker = linearTicker{}
	if logScale {
		bar.X.Label.Text = "gap (bits per channel use, log scale)"
		bar.X.Tick.Marker = log10Ticker{}
	}
	f.Bar = bar
	f.Caption = "Each cell: the tightest upper bound (ours or a reference) minus the best lower bound, " +
		"in bits per channel use; grey: no record. " + Disclaimer
	return nil
}

// linearTicker puts about 5 to 10 labelled ticks at multiples of 1, 2 or 5 times a power of
// ten, with unlabelled ticks between.
type linearTicker struct{}

func (linearTicker) Ticks(lo, hi float64) []plot.Tick {
	if !(hi > lo) {
		return []plot.Tick{{Value: lo, Label: strconv.FormatFloat(lo, 'g', 4, 64)}}
	}
	span := hi - lo
	k := math.Floor(math.Log10(span / 6))
	step := decimal(1, k)
	for _, m := range []float64{1, 2, 5, 10} {
		if span/decimal(m, k) <= 10 {
			step = decimal(m, k)
			break
		}
	}
	minor := step / 2
	var ticks []plot.Tick
	for i := math.Ceil(lo/minor - 1e-9); i*minor <= hi+1e-9*span; i++ {
		v := i * minor
		t := plot.Tick{Value: v}
		if r := math.Round(v / step); math.Abs(v/step-r) < 1e-6 {
			t.Label = strconv.FormatFloat(r*step+0, 'g', 6, 64) // +0: no "-0"
		}
		ticks = append(ticks, t)
	}
	return ticks
}

// log10Ticker labels an axis in log10 units with the values 10^k (and 2, 5 times them).
type log10Ticker struct{}

func (log10Ticker) Ticks(lo, hi float64) []plot.Tick {
	t := logTicker{}.Ticks(math.Pow(10, lo), math.Pow(10, hi))
	for i := range t {
		t[i].Value = math.Log10(t[i].Value)
	}
	return t
}

// gapColors is a reversed viridis colour map (light yellow for small gaps, dark purple for
// large ones), interpolated with monotonic luminance.
func gapColors() palette.ColorMap {
	cm, err := moreland.NewLuminance([]color.Color{
		color.RGBA{68, 1, 84, 255}, color.RGBA{65, 68, 135, 255}, color.RGBA{42, 120, 142, 255},
		color.RGBA{34, 168, 132, 255}, color.RGBA{122, 209, 81, 255}, color.RGBA{253, 231, 37, 255},
	})
	if err != nil {
		panic(err) // the controls above have increasing luminance
	}
	return palette.Reverse(cm)
}

func luminance(c color.Color) float64 {
	r, g, b, _ := c.RGBA()
	return (0.2126*float64(r) + 0.7152*float64(g) + 0.0722*float64(b)) / 0xffff
}

func (f *Figure) crossover(recs []Record) error {
	type point struct {
		eta, nb  float64
		finite   []float64 // energies sampled, ascending
		beats    []bool
		inf      bool // an unconstrained record exists
		infBeats bool
	}
	var pts []*point
	find := func(eta, nb float64) *point {
		for _, p := range pts {
			if p.eta == eta && p.nb == nb {
				return p
			}
		}
		p := &point{eta: eta, nb: nb}
		pts = append(pts, p)
		return p
	}
	sorted := append([]Record(nil), recs...)
	SortRecords(sorted)
	eMin, eMax := math.Inf(1), math.Inf(-1)
	for i := range sorted {
		r := &sorted[i]
		p := find(*r.Channel.Eta, *r.Channel.NB)
		if e := float64(r.Energy); math.IsInf(e, 1) {
			p.inf, p.infBeats = true, r.BeatsREE
		} else {
			p.finite = append(p.finite, e)
			p.beats = append(p.beats, r.BeatsREE)
			eMin, eMax = math.Min(eMin, e), math.Max(eMax, e)
		}
	}
	usable := 0
	for _, p := range pts {
		if n := len(p.finite) + map[bool]int{true: 1}[p.inf]; n >= 2 && len(p.finite) >= 1 {
			usable++
		}
	}
	if usable == 0 {
		return fmt.Errorf("plot crossover needs records at several energies (at least two, one finite) for the same (loss, N_B)")
	}
	// Special values: +Inf (below ree at every sampled energy, unconstrained included) and 0
	// (below ree at no sampled energy) are drawn as triangles at the top and bottom.
	lo, hi := stepBelow(eMin/1.5), stepAbove(eMax*1.5)
	top, bottom := hi/1.25, lo*1.25
	var nbs []float64
	for _, p := range pts {
		if !slices.Contains(nbs, p.nb) {
			nbs = append(nbs, p.nb)
		}
	}
	sort.Float64s(nbs)
	p := newPlot("Input energy up to which the squashing bound is below the relative-entropy bound\nthermal-loss channel",
		"loss (dB) = −10 log10 η", "largest N_S with bound < ree (photons)")
	var anyTop, anyBottom bool
	for i, nb := range nbs {
		var tops, bottoms plotter.XYs
		var line plotter.XYs
		for _, q := range pts {
			if q.nb != nb || len(q.finite)+map[bool]int{true: 1}[q.inf] < 2 || len(q.finite) == 0 {
				continue
			}
			x := LossDB(q.eta)
			best := 0.0
			for k, e := range q.finite {
				if q.beats[k] {
					best = e
				}
			}
			switch {
			case q.inf && q.infBeats:
				tops = append(tops, plotter.XY{X: x, Y: math.Log10(top)})
			case best == 0:
				bottoms = append(bottoms, plotter.XY{X: x, Y: math.Log10(bottom)})
			default:
				line = append(line, plotter.XY{X: x, Y: math.Log10(best)})
			}
		}
		col := seriesColor(i)
		for _, m := range []struct {
			xys   plotter.XYs
			shape draw.GlyphDrawer
			seen  *bool
		}{{tops, draw.PyramidGlyph{}, &anyTop}, {bottoms, filledInvertedTriangle{}, &anyBottom}} {
			if len(m.xys) == 0 {
				continue
			}
			if s, err := plotter.NewScatter(m.xys); err == nil {
				s.GlyphStyle = draw.GlyphStyle{Color: col, Radius: vg.Points(4), Shape: m.shape}
				p.Add(s)
				*m.seen = true
			}
		}
		if len(line) == 0 {
			continue
		}
		sort.Slice(line, func(a, b int) bool { return line[a].X < line[b].X })
		l, err := plotter.NewLine(line)
		if err != nil {
			continue
		}
		l.LineStyle = draw.LineStyle{Color: col, Width: vg.Points(1.8)}
		s, err := plotter.NewScatter(line)
		if err != nil {
			continue
		}
		s.GlyphStyle = seriesGlyph(i, col)
		p.Add(l, s)
		p.Legend.Add(noiseLabel(nb), l, s)
	}
	marker := func(shape draw.GlyphDrawer, label string) {
		s := &plotter.Scatter{GlyphStyle: draw.GlyphStyle{Color: color.Black, Radius: vg.Points(4), Shape: shape}}
		p.Legend.Add(label, s)
	}
	if anyTop {
		marker(draw.PyramidGlyph{}, "below ree at every sampled N_S, unconstrained included")
	}
	if anyBottom {
		marker(filledInvertedTriangle{}, "above ree at every sampled N_S")
	}
	p.Y.Min, p.Y.Max = math.Log10(lo), math.Log10(hi)
	p.Y.Tick.Marker = log10Ticker{}
	padLinear(&p.X)
	f.Main = p
	f.Caption = "For each (loss, N_B): the largest input mean photon number N_S among the records at which the " +
		"certified squashing bound is below the relative-entropy (PLOB) bound. Only the sampled energies are tested: " +
		"the bound crosses the ree bound between this N_S and the next sampled one. " + Disclaimer
	return nil
}

// padLinear widens a linear axis by 3% of its range on each side, so that markers and tick
// labels at the ends are not clipped, and gives it linearTicker ticks.
func padLinear(a *plot.Axis) {
	span := a.Max - a.Min
	if span == 0 {
		span = math.Max(1, math.Abs(a.Min))
	}
	a.Min, a.Max = a.Min-0.03*span, a.Max+0.03*span
	a.Tick.Marker = linearTicker{}
}

// invertedTriangle is a hollow downward triangle glyph; filledInvertedTriangle a filled one.
type (
	invertedTriangle       struct{}
	filledInvertedTriangle struct{}
)

func (invertedTriangle) DrawGlyph(c *draw.Canvas, sty draw.GlyphStyle, pt vg.Point) {
	c.SetLineStyle(draw.LineStyle{Color: sty.Color, Width: vg.Points(0.5)})
	c.Stroke(downTriangle(sty.Radius, pt))
}

func (filledInvertedTriangle) DrawGlyph(c *draw.Canvas, sty draw.GlyphStyle, pt vg.Point) {
	c.SetColor(sty.Color)
	c.Fill(downTriangle(sty.Radius, pt))
}

func downTriangle(r vg.Length, pt vg.Point) vg.Path {
	cos, sin := r*vg.Length(math.Cos(math.Pi/6)), r*vg.Length(math.Sin(math.Pi/6))
	p := make(vg.Path, 0, 4)
	p.Move(vg.Point{X: pt.X, Y: pt.Y - r})
	p.Line(vg.Point{X: pt.X - cos, Y: pt.Y + sin})
	p.Line(vg.Point{X: pt.X + cos, Y: pt.Y + sin})
	p.Close()
	return p
}

// Render draws the figure in format (svg, png or pdf) and returns the file's bytes.
func (f *Figure) Render(format string) ([]byte, error) {
	var c vg.CanvasWriterTo
	switch format {
	case "svg":
		c = vgsvg.New(f.Width, f.Height)
	case "png":
		c = vgimg.PngCanvas{Canvas: vgimg.NewWith(vgimg.UseWH(f.Width, f.Height), vgimg.UseDPI(PNGDPI))}
	case "pdf":
		epoch := time.Unix(0, 0).UTC()
		fpdf.SetDefaultCreationDate(epoch)
		fpdf.SetDefaultModificationDate(epoch)
		fpdf.SetDefaultCatalogSort(true)
		c = vgpdf.New(f.Width, f.Height)
	default:
		return nil, fmt.Errorf("unknown figure format %q (want %s)", format, strings.Join(PlotFormats, ", "))
	}
	dc := draw.New(c)
	dc.SetColor(color.White)
	dc.Fill(dc.Rectangle.Path())

	sty := text.Style{Color: color.Gray{Y: 40}, Font: font.From(plot.DefaultFont, 8), Handler: plot.DefaultTextHandler,
		XAlign: draw.XLeft, YAlign: draw.YBottom}
	margin := vg.Points(10)
	lines := wrapText(f.Caption, sty, f.Width-2*margin)
	lineH := sty.Height("Hg") * 1.15
	capH := lineH*vg.Length(len(lines)) + margin
	for i, l := range lines {
		dc.FillText(sty, vg.Point{X: margin, Y: margin/2 + lineH*vg.Length(len(lines)-1-i)}, l)
	}
	area := draw.Crop(dc, 0, -vg.Points(12), capH, 0) // right margin for the last tick label
	if f.Bar != nil {
		// A horizontal colour bar under the plot, as wide as its data area.
		barH := vg.Points(58)
		main := draw.Crop(area, 0, 0, barH, 0)
		f.Main.Draw(main)
		data := f.Main.DataCanvas(main)
		strip := draw.Crop(area, data.Min.X-area.Min.X, data.Max.X-area.Max.X, vg.Points(4), -(area.Max.Y - area.Min.Y - barH))
		f.Bar.Draw(strip)
	} else {
		f.Main.Draw(area)
	}
	var buf bytes.Buffer
	if _, err := c.WriteTo(&buf); err != nil {
		return nil, err
	}
	return buf.Bytes(), nil
}

// wrapText breaks s into lines no wider than width in style sty.
func wrapText(s string, sty text.Style, width vg.Length) []string {
	var lines []string
	cur := ""
	for _, w := range strings.Fields(s) {
		next := w
		if cur != "" {
			next = cur + " " + w
		}
		if cur != "" && sty.Width(next) > width {
			lines = append(lines, cur)
			cur = w
			continue
		}
		cur = next
	}
	if cur != "" {
		lines = append(lines, cur)
	}
	return lines
}
