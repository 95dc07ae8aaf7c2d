package render

import (
	"bytes"
	"encoding/xml"
	"flag"
	"image/png"
	"io"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"gonum.org/v1/plot/palette/brewer"
)

var figureDir = flag.String("figures", "", "also write the test figures into this folder, to look at them")

func sampleScatter() *Scatter {
	rng := rand.New(rand.NewPCG(20261202, 6)) // fixed seed
	s := &Scatter{Title: "Sugar against shade (invented)", XLabel: "Canopy shade (%), rank", YLabel: "Sugar (°Brix), rank", FitLabel: "isotonic fit"}
	for i := range 60 {
		s.X = append(s.X, float64(i+1))
		s.Y = append(s.Y, 60-float64(i)+rng.NormFloat64()*12)
	}
	s.FitX = []float64{1, 20, 20, 40, 40, 60}
	s.Fit = []float64{50, 50, 30, 30, 10, 10}
	return s
}

func sampleHeatmap() *Heatmap {
	nan := math.NaN()
	return &Heatmap{
		Title:  "Spearman correlations (invented)",
		Rows:   []string{"Screen time (min)", "Homework (h)", "Feels rested"},
		Cols:   []string{"Sleep (h)", "Screen time (min)", "Homework (h)"},
		Values: [][]float64{{-0.62, nan, nan}, {0.05, -0.31, nan}, {0.71, -0.48, 0.0004}},
		Legend: "Spearman's rho",
		Digits: 2,
	}
}

// TestFigures draws each figure in both formats and checks its structure:
// the SVG parses as XML with the size asked for, the title, axis labels and
// legend as text, and the expected number of marks; the PNG decodes at the
// size asked for. Pixels are not compared.
func TestFigures(t *testing.T) {
	for _, tc := range []struct {
		name  string
		plot  func(ImageFormat, float64, float64) ([]byte, error)
		texts []string
		marks int // circles (scatter points) or cells (heatmap rectangles, at least)
	}{
		{"scatter", sampleScatter().Plot, []string{"Sugar against shade (invented)", "Canopy shade (%), rank", "Sugar (°Brix), rank", "isotonic fit"}, 60},
		{"heatmap", sampleHeatmap().Plot, []string{"Spearman correlations (invented)", "Spearman's rho", "Screen time (min)", "−.62", ".71", ".00", "−.31"}, 6},
	} {
		svg, err := tc.plot(SVG, 16, 12)
		if err != nil {
			t.Fatal(err)
		}
		again, _ := tc.plot(SVG, 16, 12)
		if !bytes.Equal(svg, again) {
			t.Errorf("%s: two SVG drawings differ", tc.name)
		}
		root := parseSVG(t, svg)
		// 16 cm × 12 cm in points (72 to the inch).
		if w, h := root.attr("width"), root.attr("height"); w != "453.54pt" || h != "340.16pt" {
			t.Errorf("%s: svg size %s × %s, want 16 cm × 12 cm", tc.name, w, h)
		}
		text := root.text()
		for _, want := range tc.texts {
			if !strings.Contains(text, want) {
				t.Errorf("%s: svg lacks the text %q", tc.name, want)
			}
		}
		if tc.name == "scatter" {
			if n := root.count("circle") + root.countPaths("A"); n < tc.marks {
				t.Errorf("scatter: %d point marks, want %d", n, tc.marks)
			}
		}
		pngData, err := tc.plot(PNG, 16, 12)
		if err != nil {
			t.Fatal(err)
		}
		img, err := png.Decode(bytes.NewReader(pngData))
		if err != nil {
			t.Fatalf("%s: png: %v", tc.name, err)
		}
		// 16 cm at PNGDPI: 16/2.54 × 150 ≈ 945 pixels.
		if b := img.Bounds(); math.Abs(float64(b.Dx())-16/2.54*PNGDPI) > 2 || math.Abs(float64(b.Dy())-12/2.54*PNGDPI) > 2 {
			t.Errorf("%s: png is %d × %d pixels", tc.name, b.Dx(), b.Dy())
		}
		if *figureDir != "" {
			os.WriteFile(filepath.Join(*figureDir, tc.name+".svg"), svg, 0o644)
			os.WriteFile(filepath.Join(*figureDir, tc.name+".png"), pngData, 0o644)
		}
	}
}

func TestFigureErrors(t *testing.T) {
	s := sampleScatter()
	s.Y = s.Y[1:]
	if _, err := s.Plot(SVG, 10, 10); err == nil {
		t.Error("scatter with unequal lengths: no error")
	}
	h := sampleHeatmap()
	h.Values[1] = h.Values[1][1:]
	if _, err := h.Plot(PNG, 10, 10); err == nil {
		t.Error("heatmap with a short row: no error")
	}
	if _, err := sampleScatter().Plot(ImageFormat(0), 10, 10); err == nil {
		t.Error("invalid format: no error")
	}
}

func TestDivergingPalette(t *testing.T) {
	cs, err := divergingPalette()
	if err != nil || len(cs) != 11 {
		t.Fatalf("%d colours, %v", len(cs), err)
	}
	// ColorBrewer's own rating of RdBu, which the brewer package carries.
	if brewer.RdBu[11].ColorBlind != brewer.Good {
		t.Error("RdBu is not rated colour-blind safe")
	}
	// Blue at −1, red at +1, near-white in the middle.
	lo, mid, hi := rgb(cs[0]), rgb(cs[5]), rgb(cs[10])
	if !(lo[2] > lo[0] && hi[0] > hi[2] && mid[0] > 0xf0 && mid[1] > 0xf0 && mid[2] > 0xf0) {
		t.Errorf("palette ends %v … %v … %v", lo, mid, hi)
	}
	m := &stepMap{colors: cs, min: -1, max: 1, alpha: 1}
	if c, _ := m.At(1); c != cs[10] {
		t.Error("At(1) is not the last colour")
	}
	if c, _ := m.At(0); c != cs[5] {
		t.Error("At(0) is not the middle colour")
	}
	if _, err := m.At(1.5); err == nil {
		t.Error("At(1.5): no error")
	}
}

func rgb(c interface{ RGBA() (r, g, b, a uint32) }) [3]uint32 {
	r, g, b, _ := c.RGBA()
	return [3]uint32{r >> 8, g >> 8, b >> 8}
}

// svgNode is a parsed SVG element.
type svgNode struct {
	XMLName  xml.Name
	Attrs    []xml.Attr `xml:",any,attr"`
	Children []svgNode  `xml:",any"`
	Text     string     `xml:",chardata"`
}

func parseSVG(t *testing.T, b []byte) *svgNode {
	t.Helper()
	var n svgNode
	dec := xml.NewDecoder(bytes.NewReader(b))
	dec.CharsetReader = func(string, io.Reader) (io.Reader, error) { return nil, io.EOF }
	if err := dec.Decode(&n); err != nil {
		t.Fatalf("svg does not parse: %v", err)
	}
	if n.XMLName.Local != "svg" {
		t.Fatalf("root element %q", n.XMLName.Local)
	}
	return &n
}

func (n *svgNode) attr(k string) string {
	for _, a := range n.Attrs {
		if a.Name.Local == k {
			return a.Value
		}
	}
	return ""
}

func (n *svgNode) text() string {
	s := n.Text
	for i := range n.Children {
		s += " " + n.Children[i].text()
	}
	return s
}

func (n *svgNode) count(tag string) int {
	k := 0
	if n.XMLName.Local == tag {
		k++
	}
	for i := range n.Children {
		k += n.Children[i].count(tag)
	}
	return k
}

// countPaths counts path elements whose d holds the command cmd (gonum draws
// circles as arcs, "A").
func (n *svgNode) countPaths(cmd string) int {
	k := 0
	if n.XMLName.Local == "path" && strings.Contains(n.attr("d"), cmd) {
		k++
	}
	for i := range n.Children {
		k += n.Children[i].countPaths(cmd)
	}
	return k
}
