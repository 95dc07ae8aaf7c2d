package filter

import (
	"context"
	"fmt"
	"math"
	"math/big"
	"slices"

	"github.com/hashicorp/hcl/v2"
	"github.com/hashicorp/hcl/v2/hclsyntax"
	"github.com/zclconf/go-cty/cty"
	"golang.org/x/sync/errgroup"
)

// Data is one column's cells, as the dataset read them. A Number column
// fills Values; an Ordinal column fills Values with level numbers (the
// label Levels[i] is i+1); a Text column fills Labels and Missing.
type Data struct {
	Values  []float64 // Number and Ordinal; NaN is missing
	Labels  []string  // Text
	Missing []bool    // Text: true where the cell is missing
}

// Filter is an Expr bound to the cells of a table.
type Filter struct {
	expr *Expr
	rows int
	data []Data

	// reference makes every row go through HCL's evaluation of the whole
	// (normalised) expression: the slow path the tests and benchmarks
	// compare the compiled one with.
	reference bool
}

// Compile binds e to a table of rows rows; data holds one Data per column of
// e.Columns, in that order. It checks that each column has rows cells of
// its kind; the closures themselves are built by Rows, once per worker.
func (e *Expr) Compile(rows int, data []Data) (*Filter, error) {
	if len(data) != len(e.Columns) {
		return nil, fmt.Errorf("filter %q: %d columns of data for %d columns", e.Text, len(data), len(e.Columns))
	}
	for i, c := range e.Columns {
		d := data[i]
		switch c.Kind {
		case Number, Ordinal:
			if len(d.Values) != rows {
				return nil, fmt.Errorf("filter %q: column %q has %d values for %d rows", e.Text, c.Name, len(d.Values), rows)
			}
		case Text:
			if len(d.Labels) != rows || len(d.Missing) != rows {
				return nil, fmt.Errorf("filter %q: column %q has %d labels and %d missing marks for %d rows", e.Text, c.Name, len(d.Labels), len(d.Missing), rows)
			}
		}
	}
	return &Filter{expr: e, rows: rows, data: data}, nil
}

// Rows returns the rows for which the filter is true, in increasing order
// (a row whose result is false or unknown is left out). The rows are
// split into contiguous blocks run by up to workers goroutines (≤ 0 means
// one), each with its own closures, so the result does not depend on the
// worker count. Cancelling ctx stops it between blocks of 65 536 rows.
//
// A filter without HCL leaves runs in blocks of 1024 rows, one closure
// call per node per block and a tight loop per node inside it; with HCL
// leaves, the rows that reach a leaf are evaluated one at a time. No
// allocation happens per row on the compiled path; the kept rows are
// appended to one slice per goroutine (concatenated when there are
// several).
func (f *Filter) Rows(ctx context.Context, workers int) ([]int, error) {
	const chunk = 1 << 16
	workers = max(1, min(workers, (f.rows+chunk-1)/chunk))
	per := (f.rows + workers - 1) / workers
	parts := make([][]int, workers)
	var g errgroup.Group
	for w := range workers {
		lo, hi := w*per, min((w+1)*per, f.rows)
		g.Go(func() error {
			p := f.root()
			buf := make([]tri, blockRows)
			kept := make([]int, 0, min(hi-lo, chunk))
			for b := lo; b < hi; b += chunk {
				if err := ctx.Err(); err != nil {
					return err
				}
				end := min(b+chunk, hi)
				for s := b; s < end; s += blockRows {
					out := buf[:min(blockRows, end-s)]
					if p.block != nil {
						p.block(s, out)
					} else {
						for j := range out {
							out[j] = p.row(s + j)
						}
					}
					kept = appendTrue(kept, s, out)
				}
				if b == lo && end < hi {
					// Size the slice once for the rest, from the share
					// of rows the first chunk kept (1/8 more, to spare a
					// late doubling).
					guess := len(kept)*(hi-lo)/(end-lo) + len(kept)/8 + blockRows
					kept = slices.Grow(kept, guess-len(kept))
				}
			}
			parts[w] = kept
			return nil
		})
	}
	if err := g.Wait(); err != nil {
		return nil, fmt.Errorf("filter %q: %w", f.expr.Text, err)
	}
	if workers == 1 {
		return parts[0], nil
	}
	n := 0
	for _, p := range parts {
		n += len(p)
	}
	out := make([]int, 0, n)
	for _, p := range parts {
		out = append(out, p...)
	}
	return out, nil
}

// appendTrue appends s+j for each out[j] that is true, without a branch
// per row: every index is written, and the length grows by one only for
// true (isTrue&1 is 1; isFalse&1 and unknown&1 are 0).
func appendTrue(kept []int, s int, out []tri) []int {
	kept = slices.Grow(kept, len(out))
	n := len(kept)
	buf := kept[:n+len(out)]
	for j, v := range out {
		buf[n] = s + j
		n += int(v & 1)
	}
	return kept[:n]
}

// blockRows is how many rows a block evaluation covers: enough to make
// the closure calls negligible, few enough that its buffers stay in the
// first-level cache.
const blockRows = 1024

// tri is a value of three-valued logic.
type tri uint8

const (
	isFalse tri = 0
	isTrue  tri = 1
	unknown tri = 2 // ordered after true, so the max of two non-false values is their conjunction
)

func triOf(b bool) tri {
	if b {
		return isTrue
	}
	return isFalse
}

// Kleene's connectives as tables: notTab[a], andTab[a<<2|b], orTab[a<<2|b].
var (
	notTab = [4]tri{isTrue, isFalse, unknown, unknown}
	andTab = [16]tri{
		0: isFalse, 1: isFalse, 2: isFalse,
		4: isFalse, 5: isTrue, 6: unknown,
		8: isFalse, 9: unknown, 10: unknown,
	}
	orTab = [16]tri{
		0: isFalse, 1: isTrue, 2: unknown,
		4: isTrue, 5: isTrue, 6: isTrue,
		8: unknown, 9: isTrue, 10: unknown,
	}
)

type (
	numFn func(i int) float64        // a number at row i; NaN is unknown
	strFn func(i int) (string, bool) // text at row i; false is unknown
)

// cond is a compiled condition. row evaluates one row; block, when not
// nil, evaluates the len(out) rows from lo at once. An HCL leaf has no
// block form, and a condition holding one (slow) evaluates it row by row,
// only at the rows where && and || leave the answer open: in a && leaf the
// block form runs the left side as a block, then the leaf where it is not
// false.
type cond struct {
	row   func(i int) tri
	block func(lo int, out []tri)
	slow  bool // holds an HCL leaf: evaluate it at as few rows as possible
}

// rowBlock is the block form of a condition that is cheap at every row but
// has no loop of its own.
func rowBlock(row func(i int) tri) func(lo int, out []tri) {
	return func(lo int, out []tri) {
		for j := range out {
			out[j] = row(lo + j)
		}
	}
}

// root builds the closures of the whole expression: a fresh set, with its
// own state (buffers, HCL evaluation contexts, the text normalisation
// cache), for one goroutine.
func (f *Filter) root() cond {
	c := &compiler{f: f, col: map[string]int{}, nfc: newNFCCache()}
	for i, col := range f.expr.Columns {
		c.col[col.Name] = i
	}
	if f.reference {
		return c.leaf(f.expr.norm)
	}
	return c.cond(f.expr.norm)
}

type compiler struct {
	f   *Filter
	col map[string]int
	nfc *nfcCache
}

// cond compiles a condition. Logic is compiled whatever its operands;
// a comparison is compiled when its operands are columns, literals,
// negated literals, parentheses around those, or conditions; anything else
// is an HCL leaf.
func (c *compiler) cond(e hclsyntax.Expression) cond {
	switch e := e.(type) {
	case *hclsyntax.LiteralValueExpr:
		if e.Val.Type() == cty.Bool {
			return konst(triOf(e.Val.True()))
		}
	case *hclsyntax.ParenthesesExpr:
		return c.cond(e.Expression)
	case *hclsyntax.UnaryOpExpr:
		if e.Op == hclsyntax.OpLogicalNot {
			return not(c.cond(e.Val))
		}
	case *hclsyntax.BinaryOpExpr:
		switch e.Op {
		case hclsyntax.OpLogicalAnd:
			return connective(c.cond(e.LHS), c.cond(e.RHS), &andTab, isFalse)
		case hclsyntax.OpLogicalOr:
			return connective(c.cond(e.LHS), c.cond(e.RHS), &orTab, isTrue)
		}
		if p, ok := c.compare(e); ok {
			return p
		}
	}
	return c.leaf(e)
}

func konst(v tri) cond {
	return cond{
		row: func(int) tri { return v },
		block: func(_ int, out []tri) {
			for j := range out {
				out[j] = v
			}
		},
	}
}

func not(p cond) cond {
	row := p.row
	n := cond{row: func(i int) tri { return notTab[row(i)&3] }, slow: p.slow}
	if pb := p.block; pb != nil {
		n.block = func(lo int, out []tri) {
			pb(lo, out)
			for j, v := range out {
				out[j] = notTab[v&3]
			}
		}
	}
	return n
}

// connective is Kleene's && (tab = andTab, decided by false) or || (tab =
// orTab, decided by true). The right side is not evaluated at a row whose
// left side decides, except in a block where the right side holds no HCL
// (evaluating it everywhere is then cheaper than testing).
func connective(l, r cond, tab *[16]tri, decides tri) cond {
	lr, rr := l.row, r.row
	c := cond{row: func(i int) tri {
		a := lr(i)
		if a == decides {
			return a
		}
		return tab[(a<<2|rr(i))&15]
	}, slow: l.slow || r.slow}
	lb, rb := l.block, r.block
	switch {
	case lb != nil && rb != nil && !r.slow:
		tmp := make([]tri, blockRows)
		c.block = func(lo int, out []tri) {
			lb(lo, out)
			t := tmp[:len(out)]
			rb(lo, t)
			for j, a := range out {
				out[j] = tab[(a<<2|t[j])&15]
			}
		}
	case lb != nil:
		c.block = func(lo int, out []tri) {
			lb(lo, out)
			for j, a := range out {
				if a != decides {
					out[j] = tab[(a<<2|rr(lo+j))&15]
				}
			}
		}
	}
	return c
}

// operand is a compiled operand of a comparison: a column, a constant or a
// computed value of one type.
type operand struct {
	typ    cty.Type
	col    int // column index, or -1
	konst  cty.Value
	num    numFn
	str    strFn
	cond   cond
	isKons bool
}

// operand compiles a value that needs no HCL: a literal, a negated
// literal, a column, parentheses around one of those, or a condition. ok
// is false for anything else.
func (c *compiler) operand(e hclsyntax.Expression) (operand, bool) {
	switch e := e.(type) {
	case *hclsyntax.LiteralValueExpr:
		v := e.Val
		o := operand{typ: v.Type(), col: -1, konst: v, isKons: true}
		switch v.Type() {
		case cty.Number:
			x, _ := v.AsBigFloat().Float64() // exact: normalise made it a float64
			o.num = func(int) float64 { return x }
		case cty.String:
			s := v.AsString()
			o.str = func(int) (string, bool) { return s, true }
		case cty.Bool:
			o.cond = konst(triOf(v.True()))
		default:
			return operand{}, false
		}
		return o, true
	case *hclsyntax.ScopeTraversalExpr:
		j := c.col[e.Traversal.RootName()]
		d := c.f.data[j]
		if c.f.expr.Columns[j].Kind == Text {
			labels, miss := d.Labels, d.Missing
			return operand{typ: cty.String, col: j, str: func(i int) (string, bool) { return labels[i], !miss[i] }}, true
		}
		vals := d.Values
		return operand{typ: cty.Number, col: j, num: func(i int) float64 { return vals[i] }}, true
	case *hclsyntax.ParenthesesExpr:
		return c.operand(e.Expression)
	case *hclsyntax.UnaryOpExpr:
		if e.Op != hclsyntax.OpNegate {
			break
		}
		// Only a negated constant is compiled. HCL takes the negation of
		// an unknown value to be a finite unknown, which never equals an
		// infinite cell, while a missing cell here is any number at all;
		// leaving -column to HCL keeps the two paths equal.
		o, ok := c.operand(e.Val)
		if !ok || !o.isKons || o.typ != cty.Number {
			break
		}
		x := -o.num(0)
		return operand{typ: cty.Number, col: -1, konst: cty.NumberFloatVal(x), isKons: true, num: func(int) float64 { return x }}, true
	}
	if isCondition(e) {
		return operand{typ: cty.Bool, col: -1, cond: c.cond(e)}, true
	}
	return operand{}, false
}

// isCondition reports whether e is a condition that cond compiles without
// HCL at its top (logic, or a comparison).
func isCondition(e hclsyntax.Expression) bool {
	switch e := e.(type) {
	case *hclsyntax.UnaryOpExpr:
		return e.Op == hclsyntax.OpLogicalNot
	case *hclsyntax.BinaryOpExpr:
		switch e.Op {
		case hclsyntax.OpLogicalAnd, hclsyntax.OpLogicalOr, hclsyntax.OpEqual, hclsyntax.OpNotEqual,
			hclsyntax.OpLessThan, hclsyntax.OpLessThanOrEqual, hclsyntax.OpGreaterThan, hclsyntax.OpGreaterThanOrEqual:
			return true
		}
	}
	return false
}

// compare compiles a comparison whose operands need no HCL; ok is false
// for any other.
func (c *compiler) compare(e *hclsyntax.BinaryOpExpr) (cond, bool) {
	l, okl := c.operand(e.LHS)
	r, okr := c.operand(e.RHS)
	if !okl || !okr || !l.typ.Equals(r.typ) {
		return cond{}, false
	}
	op := e.Op
	switch l.typ {
	case cty.Number:
		// A column against a constant is the common case: one closure
		// over the slice, with the constant on the right.
		if r.isKons && l.col >= 0 {
			return numColConst(op, c.f.data[l.col].Values, r.num(0)), true
		}
		if l.isKons && r.col >= 0 {
			return numColConst(flip(op), c.f.data[r.col].Values, l.num(0)), true
		}
		return numCompare(op, l.num, r.num), true
	case cty.String:
		if op != hclsyntax.OpEqual && op != hclsyntax.OpNotEqual {
			return cond{}, false // Analyze refuses ordered text
		}
		eq := c.strEqual(l, r)
		if op == hclsyntax.OpNotEqual {
			return not(eq), true
		}
		return eq, true
	case cty.Bool:
		if op != hclsyntax.OpEqual && op != hclsyntax.OpNotEqual {
			return cond{}, false
		}
		lc, rc, want := l.cond.row, r.cond.row, triOf(op == hclsyntax.OpEqual)
		p := cond{slow: l.cond.slow || r.cond.slow, row: func(i int) tri {
			a := lc(i)
			if a == unknown {
				return unknown
			}
			b := rc(i)
			if b == unknown {
				return unknown
			}
			if a == b {
				return want
			}
			return want ^ 1
		}}
		if l.cond.block != nil && r.cond.block != nil {
			p.block = rowBlock(p.row)
		}
		return p, true
	}
	return cond{}, false
}

// flip turns c op x into x op' c.
func flip(op *hclsyntax.Operation) *hclsyntax.Operation {
	switch op {
	case hclsyntax.OpLessThan:
		return hclsyntax.OpGreaterThan
	case hclsyntax.OpLessThanOrEqual:
		return hclsyntax.OpGreaterThanOrEqual
	case hclsyntax.OpGreaterThan:
		return hclsyntax.OpLessThan
	case hclsyntax.OpGreaterThanOrEqual:
		return hclsyntax.OpLessThanOrEqual
	}
	return op // == and != are symmetric
}

// numColConst compares a number column with a constant k. The block form
// switches on the operator once per block, so that each loop holds one
// comparison and no call. A NaN cell (missing) is unknown; v != v is true
// for NaN only.
func numColConst(op *hclsyntax.Operation, vals []float64, k float64) cond {
	test := numTest(op)
	return cond{
		row: func(i int) tri {
			v := vals[i]
			if v != v {
				return unknown
			}
			return triOf(test(v, k))
		},
		block: func(lo int, out []tri) {
			vs := vals[lo : lo+len(out)]
			out = out[:len(vs)]
			switch op {
			case hclsyntax.OpEqual:
				for j, v := range vs {
					out[j] = cmpTri(v == k, v)
				}
			case hclsyntax.OpNotEqual:
				for j, v := range vs {
					out[j] = cmpTri(v != k, v)
				}
			case hclsyntax.OpLessThan:
				for j, v := range vs {
					out[j] = cmpTri(v < k, v)
				}
			case hclsyntax.OpLessThanOrEqual:
				for j, v := range vs {
					out[j] = cmpTri(v <= k, v)
				}
			case hclsyntax.OpGreaterThan:
				for j, v := range vs {
					out[j] = cmpTri(v > k, v)
				}
			case hclsyntax.OpGreaterThanOrEqual:
				for j, v := range vs {
					out[j] = cmpTri(v >= k, v)
				}
			}
		},
	}
}

// cmpTri is the result of a comparison b of the cell v: unknown when v is
// NaN (missing).
func cmpTri(b bool, v float64) tri {
	t := isFalse
	if b {
		t = isTrue
	}
	if v != v {
		t = unknown
	}
	return t
}

// numTest returns the comparison op.
func numTest(op *hclsyntax.Operation) func(a, b float64) bool {
	switch op {
	case hclsyntax.OpEqual:
		return func(a, b float64) bool { return a == b }
	case hclsyntax.OpNotEqual:
		return func(a, b float64) bool { return a != b }
	case hclsyntax.OpLessThan:
		return func(a, b float64) bool { return a < b }
	case hclsyntax.OpLessThanOrEqual:
		return func(a, b float64) bool { return a <= b }
	case hclsyntax.OpGreaterThan:
		return func(a, b float64) bool { return a > b }
	case hclsyntax.OpGreaterThanOrEqual:
		return func(a, b float64) bool { return a >= b }
	}
	panic("filter: not a comparison")
}

// numCompare compares two computed numbers.
func numCompare(op *hclsyntax.Operation, l, r numFn) cond {
	cmp := numTest(op)
	row := func(i int) tri {
		a, b := l(i), r(i)
		if a != a || b != b {
			return unknown
		}
		return triOf(cmp(a, b))
	}
	return cond{row: row, block: rowBlock(row)}
}

// strEqual compares two texts as HCL does: after NFC normalisation.
func (c *compiler) strEqual(l, r operand) cond {
	nfc := c.nfc
	if l.isKons && r.col >= 0 {
		l, r = r, l
	}
	if r.isKons && l.col >= 0 {
		d := c.f.data[l.col]
		labels, miss := d.Labels, d.Missing
		k := nfc.norm(r.konst.AsString())
		// The literal is NFC already (the parser made it a cty string), so
		// a label that differs from it is equal only if it is not ASCII
		// and its NFC form is the literal.
		eq := func(s string) tri {
			// Most labels differ from k in length or first byte; testing
			// those first skips the call that compares the bytes.
			if len(s) == len(k) && (len(k) == 0 || s[0] == k[0]) && s == k {
				return isTrue
			}
			if isASCII(s) {
				return isFalse
			}
			return triOf(nfc.norm(s) == k)
		}
		return cond{
			row: func(i int) tri {
				if miss[i] {
					return unknown
				}
				return eq(labels[i])
			},
			block: func(lo int, out []tri) {
				ls, ms := labels[lo:lo+len(out)], miss[lo:lo+len(out)]
				for j, s := range ls {
					switch {
					case ms[j]:
						out[j] = unknown
					case len(s) != len(k) || len(k) > 0 && s[0] != k[0]:
						out[j] = isFalse
						if !isASCII(s) {
							out[j] = eq(s)
						}
					default:
						out[j] = eq(s)
					}
				}
			},
		}
	}
	ls, rs := l.str, r.str
	row := func(i int) tri {
		a, oka := ls(i)
		if !oka {
			return unknown
		}
		b, okb := rs(i)
		if !okb {
			return unknown
		}
		return triOf(a == b || nfc.norm(a) == nfc.norm(b))
	}
	return cond{row: row, block: rowBlock(row)}
}

func isASCII(s string) bool {
	for i := 0; i < len(s); i++ {
		if s[i] >= 0x80 {
			return false
		}
	}
	return true
}

// leaf evaluates e with HCL at each row: the part of a filter that is not
// compiled (arithmetic, conditionals), or the whole filter on the
// reference path. Only the columns e names are set in its context; a
// missing cell is an unknown value of its type. An evaluation error (0/0,
// Inf − Inf) makes the result unknown, as HCL's && and || themselves treat
// an erroring side whose other side decides.
func (c *compiler) leaf(e hclsyntax.Expression) cond {
	vars := c.bindings(e)
	ctx := &hcl.EvalContext{Variables: make(map[string]cty.Value, len(vars))}
	return cond{slow: true, row: func(i int) tri {
		bind(ctx, vars, i)
		return evalHCL(e, ctx)
	}}
}

// binding is a column that an HCL leaf reads.
type binding struct {
	name string
	kind Kind
	d    Data
}

// bindings lists the columns e names, once each.
func (c *compiler) bindings(e hclsyntax.Expression) []binding {
	var vars []binding
	seen := map[string]bool{}
	for _, t := range e.Variables() {
		name := t.RootName()
		if seen[name] {
			continue
		}
		seen[name] = true
		j := c.col[name]
		vars = append(vars, binding{name, c.f.expr.Columns[j].Kind, c.f.data[j]})
	}
	return vars
}

// bind sets the cells of row i in ctx: a Number or Ordinal cell as a
// number (an ordinal label as its level number, as normalise wrote the
// labels it is compared with), a Text cell as a string, a missing cell as
// an unknown value of its type.
func bind(ctx *hcl.EvalContext, vars []binding, i int) {
	for _, v := range vars {
		switch {
		case v.kind == Text && v.d.Missing[i]:
			ctx.Variables[v.name] = cty.UnknownVal(cty.String)
		case v.kind == Text:
			ctx.Variables[v.name] = cty.StringVal(v.d.Labels[i])
		case math.IsNaN(v.d.Values[i]):
			ctx.Variables[v.name] = cty.UnknownVal(cty.Number)
		default:
			ctx.Variables[v.name] = cty.NumberFloatVal(v.d.Values[i])
		}
	}
}

// evalHCL evaluates a condition with HCL in three-valued logic. A panic of
// math/big (an arithmetic result that is not a number) is an error, and so
// unknown.
func evalHCL(e hclsyntax.Expression, ctx *hcl.EvalContext) (t tri) {
	defer func() {
		if r := recover(); r != nil {
			if _, ok := r.(big.ErrNaN); !ok {
				panic(r)
			}
			t = unknown
		}
	}()
	v, diags := e.Value(ctx)
	if diags.HasErrors() || !v.IsKnown() || v.IsNull() || !v.Type().Equals(cty.Bool) {
		return unknown
	}
	v, _ = v.Unmark()
	return triOf(v.True())
}

// nfcCache normalises text to Unicode NFC, as cty does with every string,
// so that a label and a literal that differ only in composition (é as one
// code point or as e and a combining accent) compare equal on both paths.
// ASCII text is NFC already and is returned at once; other text is
// normalised once per distinct label.
type nfcCache struct{ m map[string]string }

func newNFCCache() *nfcCache { return &nfcCache{m: map[string]string{}} }

// maxNFCCache bounds the cache: past it, labels are normalised each time.
const maxNFCCache = 1 << 16

func (c *nfcCache) norm(s string) string {
	if isASCII(s) {
		return s
	}
	if n, ok := c.m[s]; ok {
		return n
	}
	n := cty.NormalizeString(s)
	if len(c.m) < maxNFCCache {
		c.m[s] = n
	}
	return n
}
