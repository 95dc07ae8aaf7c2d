package recipe

import (
	"fmt"
	"math"
	"math/big"
	"slices"
	"strconv"
	"strings"
	"unicode"
	"unicode/utf8"

	"github.com/hashicorp/hcl/v2"
	"github.com/hashicorp/hcl/v2/hclsyntax"
	"github.com/zclconf/go-cty/cty"
)

// decoder collects diagnostics while it walks the syntax tree. It never
// stops at a problem: every check runs, and a value that failed its own
// check is simply left out of the checks that depend on it.
type decoder struct {
	dir        string // recipe folder
	recipePath string
	ledgerPath string
	src        []byte // the recipe's text, for the source of a where expression
	diags      hcl.Diagnostics

	overrides []Override       // --param values, applied by decodeParams (param.go)
	params    []*Param         // the declared parameters, once decoded
	ctx       *hcl.EvalContext // param.NAME for every argument; nil without parameters
}

func (d *decoder) add(sev hcl.DiagnosticSeverity, summary, detail string, subject hcl.Range, context *hcl.Range) {
	if context != nil && *context == subject {
		context = nil
	}
	d.diags = append(d.diags, &hcl.Diagnostic{
		Severity: sev,
		Summary:  summary,
		Detail:   detail,
		Subject:  subject.Ptr(),
		Context:  context,
	})
}

func (d *decoder) errorf(subject hcl.Range, context *hcl.Range, summary, format string, args ...any) {
	d.add(hcl.DiagError, summary, fmt.Sprintf(format, args...), subject, context)
}

func (d *decoder) warnf(subject hcl.Range, context *hcl.Range, summary, format string, args ...any) {
	d.add(hcl.DiagWarning, summary, fmt.Sprintf(format, args...), subject, context)
}

// spec is the shape of one kind of body: its arguments and nested blocks.
type spec struct {
	where    string   // "in a dataset block", for messages
	attrs    []string // in the order they are listed to the user
	blocks   []string
	required []string
	// exprs are the arguments among attrs that are kept as expressions
	// instead of being evaluated: where, whose bare names are columns.
	exprs []string
}

// labelCount says how many labels (names) each block type takes.
var labelCount = map[string]int{
	"dataset": 1, "pairing": 1, "ties": 1, "test": 1, "table": 1, "figure": 1,
	"column": 1, "interval": 0, "param": 1,
	"published": 1, "row": 0, // published.go
}

// attr is an argument whose value has been evaluated once.
type attr struct {
	*hclsyntax.Attribute
	val cty.Value
	ok  bool // evaluated without errors; when false, the problem is reported already
}

// content is a body split by its spec.
type content struct {
	attrs  map[string]*attr                // null-valued arguments count as absent
	exprs  map[string]*hclsyntax.Attribute // spec.exprs that are present (a literal null is absent)
	blocks []*hclsyntax.Block              // known types with the right number of labels, in order
	header hcl.Range                       // the enclosing block's header, for "missing" problems
	whole  *hcl.Range                      // the enclosing block, as context
}

// content checks body against s, reporting unknown arguments and blocks,
// malformed block headers and missing required arguments. header is the
// range to blame for a missing argument: the enclosing block's type and name.
func (d *decoder) content(body *hclsyntax.Body, s spec, header hcl.Range) content {
	c := content{attrs: map[string]*attr{}, exprs: map[string]*hclsyntax.Attribute{}}

	names := make([]string, 0, len(body.Attributes))
	for name := range body.Attributes {
		names = append(names, name)
	}
	slices.SortFunc(names, func(a, b string) int {
		return body.Attributes[a].SrcRange.Start.Byte - body.Attributes[b].SrcRange.Start.Byte
	})
	for _, name := range names {
		a := body.Attributes[name]
		if !slices.Contains(s.attrs, name) {
			d.unknownAttr(a, s)
			continue
		}
		if slices.Contains(s.exprs, name) {
			if l, ok := a.Expr.(*hclsyntax.LiteralValueExpr); !ok || !l.Val.IsNull() {
				c.exprs[name] = a
			}
			continue
		}
		v := d.evaluate(a)
		if v.ok && v.val.IsNull() {
			continue // null means "not set", as everywhere in HCL
		}
		c.attrs[name] = v
	}

	for _, b := range body.Blocks {
		if !slices.Contains(s.blocks, b.Type) {
			d.unknownBlock(b, s)
			continue
		}
		if !d.checkLabels(b) {
			continue
		}
		c.blocks = append(c.blocks, b)
	}

	for _, name := range s.required {
		if _, ok := c.attrs[name]; !ok && c.exprs[name] == nil {
			d.errorf(header, nil, "Missing required argument",
				"The argument %q is required %s.", name, s.where)
		}
	}
	return c
}

func (d *decoder) unknownAttr(a *hclsyntax.Attribute, s spec) {
	ctx := a.SrcRange
	if slices.Contains(s.blocks, a.Name) {
		d.errorf(a.NameRange, &ctx, "Unsupported argument",
			"%q is a block, not an argument %s: write %s { … } without the equals sign.",
			a.Name, s.where, a.Name)
		return
	}
	var detail strings.Builder
	fmt.Fprintf(&detail, "An argument named %q is not expected %s.", a.Name, s.where)
	detail.WriteString(didYouMean(a.Name, s.attrs))
	if len(s.attrs) > 0 {
		detail.WriteString(" Known arguments: " + quoteList(s.attrs) + ".")
	}
	d.errorf(a.NameRange, &ctx, "Unsupported argument", "%s", detail.String())
}

func (d *decoder) unknownBlock(b *hclsyntax.Block, s spec) {
	ctx := b.DefRange()
	if slices.Contains(s.attrs, b.Type) {
		d.errorf(b.TypeRange, &ctx, "Unsupported block type",
			"%q is an argument, not a block %s: write %s = … instead.", b.Type, s.where, b.Type)
		return
	}
	var detail strings.Builder
	fmt.Fprintf(&detail, "Blocks of type %q are not expected %s.", b.Type, s.where)
	if len(s.blocks) == 0 {
		detail.WriteString(" No blocks are allowed here.")
	} else {
		detail.WriteString(didYouMean(b.Type, s.blocks))
		detail.WriteString(" Known blocks: " + quoteList(s.blocks) + ".")
	}
	d.errorf(b.TypeRange, &ctx, "Unsupported block type", "%s", detail.String())
}

// checkLabels reports a block header with the wrong number of names, or an
// empty name, and says whether the block can be decoded.
func (d *decoder) checkLabels(b *hclsyntax.Block) bool {
	want := labelCount[b.Type]
	ctx := b.DefRange()
	switch {
	case len(b.Labels) < want:
		d.errorf(b.TypeRange, &ctx, "Missing name for "+b.Type,
			"A %s block needs a name in quotes: %s \"name\" { … }.", b.Type, b.Type)
		return false
	case len(b.Labels) > want:
		if want == 0 {
			d.errorf(b.LabelRanges[0], &ctx, "Unexpected name for "+b.Type,
				"A %s block takes no name: %s { … }.", b.Type, b.Type)
		} else {
			d.errorf(b.LabelRanges[want], &ctx, "Extra name for "+b.Type,
				"A %s block takes exactly one name: %s %s { … }.", b.Type, b.Type, quote(b.Labels[0]))
		}
		return false
	}
	for i, l := range b.Labels {
		if strings.TrimSpace(l) == "" {
			d.errorf(b.LabelRanges[i], &ctx, "Empty name for "+b.Type,
				"A %s block needs a name that is not empty or blank.", b.Type)
			return false
		}
	}
	return true
}

// evaluate computes an argument's constant value. Recipes have no functions
// and one variable, param (param.NAME for each param block, see param.go);
// a bare name is most likely a word that lost its quotes.
// (The one argument whose bare names are columns, a dataset's where, is not
// evaluated here: see spec.exprs and engine/filter.)
func (d *decoder) evaluate(a *hclsyntax.Attribute) *attr {
	if t, ok := a.Expr.(*hclsyntax.ScopeTraversalExpr); ok && len(t.Traversal) == 1 {
		name := t.Traversal.RootName()
		if name != "null" {
			ctx := a.SrcRange
			d.errorf(a.Expr.Range(), &ctx, "Unquoted name",
				"Names and words are written in quotes: %s = %s.", a.Name, quote(name))
			return &attr{Attribute: a}
		}
	}
	v, diags := a.Expr.Value(d.ctx)
	d.diags = append(d.diags, diags...)
	if diags.HasErrors() || !v.IsWhollyKnown() {
		return &attr{Attribute: a}
	}
	return &attr{Attribute: a, val: v, ok: true}
}

// typeName describes a value's type the way a recipe author thinks of it.
func typeName(v cty.Value) string {
	t := v.Type()
	switch {
	case v.IsNull():
		return "null"
	case t == cty.String:
		return "a string"
	case t == cty.Number:
		return "a number"
	case t == cty.Bool:
		return "true or false"
	case t.IsTupleType() || t.IsListType() || t.IsSetType():
		return "a list"
	case t.IsObjectType() || t.IsMapType():
		return "an object"
	}
	return t.FriendlyName()
}

func (d *decoder) wrongType(a *attr, want string) {
	ctx := a.SrcRange
	d.errorf(a.Expr.Range(), &ctx, "Wrong value type",
		"%s must be %s, not %s.", a.Name, want, typeName(a.val))
}

// str returns a string argument's value.
func (d *decoder) str(a *attr) (string, bool) {
	if !a.ok {
		return "", false
	}
	if a.val.Type() != cty.String {
		d.wrongType(a, "a string")
		return "", false
	}
	return a.val.AsString(), true
}

// nonEmpty returns a string argument that must not be blank.
func (d *decoder) nonEmpty(a *attr) (string, bool) {
	s, ok := d.str(a)
	if ok && strings.TrimSpace(s) == "" {
		ctx := a.SrcRange
		d.errorf(a.Expr.Range(), &ctx, "Empty value", "%s must not be empty.", a.Name)
		return "", false
	}
	return s, ok
}

// item is one string of a list, with where it was written.
type item struct {
	s   string
	rng hcl.Range
}

// list returns a list-of-strings argument. Every bad entry is reported;
// ok is false when any was bad.
func (d *decoder) list(a *attr) ([]item, bool) {
	if !a.ok {
		return nil, false
	}
	t := a.val.Type()
	if !(t.IsTupleType() || t.IsListType() || t.IsSetType()) {
		ctx := a.SrcRange
		hint := ""
		if t == cty.String {
			hint = fmt.Sprintf(" Write a one-entry list as %s = [%s].", a.Name, quote(a.val.AsString()))
		}
		d.errorf(a.Expr.Range(), &ctx, "Wrong value type",
			"%s must be a list of strings, not %s.%s", a.Name, typeName(a.val), hint)
		return nil, false
	}
	var ranges []hcl.Range
	if tc, isTuple := a.Expr.(*hclsyntax.TupleConsExpr); isTuple {
		for _, e := range tc.Exprs {
			ranges = append(ranges, e.Range())
		}
	}
	var items []item
	ok := true
	i := 0
	for it := a.val.ElementIterator(); it.Next(); i++ {
		_, v := it.Element()
		rng := a.Expr.Range()
		if i < len(ranges) && len(ranges) == a.val.LengthInt() {
			rng = ranges[i]
		}
		if v.IsNull() || v.Type() != cty.String {
			ctx := a.SrcRange
			d.errorf(rng, &ctx, "Wrong value type",
				"Every entry of %s must be a string; entry %d is %s.", a.Name, i+1, typeName(v))
			ok = false
			continue
		}
		items = append(items, item{s: v.AsString(), rng: rng})
	}
	return items, ok
}

// distinct reports entries written more than once in a list (what names the
// kind of entry: "column", "level") and returns the list without repeats.
func (d *decoder) distinct(a *attr, items []item, what string) ([]item, bool) {
	first := map[string]hcl.Range{}
	var out []item
	ok := true
	for _, it := range items {
		if at, seen := first[it.s]; seen {
			ctx := a.SrcRange
			d.errorf(it.rng, &ctx, "Duplicate "+what,
				"The %s %s is listed twice in %s (first at %s).", what, quote(it.s), a.Name, pos(at))
			ok = false
			continue
		}
		first[it.s] = it.rng
		out = append(out, it)
	}
	return out, ok
}

// texts returns the values of items.
func texts(items []item) []string {
	out := make([]string, len(items))
	for i, it := range items {
		out[i] = it.s
	}
	return out
}

// number returns a numeric argument's exact value.
func (d *decoder) number(a *attr) (*big.Float, bool) {
	if !a.ok {
		return nil, false
	}
	if a.val.Type() != cty.Number {
		d.wrongType(a, "a number")
		return nil, false
	}
	return a.val.AsBigFloat(), true
}

// integer returns a whole-number argument within [lo, hi].
func (d *decoder) integer(a *attr, lo, hi int64) (int64, bool) {
	f, ok := d.number(a)
	if !ok {
		return 0, false
	}
	ctx := a.SrcRange
	n, acc := f.Int64()
	if !f.IsInt() || acc != big.Exact || n < lo || n > hi {
		d.errorf(a.Expr.Range(), &ctx, "Value out of range",
			"%s must be a whole number from %d to %d; got %s.", a.Name, lo, hi, numText(f))
		return 0, false
	}
	return n, true
}

// fraction returns a numeric argument in (lo, hi), or (lo, hi] when
// closedHigh; example is a typical value for the message.
func (d *decoder) fraction(a *attr, lo, hi float64, closedHigh bool, example string) (float64, bool) {
	f, ok := d.number(a)
	if !ok {
		return 0, false
	}
	x, _ := f.Float64()
	if x > lo && (x < hi || closedHigh && x == hi) && !math.IsInf(x, 0) {
		return x, true
	}
	ctx := a.SrcRange
	bounds := "between %g and %g, exclusive"
	if closedHigh {
		bounds = "greater than %g and at most %g"
	}
	d.errorf(a.Expr.Range(), &ctx, "Value out of range",
		"%s must be "+bounds+" (for example %s); got %s.", a.Name, lo, hi, example, numText(f))
	return 0, false
}

// numText writes a number for a message: whole numbers in full up to 10¹⁸,
// anything else with 10 significant digits. It never formats the big.Float
// itself in decimal, which takes very long for a huge exponent.
func numText(f *big.Float) string {
	x, _ := f.Float64()
	switch {
	case math.IsInf(x, 0):
		return "a number too large to use"
	case x == 0 && f.Sign() != 0:
		return "a number too close to zero to use"
	case f.IsInt() && math.Abs(x) < 1e18:
		i, _ := f.Int64()
		return strconv.FormatInt(i, 10)
	}
	return strconv.FormatFloat(x, 'g', 10, 64)
}

// word returns an argument's value checked against a vocabulary.
func (d *decoder) word(a *attr, v *vocab) (string, bool) {
	s, ok := d.str(a)
	if !ok {
		return "", false
	}
	ctx := a.SrcRange
	return s, d.checkWord(s, a.Expr.Range(), &ctx, v)
}

// checkWord reports a word that v does not accept.
func (d *decoder) checkWord(s string, subject hcl.Range, ctx *hcl.Range, v *vocab) bool {
	switch {
	case v.accepts(s):
		return true
	case v.reserves(s):
		d.add(hcl.DiagError, capitalize(v.noun)+" not available yet", v.laterDetail(s), subject, ctx)
	default:
		d.add(hcl.DiagError, "Unknown "+v.noun, v.unknownDetail(s), subject, ctx)
	}
	return false
}

func capitalize(s string) string {
	r, n := utf8.DecodeRuneInString(s)
	return string(unicode.ToUpper(r)) + s[n:]
}

// pos writes where a range starts as file:line:col.
func pos(r hcl.Range) string {
	return fmt.Sprintf("%s:%d:%d", r.Filename, r.Start.Line, r.Start.Column)
}

// names indexes the blocks of one kind by label, in recipe order.
type names[T any] struct {
	block  string // the block type: "ties"
	kind   string // what a reader calls one: "ties block"
	plural string // "datasets"
	order  []string
	items  map[string]T
	where  map[string]hcl.Range
}

func newNames[T any](block, kind, plural string) *names[T] {
	return &names[T]{block: block, kind: kind, plural: plural, items: map[string]T{}, where: map[string]hcl.Range{}}
}

// add registers a block under its label, reporting a label used before.
func (n *names[T]) add(d *decoder, b *hclsyntax.Block, v T) bool {
	label := b.Labels[0]
	if first, dup := n.where[label]; dup {
		ctx := b.DefRange()
		d.errorf(b.LabelRanges[0], &ctx, "Duplicate "+n.kind+" name",
			"A %s named %s is already defined at %s. Each %s needs its own name.",
			n.kind, quote(label), pos(first), n.kind)
		return false
	}
	n.order = append(n.order, label)
	n.items[label] = v
	n.where[label] = b.DefRange()
	return true
}

// lookup resolves a reference by label, reporting an unknown one with the
// nearest known label and the full list.
func (n *names[T]) lookup(d *decoder, label string, subject hcl.Range, ctx *hcl.Range) (T, bool) {
	v, ok := n.items[label]
	if ok {
		return v, true
	}
	var detail string
	if len(n.order) == 0 {
		detail = fmt.Sprintf("No %s named %s is defined; the recipe has no %s blocks.", n.kind, quote(label), n.block)
	} else {
		detail = fmt.Sprintf("No %s named %s is defined.%s Defined %s: %s.",
			n.kind, quote(label), didYouMean(label, n.order), n.plural, quoteList(n.order))
	}
	d.add(hcl.DiagError, "Unknown "+n.kind, detail, subject, ctx)
	return v, false
}
