package engine

import (
	"fmt"
	"math"
	"sort"
	"strings"

	"github.com/hashicorp/hcl/v2"
	"golang.org/x/sync/errgroup"

	"concordat/engine/stats"
	"concordat/io/dataset"
	"concordat/io/render"
	"concordat/recipe"
)

// renderedFigure is a figure drawn in its file format, with the words an
// HTML report shows beside it.
type renderedFigure struct {
	format  render.ImageFormat
	data    []byte
	caption string
	alt     string
}

// renderOutputs draws every figure and lays out every table of plan, in
// recipe order (tables, then figures), ready for the Batch. Figures come
// first in the work because HTML tables embed them.
func renderOutputs(plan *recipe.Plan, byTest map[string][]Result, data map[string]*dataset.Table, groupsOf map[*recipe.Pairing][]group, repros map[string]*Reproduction, workers int) ([]renderedTable, error) {
	figs := map[string]renderedFigure{}
	var diags hcl.Diagnostics
	for _, f := range plan.Figures {
		rf, d, err := drawFigure(f, byTest[f.Test.Name], data[f.Test.Pairing.Dataset.Name], groupsOf[f.Test.Pairing])
		if err != nil {
			return nil, err
		}
		if d != nil {
			diags = append(diags, d)
			continue
		}
		figs[f.Name] = rf
	}
	if diags.HasErrors() {
		return nil, &DiagnosticsError{Diags: diags, Data: true}
	}
	// The tables are independent of each other: rendered side by side.
	out := make([]renderedTable, len(plan.Tables), len(plan.Tables)+len(plan.Figures))
	var eg errgroup.Group
	eg.SetLimit(workers)
	for i, tb := range plan.Tables {
		eg.Go(func() error {
			var rows []Result // none in a reproduction report alone (reproduce_table.go)
			if len(tb.Tests) > 0 {
				rows = byTest[tb.Tests[0].Name]
			}
			if len(tb.Tests) > 1 {
				rows = nil
				for _, t := range tb.Tests {
					rows = append(rows, byTest[t.Name]...)
				}
			}
			b, err := renderTableWith(plan, tb, rows, figs, repros)
			out[i] = renderedTable{name: tb.Name, path: tb.Path, format: tb.Format.String(), data: b}
			return err
		})
	}
	if err := eg.Wait(); err != nil {
		return nil, err
	}
	for _, f := range plan.Figures {
		out = append(out, renderedTable{name: f.Name, path: f.Path, format: f.Format, data: figs[f.Name].data})
	}
	return out, nil
}

// drawFigure draws one figure block. A group that the data does not have is
// a diagnostic pointing at the figure.
func drawFigure(f *recipe.Figure, results []Result, tbl *dataset.Table, groups []group) (renderedFigure, *hcl.Diagnostic, error) {
	var g *group
	var names []string
	for i := range groups {
		names = append(names, groups[i].name)
		if groups[i].name == f.Group {
			g = &groups[i]
		}
	}
	if g == nil {
		detail := fmt.Sprintf("Figure %q shows group %q, which the data of test %q does not have.", f.Name, f.Group, f.Test.Name)
		if s := recipe.Suggest(f.Group, names); s != "" {
			detail += fmt.Sprintf(" Did you mean %q?", s)
		}
		detail += " Its groups are: " + quoteList(names) + "."
		return renderedFigure{}, &hcl.Diagnostic{Severity: hcl.DiagError, Summary: "Unknown group", Detail: detail, Subject: f.DeclRange.Ptr()}, nil
	}
	format := render.SVG
	if f.Format == "png" {
		format = render.PNG
	}
	ds := f.Test.Pairing.Dataset
	groupNote := ""
	if f.Test.Pairing.By != "" {
		if f.Group == "all" {
			groupNote = " (all rows)"
		} else {
			groupNote = " (" + ds.LabelOf(f.Test.Pairing.By) + ": " + f.Group + ")"
		}
	}
	rf := renderedFigure{format: format}
	var err error
	switch f.Kind {
	case recipe.FigureHeatmap:
		h := heatmapOf(f, results)
		if f.Title != "" {
			h.Title = f.Title
		} else {
			h.Title += groupNote
		}
		rf.caption = h.Title
		rf.alt = fmt.Sprintf("Heat map of %s between %d variables (%s), coloured from blue for −1 through white for 0 to red for +1, with each coefficient written in its cell.",
			measureNames[f.Measure.String()], len(pairingColumns(f.Test.Pairing)), strings.Join(labelsOf(ds, pairingColumns(f.Test.Pairing)), ", "))
		rf.data, err = h.Plot(format, f.Width, f.Height)
	default:
		s := pairUp(tbl, f.Test, recipe.Pair{X: f.X, Y: f.Y}, g.rows)
		sc := &render.Scatter{XLabel: ds.LabelOf(f.X), YLabel: ds.LabelOf(f.Y)}
		what := "values"
		if f.Kind == recipe.FigureRankScatter {
			what = "ranks"
			sc.X, sc.Y = stats.Rank(s.x, stats.TieAverage), stats.Rank(s.y, stats.TieAverage)
			sc.XLabel += " (rank)"
			sc.YLabel += " (rank)"
			sc.FitX, sc.Fit = isotonicSteps(sc.X, sc.Y)
			sc.FitLabel = "monotone (isotonic) fit"
			sc.Title = "Ranks of " + ds.LabelOf(f.Y) + " against " + ds.LabelOf(f.X)
		} else {
			sc.X, sc.Y = s.x, s.y
			sc.XLevels, sc.YLevels = ds.Levels[f.X], ds.Levels[f.Y]
			sc.Title = ds.LabelOf(f.Y) + " against " + ds.LabelOf(f.X)
		}
		sc.Title += groupNote
		if f.Title != "" {
			sc.Title = f.Title
		}
		rf.caption = sc.Title + "."
		if st, ok := spearmanOf(f, results); ok {
			rf.caption += " " + st.String() + ", n = " + fmt.Sprint(len(s.x)) + "."
		}
		rf.alt = fmt.Sprintf("Scatter plot of the %s of %s (vertical) against the %s of %s (horizontal), %d points", what, ds.LabelOf(f.Y), what, ds.LabelOf(f.X), len(s.x))
		if f.Kind == recipe.FigureRankScatter {
			rf.alt += ", with a step line showing the best monotone fit"
		}
		rf.alt += "."
		rf.data, err = sc.Plot(format, f.Width, f.Height)
	}
	if err != nil {
		return renderedFigure{}, nil, fmt.Errorf("figure %q: %w", f.Name, err)
	}
	return rf, nil, nil
}

// spearmanOf is the APA statement of the figure pair's Spearman result in
// the figure's group, when the test computed one.
func spearmanOf(f *recipe.Figure, results []Result) (render.Statement, bool) {
	for _, r := range results {
		if r.Measure == "spearman" && r.Group == f.Group && (r.X == f.X && r.Y == f.Y || r.X == f.Y && r.Y == f.X) {
			st := statementOf(&recipe.Table{}, r)
			st.Lo, st.Hi, st.Adjusted = math.NaN(), math.NaN(), math.NaN()
			return st, true
		}
	}
	return render.Statement{}, false
}

// heatmapOf lays a test's results of one measure and group out as a heat
// map: a lower triangle without the diagonal for a pairing of columns (rows
// from the second variable, columns up to the last but one), a full grid
// of x down and y across for x and y lists.
func heatmapOf(f *recipe.Figure, results []Result) *render.Heatmap {
	p := f.Test.Pairing
	ds := p.Dataset
	est := map[[2]string]float64{}
	for _, r := range results {
		if r.Measure == f.Measure.String() && r.Group == f.Group {
			est[[2]string{r.X, r.Y}] = r.Estimate
			est[[2]string{r.Y, r.X}] = r.Estimate
		}
	}
	value := func(a, b string) float64 {
		if v, ok := est[[2]string{a, b}]; ok {
			return v
		}
		return math.NaN()
	}
	h := &render.Heatmap{Title: measureNames[f.Measure.String()] + ", test " + f.Test.Name, Legend: measureNames[f.Measure.String()], Digits: 2}
	if len(p.Columns) > 0 {
		vars := p.Columns
		h.Rows, h.Cols = labelsOf(ds, vars[1:]), labelsOf(ds, vars[:len(vars)-1])
		for i := 1; i < len(vars); i++ {
			row := make([]float64, len(vars)-1)
			for j := range row {
				row[j] = math.NaN()
				if j < i {
					row[j] = value(vars[i], vars[j])
				}
			}
			h.Values = append(h.Values, row)
		}
		return h
	}
	h.Rows, h.Cols = labelsOf(ds, p.X), labelsOf(ds, p.Y)
	for _, x := range p.X {
		row := make([]float64, len(p.Y))
		for j, y := range p.Y {
			row[j] = value(x, y)
		}
		h.Values = append(h.Values, row)
	}
	return h
}

func labelsOf(ds *recipe.Dataset, names []string) []string {
	out := make([]string, len(names))
	for i, n := range names {
		out[i] = ds.LabelOf(n)
	}
	return out
}

// isotonicSteps returns the best monotone fit of ry on rx as the corners of
// a step line: the points are pooled by their x rank (tied x values have no
// order among themselves), each pool weighted by its size, and fitted by
// least squares (stats.Isotonic), non-decreasing when the ranks correlate
// positively and non-increasing otherwise. Each fitted level runs from its
// x to the next, where the line steps.
func isotonicSteps(rx, ry []float64) (xs, fit []float64) {
	if len(rx) == 0 {
		return nil, nil
	}
	idx := make([]int, len(rx))
	for i := range idx {
		idx[i] = i
	}
	sort.SliceStable(idx, func(a, b int) bool { return rx[idx[a]] < rx[idx[b]] })
	var px, py, pw []float64
	for _, i := range idx {
		if k := len(px) - 1; k >= 0 && px[k] == rx[i] {
			py[k] += ry[i]
			pw[k]++
			continue
		}
		px, py, pw = append(px, rx[i]), append(py, ry[i]), append(pw, 1)
	}
	var sxy, mx, my, n float64
	for i := range px {
		py[i] /= pw[i]
		mx += px[i] * pw[i]
		my += py[i] * pw[i]
		n += pw[i]
	}
	mx, my = mx/n, my/n
	for i := range px {
		sxy += pw[i] * (px[i] - mx) * (py[i] - my)
	}
	var f []float64
	if sxy >= 0 {
		f = stats.Isotonic(py, pw)
	} else {
		neg := make([]float64, len(py))
		for i, v := range py {
			neg[i] = -v
		}
		f = stats.Isotonic(neg, pw)
		for i := range f {
			f[i] = -f[i]
		}
	}
	for i := range px {
		if i > 0 && f[i] != f[i-1] {
			xs, fit = append(xs, px[i]), append(fit, f[i-1])
		}
		xs, fit = append(xs, px[i]), append(fit, f[i])
	}
	return xs, fit
}
