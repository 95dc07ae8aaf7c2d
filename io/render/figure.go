package render

import (
	"bytes"
	"fmt"
	"image/color"
	"math"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/palette"
	"gonum.org/v1/plot/palette/brewer"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
	"gonum.org/v1/plot/vg/vgsvg"
)

// ImageFormat is the file format of a figure. The zero value is invalid.
type ImageFormat int

const (
	_   ImageFormat = iota
	SVG             // scalable vector graphics
	PNG             // a raster image at PNGDPI dots per inch
)

// String returns the format's word: "svg" or "png".
func (f ImageFormat) String() string {
	switch f {
	case SVG:
		return "svg"
	case PNG:
		return "png"
	}
	return fmt.Sprintf("ImageFormat(%d)", int(f))
}

// MediaType returns the format's media type, for Figure.Type.
func (f ImageFormat) MediaType() string {
	if f == PNG {
		return "image/png"
	}
	return "image/svg+xml"
}

// PNGDPI is the resolution of PNG figures: enough for a screen at twice its
// nominal density and for a draft print.
const PNGDPI = 150

// Colours of scatter plots, from the palette that M. Okabe and K. Ito
// (2008), Color Universal Design (CUD): how to make figures and
// presentations that are friendly to colorblind people, designed to stay
// distinct under every common colour-vision deficiency: blue for the points,
// vermillion for the fitted line.
var (
	okabeItoBlue       = color.NRGBA{R: 0x00, G: 0x72, B: 0xB2, A: 0xff}
	okabeItoVermillion = color.NRGBA{R: 0xD5, G: 0x5E, B: 0x00, A: 0xff}
)

// A Scatter is a scatter plot of paired values, with an optional line
// through the points of Fit (such as an isotonic fit, drawn as given).
type Scatter struct {
	Title          string
	XLabel, YLabel string
	X, Y           []float64 // the points; equal lengths
	Fit            []float64 // the fitted line: y values at FitX; nil for none
	FitX           []float64
	FitLabel       string // the line's legend entry
	// XLevels and YLevels name the values 1, 2, … of an ordinal axis
	// (its levels, low to high); nil for a numeric axis.
	XLevels, YLevels []string
}

// Plot draws s as an SVG or PNG of the given size in centimetres. Points are
// translucent so that tied points, stacked on one another, show as darker
// marks.
func (s *Scatter) Plot(f ImageFormat, widthCM, heightCM float64) ([]byte, error) {
	if len(s.X) != len(s.Y) || len(s.Fit) != len(s.FitX) {
		return nil, fmt.Errorf("plot scatter %q: %d x for %d y, %d fitted values at %d x", s.Title, len(s.X), len(s.Y), len(s.Fit), len(s.FitX))
	}
	p := plot.New()
	p.Title.Text = s.Title
	p.X.Label.Text = s.XLabel
	p.Y.Label.Text = s.YLabel
	pts := make(plotter.XYs, len(s.X))
	for i := range s.X {
		pts[i] = plotter.XY{X: s.X[i], Y: s.Y[i]}
	}
	sc, err := plotter.NewScatter(pts)
	if err != nil {
		return nil, fmt.Errorf("plot scatter %q: %w", s.Title, err)
	}
	fill := okabeItoBlue
	fill.A = 0x60
	sc.GlyphStyle.Color = fill
	sc.GlyphStyle.Shape = draw.CircleGlyph{}
	sc.GlyphStyle.Radius = vg.Points(2.5)
	p.Add(plotter.NewGrid(), sc)
	if len(s.Fit) > 0 {
		fit := make(plotter.XYs, len(s.Fit))
		for i := range s.Fit {
			fit[i] = plotter.XY{X: s.FitX[i], Y: s.Fit[i]}
		}
		line, err := plotter.NewLine(fit)
		if err != nil {
			return nil, fmt.Errorf("plot scatter %q: %w", s.Title, err)
		}
		line.LineStyle.Color = okabeItoVermillion
		line.LineStyle.Width = vg.Points(2)
		p.Add(line)
		if s.FitLabel != "" {
			p.Legend.Add(s.FitLabel, line)
			p.Legend.Top = true
		}
	}
	if s.XLevels != nil {
		p.X.Tick.Marker = levelTicks(s.XLevels)
	}
	if s.YLevels != nil {
		p.Y.Tick.Marker = levelTicks(s.YLevels)
	}
	return draw1(f, widthCM, heightCM, func(c draw.Canvas) { p.Draw(c) })
}

// levelTicks labels the positions 1…k of an ordinal axis with its levels.
func levelTicks(levels []string) plot.ConstantTicks {
	t := make(plot.ConstantTicks, len(levels))
	for i, l := range levels {
		t[i] = plot.Tick{Value: float64(i + 1), Label: l}
	}
	return t
}

// A Heatmap is a correlation matrix drawn as coloured cells, with the
// coefficient written in each. Values[r][c] is row r, column c; NaN leaves
// the cell empty (the upper triangle of a lower-triangle matrix, or an
// undefined coefficient).
type Heatmap struct {
	Title      string
	Rows, Cols []string // labels, top to bottom and left to right
	Values     [][]float64
	Legend     string // the colour bar's label, such as "Spearman's rₛ"
	Digits     int    // decimals of the numbers in the cells
}

// divergingPalette returns the 11-class "RdBu" scheme of C. A. Brewer's
// ColorBrewer (M. Harrower and C. A. Brewer (2003), ColorBrewer.org: an
// online tool for selecting colour schemes for maps, The Cartographic
// Journal 40(1), 27–37), which the scheme's own metadata rates as
// colour-blind safe, reversed so that −1 is blue and +1 red: a diverging
// palette whose light middle is a coefficient of 0. (The colours come from
// gonum's palette/brewer package, which carries the scheme and its ratings.)
func divergingPalette() ([]color.Color, error) {
	p, err := brewer.GetPalette(brewer.TypeDiverging, "RdBu", 11)
	if err != nil {
		return nil, err
	}
	cs := p.Colors()
	out := make([]color.Color, len(cs))
	for i, c := range cs {
		out[len(cs)-1-i] = c
	}
	return out, nil
}

// heatmapSteps is how many colours the heat map and its colour bar use
// between −1 and +1: steps of 0.01, fine enough to read as continuous.
const heatmapSteps = 201

// interpolate returns n colours running linearly (in sRGB) through the
// anchors, evenly spaced, the first and last being the end anchors.
func interpolate(anchors []color.Color, n int) []color.Color {
	out := make([]color.Color, n)
	for i := range out {
		t := float64(i) / float64(n-1) * float64(len(anchors)-1)
		k := min(int(t), len(anchors)-2)
		f := t - float64(k)
		a, b := color.NRGBAModel.Convert(anchors[k]).(color.NRGBA), color.NRGBAModel.Convert(anchors[k+1]).(color.NRGBA)
		mix := func(x, y uint8) uint8 { return uint8(math.Round(float64(x)*(1-f) + float64(y)*f)) }
		out[i] = color.NRGBA{R: mix(a.R, b.R), G: mix(a.G, b.G), B: mix(a.B, b.B), A: 0xff}
	}
	return out
}

// stepMap is a palette.ColorMap that maps [min, max] onto equal steps of a
// list of colours, the same steps the heat map uses, so that the colour bar
// shows exactly the colours of the cells.
type stepMap struct {
	colors   []color.Color
	min, max float64
	alpha    float64
}

func (m *stepMap) At(v float64) (color.Color, error) {
	if v < m.min || v > m.max || math.IsNaN(v) {
		return nil, palette.ErrOverflow
	}
	i := int((v - m.min) / (m.max - m.min) * float64(len(m.colors)))
	return m.colors[min(i, len(m.colors)-1)], nil
}
func (m *stepMap) Max() float64       { return m.max }
func (m *stepMap) SetMax(v float64)   { m.max = v }
func (m *stepMap) Min() float64       { return m.min }
func (m *stepMap) SetMin(v float64)   { m.min = v }
func (m *stepMap) Alpha() float64     { return m.alpha }
func (m *stepMap) SetAlpha(a float64) { m.alpha = a }
func (m *stepMap) Palette(n int) palette.Palette {
	cs := make([]color.Color, n)
	for i := range cs {
		v := m.min + (m.max-m.min)*(float64(i)+0.5)/float64(n)
		cs[i], _ = m.At(v)
	}
	return plainPalette(cs)
}

type plainPalette []color.Color

func (p plainPalette) Colors() []color.Color { return p }

// grid is a Heatmap as plotter.GridXYZ: column c at x = c, row r at
// y = rows−1−r, so the first row is drawn at the top.
type grid struct{ h *Heatmap }

func (g grid) Dims() (c, r int)   { return len(g.h.Cols), len(g.h.Rows) }
func (g grid) Z(c, r int) float64 { return g.h.Values[len(g.h.Rows)-1-r][c] }
func (g grid) X(c int) float64    { return float64(c) }
func (g grid) Y(r int) float64    { return float64(r) }

// legendWidth is the width of the colour bar's strip, in centimetres.
const legendWidth = 2.6

// Plot draws h as an SVG or PNG of the given size in centimetres: the
// matrix on the left, coloured from blue (−1) through white (0) to red (+1)
// with each coefficient written in its cell, and a colour bar on the right.
func (h *Heatmap) Plot(f ImageFormat, widthCM, heightCM float64) ([]byte, error) {
	if len(h.Values) != len(h.Rows) || len(h.Rows) == 0 || len(h.Cols) == 0 {
		return nil, fmt.Errorf("plot heatmap %q: %d rows of values for %d row labels", h.Title, len(h.Values), len(h.Rows))
	}
	for r, row := range h.Values {
		if len(row) != len(h.Cols) {
			return nil, fmt.Errorf("plot heatmap %q: row %d has %d values for %d columns", h.Title, r+1, len(row), len(h.Cols))
		}
	}
	anchors, err := divergingPalette()
	if err != nil {
		return nil, fmt.Errorf("plot heatmap %q: %w", h.Title, err)
	}
	colors := interpolate(anchors, heatmapSteps)
	cm := &stepMap{colors: colors, min: -1, max: 1, alpha: 1}

	p := plot.New()
	p.Title.Text = h.Title
	hm := plotter.NewHeatMap(grid{h}, plainPalette(colors))
	hm.Min, hm.Max = -1, 1
	hm.NaN = color.Transparent
	p.Add(hm)
	var xys plotter.XYs
	var labels []string
	for r, row := range h.Values {
		for c, v := range row {
			if math.IsNaN(v) {
				continue
			}
			xys = append(xys, plotter.XY{X: float64(c), Y: float64(len(h.Rows) - 1 - r)})
			labels = append(labels, heatmapNumber(v, h.Digits))
		}
	}
	if len(xys) > 0 {
		lab, err := plotter.NewLabels(plotter.XYLabels{XYs: xys, Labels: labels})
		if err != nil {
			return nil, fmt.Errorf("plot heatmap %q: %w", h.Title, err)
		}
		k := 0
		for _, row := range h.Values {
			for _, v := range row {
				if math.IsNaN(v) {
					continue
				}
				st := lab.TextStyle[k]
				st.XAlign, st.YAlign = draw.XCenter, draw.YCenter
				if math.Abs(v) > 0.6 { // dark cells at the ends of the palette
					st.Color = color.White
				}
				lab.TextStyle[k] = st
				k++
			}
		}
		p.Add(lab)
	}
	ticks := func(names []string, reverse bool) plot.ConstantTicks {
		var t plot.ConstantTicks
		for i, n := range names {
			v := float64(i)
			if reverse {
				v = float64(len(names) - 1 - i)
			}
			t = append(t, plot.Tick{Value: v, Label: n})
		}
		return t
	}
	p.X.Tick.Marker = ticks(h.Cols, false)
	p.Y.Tick.Marker = ticks(h.Rows, true)
	p.X.Tick.Label.Rotation = math.Pi / 6
	p.X.Tick.Label.XAlign = draw.XRight
	p.X.Tick.Label.YAlign = draw.YCenter
	p.X.Padding, p.Y.Padding = 0, 0

	bar := plot.New()
	bar.Title.Text = " " // aligns the bar with the matrix under the title
	bar.Add(&plotter.ColorBar{ColorMap: cm, Vertical: true, Colors: len(colors)})
	bar.Y.Tick.Marker = plot.ConstantTicks{{Value: -1, Label: "−1"}, {Value: -0.5, Label: "−.5"}, {Value: 0, Label: "0"}, {Value: 0.5, Label: ".5"}, {Value: 1, Label: "1"}}
	bar.HideX()
	bar.Y.Label.Text = h.Legend
	bar.Y.Padding = 0

	legend := vg.Length(legendWidth) * vg.Centimeter
	return draw1(f, widthCM, heightCM, func(c draw.Canvas) {
		p.Draw(draw.Crop(c, 0, -legend, 0, 0))
		bar.Draw(draw.Crop(c, c.Max.X-c.Min.X-legend, 0, 0, 0))
	})
}

// heatmapNumber writes a coefficient without its leading zero, as the
// tables do in the APA style, with a true minus sign.
func heatmapNumber(v float64, digits int) string {
	t := dropLeadingZero(fixed(v, digits))
	if len(t) > 0 && t[0] == '-' {
		t = "−" + t[1:]
	}
	return t
}

// draw1 draws onto a canvas of the format and size and returns the file.
func draw1(f ImageFormat, widthCM, heightCM float64, paint func(draw.Canvas)) ([]byte, error) {
	w, h := vg.Length(widthCM)*vg.Centimeter, vg.Length(heightCM)*vg.Centimeter
	var buf bytes.Buffer
	switch f {
	case SVG:
		c := vgsvg.New(w, h)
		paint(draw.New(c))
		if _, err := c.WriteTo(&buf); err != nil {
			return nil, err
		}
	case PNG:
		c := vgimg.NewWith(vgimg.UseWH(w, h), vgimg.UseDPI(PNGDPI))
		paint(draw.New(c))
		if _, err := (vgimg.PngCanvas{Canvas: c}).WriteTo(&buf); err != nil {
			return nil, err
		}
	default:
		return nil, fmt.Errorf("plot: invalid image format %s", f)
	}
	return buf.Bytes(), nil
}
