package recipe

import (
	"cmp"
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"
	"unicode/utf8"

	"github.com/hashicorp/hcl/v2"
	"github.com/hashicorp/hcl/v2/hclsyntax"
	"github.com/zclconf/go-cty/cty"

	"concordat/engine/stats"
)

// This file decodes `published` blocks: a table as a paper printed it, row
// by row, whose values a run recomputes, compares and, where they differ,
// tries to explain (engine/reproduce.go).
//
//	published "table_2" {
//	  source = "Author (2024), Table 2"
//	  test   = "wellbeing"                 # the test that recomputes the rows
//	  stars  = { "*" = 0.05, "**" = 0.01, "***" = 0.001 }   # the paper's legend: p below
//	  strict = false                       # true: a value that does not reproduce fails the run
//	  row {
//	    x        = "sleep_hours"
//	    y        = "feels_rested"
//	    measure  = "spearman"              # default: the test's only measure
//	    group    = "all"                   # default
//	    estimate = ".41***"                # strings, as printed
//	    p_value  = "< .001"
//	    n        = 229
//	  }
//	}

// Published is a `published "name" { … }` block: the values of a table as a
// paper printed them.
type Published struct {
	Name   string
	Source string // where the table was printed; "" when not said
	Test   *Test  // the block's test: the test of rows that name none

	// Stars is the paper's legend of significance marks, fewest marks
	// (largest threshold) first; nil when the block declares none.
	Stars []StarLevel
	// Strict makes a value that does not reproduce fail the run (after
	// its outputs and ledger record are written).
	Strict bool
	Rows   []*PublishedRow

	DeclRange hcl.Range

	legendFailed bool // the stars attribute was written but could not be read
}

// StarLevel is one entry of a star legend: Marks means p < Below.
type StarLevel struct {
	Marks string
	Below float64
}

// PublishedRow is one printed result: the pair, group and measure it
// reports and the values printed for it.
type PublishedRow struct {
	Test    *Test
	X, Y    string // as the test's pairing pairs them, whichever order the row wrote
	Group   string // "all" by default
	Measure stats.Measure

	Estimate *Printed // nil when the row prints no estimate
	PValue   *Printed // nil when the row prints no p-value
	N        int      // the printed n; -1 when the row prints none
	NText    string   // n as written

	DeclRange hcl.Range // the row block's header
	// Where each printed value was written, for messages.
	EstimateRange, PValueRange, NRange hcl.Range
}

// NotSignificantBelow is the threshold that "ns" refers to: p ≥ it. It is
// the legend's largest threshold, or .05 when the block declares none.
func (pb *Published) NotSignificantBelow() float64 {
	if len(pb.Stars) > 0 {
		return pb.Stars[0].Below
	}
	return defaultAlpha
}

// defaultAlpha is the significance level "ns" means without a legend: p ≥
// .05, the level of a two-sided test that most tables report against.
const defaultAlpha = 0.05

// MarksRange returns what the significance marks say of p under the
// legend: lo ≤ p < hi, or lo ≤ p ≤ 1 for no marks (hi = 1, closed). Marks
// means p < its threshold and, when a level with more marks exists, p at or
// above that level's threshold. ok is false when marks are not in the
// legend.
func (pb *Published) MarksRange(marks string) (lo, hi float64, ok bool) {
	if marks == "" {
		if len(pb.Stars) == 0 {
			return 0, 0, false
		}
		return pb.Stars[0].Below, 1, true
	}
	for i, l := range pb.Stars {
		if l.Marks == marks {
			lo := 0.0
			if i+1 < len(pb.Stars) {
				lo = pb.Stars[i+1].Below
			}
			return lo, l.Below, true
		}
	}
	return 0, 0, false
}

// MarksHold reports whether p is in the range that marks stand for.
func (pb *Published) MarksHold(marks string, p float64) bool {
	lo, hi, ok := pb.MarksRange(marks)
	if !ok || math.IsNaN(p) {
		return false
	}
	if marks == "" {
		return p >= lo
	}
	return p >= lo && p < hi
}

// MarksMeaning writes what marks stand for: "p < .001", ".01 ≤ p < .05",
// "p ≥ .05".
func (pb *Published) MarksMeaning(marks string) string {
	lo, hi, ok := pb.MarksRange(marks)
	switch {
	case !ok:
		return "unknown marks"
	case marks == "":
		return "p ≥ " + shortP(lo)
	case lo == 0:
		return "p < " + shortP(hi)
	}
	return shortP(lo) + " ≤ p < " + shortP(hi)
}

// shortP writes a threshold as a table would: ".05".
func shortP(v float64) string {
	s := strconv.FormatFloat(v, 'f', -1, 64)
	return strings.TrimPrefix(s, "0")
}

var (
	publishedSpec = spec{
		where:    "in a published block",
		attrs:    []string{"source", "test", "stars", "strict"},
		blocks:   []string{"row"},
		required: []string{"test"},
	}
	publishedRowSpec = spec{
		where:    "in a row block",
		attrs:    []string{"test", "x", "y", "group", "measure", "estimate", "p_value", "n"},
		required: []string{"x", "y"},
	}
)

// decodePublishedBlocks decodes every published block, in recipe order.
func (d *decoder) decodePublishedBlocks(blocks []*hclsyntax.Block, tests *names[*Test]) (*names[*Published], []*Published) {
	published := newNames[*Published]("published", "published table", "published tables")
	var out []*Published
	for _, b := range blocks {
		if pb := d.decodePublished(b, tests); published.add(d, b, pb) {
			out = append(out, pb)
		}
	}
	return published, out
}

func (d *decoder) decodePublished(b *hclsyntax.Block, tests *names[*Test]) *Published {
	c := d.blockContent(b, publishedSpec)
	pb := &Published{Name: b.Labels[0], DeclRange: b.DefRange()}
	if a := c.attrs["source"]; a != nil {
		pb.Source, _ = d.nonEmpty(a)
	}
	if a := c.attrs["test"]; a != nil {
		if s, ok := d.str(a); ok {
			ctx := a.SrcRange
			pb.Test, _ = tests.lookup(d, s, a.Expr.Range(), &ctx)
		}
	}
	if a := c.attrs["stars"]; a != nil {
		pb.Stars = d.decodeStars(a)
		// A legend with errors is reported once, not again at every mark.
		pb.legendFailed = pb.Stars == nil
	}
	if a := c.attrs["strict"]; a != nil {
		pb.Strict, _ = d.boolean(a)
	}
	type key struct {
		test, x, y, group string
		m                 stats.Measure
	}
	seen := map[key]hcl.Range{}
	for _, rb := range c.blocks {
		row := d.decodePublishedRow(rb, pb, tests)
		if row == nil {
			continue
		}
		k := key{row.Test.Name, row.X, row.Y, row.Group, row.Measure}
		if first, dup := seen[k]; dup {
			ctx := rb.DefRange()
			d.errorf(rb.TypeRange, &ctx, "Duplicate printed row",
				"This row prints %s of %s and %s (group %s) again; the first is at %s. Give each result once.",
				row.Measure, quote(row.X), quote(row.Y), quote(row.Group), pos(first))
			continue
		}
		seen[k] = rb.DefRange()
		pb.Rows = append(pb.Rows, row)
	}
	if len(c.blocks) == 0 {
		d.errorf(b.DefRange(), nil, "No printed rows",
			"The published table %s has no row blocks: add one row { x = …, y = …, estimate = \"…\" } per printed result.", quote(pb.Name))
	}
	return pb
}

// decodeStars reads a star legend: { "*" = 0.05, "**" = 0.01 }, each
// marks string standing for p below its threshold.
func (d *decoder) decodeStars(a *attr) []StarLevel {
	if !a.ok {
		return nil
	}
	ctx := a.SrcRange
	t := a.val.Type()
	if !(t.IsObjectType() || t.IsMapType()) {
		d.errorf(a.Expr.Range(), &ctx, "Wrong value type",
			"stars must be the paper's legend, such as { \"*\" = 0.05, \"**\" = 0.01, \"***\" = 0.001 } (marks = the p-value they are below); not %s.", typeName(a.val))
		return nil
	}
	// Where each entry was written, when the legend is written out.
	where := map[string]hcl.Range{}
	if oc, ok := a.Expr.(*hclsyntax.ObjectConsExpr); ok {
		for _, it := range oc.Items {
			if k, diags := it.KeyExpr.Value(nil); !diags.HasErrors() && k.Type() == cty.String && k.IsKnown() && !k.IsNull() {
				where[k.AsString()] = hcl.RangeBetween(it.KeyExpr.Range(), it.ValueExpr.Range())
			}
		}
	}
	var levels []StarLevel
	okAll := true
	for it := a.val.ElementIterator(); it.Next(); {
		k, v := it.Element()
		marks := k.AsString()
		rng, known := where[marks]
		if !known {
			rng = a.Expr.Range()
		}
		bad := marks == ""
		for _, r := range marks {
			if !isMark(r) {
				bad = true
			}
		}
		if bad {
			d.errorf(rng, &ctx, "Invalid significance marks",
				"A legend's marks are symbols such as \"*\", \"**\" or \"†\" (no letters, digits, spaces or signs); got %s.", quote(marks))
			okAll = false
			continue
		}
		if v.IsNull() || v.Type() != cty.Number {
			d.errorf(rng, &ctx, "Wrong value type",
				"The threshold of %s must be a number, the p-value the marks are below (such as 0.05); not %s.", quote(marks), typeName(v))
			okAll = false
			continue
		}
		f, _ := v.AsBigFloat().Float64()
		if !(f > 0 && f < 1) {
			d.errorf(rng, &ctx, "Value out of range",
				"The threshold of %s must lie between 0 and 1, exclusive (such as 0.05); got %s.", quote(marks), numText(v.AsBigFloat()))
			okAll = false
			continue
		}
		levels = append(levels, StarLevel{Marks: marks, Below: f})
	}
	if !okAll {
		return nil
	}
	if len(levels) == 0 {
		d.errorf(a.Expr.Range(), &ctx, "Empty legend",
			"stars must declare at least one mark, such as { \"*\" = 0.05 }; leave it out when the paper prints no marks.")
		return nil
	}
	slices.SortFunc(levels, func(x, y StarLevel) int { return cmp.Compare(y.Below, x.Below) })
	for i := 1; i < len(levels); i++ {
		if levels[i].Below == levels[i-1].Below {
			d.errorf(a.Expr.Range(), &ctx, "Ambiguous legend",
				"%s and %s both stand for p < %s; each threshold needs its own marks.",
				quote(levels[i-1].Marks), quote(levels[i].Marks), shortP(levels[i].Below))
			return nil
		}
	}
	return levels
}

func (d *decoder) decodePublishedRow(b *hclsyntax.Block, pb *Published, tests *names[*Test]) *PublishedRow {
	c := d.blockContent(b, publishedRowSpec)
	row := &PublishedRow{Test: pb.Test, Group: "all", N: -1, DeclRange: b.DefRange()}
	if a := c.attrs["test"]; a != nil {
		if s, ok := d.str(a); ok {
			ctx := a.SrcRange
			row.Test, _ = tests.lookup(d, s, a.Expr.Range(), &ctx)
		}
	}
	ok := row.Test != nil && row.Test.Pairing != nil
	var x, y string
	if a := c.attrs["x"]; a != nil {
		var good bool
		x, good = d.nonEmpty(a)
		ok = ok && good
	}
	if a := c.attrs["y"]; a != nil {
		var good bool
		y, good = d.nonEmpty(a)
		ok = ok && good
	}
	if c.attrs["x"] == nil || c.attrs["y"] == nil {
		ok = false
	}
	if a := c.attrs["group"]; a != nil {
		if s, good := d.nonEmpty(a); good {
			row.Group = s
		}
	}

	// The measure: named, or the test's only one.
	measureWord := ""
	if a := c.attrs["measure"]; a != nil {
		if w, good := d.word(a, measureWords); good {
			ctx := a.SrcRange
			if w == "somers_d" {
				d.errorf(a.Expr.Range(), &ctx, "Measure needs a direction",
					"\"somers_d\" is two measures; a printed value is one of them: \"somers_d_yx\" (y dependent) or \"somers_d_xy\" (x dependent).")
				ok = false
			} else {
				measureWord = w
				row.Measure = measuresOf(w)[0]
			}
		} else {
			ok = false
		}
	}

	// The printed values.
	if a := c.attrs["estimate"]; a != nil {
		row.EstimateRange = a.Expr.Range()
		if s, good := d.printedText(a); good {
			p, err := ParseEstimate(s)
			switch {
			case err != nil:
				d.printedError(a, s, err, "an estimate such as \".42\", \"0.42\", \"−.12\" or \".42**\"")
			case p.value() > 1 || p.value() < -1:
				ctx := a.SrcRange
				d.errorf(a.Expr.Range(), &ctx, "Estimate out of range",
					"Every measure here lies between −1 and 1; the printed estimate %s does not.", quote(s))
			default:
				row.Estimate = &p
				d.checkMarks(a, pb, p.Marks, "estimate")
			}
		}
	}
	if a := c.attrs["p_value"]; a != nil {
		row.PValueRange = a.Expr.Range()
		if s, good := d.printedText(a); good {
			p, err := ParsePValue(s)
			switch {
			case err != nil:
				d.printedError(a, s, err, "a p-value such as \".031\", \"p = .03\", \"< .001\", \"ns\" or \"**\"")
			default:
				row.PValue = &p
				if p.Kind == PrintedMarks {
					d.checkMarks(a, pb, p.Marks, "p_value")
				}
			}
		}
	}
	if a := c.attrs["n"]; a != nil {
		row.NRange = a.Expr.Range()
		row.N, row.NText = d.printedN(a)
	}
	if c.attrs["estimate"] == nil && c.attrs["p_value"] == nil && c.attrs["n"] == nil {
		d.errorf(b.DefRange(), nil, "Nothing to compare",
			"A row gives at least one printed value: estimate, p_value or n.")
		ok = false
	}
	if !ok {
		return nil
	}

	t := row.Test
	ctx := b.DefRange()
	if measureWord == "" {
		if len(t.Measures) > 1 {
			d.errorf(b.DefRange(), nil, "Missing measure",
				"Test %s computes %s; say which one this row printed with measure = \"…\".",
				quote(t.Name), quoteList(measureWordsOf(t.Measures)))
			return nil
		}
		row.Measure = t.Measures[0]
	}

	// The pair, in either order; an asymmetric measure (Somers' d) turns
	// with it.
	p := t.Pairing
	switch {
	case slices.Contains(p.Pairs, Pair{X: x, Y: y}):
		row.X, row.Y = x, y
	case slices.Contains(p.Pairs, Pair{X: y, Y: x}):
		row.X, row.Y = y, x
		switch row.Measure {
		case stats.SomersDYX:
			row.Measure = stats.SomersDXY
		case stats.SomersDXY:
			row.Measure = stats.SomersDYX
		}
	default:
		columns := pairingColumns(p)
		subject := c.attrs["x"].Expr.Range()
		var hint string
		for _, name := range []struct {
			a *attr
			s string
		}{{c.attrs["x"], x}, {c.attrs["y"], y}} {
			if !slices.Contains(columns, name.s) {
				subject = name.a.Expr.Range()
				hint = fmt.Sprintf(" The pairing has no column %s.%s Its columns: %s.", quote(name.s), didYouMean(name.s, columns), quoteList(columns))
				break
			}
		}
		d.errorf(subject, &ctx, "Pair not in the test",
			"Test %s's pairing %s does not pair %s with %s.%s", quote(t.Name), quote(p.Name), quote(x), quote(y), hint)
		return nil
	}
	if !slices.Contains(t.Measures, row.Measure) {
		a := c.attrs["measure"]
		d.errorf(a.Expr.Range(), &ctx, "Measure not computed",
			"Test %s computes %s, not %s; add it to the test's measures or name another test.",
			quote(t.Name), quoteList(measureWordsOf(t.Measures)), quote(measureWord))
		return nil
	}
	if row.Group != "all" && p.By == "" {
		a := c.attrs["group"]
		d.errorf(a.Expr.Range(), &ctx, "No groups",
			"Test %s's pairing %s has no by, so its only group is \"all\".", quote(t.Name), quote(p.Name))
		return nil
	}
	return row
}

// pairingColumns lists a pairing's columns in the order written.
func pairingColumns(p *Pairing) []string {
	out := slices.Clone(p.Columns)
	for _, c := range append(slices.Clone(p.X), p.Y...) {
		if !slices.Contains(out, c) {
			out = append(out, c)
		}
	}
	return out
}

// printedText returns a printed value's text. Printed values are strings,
// so that their digits are kept: a number such as 0.420 would lose its
// last zero, and with it the precision it was printed to.
func (d *decoder) printedText(a *attr) (string, bool) {
	if a.ok && a.val.Type() == cty.Number {
		ctx := a.SrcRange
		text := strings.TrimSpace(string(a.Expr.Range().SliceBytes(d.src)))
		d.errorf(a.Expr.Range(), &ctx, "Printed value is not a string",
			"Write %s as printed, in quotes: %s = %s. As a number it would lose the digits it was printed with (0.420 is 0.42 to HCL).",
			a.Name, a.Name, quote(text))
		return "", false
	}
	return d.str(a)
}

// printedError reports a printed value that cannot be read, pointing at
// the character where reading stopped when the string is written without
// escapes.
func (d *decoder) printedError(a *attr, s string, err error, example string) {
	ctx := a.SrcRange
	subject := a.Expr.Range()
	if pe, ok := err.(*PrintedError); ok {
		subject = d.pointInString(a, s, pe.Offset)
	}
	d.errorf(subject, &ctx, "Unreadable printed value",
		"The %s %s cannot be read: %s. Write it as the table printed it, for example %s.", a.Name, quote(s), err, example)
}

// pointInString narrows an attribute's range to the character at byte
// offset of its string value, when the source holds the string literally
// (no escapes or templates); otherwise it returns the whole expression.
func (d *decoder) pointInString(a *attr, s string, offset int) hcl.Range {
	rng := a.Expr.Range()
	te, ok := a.Expr.(*hclsyntax.TemplateExpr)
	if !ok || len(te.Parts) != 1 || rng.Start.Line != rng.End.Line {
		return rng
	}
	src := rng.SliceBytes(d.src)
	if len(src) != len(s)+2 || string(src[1:len(src)-1]) != s || offset < 0 || offset > len(s) {
		return rng
	}
	start := rng.Start
	start.Byte += 1 + offset
	start.Column += 1 + utf8.RuneCountInString(s[:offset])
	end := start
	if offset < len(s) {
		_, w := utf8.DecodeRuneInString(s[offset:])
		end.Byte += w
		end.Column++
	}
	return hcl.Range{Filename: rng.Filename, Start: start, End: end}
}

// checkMarks reports significance marks that the block's legend does not
// explain.
func (d *decoder) checkMarks(a *attr, pb *Published, marks, what string) {
	if marks == "" || pb.legendFailed {
		return
	}
	ctx := a.SrcRange
	if len(pb.Stars) == 0 {
		d.errorf(a.Expr.Range(), &ctx, "Marks without a legend",
			"The %s carries the marks %s, but the published block declares no legend: add stars = { \"*\" = 0.05, … } as the paper's note defines them.", what, quote(marks))
		return
	}
	if _, _, ok := pb.MarksRange(marks); !ok {
		var known []string
		for _, l := range pb.Stars {
			known = append(known, l.Marks)
		}
		d.errorf(a.Expr.Range(), &ctx, "Marks not in the legend",
			"The marks %s are not in the block's legend (%s).", quote(marks), quoteList(known))
	}
}

// printedN reads a printed n: a whole number, or a string of digits
// ("212", "1,204", "N = 212").
func (d *decoder) printedN(a *attr) (int, string) {
	if !a.ok {
		return -1, ""
	}
	ctx := a.SrcRange
	switch a.val.Type() {
	case cty.Number:
		n, ok := d.integer(a, 0, math.MaxInt32)
		if !ok {
			return -1, ""
		}
		return int(n), strconv.FormatInt(n, 10)
	case cty.String:
		s := a.val.AsString()
		n, ok := parsePrintedN(s)
		if !ok {
			d.errorf(a.Expr.Range(), &ctx, "Unreadable printed value",
				"The n %s cannot be read: write the number of pairs as printed, such as 212, \"212\" or \"1,204\".", quote(s))
			return -1, ""
		}
		return n, s
	}
	d.wrongType(a, "a whole number or a string")
	return -1, ""
}

// parsePrintedN reads "212", "1,204", "1 204" (thin or no-break spaces
// too) or "N = 212".
func parsePrintedN(s string) (int, bool) {
	t := strings.TrimFunc(s, isBlank)
	if rest, ok := strings.CutPrefix(t, "N"); ok {
		t = rest
	} else if rest, ok := strings.CutPrefix(t, "n"); ok {
		t = rest
	}
	if t != strings.TrimFunc(s, isBlank) {
		t = strings.TrimFunc(t, isBlank)
		rest, ok := strings.CutPrefix(t, "=")
		if !ok {
			return 0, false
		}
		t = strings.TrimFunc(rest, isBlank)
	}
	var digits []byte
	for i, r := range t {
		switch {
		case r >= '0' && r <= '9':
			digits = append(digits, byte(r))
		case (r == ',' || isBlank(r)) && i > 0:
		default:
			return 0, false
		}
	}
	if len(digits) == 0 || len(digits) > 9 {
		return 0, false
	}
	n, err := strconv.Atoi(string(digits))
	return n, err == nil
}

// describe writes a published block for Describe.
func (pb *Published) describe(b *strings.Builder) {
	fmt.Fprintf(b, "\npublished %s {\n", quote(pb.Name))
	if pb.Source != "" {
		b.WriteString("source = " + quote(pb.Source) + "\n")
	}
	b.WriteString("test = " + quote(pb.Test.Name) + "\n")
	if len(pb.Stars) > 0 {
		var parts []string
		for _, l := range pb.Stars {
			parts = append(parts, quote(l.Marks)+" = "+num(l.Below))
		}
		b.WriteString("stars = { " + strings.Join(parts, ", ") + " }\n")
	}
	b.WriteString("strict = " + strconv.FormatBool(pb.Strict) + "\n")
	fmt.Fprintf(b, "# \"ns\" means p ≥ %s\n", num(pb.NotSignificantBelow()))
	for _, r := range pb.Rows {
		b.WriteString("\nrow {\n")
		if r.Test != pb.Test {
			b.WriteString("test = " + quote(r.Test.Name) + "\n")
		}
		b.WriteString("x = " + quote(r.X) + "\ny = " + quote(r.Y) + "\n")
		b.WriteString("group = " + quote(r.Group) + "\n")
		b.WriteString("measure = " + quote(r.Measure.String()) + "\n")
		if r.Estimate != nil {
			b.WriteString("estimate = " + quote(r.Estimate.Text) + "\n")
		}
		if r.PValue != nil {
			b.WriteString("p_value = " + quote(r.PValue.Text) + "\n")
		}
		if r.N >= 0 {
			fmt.Fprintf(b, "n = %d\n", r.N)
		}
		b.WriteString("}\n")
	}
	b.WriteString("}\n")
}

// publishedSettings is a published block for the ledger's settings.
type publishedSettings struct {
	Name   string              `json:"name"`
	Source string              `json:"source"`
	Test   string              `json:"test"`
	Stars  []starSettings      `json:"stars"`
	Strict bool                `json:"strict"`
	Rows   []publishedRowEntry `json:"rows"`
}

type starSettings struct {
	Marks string  `json:"marks"`
	Below float64 `json:"below"`
}

type publishedRowEntry struct {
	Test     string `json:"test"`
	X        string `json:"x"`
	Y        string `json:"y"`
	Group    string `json:"group"`
	Measure  string `json:"measure"`
	Estimate string `json:"estimate,omitempty"`
	PValue   string `json:"p_value,omitempty"`
	N        *int   `json:"n,omitempty"`
}

// Settings returns the block as plain data for the ledger and for step
// hashes: every printed value as written, the legend in order.
func (pb *Published) Settings() any { return pb.settings() }

func (pb *Published) settings() publishedSettings {
	s := publishedSettings{Name: pb.Name, Source: pb.Source, Test: pb.Test.Name, Stars: []starSettings{}, Strict: pb.Strict, Rows: []publishedRowEntry{}}
	for _, l := range pb.Stars {
		s.Stars = append(s.Stars, starSettings{l.Marks, l.Below})
	}
	for _, r := range pb.Rows {
		e := publishedRowEntry{Test: r.Test.Name, X: r.X, Y: r.Y, Group: r.Group, Measure: r.Measure.String()}
		if r.Estimate != nil {
			e.Estimate = r.Estimate.Text
		}
		if r.PValue != nil {
			e.PValue = r.PValue.Text
		}
		if r.N >= 0 {
			n := r.N
			e.N = &n
		}
		s.Rows = append(s.Rows, e)
	}
	return s
}

// decodeTableReproduction reads a table's reproduction: the published
// table whose reproduction report it writes. A table has tests,
// reproduction, or both; with both, the report follows the results, which
// only a readable format (markdown, latex, html) can hold in one file.
func (d *decoder) decodeTableReproduction(b *hclsyntax.Block, c content, t *Table, published *names[*Published]) {
	a := c.attrs["reproduction"]
	if a == nil {
		if c.attrs["tests"] == nil {
			d.errorf(b.DefRange(), nil, "Missing required argument",
				"The argument \"tests\" is required in a table block (or \"reproduction\", for a published table's reproduction report).")
		}
		return
	}
	s, ok := d.str(a)
	if !ok {
		return
	}
	ctx := a.SrcRange
	pb, found := published.lookup(d, s, a.Expr.Range(), &ctx)
	if !found {
		return
	}
	t.Reproduction = pb
	if c.attrs["tests"] != nil && t.Format != 0 && !t.Format.Readable() {
		d.errorf(a.NameRange, &ctx, "Two tables in one file",
			"A %s file holds one table: the results of tests, or a reproduction report. Give the reproduction report a table of its own.", t.Format)
	}
	if t.Layout == LayoutMatrix {
		d.errorf(a.NameRange, &ctx, "Reproduction in a matrix",
			"A reproduction report is a list of printed values; it cannot follow a matrix layout. Give it a table of its own.")
	}
	if other := c.attrs["digits"]; other != nil && c.attrs["tests"] == nil {
		octx := other.SrcRange
		d.warnf(other.NameRange, &octx, "Digits unused",
			"A reproduction report shows each recomputed value with two decimals more than the paper printed (and records every digit); digits applies to tables of test results, so it is ignored here.")
	}
	if c.attrs["tests"] == nil {
		for _, name := range []string{"columns", "groups", "figures"} {
			if other := c.attrs[name]; other != nil {
				octx := other.SrcRange
				d.errorf(other.NameRange, &octx, "Setting does not apply to a reproduction report",
					"%s shapes a table of test results; this table holds only the reproduction report of %s.", name, quote(pb.Name))
			}
		}
	}
}
