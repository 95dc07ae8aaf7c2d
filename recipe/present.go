package recipe

import (
	"fmt"
	"path/filepath"
	"slices"
	"strings"

	"github.com/hashicorp/hcl/v2"
	"github.com/hashicorp/hcl/v2/hclsyntax"
	"github.com/zclconf/go-cty/cty"

	"concordat/engine/stats"
)

// NumberStyle is how a readable table writes numbers. The zero value is
// StylePlain, the default.
type NumberStyle int

const (
	StylePlain NumberStyle = iota // leading zeros, the table's digits
	StyleAPA                      // APA Publication Manual, 7th ed.: no leading zero for r and p, p < .001
)

// String returns the recipe word for the style.
func (s NumberStyle) String() string {
	if s == StyleAPA {
		return "apa"
	}
	return "plain"
}

// Layout is the shape of a readable table. The zero value is LayoutLong.
type Layout int

const (
	LayoutLong   Layout = iota // one row per result
	LayoutMatrix               // one correlation matrix per test, measure and group
)

// String returns the recipe word for the layout.
func (l Layout) String() string {
	if l == LayoutMatrix {
		return "matrix"
	}
	return "long"
}

// GroupShape is how a table shows the groups of a pairing's `by`. The zero
// value is GroupColumn.
type GroupShape int

const (
	GroupColumn GroupShape = iota // a group column, every group in one list of rows
	GroupBlocks                   // one block of rows per group, under its heading
	GroupTables                   // one table per group
)

// String returns the recipe word for the shape.
func (g GroupShape) String() string {
	switch g {
	case GroupBlocks:
		return "blocks"
	case GroupTables:
		return "tables"
	}
	return "column"
}

// Present is how a table is laid out and written, beyond its format and
// digits. The zero value is the default: plain numbers, one row per result,
// groups in a column, the format's default columns.
type Present struct {
	Style   NumberStyle
	Layout  Layout
	Groups  GroupShape
	Columns []string // the columns to show, in order (long layout); nil for the default
	Show    []string // what a matrix shows besides the estimate: "n", "p"
	Marks   bool     // a matrix flags significant estimates with *, **, ***
	Caption string   // "" for the recipe's title
	Label   string   // a cross-reference key (LaTeX \label, HTML id); "" for none
	Figures []*Figure
}

// TableColumns are the words a table's `columns` may list: the keys of the
// result record, and "ci" (the interval as one cell), "notes" (warnings as
// numbered notes under the table; readable formats only) and "report" (the
// result as an APA sentence).
var TableColumns = []string{
	"test", "x", "y", "group", "measure", "controls", "n", "n_dropped", "estimate", "ci",
	"ci_low", "ci_high", "ci_level", "ci_method", "alternative", "p_value", "p_method",
	"p_adjusted", "adjust_method", "ties_x", "ties_y", "warnings", "notes", "report",
}

var (
	numberStyles = &vocab{noun: "number style", plural: "styles", words: []string{"plain", "apa"}}
	layouts      = &vocab{noun: "table layout", plural: "layouts", words: []string{"long", "matrix"}}
	groupShapes  = &vocab{noun: "group layout", plural: "layouts", words: []string{"column", "blocks", "tables"}}
	columnWords  = &vocab{noun: "table column", plural: "columns", words: TableColumns}
	showWords    = &vocab{noun: "matrix entry", plural: "entries", words: []string{"n", "p"}}
	figureKinds  = &vocab{noun: "figure kind", plural: "kinds", words: []string{"rank_scatter", "scatter", "heatmap"}}
	figureFormat = &vocab{noun: "figure format", plural: "formats", words: []string{"svg", "png"}}
)

// decodeColumnLabel reads a column block's label, and says when the block
// has neither levels nor a label.
func (d *decoder) decodeColumnLabel(c content, col *ColumnDecl, b *hclsyntax.Block) {
	if a := c.attrs["label"]; a != nil {
		if s, ok := d.nonEmpty(a); ok {
			col.Label = s
		}
	}
	if c.attrs["levels"] == nil && c.attrs["label"] == nil {
		d.errorf(b.DefRange(), nil, "Missing required argument",
			"A column block gives the column's levels (levels = [ … ], for ordinal text, low to high), its label (label = \"…\", for tables and figures), or both.")
	}
}

// LabelOf returns the label a dataset declares for column name, or name
// itself when it declares none.
func (ds *Dataset) LabelOf(name string) string {
	for _, c := range ds.Columns {
		if c.Name == name && c.Label != "" {
			return c.Label
		}
	}
	return name
}

// boolean returns a true/false argument.
func (d *decoder) boolean(a *attr) (bool, bool) {
	if !a.ok {
		return false, false
	}
	if a.val.Type() != cty.Bool {
		d.wrongType(a, "true or false")
		return false, false
	}
	return a.val.True(), true
}

// decodePresent reads a table's layout and style, and reports settings
// that its format or layout cannot honour. It runs after the format is known.
func (d *decoder) decodePresent(b *hclsyntax.Block, c content, t *Table, figures *names[*Figure]) {
	p := &t.Present
	readableOnly := func(a *attr) {
		if t.Format != 0 && !t.Format.Readable() {
			ctx := a.SrcRange
			d.errorf(a.NameRange, &ctx, "Setting does not apply to this format",
				"%s shapes tables for people (markdown, latex, html); a %s table holds the result record, one row per result, with every digit.",
				a.Name, t.Format)
		}
	}
	if a := c.attrs["style"]; a != nil {
		if w, ok := d.word(a, numberStyles); ok && w == "apa" {
			p.Style = StyleAPA
			if c.attrs["digits"] == nil {
				t.Digits = apaDigits
			}
		}
		readableOnly(a)
	}
	if a := c.attrs["layout"]; a != nil {
		if w, ok := d.word(a, layouts); ok && w == "matrix" {
			p.Layout = LayoutMatrix
			p.Groups = GroupTables
		}
		readableOnly(a)
	}
	if a := c.attrs["groups"]; a != nil {
		if w, ok := d.word(a, groupShapes); ok {
			p.Groups = map[string]GroupShape{"column": GroupColumn, "blocks": GroupBlocks, "tables": GroupTables}[w]
			if p.Layout == LayoutMatrix && p.Groups != GroupTables {
				ctx := a.SrcRange
				d.errorf(a.Expr.Range(), &ctx, "Groups of a matrix",
					"A matrix shows one group; with layout = \"matrix\" each group gets a table of its own (groups = \"tables\").")
			}
		}
		readableOnly(a)
	}
	if a := c.attrs["columns"]; a != nil {
		if items, ok := d.list(a); ok {
			ctx := a.SrcRange
			if len(items) == 0 {
				d.errorf(a.Expr.Range(), &ctx, "Empty list", "columns must name at least one column, such as \"estimate\".")
			}
			items, _ = d.distinct(a, items, "column")
			for _, it := range items {
				if !d.checkWord(it.s, it.rng, &ctx, columnWords) {
					continue
				}
				if it.s == "notes" && t.Format != 0 && !t.Format.Readable() {
					d.errorf(it.rng, &ctx, "Column needs a readable format",
						"\"notes\" numbers the warnings and lists them under the table, which a %s file has no place for; use \"warnings\".", t.Format)
					continue
				}
				p.Columns = append(p.Columns, it.s)
			}
			if p.Layout == LayoutMatrix {
				d.errorf(a.NameRange, &ctx, "Columns of a matrix",
					"A matrix's columns are its variables; columns applies to layout = \"long\". Use show = [\"n\", \"p\"] to add entries to a matrix.")
			}
		}
	}
	if a := c.attrs["show"]; a != nil {
		if items, ok := d.list(a); ok {
			ctx := a.SrcRange
			items, _ = d.distinct(a, items, "entry")
			for _, it := range items {
				if d.checkWord(it.s, it.rng, &ctx, showWords) {
					p.Show = append(p.Show, it.s)
				}
			}
			if p.Layout != LayoutMatrix {
				d.errorf(a.NameRange, &ctx, "Setting needs a matrix",
					"show adds rows of n or p under each row of a matrix; it applies to layout = \"matrix\". In a long table, list the columns instead: columns = [ … \"n\", \"p_value\" … ].")
			}
		}
	}
	if a := c.attrs["marks"]; a != nil {
		if v, ok := d.boolean(a); ok {
			p.Marks = v
			if v && p.Layout != LayoutMatrix {
				ctx := a.SrcRange
				d.errorf(a.NameRange, &ctx, "Setting needs a matrix",
					"marks flags significant coefficients in a matrix; it applies to layout = \"matrix\". A long table shows the p-values themselves.")
			}
		}
	}
	if a := c.attrs["caption"]; a != nil {
		p.Caption, _ = d.nonEmpty(a)
		readableOnly(a)
	}
	if a := c.attrs["label"]; a != nil {
		if s, ok := d.nonEmpty(a); ok {
			p.Label = s
			if strings.ContainsAny(s, "{}\\#%$&~^ ") {
				ctx := a.SrcRange
				d.errorf(a.Expr.Range(), &ctx, "Invalid label",
					"A label is a key for cross-references such as \"tab:shade\": letters, digits and : - _ . / only; got %s.", quote(s))
			}
		}
		readableOnly(a)
	}
	if a := c.attrs["figures"]; a != nil {
		if items, ok := d.list(a); ok {
			ctx := a.SrcRange
			items, _ = d.distinct(a, items, "figure")
			for _, it := range items {
				if f, found := figures.lookup(d, it.s, it.rng, &ctx); found {
					p.Figures = append(p.Figures, f)
				}
			}
			if t.Format != 0 && t.Format != HTML {
				d.errorf(a.NameRange, &ctx, "Figures need an HTML table",
					"Only an html table embeds figures; a %s table cannot. Each figure block also writes its own file, to include wherever it is needed.", t.Format)
			}
		}
	}
	if p.Layout == LayoutMatrix {
		d.checkMatrixTests(b, t)
	}
}

// apaDigits is the decimals of a coefficient in the APA style: "Round as
// much as possible… correlations… to two decimals" (APA Publication Manual,
// 7th ed., 2020, §6.36).
const apaDigits = 2

// checkMatrixTests reports tests whose results cannot make a matrix: a
// matrix needs two or more variables in columns, or x and y lists.
func (d *decoder) checkMatrixTests(b *hclsyntax.Block, t *Table) {
	for _, tt := range t.Tests {
		if tt.Pairing == nil {
			continue
		}
		if len(tt.Controls) > 0 {
			d.errorf(b.DefRange(), nil, "Matrix of partial correlations",
				"Test %s has controls; a matrix here shows plain correlations. Put it in a long table.", quote(tt.Name))
		}
	}
}

// FigureKind is what a figure draws. The zero value is invalid.
type FigureKind int

const (
	_                 FigureKind = iota
	FigureRankScatter            // the ranks of y against the ranks of x, with the monotone (isotonic) fit
	FigureScatter                // y against x, the values themselves
	FigureHeatmap                // the correlation matrix of a test's pairing, coloured by the estimate
)

// String returns the recipe word for the kind.
func (k FigureKind) String() string {
	switch k {
	case FigureRankScatter:
		return "rank_scatter"
	case FigureScatter:
		return "scatter"
	case FigureHeatmap:
		return "heatmap"
	}
	return fmt.Sprintf("FigureKind(%d)", int(k))
}

// Figure is a `figure "name" { … }` block: a picture of one test's data or
// results, written as SVG or PNG.
type Figure struct {
	Name          string
	Test          *Test
	Kind          FigureKind
	X, Y          string        // the pair a scatter shows; the test's first pair by default
	Group         string        // the group shown; default "all"
	Measure       stats.Measure // the heatmap's measure; default the test's first
	Title         string        // "" for a title made from the labels
	Path          string        // resolved like Table.Path
	PathAsWritten string
	Format        string  // "svg" or "png", from the extension unless `format` says otherwise
	Width, Height float64 // centimetres; default 16 × 12
	DeclRange     hcl.Range

	pathRange hcl.Range
}

var figureSpec = spec{
	where:    "in a figure block",
	attrs:    []string{"test", "kind", "x", "y", "group", "measure", "title", "path", "format", "width", "height"},
	required: []string{"test", "kind", "path"},
}

// Figure sizes in centimetres.
const (
	defaultFigureWidth  = 16
	defaultFigureHeight = 12
	minFigureSize       = 4
	maxFigureSize       = 100
)

func (d *decoder) decodeFigure(b *hclsyntax.Block, tests *names[*Test]) *Figure {
	c := d.blockContent(b, figureSpec)
	f := &Figure{Name: b.Labels[0], Group: "all", Width: defaultFigureWidth, Height: defaultFigureHeight, DeclRange: b.DefRange()}
	if a := c.attrs["test"]; a != nil {
		if s, ok := d.str(a); ok {
			ctx := a.SrcRange
			f.Test, _ = tests.lookup(d, s, a.Expr.Range(), &ctx)
		}
	}
	if a := c.attrs["kind"]; a != nil {
		if w, ok := d.word(a, figureKinds); ok {
			f.Kind = map[string]FigureKind{"rank_scatter": FigureRankScatter, "scatter": FigureScatter, "heatmap": FigureHeatmap}[w]
		}
	}
	if a := c.attrs["path"]; a != nil {
		if p, ok := d.nonEmpty(a); ok {
			f.PathAsWritten = p
			f.Path = d.resolve(p)
			f.pathRange = a.Expr.Range()
		}
	}
	ext := strings.TrimPrefix(strings.ToLower(filepath.Ext(f.PathAsWritten)), ".")
	if a := c.attrs["format"]; a != nil {
		if w, ok := d.word(a, figureFormat); ok {
			f.Format = w
		}
	} else if a := c.attrs["path"]; a != nil && f.PathAsWritten != "" {
		if figureFormat.accepts(ext) {
			f.Format = ext
		} else {
			ctx := a.SrcRange
			d.errorf(a.Expr.Range(), &ctx, "Unknown figure format",
				"The format of %s cannot be told from its extension. Name the file with .svg or .png, or add format = \"svg\" (or \"png\") to the figure block.", quote(f.PathAsWritten))
		}
	}
	if a := c.attrs["title"]; a != nil {
		f.Title, _ = d.str(a)
	}
	for _, dim := range []struct {
		name string
		v    *float64
	}{{"width", &f.Width}, {"height", &f.Height}} {
		if a := c.attrs[dim.name]; a != nil {
			if n, ok := d.number(a); ok {
				x, _ := n.Float64()
				if x < minFigureSize || x > maxFigureSize {
					ctx := a.SrcRange
					d.errorf(a.Expr.Range(), &ctx, "Value out of range",
						"%s is in centimetres, from %d to %d; got %s.", dim.name, minFigureSize, maxFigureSize, numText(n))
				} else {
					*dim.v = x
				}
			}
		}
	}
	if a := c.attrs["group"]; a != nil {
		if s, ok := d.nonEmpty(a); ok {
			f.Group = s
			if t := f.Test; t != nil && t.Pairing != nil && t.Pairing.By == "" && s != "all" {
				ctx := a.SrcRange
				d.errorf(a.Expr.Range(), &ctx, "No groups",
					"Test %s's pairing %s has no by, so its only group is \"all\".", quote(t.Name), quote(t.Pairing.Name))
			}
		}
	}
	if f.Test == nil || f.Test.Pairing == nil {
		return f
	}
	t, p := f.Test, f.Test.Pairing
	if f.Kind == FigureHeatmap {
		f.Measure = t.Measures[0]
		for _, name := range []string{"x", "y"} {
			if a := c.attrs[name]; a != nil {
				ctx := a.SrcRange
				d.errorf(a.NameRange, &ctx, "Setting does not apply to a heatmap",
					"A heatmap shows every pair of test %s; %s chooses the pair of a scatter.", quote(t.Name), name)
			}
		}
		if a := c.attrs["measure"]; a != nil {
			if w, ok := d.word(a, measureWords); ok {
				ms := measuresOf(w)
				if len(ms) > 1 || !slices.Contains(t.Measures, ms[0]) {
					ctx := a.SrcRange
					d.errorf(a.Expr.Range(), &ctx, "Measure not computed",
						"Test %s computes %s; a heatmap shows one of them.", quote(t.Name), quoteList(measureWordsOf(t.Measures)))
				} else {
					f.Measure = ms[0]
				}
			}
		}
		if len(t.Controls) > 0 {
			d.errorf(b.DefRange(), nil, "Heatmap of partial correlations",
				"Test %s has controls; a heatmap here shows plain correlations.", quote(t.Name))
		}
		return f
	}
	if a := c.attrs["measure"]; a != nil {
		ctx := a.SrcRange
		d.errorf(a.NameRange, &ctx, "Setting does not apply to a scatter",
			"A scatter shows the data of one pair; measure chooses the coefficient of a heatmap.")
	}
	if len(p.Pairs) > 0 {
		f.X, f.Y = p.Pairs[0].X, p.Pairs[0].Y
	}
	ax, ay := c.attrs["x"], c.attrs["y"]
	if ax != nil {
		f.X, _ = d.str(ax)
	}
	if ay != nil {
		f.Y, _ = d.str(ay)
	}
	// With one of x and y given, the other is its partner in the first
	// pair that holds it.
	if (ax == nil) != (ay == nil) {
		given, other := &f.X, &f.Y
		if ax == nil {
			given, other = &f.Y, &f.X
		}
		for _, pr := range p.Pairs {
			if pr.X == *given {
				*other = pr.Y
				break
			}
			if pr.Y == *given {
				*other = pr.X
				break
			}
		}
	}
	if (ax != nil || ay != nil) && !slices.ContainsFunc(p.Pairs, func(pr Pair) bool {
		return pr.X == f.X && pr.Y == f.Y || pr.X == f.Y && pr.Y == f.X
	}) {
		subject := b.DefRange()
		if ax != nil {
			subject = ax.Expr.Range()
		} else {
			subject = ay.Expr.Range()
		}
		d.errorf(subject, nil, "Pair not in the test",
			"Test %s's pairing %s does not pair %s with %s.", quote(t.Name), quote(p.Name), quote(f.X), quote(f.Y))
	}
	return f
}

// checkFigureOutputs reports figures that would write the same file as a
// table, another figure, an input, the recipe or its ledger.
func (d *decoder) checkFigureOutputs(plan *Plan) {
	taken := map[string]string{} // path → what writes it
	for _, ds := range plan.Datasets {
		taken[ds.Path] = "the data file of dataset " + quote(ds.Name)
	}
	for _, t := range plan.Tables {
		taken[t.Path] = "the file of table " + quote(t.Name)
	}
	taken[filepath.Clean(d.recipePath)] = "this recipe file"
	taken[filepath.Clean(d.ledgerPath)] = "this recipe's ledger"
	taken[filepath.Clean(d.ledgerPath+".lock")] = "the ledger's lock file"
	for _, f := range plan.Figures {
		if f.Path == "" {
			continue
		}
		if what, ok := taken[f.Path]; ok {
			ctx := hcl.RangeOver(f.DeclRange, f.pathRange)
			d.errorf(f.pathRange, &ctx, "Figure would overwrite another file",
				"Figure %s writes %s, which is %s. Give the figure its own path.", quote(f.Name), quote(f.PathAsWritten), what)
			continue
		}
		taken[f.Path] = "the file of figure " + quote(f.Name)
	}
}

// describe writes the settings that differ from the defaults, for Describe.
func (p *Present) describe(b *strings.Builder) {
	if p.Style != StylePlain {
		b.WriteString("style = " + quote(p.Style.String()) + "\n")
	}
	if p.Layout != LayoutLong {
		b.WriteString("layout = " + quote(p.Layout.String()) + "\n")
	}
	if p.Groups != GroupColumn && !(p.Layout == LayoutMatrix && p.Groups == GroupTables) {
		b.WriteString("groups = " + quote(p.Groups.String()) + "\n")
	}
	if p.Columns != nil {
		b.WriteString("columns = " + hclList(p.Columns) + "\n")
	}
	if p.Show != nil {
		b.WriteString("show = " + hclList(p.Show) + "\n")
	}
	if p.Marks {
		b.WriteString("marks = true\n")
	}
	if p.Caption != "" {
		b.WriteString("caption = " + quote(p.Caption) + "\n")
	}
	if p.Label != "" {
		b.WriteString("label = " + quote(p.Label) + "\n")
	}
	if p.Figures != nil {
		names := make([]string, len(p.Figures))
		for i, f := range p.Figures {
			names[i] = f.Name
		}
		b.WriteString("figures = " + hclList(names) + "\n")
	}
}

func (f *Figure) describe(b *strings.Builder) {
	fmt.Fprintf(b, "\nfigure %s {\n", quote(f.Name))
	b.WriteString("test = " + quote(f.Test.Name) + "\n")
	b.WriteString("kind = " + quote(f.Kind.String()) + "\n")
	if f.Kind == FigureHeatmap {
		b.WriteString("measure = " + quote(f.Measure.String()) + "\n")
	} else {
		b.WriteString("x = " + quote(f.X) + "\n")
		b.WriteString("y = " + quote(f.Y) + "\n")
	}
	b.WriteString("group = " + quote(f.Group) + "\n")
	if f.Title != "" {
		b.WriteString("title = " + quote(f.Title) + "\n")
	}
	b.WriteString("path = " + quote(f.PathAsWritten) + resolvedNote(f.PathAsWritten, f.Path) + "\n")
	b.WriteString("format = " + quote(f.Format) + "\n")
	b.WriteString("width = " + num(f.Width) + "\n")
	b.WriteString("height = " + num(f.Height) + "\n}\n")
}

// presentSettings is a table's Present for the ledger's settings.
type presentSettings struct {
	Style   string   `json:"style"`
	Layout  string   `json:"layout"`
	Groups  string   `json:"groups"`
	Columns []string `json:"columns"`
	Show    []string `json:"show"`
	Marks   bool     `json:"marks"`
	Caption string   `json:"caption"`
	Label   string   `json:"label"`
	Figures []string `json:"figures"`
}

// settings returns nil for the default presentation.
func (p *Present) settings() *presentSettings {
	if p.Style == StylePlain && p.Layout == LayoutLong && p.Groups == GroupColumn && p.Columns == nil &&
		p.Show == nil && !p.Marks && p.Caption == "" && p.Label == "" && p.Figures == nil {
		return nil
	}
	s := &presentSettings{
		Style: p.Style.String(), Layout: p.Layout.String(), Groups: p.Groups.String(),
		Columns: nonNil(p.Columns), Show: nonNil(p.Show), Marks: p.Marks,
		Caption: p.Caption, Label: p.Label, Figures: []string{},
	}
	for _, f := range p.Figures {
		s.Figures = append(s.Figures, f.Name)
	}
	return s
}

type figureSettings struct {
	Name    string  `json:"name"`
	Test    string  `json:"test"`
	Kind    string  `json:"kind"`
	X       string  `json:"x"`
	Y       string  `json:"y"`
	Group   string  `json:"group"`
	Measure string  `json:"measure"`
	Title   string  `json:"title"`
	Path    string  `json:"path"`
	Format  string  `json:"format"`
	Width   float64 `json:"width"`
	Height  float64 `json:"height"`
}

func (f *Figure) settings() figureSettings {
	s := figureSettings{Name: f.Name, Test: f.Test.Name, Kind: f.Kind.String(), X: f.X, Y: f.Y, Group: f.Group,
		Title: f.Title, Path: f.PathAsWritten, Format: f.Format, Width: f.Width, Height: f.Height}
	if f.Kind == FigureHeatmap {
		s.Measure = f.Measure.String()
	}
	return s
}
