package recipe

import (
	"math"
	"path/filepath"
	"slices"
	"strconv"
	"strings"

	"github.com/hashicorp/hcl/v2"
	"github.com/hashicorp/hcl/v2/hclsyntax"

	"concordat/engine/filter"
	"concordat/engine/stats"
)

var (
	topSpec = spec{
		where:  "at the top level of a recipe",
		attrs:  []string{"title", "seed"},
		blocks: []string{"param", "dataset", "pairing", "ties", "test", "table", "figure", "published"},
	}
	datasetSpec = spec{
		where:    "in a dataset block",
		attrs:    []string{"path", "format", "sha256", "missing", "where"},
		blocks:   []string{"column"},
		required: []string{"path"},
		exprs:    []string{"where"},
	}
	columnSpec = spec{
		where: "in a column block",
		attrs: []string{"levels", "label"},
	}
	pairingSpec = spec{
		where:    "in a pairing block",
		attrs:    []string{"dataset", "x", "y", "columns", "missing", "by"},
		required: []string{"dataset"},
	}
	tiesSpec = spec{
		where: "in a ties block",
		attrs: []string{"rank", "max_share"},
	}
	testSpec = spec{
		where:    "in a test block",
		attrs:    []string{"pairing", "ties", "measures", "alternative", "p_value", "permutations", "adjust", "controls"},
		blocks:   []string{"interval"},
		required: []string{"pairing"},
	}
	intervalSpec = spec{
		where: "in an interval block",
		attrs: []string{"level", "method", "resamples"},
	}
	tableSpec = spec{
		where: "in a table block",
		attrs: []string{"tests", "format", "path", "digits",
			"style", "layout", "columns", "groups", "show", "marks", "caption", "label", "figures",
			"reproduction"},
		required: []string{"path"}, // and tests or reproduction (decodeTableReproduction)
	}
)

// decodeRecipe decodes the whole file. Blocks are decoded kind by kind in
// the order references point (datasets and ties, then pairings, tests,
// tables), so each reference meets a complete index of its targets.
func (d *decoder) decodeRecipe(body *hclsyntax.Body) *Plan {
	params := d.decodeParams(body, d.overrides) // first: every argument may use them (param.go)
	c := d.content(body, topSpec, body.SrcRange)
	plan := &Plan{Seed: defaultSeed, Params: params}
	if a := c.attrs["title"]; a != nil {
		plan.Title, _ = d.str(a)
	}
	if a := c.attrs["seed"]; a != nil {
		plan.Seed, _ = d.integer(a, 0, math.MaxInt64)
	}

	byType := map[string][]*hclsyntax.Block{}
	for _, b := range c.blocks {
		byType[b.Type] = append(byType[b.Type], b)
	}

	datasets := newNames[*Dataset]("dataset", "dataset", "datasets")
	for _, b := range byType["dataset"] {
		if ds := d.decodeDataset(b); datasets.add(d, b, ds) {
			plan.Datasets = append(plan.Datasets, ds)
		}
	}
	ties := newNames[*Ties]("ties", "ties block", "ties blocks")
	for _, b := range byType["ties"] {
		if t := d.decodeTies(b); ties.add(d, b, t) {
			plan.Ties = append(plan.Ties, t)
		}
	}
	pairings := newNames[*Pairing]("pairing", "pairing", "pairings")
	for _, b := range byType["pairing"] {
		if p := d.decodePairing(b, datasets); pairings.add(d, b, p) {
			plan.Pairings = append(plan.Pairings, p)
		}
	}
	tests := newNames[*Test]("test", "test", "tests")
	for _, b := range byType["test"] {
		if t := d.decodeTest(b, pairings, ties); tests.add(d, b, t) {
			plan.Tests = append(plan.Tests, t)
		}
	}
	figures := newNames[*Figure]("figure", "figure", "figures")
	for _, b := range byType["figure"] {
		if f := d.decodeFigure(b, tests); figures.add(d, b, f) {
			plan.Figures = append(plan.Figures, f)
		}
	}
	// Published tables (published.go) are compared with tests' results,
	// and tables can write their reproduction reports.
	published, pubs := d.decodePublishedBlocks(byType["published"], tests)
	plan.Published = pubs
	tables := newNames[*Table]("table", "table", "tables")
	for _, b := range byType["table"] {
		if t := d.decodeTable(b, tests, figures, published); tables.add(d, b, t) {
			plan.Tables = append(plan.Tables, t)
		}
	}
	d.checkOutputs(plan)
	d.checkFigureOutputs(plan)
	return plan
}

// blockContent splits a labelled block's body by its spec.
func (d *decoder) blockContent(b *hclsyntax.Block, s spec) content {
	return d.content(b.Body, s, b.DefRange())
}

// resolve joins a path as written onto the recipe's folder.
func (d *decoder) resolve(p string) string {
	if filepath.IsAbs(p) {
		return filepath.Clean(p)
	}
	return filepath.Join(d.dir, p)
}

func (d *decoder) decodeDataset(b *hclsyntax.Block) *Dataset {
	c := d.blockContent(b, datasetSpec)
	ds := &Dataset{
		Name:      b.Labels[0],
		Missing:   defaultMissing,
		Levels:    map[string][]string{},
		DeclRange: b.DefRange(),
	}

	if a := c.attrs["path"]; a != nil {
		if p, ok := d.nonEmpty(a); ok {
			ds.PathAsWritten = p
			ds.Path = d.resolve(p)
			ds.PathRange = a.Expr.Range()
		}
	}
	if a := c.attrs["format"]; a != nil {
		if w, ok := d.word(a, dataFormats); ok {
			ds.Format = DataFormat(w)
		}
	} else if a := c.attrs["path"]; a != nil && ds.PathAsWritten != "" {
		ds.Format = d.dataFormatOf(a, ds.PathAsWritten)
	}

	if a := c.attrs["sha256"]; a != nil {
		if s, ok := d.str(a); ok {
			ds.SHA256 = d.checkSHA256(a, s)
			ds.SHA256Range = a.Expr.Range()
		}
	}
	if a := c.attrs["missing"]; a != nil {
		if items, ok := d.list(a); ok {
			items, _ = d.distinct(a, items, "missing-value token")
			ds.Missing = texts(items)
		}
	}

	seen := map[string]hcl.Range{}
	for _, cb := range c.blocks {
		name := cb.Labels[0]
		if first, dup := seen[name]; dup {
			ctx := cb.DefRange()
			d.errorf(cb.LabelRanges[0], &ctx, "Duplicate column block",
				"Column %s already has a column block at %s; give its levels once.", quote(name), pos(first))
			continue
		}
		seen[name] = cb.DefRange()
		col := d.decodeColumn(cb, ds)
		ds.Columns = append(ds.Columns, col)
		if col.Levels != nil {
			ds.Levels[name] = col.Levels
		}
	}

	// The filter is read last: a column with levels is compared by them.
	if a := c.exprs["where"]; a != nil {
		var diags hcl.Diagnostics
		ds.Where, diags = filter.Analyze(a.Expr, d.src, filter.Env{Levels: ds.Levels, Suggest: Suggest, Params: paramValues(d.params)})
		d.diags = append(d.diags, diags...)
	}
	return ds
}

// dataFormatOf infers a dataset's format from its file extension.
func (d *decoder) dataFormatOf(a *attr, p string) DataFormat {
	switch strings.ToLower(filepath.Ext(p)) {
	case ".csv":
		return DataCSV
	case ".tsv":
		return DataTSV
	case ".parquet":
		return DataParquet
	}
	ctx := a.SrcRange
	d.errorf(a.Expr.Range(), &ctx, "Unknown dataset format",
		"The format of %s cannot be told from its extension. Name the file with .csv, .tsv or .parquet, "+
			"or add format = \"csv\" (or \"tsv\", \"parquet\") to the dataset block.", quote(p))
	return ""
}

// checkSHA256 validates a pin and returns it in lowercase.
func (d *decoder) checkSHA256(a *attr, s string) string {
	ok := len(s) == 64
	for i := 0; ok && i < len(s); i++ {
		c := s[i]
		ok = '0' <= c && c <= '9' || 'a' <= c && c <= 'f' || 'A' <= c && c <= 'F'
	}
	if !ok {
		ctx := a.SrcRange
		d.errorf(a.Expr.Range(), &ctx, "Invalid sha256 pin",
			"sha256 must be 64 hexadecimal digits, as printed by sha256sum; got %s.", describeText(s))
		return ""
	}
	return strings.ToLower(s)
}

// describeText says briefly what a bad value looks like.
func describeText(s string) string {
	if len(s) > 80 {
		return "a string of " + strconv.Itoa(len(s)) + " bytes"
	}
	return quote(s) + " (" + strconv.Itoa(len(s)) + " characters)"
}

func (d *decoder) decodeColumn(b *hclsyntax.Block, ds *Dataset) *ColumnDecl {
	c := d.blockContent(b, columnSpec)
	col := &ColumnDecl{Name: b.Labels[0], DeclRange: b.DefRange()}
	d.decodeColumnLabel(c, col, b)
	a := c.attrs["levels"]
	if a == nil {
		return col
	}
	col.LevelsRange = a.Expr.Range()
	items, ok := d.list(a)
	if !ok {
		return col
	}
	if len(items) == 0 {
		ctx := a.SrcRange
		d.errorf(a.Expr.Range(), &ctx, "Empty list",
			"levels must list the labels of column %s from low to high.", quote(col.Name))
		return col
	}
	items, _ = d.distinct(a, items, "level")
	col.Levels = texts(items)
	for _, it := range items {
		for _, m := range ds.Missing {
			if it.s == m {
				ctx := a.SrcRange
				d.warnf(it.rng, &ctx, "Level is also a missing-value token",
					"The level %s of column %s is read as missing, so it can never occur. "+
						"Remove it from levels, or from the dataset's missing list.", quote(it.s), quote(col.Name))
			}
		}
	}
	return col
}

func (d *decoder) decodeTies(b *hclsyntax.Block) *Ties {
	c := d.blockContent(b, tiesSpec)
	t := &Ties{Name: b.Labels[0], Rule: stats.TieAverage, MaxShare: defaultMaxShare, DeclRange: b.DefRange()}
	if a := c.attrs["rank"]; a != nil {
		if w, ok := d.word(a, tieRules); ok {
			t.Rule = tieRuleOf[w]
		}
	}
	if a := c.attrs["max_share"]; a != nil {
		t.MaxShare, _ = d.fraction(a, 0, 1, true, "0.3")
	}
	return t
}

var tieRuleOf = map[string]stats.TieRule{
	"average": stats.TieAverage, "min": stats.TieMin, "max": stats.TieMax,
	"dense": stats.TieDense, "first": stats.TieFirst,
}

func (d *decoder) decodePairing(b *hclsyntax.Block, datasets *names[*Dataset]) *Pairing {
	c := d.blockContent(b, pairingSpec)
	p := &Pairing{
		Name:         b.Labels[0],
		Missing:      Pairwise,
		ColumnRanges: map[string]hcl.Range{},
		DeclRange:    b.DefRange(),
	}
	if a := c.attrs["dataset"]; a != nil {
		if s, ok := d.str(a); ok {
			ctx := a.SrcRange
			p.Dataset, _ = datasets.lookup(d, s, a.Expr.Range(), &ctx)
		}
	}
	if a := c.attrs["missing"]; a != nil {
		if w, ok := d.word(a, missingRules); ok {
			p.Missing = map[string]MissingRule{"pairwise": Pairwise, "listwise": Listwise}[w]
		}
	}

	// columns reads one of x, y, columns: its entries, distinct, with the
	// minimum count checked.
	columns := func(name string, least int) ([]item, bool) {
		a := c.attrs[name]
		if a == nil {
			return nil, false
		}
		items, ok := d.list(a)
		if !ok {
			return nil, true
		}
		if len(items) < least {
			ctx := a.SrcRange
			what := "at least one column"
			if least == 2 {
				what = "at least two columns, to make a pair"
			}
			d.errorf(a.Expr.Range(), &ctx, "Too few columns", "%s must name %s.", name, what)
		}
		items, _ = d.distinct(a, items, "column")
		for _, it := range items {
			if strings.TrimSpace(it.s) == "" {
				ctx := a.SrcRange
				d.errorf(it.rng, &ctx, "Empty column name", "Column names in %s must not be empty.", name)
			}
			if _, seen := p.ColumnRanges[it.s]; !seen {
				p.ColumnRanges[it.s] = it.rng
			}
		}
		return items, true
	}
	x, hasX := columns("x", 1)
	y, hasY := columns("y", 1)
	cols, hasCols := columns("columns", 2)
	p.X, p.Y, p.Columns = texts(x), texts(y), texts(cols)

	switch {
	case hasCols && (hasX || hasY):
		other := "x"
		if !hasX {
			other = "y"
		}
		a := c.attrs["columns"]
		ctx := a.SrcRange
		d.errorf(a.NameRange, &ctx, "Conflicting arguments",
			"A pairing uses either x and y (every x with every y) or columns (every pair among them), "+
				"not both; this one also sets %s.", other)
	case hasCols:
		p.Pairs = make([]Pair, 0, len(cols)*(len(cols)-1)/2)
		for i := range cols {
			for j := i + 1; j < len(cols); j++ {
				p.Pairs = append(p.Pairs, Pair{X: cols[i].s, Y: cols[j].s})
			}
		}
	case hasX && hasY:
		inX := map[string]bool{}
		for _, it := range x {
			inX[it.s] = true
		}
		for _, it := range y {
			if inX[it.s] {
				a := c.attrs["y"]
				ctx := a.SrcRange
				d.errorf(it.rng, &ctx, "Column paired with itself",
					"Column %s is in both x and y, so it would be paired with itself. Remove it from one "+
						"of them, or use columns = [ … ] for every pair among one list.", quote(it.s))
			}
		}
		p.Pairs = make([]Pair, 0, len(x)*len(y))
		for _, xi := range x {
			for _, yi := range y {
				p.Pairs = append(p.Pairs, Pair{X: xi.s, Y: yi.s})
			}
		}
	case hasX || hasY:
		missing, have := "y", "x"
		if hasY {
			missing, have = "x", "y"
		}
		d.errorf(b.DefRange(), nil, "Missing required argument",
			"The pairing %s sets %s but not %s: every x column is paired with every y column. "+
				"Add %s = [ … ], or use columns = [ … ] for every pair among one list.",
			quote(p.Name), have, missing, missing)
	default:
		d.errorf(b.DefRange(), nil, "Missing columns to pair",
			"The pairing %s needs either x and y (every x with every y) or columns (every pair among them).",
			quote(p.Name))
	}

	if a := c.attrs["by"]; a != nil {
		if s, ok := d.nonEmpty(a); ok {
			p.By = s
			ctx := a.SrcRange
			for _, l := range []struct {
				name  string
				items []item
			}{{"x", x}, {"y", y}, {"columns", cols}} {
				for _, it := range l.items {
					if it.s == s {
						d.errorf(a.Expr.Range(), &ctx, "Grouping column is also paired",
							"by = %s is also listed in %s (at %s); a column cannot both split the rows "+
								"into groups and be correlated within them.", quote(s), l.name, pos(it.rng))
					}
				}
			}
			if _, seen := p.ColumnRanges[s]; !seen {
				p.ColumnRanges[s] = a.Expr.Range()
			}
		}
	}
	return p
}

func (d *decoder) decodeTest(b *hclsyntax.Block, pairings *names[*Pairing], ties *names[*Ties]) *Test {
	c := d.blockContent(b, testSpec)
	t := &Test{
		Name:         b.Labels[0],
		Ties:         defaultTies(),
		Measures:     []stats.Measure{stats.Spearman},
		Alternative:  stats.TwoSided,
		PValue:       PAuto,
		Interval:     defaultInterval(b.DefRange()),
		Permutations: defaultPermutations,
		Adjust:       stats.AdjustNone,
		DeclRange:    b.DefRange(),
	}
	if a := c.attrs["pairing"]; a != nil {
		if s, ok := d.str(a); ok {
			ctx := a.SrcRange
			t.Pairing, _ = pairings.lookup(d, s, a.Expr.Range(), &ctx)
		}
	}
	if a := c.attrs["ties"]; a != nil {
		if s, ok := d.str(a); ok {
			ctx := a.SrcRange
			if tb, found := ties.lookup(d, s, a.Expr.Range(), &ctx); found {
				t.Ties = tb
			}
		}
	}
	if a := c.attrs["measures"]; a != nil {
		if items, ok := d.list(a); ok {
			if len(items) == 0 {
				ctx := a.SrcRange
				d.errorf(a.Expr.Range(), &ctx, "Empty list",
					"measures must name at least one measure, such as \"spearman\".")
			}
			items, _ = d.distinct(a, items, "measure")
			ctx := a.SrcRange
			var ms []stats.Measure
			var somers hcl.Range // where the two-way "somers_d" was written
			for _, it := range items {
				if !d.checkWord(it.s, it.rng, &ctx, measureWords) {
					continue
				}
				if it.s == "somers_d" {
					somers = it.rng
				}
				for _, m := range measuresOf(it.s) {
					if slices.Contains(ms, m) {
						d.errorf(it.rng, &ctx, "Duplicate measure",
							"%s is already computed: \"somers_d\" at %s gives both somers_d_yx (y dependent) and somers_d_xy (x dependent). List either somers_d or the directions you want.",
							m, pos(somers))
						continue
					}
					ms = append(ms, m)
				}
			}
			t.Measures = ms
		}
	}
	if a := c.attrs["alternative"]; a != nil {
		if w, ok := d.word(a, alternatives); ok {
			t.Alternative = map[string]stats.Alternative{
				"two-sided": stats.TwoSided, "greater": stats.Greater, "less": stats.Less}[w]
		}
	}
	if a := c.attrs["p_value"]; a != nil {
		if w, ok := d.word(a, pMethods); ok {
			t.PValue = map[string]PMethod{"auto": PAuto, "exact": PExact, "asymptotic": PAsymptotic, "permutation": PPermutation}[w]
		}
	}
	if a := c.attrs["permutations"]; a != nil {
		n, _ := d.integer(a, 1, maxPermutations)
		t.Permutations = int(n)
	}
	if a := c.attrs["adjust"]; a != nil {
		if w, ok := d.word(a, adjustMethods); ok {
			t.Adjust, _ = stats.ParseAdjustment(w)
		}
	}
	if a := c.attrs["controls"]; a != nil {
		d.decodeControls(a, t, c.attrs["measures"], c.attrs["p_value"])
	}

	var first *hclsyntax.Block
	for _, ib := range c.blocks { // only interval blocks pass the spec
		if first != nil {
			ctx := ib.DefRange()
			d.errorf(ib.TypeRange, &ctx, "Duplicate interval block",
				"A test has at most one interval block; the first is at %s.", pos(first.TypeRange))
			continue
		}
		first = ib
		t.Interval = d.decodeInterval(ib)
	}
	return t
}

// measuresOf maps a measure word to the measures it asks for: one, except
// "somers_d", which is asymmetric and gives both directions.
func measuresOf(w string) []stats.Measure {
	switch w {
	case "spearman":
		return []stats.Measure{stats.Spearman}
	case "kendall_b":
		return []stats.Measure{stats.KendallB}
	case "kendall_a":
		return []stats.Measure{stats.KendallA}
	case "kendall_c":
		return []stats.Measure{stats.KendallC}
	case "gamma":
		return []stats.Measure{stats.Gamma}
	case "somers_d":
		return []stats.Measure{stats.SomersDYX, stats.SomersDXY}
	case "somers_d_yx":
		return []stats.Measure{stats.SomersDYX}
	case "somers_d_xy":
		return []stats.Measure{stats.SomersDXY}
	case "pearson":
		return []stats.Measure{stats.PearsonR}
	}
	panic("recipe: measure word without a measure: " + w)
}

// decodeControls reads a test's controls: columns of the pairing's dataset
// that are partialled out of spearman and pearson. Kendall-type measures
// have no partial form with an agreed test, and the exact and permutation
// nulls here are for two variables, so both are refused with controls.
//
// Those errors point at the measures or p_value attribute when the recipe
// writes one (a default cannot be the problem: spearman and auto are both
// fine).
func (d *decoder) decodeControls(a *attr, t *Test, measures, pValue *attr) {
	items, ok := d.list(a)
	if !ok {
		return
	}
	ctx := a.SrcRange
	if len(items) == 0 {
		d.errorf(a.Expr.Range(), &ctx, "Empty list",
			"controls must name at least one column to partial out, or be left out.")
		return
	}
	items, _ = d.distinct(a, items, "column")
	t.ControlRanges = map[string]hcl.Range{}
	for _, it := range items {
		if strings.TrimSpace(it.s) == "" {
			d.errorf(it.rng, &ctx, "Empty column name", "Column names in controls must not be empty.")
			continue
		}
		if p := t.Pairing; p != nil {
			if r, paired := p.ColumnRanges[it.s]; paired {
				role := "paired"
				if it.s == p.By {
					role = "the grouping column"
				}
				d.errorf(it.rng, &ctx, "Control is also paired",
					"%s is %s in pairing %s (at %s); a column cannot be both correlated (or grouped by) and partialled out.",
					quote(it.s), role, quote(p.Name), pos(r))
				continue
			}
		}
		t.Controls = append(t.Controls, it.s)
		t.ControlRanges[it.s] = it.rng
	}
	var kendall []string
	for _, m := range t.Measures {
		if m != stats.Spearman && m != stats.PearsonR {
			kendall = append(kendall, m.String())
		}
	}
	if len(kendall) > 0 && measures != nil {
		verb := "has"
		if len(kendall) > 1 {
			verb = "have"
		}
		mctx := measures.SrcRange
		d.errorf(measures.Expr.Range(), &mctx, "Measure has no partial form",
			"With controls, only \"spearman\" (partial Spearman: Pearson's partial correlation of ranks) and \"pearson\" can be computed; %s %s no partial form with an agreed test. Move %s to a test without controls.",
			quoteList(kendall), verb, map[bool]string{true: "it", false: "them"}[len(kendall) == 1])
	}
	if (t.PValue == PExact || t.PValue == PPermutation) && pValue != nil {
		pctx := pValue.SrcRange
		d.errorf(pValue.Expr.Range(), &pctx, "P-value method unavailable with controls",
			"A partial correlation is tested with Student's t on n − 2 − k degrees of freedom; p_value = %s has no form for partial correlations here. Use \"auto\" or \"asymptotic\".",
			quote(t.PValue.String()))
	}
}

// defaultInterval is the interval of a test without an interval block.
func defaultInterval(header hcl.Range) *Interval {
	return &Interval{Level: defaultLevel, Method: IntervalFisher, Resamples: defaultResamples, DeclRange: header}
}

func (d *decoder) decodeInterval(b *hclsyntax.Block) *Interval {
	c := d.content(b.Body, intervalSpec, b.DefRange())
	iv := defaultInterval(b.DefRange())
	if a := c.attrs["level"]; a != nil {
		iv.Level, _ = d.fraction(a, 0, 1, false, "0.95")
	}
	if a := c.attrs["method"]; a != nil {
		if w, ok := d.word(a, intervalMethods); ok {
			iv.Method = map[string]IntervalMethod{"fisher": IntervalFisher, "bootstrap": IntervalBootstrap, "bca": IntervalBCa}[w]
		}
	}
	if a := c.attrs["resamples"]; a != nil {
		n, _ := d.integer(a, minResamples, maxResamples)
		iv.Resamples = int(n)
		if iv.Method == IntervalFisher {
			ctx := a.SrcRange
			d.warnf(a.Expr.Range(), &ctx, "Resamples unused",
				"resamples applies to bootstrap and bca intervals; this interval uses the fisher method, so it is ignored.")
		}
	}
	return iv
}

func (d *decoder) decodeTable(b *hclsyntax.Block, tests *names[*Test], figures *names[*Figure], published *names[*Published]) *Table {
	c := d.blockContent(b, tableSpec)
	t := &Table{Name: b.Labels[0], Digits: defaultDigits, DeclRange: b.DefRange()}
	if a := c.attrs["tests"]; a != nil {
		if items, ok := d.list(a); ok {
			if len(items) == 0 {
				ctx := a.SrcRange
				d.errorf(a.Expr.Range(), &ctx, "Empty list", "tests must name at least one test.")
			}
			items, _ = d.distinct(a, items, "test")
			ctx := a.SrcRange
			for _, it := range items {
				if tt, found := tests.lookup(d, it.s, it.rng, &ctx); found {
					t.Tests = append(t.Tests, tt)
				}
			}
		}
	}
	if a := c.attrs["path"]; a != nil {
		if p, ok := d.nonEmpty(a); ok {
			t.PathAsWritten = p
			t.Path = d.resolve(p)
			t.pathRange = a.Expr.Range()
		}
	}
	byExt, extWord := tableFormatOf(t.PathAsWritten)
	if a := c.attrs["format"]; a != nil {
		if w, ok := d.word(a, tableFormats); ok {
			t.Format = tableFormatWords[w]
			if byExt != 0 && byExt != t.Format {
				ctx := a.SrcRange
				d.warnf(a.Expr.Range(), &ctx, "Table format and file extension disagree",
					"The table is written as %s, but its path %s ends in %s.",
					w, quote(t.PathAsWritten), filepath.Ext(t.PathAsWritten))
			}
		}
	} else if a := c.attrs["path"]; a != nil && t.PathAsWritten != "" {
		ctx := a.SrcRange
		switch {
		case byExt != 0:
			t.Format = byExt
		case extWord != "":
			d.checkWord(extWord, a.Expr.Range(), &ctx, tableFormats)
		default:
			d.errorf(a.Expr.Range(), &ctx, "Unknown table format",
				"The format of %s cannot be told from its extension. Name the file with .md, .csv, .json, .tsv, .tex, .html or .parquet, "+
					"or add format = \"markdown\" (or \"csv\", \"json\", \"tsv\", \"latex\", \"html\", \"parquet\") to the table block.", quote(t.PathAsWritten))
		}
	}
	if a := c.attrs["digits"]; a != nil {
		n, _ := d.integer(a, 0, maxDigits)
		t.Digits = int(n)
	}
	d.decodePresent(b, c, t, figures)
	d.decodeTableReproduction(b, c, t, published) // published.go
	return t
}

var tableFormatWords = map[string]TableFormat{
	"markdown": Markdown, "csv": CSV, "json": JSON, "tsv": TSV, "latex": LaTeX, "html": HTML, "parquet": Parquet,
}

// tableFormatOf infers a table format from a file extension. For an
// extension of a format this version cannot write yet it returns 0 and the
// format's word.
func tableFormatOf(p string) (TableFormat, string) {
	switch strings.ToLower(filepath.Ext(p)) {
	case ".md", ".markdown":
		return Markdown, ""
	case ".csv":
		return CSV, ""
	case ".json":
		return JSON, ""
	case ".tsv", ".tab":
		return TSV, ""
	case ".tex":
		return LaTeX, ""
	case ".html", ".htm":
		return HTML, ""
	case ".parquet":
		return Parquet, ""
	}
	return 0, ""
}

// checkOutputs reports tables that would write the same file twice, or over
// an input, the recipe or its ledger.
func (d *decoder) checkOutputs(plan *Plan) {
	inputs := map[string]*Dataset{}
	for _, ds := range plan.Datasets {
		if ds.Path != "" {
			inputs[ds.Path] = ds
		}
	}
	written := map[string]*Table{}
	for _, t := range plan.Tables {
		if t.Path == "" {
			continue
		}
		subject := t.pathRange
		ctx := hcl.RangeOver(t.DeclRange, t.pathRange)
		switch {
		case written[t.Path] != nil:
			d.errorf(subject, &ctx, "Two tables write the same file",
				"Table %s writes %s, which table %s (at %s) writes too. Give each table its own path.",
				quote(t.Name), quote(t.PathAsWritten), quote(written[t.Path].Name), pos(written[t.Path].DeclRange))
			continue
		case inputs[t.Path] != nil:
			ds := inputs[t.Path]
			d.errorf(subject, &ctx, "Table would overwrite an input",
				"Table %s writes %s, which is the data file of dataset %s (at %s).",
				quote(t.Name), quote(t.PathAsWritten), quote(ds.Name), pos(ds.DeclRange))
		case t.Path == filepath.Clean(d.recipePath):
			d.errorf(subject, &ctx, "Table would overwrite the recipe",
				"Table %s writes %s, which is this recipe file.", quote(t.Name), quote(t.PathAsWritten))
		case t.Path == filepath.Clean(d.ledgerPath):
			d.errorf(subject, &ctx, "Table would overwrite the ledger",
				"Table %s writes %s, which is this recipe's ledger.", quote(t.Name), quote(t.PathAsWritten))
		case t.Path == filepath.Clean(d.ledgerPath+".lock"):
			d.errorf(subject, &ctx, "Table would overwrite the ledger's lock",
				"Table %s writes %s, the lock file that keeps two runs of this recipe from writing at once.", quote(t.Name), quote(t.PathAsWritten))
		}
		written[t.Path] = t
	}
}
