package results

import (
	"bytes"
	"encoding/xml"
	"fmt"
	"image"
	"image/color"
	"image/png"
	"io"
	"math"
	"regexp"
	"slices"
	"strings"
	"testing"

	"gonum.org/v1/plot/vg"
)

// svgContent is what a test reads from an SVG file: the text of every <text> element and
// the style of every <path>.
type svgContent struct {
	texts  []string
	styles []string
}

func parseSVG(t *testing.T, data []byte) svgContent {
	t.Helper()
	var out svgContent
	dec := xml.NewDecoder(bytes.NewReader(data))
	inText := false
	var cur strings.Builder
	for {
		tok, err := dec.Token()
		if err == io.EOF {
			break
		}
		if err != nil {
			t.Fatalf("SVG does not parse: %v", err)
		}
		switch e := tok.(type) {
		case xml.StartElement:
			switch e.Name.Local {
			case "text":
				inText = true
				cur.Reset()
			case "path":
				for _, a := range e.Attr {
					if a.Name.Local == "style" {
						out.styles = append(out.styles, a.Value)
					}
				}
			}
		case xml.CharData:
			if inText {
				cur.Write(e)
			}
		case xml.EndElement:
			if e.Name.Local == "text" {
				inText = false
				out.texts = append(out.texts, cur.String())
			}
		}
	}
	return out
}

// caption joins the text lines, as a caption wrapped over several lines reads.
func (s svgContent) joined() string { return strings.Join(s.texts, " ") }

func (s svgContent) hasText(txt string) bool { return slices.Contains(s.texts, txt) }

// strokes counts the paths stroked in colour hex (like "#0072B2"), dashed or solid.
func (s svgContent) strokes(hex string, dashed bool) int {
	n := 0
	for _, st := range s.styles {
		if strings.Contains(st, "stroke:"+hex+";") && strings.Contains(st, "stroke-dasharray") == dashed {
			n++
		}
	}
	return n
}

func figure(t *testing.T, recs []Record, spec PlotSpec, format string) []byte {
	t.Helper()
	f, err := NewFigure(recs, spec)
	if err != nil {
		t.Fatal(err)
	}
	b, err := f.Render(format)
	if err != nil {
		t.Fatal(err)
	}
	return b
}

func atEnergyOnly(recs []Record, e float64) []Record {
	var out []Record
	for _, r := range recs {
		if float64(r.Energy) == e {
			out = append(out, r)
		}
	}
	return out
}

func TestPlotBoundVsLossSVG(t *testing.T) {
	recs := loadSample(t)
	spec := PlotSpec{Kind: "bound-vs-loss", Energy: 1}
	svg := figure(t, recs, spec, "svg")
	if again := figure(t, recs, spec, "svg"); !bytes.Equal(svg, again) {
		t.Error("two renderings of the same records differ")
	}
	c := parseSVG(t, svg)
	for _, want := range []string{
		"N_B = 0 (pure loss): squashing bound (ours)", "N_B = 0.01: squashing bound (ours)",
		"relative-entropy bound (ree, PLOB 2017)", "data-processing / TGW bound", "best lower bound (rci, ci)",
		"loss (dB) = −10 log10 η", "bits per channel use (log scale)", "input energy N_S = 1",
	} {
		if !c.hasText(want) {
			t.Errorf("no text %q in the SVG; texts: %q", want, c.texts)
		}
	}
	if !strings.Contains(c.joined(), Disclaimer) {
		t.Errorf("the caption lacks the disclaimer: %q", c.joined())
	}
	// Each noise level: a solid line of our bound (plus its legend line) and three dashed
	// reference lines (ree, data-processing/TGW, lower), unless a reference is 0 somewhere
	// (not drawn on a log axis), which does not happen at these points and N_S = 1.
	for i, nb := range []float64{0, 0.01} {
		hex := hexOf(seriesColors[i])
		if n := c.strokes(hex, false); n < 2 {
			t.Errorf("N_B = %v: %d solid paths in %s, want a line and its legend entry", nb, n, hex)
		}
		if n := c.strokes(hex, true); n != 3 {
			t.Errorf("N_B = %v: %d dashed paths in %s, want 3 (ree, data-processing, lower)", nb, n, hex)
		}
	}
	if n := c.strokes("#000000", true); n != 3 {
		t.Errorf("%d dashed black legend lines, want 3", n)
	}
	if c.strokes(hexOf(seriesColors[2]), false) != 0 {
		t.Error("a third series is drawn, but the records have two noise levels")
	}
}

// hexOf is the colour as the SVG writes it.
func hexOf(c color.Color) string {
	r, g, b, _ := c.RGBA()
	return fmt.Sprintf("#%02X%02X%02X", r>>8, g>>8, b>>8)
}

func TestPlotPNG(t *testing.T) {
	recs := loadSample(t)
	for _, spec := range []PlotSpec{
		{Kind: "bound-vs-loss", Energy: math.Inf(1)},
		{Kind: "gap-map", Energy: 1},
		{Kind: "crossover", Energy: math.NaN()},
	} {
		b := figure(t, recs, spec, "png")
		if again := figure(t, recs, spec, "png"); !bytes.Equal(b, again) {
			t.Errorf("%s: two PNG renderings differ", spec.Kind)
		}
		img, err := png.Decode(bytes.NewReader(b))
		if err != nil {
			t.Fatalf("%s: PNG does not decode: %v", spec.Kind, err)
		}
		if got, want := img.Bounds(), image.Rect(0, 0, 7*PNGDPI, 5*PNGDPI); got != want {
			t.Errorf("%s: PNG bounds %v, want %v", spec.Kind, got, want)
		}
		colors := map[[3]uint32]bool{}
		nonWhite := 0
		for y := img.Bounds().Min.Y; y < img.Bounds().Max.Y; y += 2 {
			for x := img.Bounds().Min.X; x < img.Bounds().Max.X; x += 2 {
				r, g, b, _ := img.At(x, y).RGBA()
				colors[[3]uint32{r >> 8, g >> 8, b >> 8}] = true
				if r < 0xf000 || g < 0xf000 || b < 0xf000 {
					nonWhite++
				}
			}
		}
		total := img.Bounds().Dx() * img.Bounds().Dy() / 4
		if len(colors) < 8 {
			t.Errorf("%s: only %d distinct colours", spec.Kind, len(colors))
		}
		if frac := float64(nonWhite) / float64(total); frac < 0.02 {
			t.Errorf("%s: only %.1f%% of the pixels are not white", spec.Kind, 100*frac)
		}
	}
}

func TestPlotGapMapSVG(t *testing.T) {
	recs := loadSample(t)
	c := parseSVG(t, figure(t, recs, PlotSpec{Kind: "gap-map", Energy: 1}, "svg"))
	sel := atEnergyOnly(recs, 1)
	// One label per cell: the gap to 2 significant digits.
	for _, r := range sel {
		want := fmt.Sprintf("%.2g", math.Max(0, r.Gap))
		if !c.hasText(want) {
			t.Errorf("no cell label %q for the gap %v of %s", want, r.Gap, r.Key)
		}
	}
	for _, want := range []string{"thermal noise N_B (mean photons)", "loss (dB) = −10 log10 η", "0", "0.01", "1", "3", "6", "10"} {
		if !c.hasText(want) {
			t.Errorf("no text %q; texts %q", want, c.texts)
		}
	}
	if !regexp.MustCompile(`^gap \(bits per channel use(, log scale)?\)$`).MatchString(strings.Join(filterPrefix(c.texts, "gap ("), "")) {
		t.Errorf("colour bar label missing: %q", filterPrefix(c.texts, "gap"))
	}
	if !strings.Contains(c.joined(), Disclaimer) {
		t.Error("the caption lacks the disclaimer")
	}
}

func filterPrefix(ss []string, p string) []string {
	var out []string
	for _, s := range ss {
		if strings.HasPrefix(s, p) {
			out = append(out, s)
		}
	}
	return out
}

func TestPlotCrossoverSVG(t *testing.T) {
	recs := loadSample(t)
	c := parseSVG(t, figure(t, recs, PlotSpec{Kind: "crossover", Energy: math.NaN()}, "svg"))
	for _, want := range []string{"N_B = 0 (pure loss)", "N_B = 0.01", "largest N_S with bound < ree (photons)"} {
		if !c.hasText(want) {
			t.Errorf("no text %q; texts %q", want, c.texts)
		}
	}
	if !strings.Contains(c.joined(), Disclaimer) {
		t.Error("the caption lacks the disclaimer")
	}
	// Only one energy per point: no crossover can be read.
	if _, err := NewFigure(atEnergyOnly(recs, 1), PlotSpec{Kind: "crossover"}); err == nil || !strings.Contains(err.Error(), "several energies") {
		t.Errorf("crossover of one energy: error %v", err)
	}
}

func TestPlotPDFDeterministic(t *testing.T) {
	recs := loadSample(t)
	spec := PlotSpec{Kind: "gap-map", Energy: math.Inf(1)}
	a, b := figure(t, recs, spec, "pdf"), figure(t, recs, spec, "pdf")
	if !bytes.HasPrefix(a, []byte("%PDF-")) {
		t.Fatalf("not a PDF: %q", a[:min(len(a), 20)])
	}
	if !bytes.Equal(a, b) {
		t.Error("two PDF renderings differ")
	}
}

func TestPlotErrors(t *testing.T) {
	recs := loadSample(t)
	amp, err := ReadRecordsFile(amplifierFile)
	if err != nil {
		t.Fatal(err)
	}
	several := append(atEnergyOnly(recs, 1), atEnergyOnly(recs, 3)...)
	for _, c := range []struct {
		recs []Record
		spec PlotSpec
		want string
	}{
		{recs, PlotSpec{Kind: "histogram", Energy: math.NaN()}, "unknown plot kind"},
		{append(append([]Record(nil), recs...), amp...), PlotSpec{Kind: "bound-vs-loss", Energy: math.NaN()}, "one channel kind"},
		{amp, PlotSpec{Kind: "gap-map", Energy: math.NaN()}, "needs thermal-loss records"},
		{several, PlotSpec{Kind: "bound-vs-loss", Energy: math.NaN()}, "choose one with --energy"},
		{recs, PlotSpec{Kind: "gap-map", Energy: 7}, "no records at N_S = 7"},
		{nil, PlotSpec{Kind: "gap-map", Energy: math.NaN()}, "no records"},
		{recs, PlotSpec{Kind: "bound-vs-loss", Energy: 1, Width: vg.Inch}, "out of range"},
	} {
		_, err := NewFigure(c.recs, c.spec)
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: error %v, want %q", c.spec.Kind, err, c.want)
		}
	}
	// With inf present and no --energy, bound-vs-loss shows the unconstrained records.
	f, err := NewFigure(recs, PlotSpec{Kind: "bound-vs-loss", Energy: math.NaN()})
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(f.Main.Title.Text, "unconstrained") {
		t.Errorf("default energy: title %q", f.Main.Title.Text)
	}
	if _, err := f.Render("gif"); err == nil {
		t.Error("gif: no error")
	}
}
