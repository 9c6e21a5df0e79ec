package main

import (
	"bytes"
	"encoding/xml"
	"image/png"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"keyceiling/results"
)

// svgTexts returns the text of every <text> element of an SVG file and the number of <path>
// elements.
func svgTexts(t *testing.T, data []byte) (texts []string, paths int) {
	t.Helper()
	dec := xml.NewDecoder(bytes.NewReader(data))
	var cur *strings.Builder
	for {
		tok, err := dec.Token()
		if err == io.EOF {
			return texts, paths
		}
		if err != nil {
			t.Fatalf("SVG does not parse: %v", err)
		}
		switch e := tok.(type) {
		case xml.StartElement:
			if e.Name.Local == "text" {
				cur = &strings.Builder{}
			}
			if e.Name.Local == "path" {
				paths++
			}
		case xml.CharData:
			if cur != nil {
				cur.Write(e)
			}
		case xml.EndElement:
			if e.Name.Local == "text" && cur != nil {
				texts = append(texts, cur.String())
				cur = nil
			}
		}
	}
}

func TestPlotCommandSVGAndPNG(t *testing.T) {
	dir := t.TempDir()
	svg := filepath.Join(dir, "bounds.svg")
	code, stdout, stderr := vizRun("plot", vizSample, "--kind", "bound-vs-loss", "--energy", "1", "--out", svg)
	if code != 0 || stdout != "" || stderr != "" {
		t.Fatalf("exit %d, stdout %q, stderr %q", code, stdout, stderr)
	}
	data, err := os.ReadFile(svg)
	if err != nil {
		t.Fatal(err)
	}
	texts, paths := svgTexts(t, data)
	joined := strings.Join(texts, " ")
	for _, want := range []string{"N_B = 0 (pure loss): squashing bound (ours)", "N_B = 0.01: squashing bound (ours)",
		"relative-entropy bound (ree, PLOB 2017)", "data-processing / TGW bound", "best lower bound (rci, ci)", results.Disclaimer} {
		if !strings.Contains(joined, want) {
			t.Errorf("no %q in the SVG texts %q", want, texts)
		}
	}
	// Two noise levels x (bound line + 3 reference lines) + legend lines + axes, grid, glyphs.
	if paths < 2*4+5 {
		t.Errorf("%d paths in the SVG", paths)
	}
	// The same command again gives the same bytes.
	svg2 := filepath.Join(dir, "again.svg")
	if code, _, _ := vizRun("plot", vizSample, "--kind", "bound-vs-loss", "--energy", "1", "--out", svg2); code != 0 {
		t.Fatal(code)
	}
	if again, _ := os.ReadFile(svg2); !bytes.Equal(again, data) {
		t.Error("the SVG differs between two runs")
	}

	pngPath := filepath.Join(dir, "gap.png")
	if code, _, stderr := vizRun("plot", vizSample, "--kind", "gap-map", "--energy", "inf", "--width", "6", "--height", "4", "--out", pngPath); code != 0 {
		t.Fatalf("gap-map: exit %d %s", code, stderr)
	}
	f, err := os.Open(pngPath)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	img, err := png.Decode(f)
	if err != nil {
		t.Fatal(err)
	}
	if b := img.Bounds(); b.Dx() != 6*results.PNGDPI || b.Dy() != 4*results.PNGDPI {
		t.Errorf("PNG is %v, want %dx%d", b, 6*results.PNGDPI, 4*results.PNGDPI)
	}
	colors := map[uint32]bool{}
	for y := 0; y < img.Bounds().Dy(); y += 3 {
		for x := 0; x < img.Bounds().Dx(); x += 3 {
			r, g, b, _ := img.At(x, y).RGBA()
			colors[(r>>8)<<16|(g>>8)<<8|b>>8] = true
		}
	}
	if len(colors) < 8 {
		t.Errorf("the PNG has %d colours: blank?", len(colors))
	}

	pdf := filepath.Join(dir, "cross.pdf")
	if code, _, stderr := vizRun("plot", vizSample, "--kind", "crossover", "--out", pdf); code != 0 {
		t.Fatalf("crossover: exit %d %s", code, stderr)
	}
	if b, _ := os.ReadFile(pdf); !bytes.HasPrefix(b, []byte("%PDF-")) {
		t.Error("not a PDF")
	}
	code, stdout, _ = vizRun("plot", "--help")
	if code != 0 || !strings.Contains(stdout, "Example:") || !strings.Contains(stdout, "gap-map") || !strings.Contains(stdout, results.Disclaimer) {
		t.Errorf("--help: exit %d\n%s", code, stdout)
	}
}

func TestPlotCommandBadInput(t *testing.T) {
	dir := t.TempDir()
	out := filepath.Join(dir, "fig.svg")
	for _, c := range []struct {
		args []string
		want string
	}{
		{[]string{"plot", vizSample, "--kind", "pie", "--out", out}, "--kind"},
		{[]string{"plot", vizSample, "--out", out}, "--kind is required"},
		{[]string{"plot", vizSample, "--kind", "gap-map"}, "--out"},
		{[]string{"plot", vizSample, "--kind", "gap-map", "--out", filepath.Join(dir, "fig.gif")}, "unknown figure format"},
		{[]string{"plot", vizSample, vizAmplifier, "--kind", "bound-vs-loss", "--out", out}, "one channel kind"},
		{[]string{"plot", vizAmplifier, "--kind", "bound-vs-loss", "--out", out}, "needs thermal-loss"},
		{[]string{"plot", vizSample, "--kind", "crossover", "--energy", "1", "--out", out}, "--energy does not apply"},
		{[]string{"plot", vizSample, "--kind", "gap-map", "--energy", "5", "--out", out}, "no records at N_S = 5"},
		{[]string{"plot", vizSample, "--kind", "gap-map", "--energy", "-1", "--out", out}, "out of range"},
		{[]string{"plot", vizSample, "--kind", "gap-map", "--width", "0.5", "--out", out}, "--width"},
		{[]string{"plot", "--kind", "gap-map", "--out", out}, "no result files"},
		{[]string{"plot", filepath.Join(dir, "none.jsonl"), "--kind", "gap-map", "--out", out}, "no such file"},
		{[]string{"plot", vizSample, "--kind", "gap-map", "--out", filepath.Join(dir, "missing", "fig.svg")}, "--out"},
	} {
		code, stdout, stderr := vizRun(c.args...)
		if code != 2 || stdout != "" || strings.Count(stderr, "\n") != 1 || !strings.Contains(stderr, c.want) {
			t.Errorf("%q: exit %d, stdout %q, stderr %q; want exit 2 and one line with %q", c.args, code, stdout, stderr, c.want)
		}
	}
	if entries, _ := os.ReadDir(dir); len(entries) != 0 {
		t.Errorf("failed plots left %d files", len(entries))
	}
}
