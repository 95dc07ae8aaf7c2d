package filter

import (
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"

	"github.com/hashicorp/hcl/v2"
	"github.com/hashicorp/hcl/v2/hclsyntax"
	"github.com/zclconf/go-cty/cty"
)

// Kind says how a column of a filter is read and compared. The zero value
// is invalid.
type Kind int

const (
	_       Kind = iota
	Number       // read as numbers, compared as float64
	Text         // read as text labels, compared with == and != only
	Ordinal      // read through the dataset's levels (label i is i+1), compared by level order
)

// String names the kind for messages and the ledger.
func (k Kind) String() string {
	switch k {
	case Number:
		return "number"
	case Text:
		return "text"
	case Ordinal:
		return "ordinal"
	}
	return fmt.Sprintf("Kind(%d)", int(k))
}

// Column is a column that a filter reads.
type Column struct {
	Name   string
	Kind   Kind
	Levels []string  // an Ordinal column's labels, low to high, as the dataset declares them
	Range  hcl.Range // where the expression first names the column
}

// Expr is a checked filter, ready to be compiled against the data.
type Expr struct {
	// Text is the expression as written, with comments dropped and each run
	// of spaces and line breaks written as one space: "age >= 18 && site != \"B\"".
	Text    string
	Range   hcl.Range
	Columns []Column // in the order the expression first names them
	Params  []Param  // the parameters it uses (param.NAME), in the order it first names them

	norm hclsyntax.Expression // what runs: see normalise
}

// Env is what Analyze knows of the dataset before reading it.
type Env struct {
	// Levels maps each ordinal column to its labels, low to high.
	Levels map[string][]string
	// Suggest, when not nil, proposes the label a misspelled one most
	// likely meant ("" for none), for "Did you mean" in diagnostics.
	Suggest func(word string, candidates []string) string
	// Params are the recipe's parameters by name: param.NAME in the
	// expression is that value, a constant (a number, string or bool).
	Params map[string]cty.Value
}

// Param is a recipe parameter that a filter uses, with its value.
type Param struct {
	Name  string
	Value cty.Value
}

// Analyze checks a filter expression and decides how each column is read
// (see the package documentation for the language and its types). src is
// the text of the file the expression was parsed from, for its Text and to
// read number literals exactly. Every problem is returned as a diagnostic
// whose Subject points at it; the Expr is nil when there is an error.
//
// It costs one pass over the expression, plus near-linear unification of
// the columns' kinds.
func Analyze(expr hcl.Expression, src []byte, env Env) (*Expr, hcl.Diagnostics) {
	e, ok := expr.(hclsyntax.Expression)
	if !ok {
		rng := expr.Range()
		return nil, hcl.Diagnostics{{
			Severity: hcl.DiagError, Summary: "Unsupported where syntax",
			Detail: "A where expression must be written in HCL native syntax.", Subject: &rng,
		}}
	}
	c := &checker{env: env, src: src, cols: map[string]*tvar{}, lits: map[hclsyntax.Expression]*tvar{}, nums: map[hclsyntax.Expression]float64{},
		params: map[hclsyntax.Expression]*hclsyntax.LiteralValueExpr{}}
	root := c.check(e)
	c.needBool(root, e, "where")
	c.finish()
	if c.diags.HasErrors() {
		return nil, c.diags
	}
	out := &Expr{Text: exprText(src, e.Range()), Range: e.Range(), Params: c.used}
	for _, name := range c.order {
		r := c.cols[name].find()
		col := Column{Name: name, Kind: Number, Range: c.first[name]}
		switch r.kind {
		case kText, kStr:
			col.Kind = Text
		case kOrd:
			col.Kind, col.Levels = Ordinal, r.levels
		}
		out.Columns = append(out.Columns, col)
	}
	out.norm = c.normalise(e)
	return out, c.diags
}

// kind is what the checker knows of a value's type.
type kind uint8

const (
	kAny  kind = iota // not decided: a column compared only with other columns (read as numbers)
	kBad              // a problem already reported
	kBool             // a condition
	kNum              // a number
	kStr              // a string literal: text, or a label of an ordinal column
	kText             // text
	kOrd              // an ordinal column's labels
)

// tvar is a type variable: one per value in the expression, one per column
// (shared by every place that names it), joined into classes by union-find.
// The root of a class holds what is known of the class.
type tvar struct {
	parent *tvar
	kind   kind
	levels []string  // kOrd
	column string    // a column in the class, "" when none
	why    hcl.Range // the expression that fixed the kind
}

func (v *tvar) find() *tvar {
	for v.parent != nil {
		if v.parent.parent != nil {
			v.parent = v.parent.parent
		}
		v = v.parent
	}
	return v
}

type checker struct {
	env   Env
	src   []byte
	cols  map[string]*tvar
	order []string
	first map[string]hcl.Range
	lits  map[hclsyntax.Expression]*tvar   // string literals, for level checks and normalise
	nums  map[hclsyntax.Expression]float64 // number literals, as float64
	ords  []ordered
	diags hcl.Diagnostics
	// params maps each param.NAME in the expression to the literal of its
	// value, which stands in for it when typing and normalising.
	params map[hclsyntax.Expression]*hclsyntax.LiteralValueExpr
	used   []Param
}

// ordered is a comparison by <, <=, > or >=, checked once every kind is known.
type ordered struct {
	v  *tvar
	at *hclsyntax.BinaryOpExpr
}

func (c *checker) errorf(subject hcl.Range, context *hcl.Range, summary, format string, args ...any) {
	if context != nil && *context == subject {
		context = nil
	}
	c.diags = append(c.diags, &hcl.Diagnostic{
		Severity: hcl.DiagError, Summary: summary, Detail: fmt.Sprintf(format, args...),
		Subject: subject.Ptr(), Context: context,
	})
}

func bad() *tvar { return &tvar{kind: kBad} }

// check returns the type variable of e, reporting what the language does not
// allow.
func (c *checker) check(e hclsyntax.Expression) *tvar {
	switch e := e.(type) {
	case *hclsyntax.LiteralValueExpr:
		return c.literal(e)
	case *hclsyntax.TemplateExpr:
		if _, ok := templateText(e); !ok {
			c.errorf(e.SrcRange, nil, "Template not allowed in where",
				"Text in a where expression is a plain string, such as site == \"B\"; interpolations and directives are not available.")
			return bad()
		}
		v := &tvar{kind: kStr, why: e.SrcRange}
		c.lits[e] = v
		return v
	case *hclsyntax.TemplateWrapExpr:
		c.errorf(e.SrcRange, nil, "Template not allowed in where",
			"Text in a where expression is a plain string, such as site == \"B\"; interpolations are not available. To use a column, name it without quotes.")
		return bad()
	case *hclsyntax.ScopeTraversalExpr:
		if lit, ok := c.param(e); ok {
			if lit == nil {
				return bad()
			}
			return c.literal(lit)
		}
		if len(e.Traversal) != 1 {
			name := e.Traversal.RootName()
			c.errorf(e.SrcRange, nil, "Not a column name",
				"A where expression names columns by their bare names; %s has %s after the name %q.",
				c.text(e.SrcRange), stepKind(e.Traversal[1]), name)
			return bad()
		}
		return c.column(e.Traversal.RootName(), e.SrcRange)
	case *hclsyntax.ParenthesesExpr:
		return c.check(e.Expression)
	case *hclsyntax.UnaryOpExpr:
		v := c.check(e.Val)
		switch e.Op {
		case hclsyntax.OpLogicalNot:
			c.needBool(v, e.Val, "!")
			return &tvar{kind: kBool, why: e.SrcRange}
		case hclsyntax.OpNegate:
			c.needNum(v, e.Val, e.SrcRange, "unary -")
			return &tvar{kind: kNum, why: e.SrcRange}
		}
	case *hclsyntax.BinaryOpExpr:
		l, r := c.check(e.LHS), c.check(e.RHS)
		sym := opSymbol(e.Op)
		switch e.Op {
		case hclsyntax.OpLogicalAnd, hclsyntax.OpLogicalOr:
			c.needBool(l, e.LHS, sym)
			c.needBool(r, e.RHS, sym)
			return &tvar{kind: kBool, why: e.SrcRange}
		case hclsyntax.OpEqual, hclsyntax.OpNotEqual:
			c.same(l, r, e, sym)
			return &tvar{kind: kBool, why: e.SrcRange}
		case hclsyntax.OpLessThan, hclsyntax.OpLessThanOrEqual, hclsyntax.OpGreaterThan, hclsyntax.OpGreaterThanOrEqual:
			c.same(l, r, e, sym)
			c.ords = append(c.ords, ordered{v: l, at: e})
			return &tvar{kind: kBool, why: e.SrcRange}
		case hclsyntax.OpAdd, hclsyntax.OpSubtract, hclsyntax.OpMultiply, hclsyntax.OpDivide, hclsyntax.OpModulo:
			c.needNum(l, e.LHS, e.SrcRange, sym)
			c.needNum(r, e.RHS, e.SrcRange, sym)
			return &tvar{kind: kNum, why: e.SrcRange}
		}
	case *hclsyntax.ConditionalExpr:
		c.needBool(c.check(e.Condition), e.Condition, "the condition of ? :")
		t, f := c.check(e.TrueResult), c.check(e.FalseResult)
		if !c.merge(t, f, e.SrcRange) {
			ctx := e.SrcRange
			c.errorf(e.FalseResult.Range(), &ctx, "Mismatched types in where",
				"The two results of ? : must be of one type; %s is %s and %s is %s.",
				c.text(e.TrueResult.Range()), c.desc(t), c.text(e.FalseResult.Range()), c.desc(f))
			c.spoil(t, f)
		}
		return t
	case *hclsyntax.FunctionCallExpr:
		c.errorf(e.Range(), nil, "Function calls not allowed",
			"A where expression compares columns with values (==, !=, <, <=, >, >=, &&, ||, !, arithmetic and ? :); functions such as %s(…) are not available.", e.Name)
		return bad()
	}
	rng := e.Range()
	c.errorf(rng, nil, "Expression not allowed in where",
		"A where expression compares columns with values (==, !=, <, <=, >, >=, &&, ||, !, arithmetic and ? :); %s is not available.", what(e))
	return bad()
}

// literal types a literal value, reading a number from its source text.
func (c *checker) literal(e *hclsyntax.LiteralValueExpr) *tvar {
	v := e.Val
	switch {
	case v.IsNull():
		c.errorf(e.SrcRange, nil, "Null not allowed in where",
			"A where expression cannot test for null: a missing cell makes every comparison with it unknown, and the row is dropped.")
		return bad()
	case v.Type() == cty.Bool:
		return &tvar{kind: kBool, why: e.SrcRange}
	case v.Type() == cty.String:
		t := &tvar{kind: kStr, why: e.SrcRange}
		c.lits[e] = t
		return t
	case v.Type() == cty.Number:
		f, ok := c.number(e)
		if !ok {
			c.errorf(e.SrcRange, nil, "Number out of range",
				"%s is beyond the range of the numbers in the data (about ±1.8e308).", c.text(e.SrcRange))
			return bad()
		}
		c.nums[e] = f
		return &tvar{kind: kNum, why: e.SrcRange}
	}
	c.errorf(e.SrcRange, nil, "Expression not allowed in where", "A value of type %s is not available in a where expression.", v.Type().FriendlyName())
	return bad()
}

// number reads a number literal the way the dataset reads a cell: its
// source text through strconv.ParseFloat, correctly rounded. (Rounding the
// parser's 512-bit value again could round twice.) Without the source text
// it rounds the parsed value. It reports false beyond the float64 range.
func (c *checker) number(e *hclsyntax.LiteralValueExpr) (float64, bool) {
	r := e.SrcRange
	if r.Start.Byte >= 0 && r.End.Byte <= len(c.src) && r.Start.Byte < r.End.Byte {
		f, err := strconv.ParseFloat(string(c.src[r.Start.Byte:r.End.Byte]), 64)
		if err == nil {
			return f, true
		}
		if ne, ok := err.(*strconv.NumError); ok && ne.Err == strconv.ErrRange && math.IsInf(f, 0) {
			return 0, false
		}
	}
	f, _ := e.Val.AsBigFloat().Float64()
	return f, !math.IsInf(f, 0)
}

// column returns the shared type variable of a column.
func (c *checker) column(name string, at hcl.Range) *tvar {
	if v, ok := c.cols[name]; ok {
		return v
	}
	if c.first == nil {
		c.first = map[string]hcl.Range{}
	}
	v := &tvar{kind: kAny, column: name}
	if lv, ok := c.env.Levels[name]; ok {
		v.kind, v.levels = kOrd, lv
	}
	c.cols[name] = v
	c.order = append(c.order, name)
	c.first[name] = at
	return v
}

// merge joins the classes of a and b, reporting false (and changing
// nothing) when their kinds conflict. at is the expression that joins them,
// recorded as the reason of a kind it decides.
func (c *checker) merge(a, b *tvar, at hcl.Range) bool {
	ra, rb := a.find(), b.find()
	if ra == rb {
		return true
	}
	k, ok := join(ra.kind, rb.kind)
	if !ok || ra.kind == kOrd && rb.kind == kOrd && !slices.Equal(ra.levels, rb.levels) {
		return false
	}
	column := cmpOr(ra.column, rb.column)
	if k == kBool && column != "" {
		return false // a column is never a condition by itself
	}
	levels := ra.levels
	if rb.kind == kOrd {
		levels = rb.levels
	}
	// For a class with a column, why is the expression that decided the
	// column's kind: the one joining here, if the kind is new to it.
	side := ra
	if ra.column == "" {
		side = rb
	}
	why := side.why
	if side.kind != k {
		why = at
	}
	rb.parent = ra
	ra.kind, ra.levels, ra.column, ra.why = k, levels, column, why
	return true
}

// join is the kind of a class made of two classes of kinds a and b, and
// false when they conflict.
func join(a, b kind) (kind, bool) {
	switch {
	case a == kBad || b == kBad:
		return kBad, true
	case a == kAny:
		return b, true
	case b == kAny, a == b:
		return a, true
	case a == kStr && (b == kText || b == kOrd):
		return b, true
	case b == kStr && (a == kText || a == kOrd):
		return a, true
	}
	return 0, false
}

// spoil marks the classes of vs as already reported, so that one mistake
// gives one diagnostic.
func (c *checker) spoil(vs ...*tvar) {
	root := bad()
	for _, v := range vs {
		if r := v.find(); r != root {
			r.parent = root
		}
	}
}

func cmpOr(a, b string) string {
	if a != "" {
		return a
	}
	return b
}

// same requires both sides of a comparison to be of one type.
func (c *checker) same(l, r *tvar, e *hclsyntax.BinaryOpExpr, sym string) {
	if c.merge(l, r, e.SrcRange) {
		return
	}
	ctx := e.SrcRange
	rl, rr := l.find(), r.find()
	switch {
	case rl.kind == kOrd && rr.kind == kNum || rr.kind == kOrd && rl.kind == kNum:
		ord := rl
		if rr.kind == kOrd {
			ord = rr
		}
		c.errorf(e.SrcRange, nil, "Mismatched types in where",
			"Column %q has levels, so it is compared with its labels, such as %s >= %s, not with numbers.",
			ord.column, ord.column, strconv.Quote(ord.levels[len(ord.levels)/2]))
	case rl.kind == kBool && rl.column == "" && rr.column != "" || rr.kind == kBool && rr.column == "" && rl.column != "":
		col := rl.column
		if col == "" {
			col = rr.column
		}
		c.errorf(e.SrcRange, nil, "Mismatched types in where",
			"%s compares column %q with a condition; a column is a number or text, never true or false.", c.text(e.SrcRange), col)
	default:
		c.errorf(e.RHS.Range(), &ctx, "Mismatched types in where",
			"%s compares %s with %s: both sides of %s must be numbers, text, or labels of one ordinal column.",
			c.text(e.SrcRange), c.desc(l), c.desc(r), sym)
	}
	c.spoil(l, r)
}

// needBool requires v, the value of e, to be a condition.
func (c *checker) needBool(v *tvar, e hclsyntax.Expression, where string) {
	if c.merge(v, &tvar{kind: kBool, why: e.Range()}, e.Range()) {
		return
	}
	r := v.find()
	rng := e.Range()
	switch {
	case r.column != "" && isColumn(e):
		c.errorf(rng, nil, "Column is not a condition",
			"Column %q is not true or false by itself: compare it with a value, such as %s == 1 or %s == \"yes\".",
			r.column, r.column, r.column)
	case where == "where" && r.kind == kStr:
		c.errorf(rng, nil, "Where is not a condition",
			"where must be a condition, such as age >= 18, not text. A condition is written without quotes.")
	case where == "where":
		c.errorf(rng, nil, "Where is not a condition",
			"where must be a condition, such as age >= 18; %s is %s.", c.text(rng), c.desc(v))
	default:
		c.errorf(rng, nil, "Mismatched types in where",
			"%s needs a condition (true or false); %s is %s.", where, c.text(rng), c.desc(v))
	}
	c.spoil(v)
}

// needNum requires v, the value of e, to be a number; at is the
// arithmetic that requires it.
func (c *checker) needNum(v *tvar, e hclsyntax.Expression, at hcl.Range, op string) {
	if c.merge(v, &tvar{kind: kNum, why: at}, at) {
		return
	}
	r := v.find()
	rng := e.Range()
	if r.kind == kOrd {
		c.errorf(rng, nil, "Mismatched types in where",
			"Column %q has levels, so it is compared with its labels; %s needs numbers.", r.column, op)
	} else {
		c.errorf(rng, nil, "Mismatched types in where", "%s needs numbers; %s is %s.", op, c.text(rng), c.desc(v))
	}
	c.spoil(v)
}

func isColumn(e hclsyntax.Expression) bool {
	for {
		p, ok := e.(*hclsyntax.ParenthesesExpr)
		if !ok {
			break
		}
		e = p.Expression
	}
	_, ok := e.(*hclsyntax.ScopeTraversalExpr)
	return ok
}

// finish runs the checks that need every kind decided: ordering comparisons
// and labels of ordinal columns.
func (c *checker) finish() {
	for _, o := range c.ords {
		r := o.v.find()
		switch r.kind {
		case kText, kStr:
			subject := o.at.SrcRange
			detail := fmt.Sprintf("%s orders text: only numbers and the labels of a column with levels can be compared with <, <=, > and >=.", c.text(subject))
			if r.column != "" {
				detail += fmt.Sprintf(" To order the labels of %q, declare them in a column block: column %q { levels = [ … ] }.", r.column, r.column)
			}
			c.errorf(subject, nil, "Text cannot be ordered", "%s", detail)
			c.spoil(o.v)
		case kBool:
			c.errorf(o.at.SrcRange, nil, "Mismatched types in where",
				"%s orders conditions; only numbers and the labels of a column with levels can be compared with <, <=, > and >=.", c.text(o.at.SrcRange))
			c.spoil(o.v)
		}
	}
	for e, v := range c.lits {
		r := v.find()
		if r.kind != kOrd {
			continue
		}
		s, _ := stringOf(e)
		if !slices.Contains(r.levels, s) {
			var hint string
			if c.env.Suggest != nil {
				if m := c.env.Suggest(s, r.levels); m != "" {
					hint = fmt.Sprintf(" Did you mean %s?", strconv.Quote(m))
				}
			}
			c.errorf(e.Range(), nil, "Unknown level",
				"%s is not a level of column %q.%s Its levels, low to high: %s.", strconv.Quote(s), r.column, hint, quoteList(r.levels))
		}
	}
	sortDiags(c.diags)
}

// sortDiags orders diagnostics by position: the level checks above visit a
// map.
func sortDiags(d hcl.Diagnostics) {
	slices.SortStableFunc(d, func(a, b *hcl.Diagnostic) int { return a.Subject.Start.Byte - b.Subject.Start.Byte })
}

// desc describes the type of v for a message.
func (c *checker) desc(v *tvar) string {
	r := v.find()
	if r.column != "" {
		switch r.kind {
		case kNum:
			return fmt.Sprintf("column %q (numbers, as %s at %s says)", r.column, c.text(r.why), pos(r.why))
		case kText, kStr:
			return fmt.Sprintf("column %q (text, as %s at %s says)", r.column, c.text(r.why), pos(r.why))
		case kOrd:
			return fmt.Sprintf("column %q (ordinal, with levels %s)", r.column, quoteList(r.levels))
		}
		return fmt.Sprintf("column %q", r.column)
	}
	switch r.kind {
	case kNum:
		return "a number"
	case kText, kStr:
		return "text"
	case kBool:
		return "a condition"
	}
	return "a value"
}

// text is the source text at rng, for messages.
func (c *checker) text(rng hcl.Range) string {
	if t := exprText(c.src, rng); t != "" {
		return t
	}
	return "the expression at " + pos(rng)
}

func pos(r hcl.Range) string {
	return fmt.Sprintf("%s:%d:%d", r.Filename, r.Start.Line, r.Start.Column)
}

func quoteList(list []string) string {
	q := make([]string, len(list))
	for i, s := range list {
		q[i] = strconv.Quote(s)
	}
	return strings.Join(q, ", ")
}

// exprText writes the source text at rng without comments, each run of
// spaces and line breaks as one space. It returns "" when src does not hold
// rng.
func exprText(src []byte, rng hcl.Range) string {
	if rng.Start.Byte < 0 || rng.End.Byte > len(src) || rng.Start.Byte >= rng.End.Byte {
		return ""
	}
	text := src[rng.Start.Byte:rng.End.Byte]
	toks, diags := hclsyntax.LexExpression(text, rng.Filename, rng.Start)
	if diags.HasErrors() {
		return strings.Join(strings.Fields(string(text)), " ")
	}
	var b strings.Builder
	end := -1
	for _, t := range toks {
		switch t.Type {
		case hclsyntax.TokenComment, hclsyntax.TokenNewline, hclsyntax.TokenEOF:
			continue
		}
		if end >= 0 && t.Range.Start.Byte > end {
			b.WriteByte(' ')
		}
		b.Write(t.Bytes)
		end = t.Range.End.Byte
	}
	return b.String()
}

// templateText returns the text of a template without interpolations or
// directives ("B", a heredoc).
func templateText(e *hclsyntax.TemplateExpr) (string, bool) {
	var b strings.Builder
	for _, p := range e.Parts {
		l, ok := p.(*hclsyntax.LiteralValueExpr)
		if !ok || l.Val.IsNull() || l.Val.Type() != cty.String {
			return "", false
		}
		b.WriteString(l.Val.AsString())
	}
	// The parser's strings are NFC already; cty.StringVal keeps them so.
	return cty.StringVal(b.String()).AsString(), true
}

// stringOf returns the text of a string literal or a literal template.
func stringOf(e hclsyntax.Expression) (string, bool) {
	switch e := e.(type) {
	case *hclsyntax.TemplateExpr:
		return templateText(e)
	case *hclsyntax.LiteralValueExpr:
		if !e.Val.IsNull() && e.Val.Type() == cty.String {
			return e.Val.AsString(), true
		}
	}
	return "", false
}

func stepKind(s hcl.Traverser) string {
	switch s.(type) {
	case hcl.TraverseAttr:
		return "an attribute"
	case hcl.TraverseIndex:
		return "an index"
	case hcl.TraverseSplat:
		return "a splat"
	}
	return "more"
}

// what names an expression the language refuses.
func what(e hclsyntax.Expression) string {
	switch e.(type) {
	case *hclsyntax.TupleConsExpr:
		return "a list"
	case *hclsyntax.ObjectConsExpr:
		return "an object"
	case *hclsyntax.ForExpr:
		return "a for expression"
	case *hclsyntax.IndexExpr, *hclsyntax.RelativeTraversalExpr:
		return "indexing"
	case *hclsyntax.SplatExpr:
		return "a splat"
	}
	return "this kind of expression"
}

func opSymbol(op *hclsyntax.Operation) string {
	switch op {
	case hclsyntax.OpLogicalAnd:
		return "&&"
	case hclsyntax.OpLogicalOr:
		return "||"
	case hclsyntax.OpEqual:
		return "=="
	case hclsyntax.OpNotEqual:
		return "!="
	case hclsyntax.OpLessThan:
		return "<"
	case hclsyntax.OpLessThanOrEqual:
		return "<="
	case hclsyntax.OpGreaterThan:
		return ">"
	case hclsyntax.OpGreaterThanOrEqual:
		return ">="
	case hclsyntax.OpAdd:
		return "+"
	case hclsyntax.OpSubtract:
		return "-"
	case hclsyntax.OpMultiply:
		return "*"
	case hclsyntax.OpDivide:
		return "/"
	case hclsyntax.OpModulo:
		return "%"
	}
	return "the operator"
}

// normalise copies e as it will run: each number literal is the float64
// that its source text reads as (the precision of the data), and each label
// compared with an ordinal column is its level number (1 for the lowest),
// which is how the dataset reads that column. HCL evaluating the copy
// therefore computes exactly what the compiled closures compute, and the
// recipe's own syntax tree is never changed.
func (c *checker) normalise(e hclsyntax.Expression) hclsyntax.Expression {
	switch e := e.(type) {
	case *hclsyntax.LiteralValueExpr:
		if f, ok := c.nums[e]; ok {
			return &hclsyntax.LiteralValueExpr{Val: cty.NumberFloatVal(f), SrcRange: e.SrcRange}
		}
		if v, ok := c.lits[e]; ok {
			return c.label(e, v)
		}
		return &hclsyntax.LiteralValueExpr{Val: e.Val, SrcRange: e.SrcRange}
	case *hclsyntax.TemplateExpr:
		return c.label(e, c.lits[e])
	case *hclsyntax.ScopeTraversalExpr:
		if lit, ok := c.params[e]; ok {
			return c.normalise(lit)
		}
		return &hclsyntax.ScopeTraversalExpr{Traversal: e.Traversal, SrcRange: e.SrcRange}
	case *hclsyntax.ParenthesesExpr:
		return &hclsyntax.ParenthesesExpr{Expression: c.normalise(e.Expression), SrcRange: e.SrcRange}
	case *hclsyntax.UnaryOpExpr:
		return &hclsyntax.UnaryOpExpr{Op: e.Op, Val: c.normalise(e.Val), SrcRange: e.SrcRange, SymbolRange: e.SymbolRange}
	case *hclsyntax.BinaryOpExpr:
		return &hclsyntax.BinaryOpExpr{LHS: c.normalise(e.LHS), Op: e.Op, RHS: c.normalise(e.RHS), SrcRange: e.SrcRange}
	case *hclsyntax.ConditionalExpr:
		return &hclsyntax.ConditionalExpr{
			Condition: c.normalise(e.Condition), TrueResult: c.normalise(e.TrueResult),
			FalseResult: c.normalise(e.FalseResult), SrcRange: e.SrcRange,
		}
	}
	panic(fmt.Sprintf("filter: normalise reached %T, which check refuses", e))
}

// label is a string literal as it runs: its level number when it is
// compared with an ordinal column, else its text.
func (c *checker) label(e hclsyntax.Expression, v *tvar) hclsyntax.Expression {
	s, _ := stringOf(e)
	if r := v.find(); r.kind == kOrd {
		i := slices.Index(r.levels, s) // present: checked by finish
		return &hclsyntax.LiteralValueExpr{Val: cty.NumberIntVal(int64(i + 1)), SrcRange: e.Range()}
	}
	return &hclsyntax.LiteralValueExpr{Val: cty.StringVal(s), SrcRange: e.Range()}
}

// param resolves param.NAME: ok is false when e is not of that form (it is
// then a column, or a mistake reported as one), and lit is nil when it is,
// but names no parameter (reported here). The literal carries the value and
// e's range; a number is read from the value, as the source text at that
// range is the name, not a number.
func (c *checker) param(e *hclsyntax.ScopeTraversalExpr) (lit *hclsyntax.LiteralValueExpr, ok bool) {
	if e.Traversal.RootName() != "param" || len(e.Traversal) != 2 {
		return nil, false
	}
	attr, isAttr := e.Traversal[1].(hcl.TraverseAttr)
	if !isAttr {
		return nil, false
	}
	if lit, seen := c.params[e]; seen {
		return lit, true
	}
	v, declared := c.env.Params[attr.Name]
	if !declared {
		names := make([]string, 0, len(c.env.Params))
		for n := range c.env.Params {
			names = append(names, n)
		}
		slices.Sort(names)
		detail := fmt.Sprintf("The recipe declares no parameter %q.", attr.Name)
		if len(names) == 0 {
			detail += ` Declare one with param "` + attr.Name + `" { default = … }.`
		} else {
			if c.env.Suggest != nil {
				if s := c.env.Suggest(attr.Name, names); s != "" {
					detail += fmt.Sprintf(" Did you mean %q?", s)
				}
			}
			detail += " Declared: " + strings.Join(quoteAll(names), ", ") + "."
		}
		c.errorf(e.SrcRange, nil, "Unknown parameter", "%s", detail)
		return nil, true
	}
	lit = &hclsyntax.LiteralValueExpr{Val: v, SrcRange: e.SrcRange}
	c.params[e] = lit
	if !slices.ContainsFunc(c.used, func(p Param) bool { return p.Name == attr.Name }) {
		c.used = append(c.used, Param{Name: attr.Name, Value: v})
	}
	return lit, true
}

func quoteAll(names []string) []string {
	out := make([]string, len(names))
	for i, n := range names {
		out[i] = strconv.Quote(n)
	}
	return out
}
