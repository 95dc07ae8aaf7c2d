package filter

import (
	"context"
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"strings"
	"testing"

	"github.com/hashicorp/hcl/v2"
	"github.com/hashicorp/hcl/v2/hclsyntax"
)

// The schema the tests filter: numbers a, b, c; text s, t; ordinal g and h
// (the same levels) and k (other levels).
var (
	testLevels = map[string][]string{
		"g": {"cull", "standard", "fancy", "extra fancy"},
		"h": {"cull", "standard", "fancy", "extra fancy"},
		"k": {"low", "high"},
	}
	testEnv = Env{Levels: testLevels, Suggest: func(w string, cands []string) string {
		for _, c := range cands {
			if strings.EqualFold(strings.ReplaceAll(c, " ", ""), strings.ReplaceAll(w, " ", "")) || len(c) > 3 && strings.HasPrefix(w, c[:3]) {
				return c
			}
		}
		return ""
	}}
)

// analyze parses src as a where expression and analyses it.
func analyze(src string) (*Expr, hcl.Diagnostics) {
	e, diags := hclsyntax.ParseExpression([]byte(src), "where.hcl", hcl.Pos{Line: 1, Column: 1})
	if diags.HasErrors() {
		return nil, diags
	}
	return Analyze(e, []byte(src), testEnv)
}

// table is random data for the test schema: heavy ties, signed zeros,
// infinities, missing cells, and text that differs only in Unicode
// composition.
type table struct {
	rows int
	num  map[string][]float64
	text map[string][]string
	miss map[string][]bool
}

var (
	numPool  = []float64{0, math.Copysign(0, -1), 1, 2, 18, 0.1, 0.2, 0.30000000000000004, 0.3, -1, -2.5, 1e308, math.Inf(1), math.Inf(-1)}
	textPool = []string{"A", "B", "", "é", "e\u0301", "\u212a", "K", "b"} // é composed and decomposed; the Kelvin sign is K in NFC
)

func randomTable(rng *rand.Rand, rows int) *table {
	t := &table{rows: rows, num: map[string][]float64{}, text: map[string][]string{}, miss: map[string][]bool{}}
	for _, name := range []string{"a", "b", "c"} {
		v := make([]float64, rows)
		for i := range v {
			if rng.IntN(6) == 0 {
				v[i] = math.NaN()
			} else {
				v[i] = numPool[rng.IntN(len(numPool))]
			}
		}
		t.num[name] = v
	}
	for name, lv := range testLevels {
		v := make([]float64, rows)
		for i := range v {
			if rng.IntN(6) == 0 {
				v[i] = math.NaN()
			} else {
				v[i] = float64(1 + rng.IntN(len(lv)))
			}
		}
		t.num[name] = v
	}
	for _, name := range []string{"s", "t"} {
		l, m := make([]string, rows), make([]bool, rows)
		for i := range l {
			if rng.IntN(6) == 0 {
				m[i] = true
			} else {
				l[i] = textPool[rng.IntN(len(textPool))]
			}
		}
		t.text[name], t.miss[name] = l, m
	}
	return t
}

// data returns the columns e reads, as Compile wants them. A column read
// as text that the table holds as numbers (or the reverse) is written in
// the other form, as a dataset would read it.
func (t *table) data(e *Expr) []Data {
	var out []Data
	for _, c := range e.Columns {
		switch {
		case c.Kind == Text && t.text[c.Name] != nil:
			out = append(out, Data{Labels: t.text[c.Name], Missing: t.miss[c.Name]})
		case c.Kind == Text:
			v := t.num[c.Name]
			l, m := make([]string, len(v)), make([]bool, len(v))
			for i, x := range v {
				l[i], m[i] = fmt.Sprint(x), math.IsNaN(x)
			}
			out = append(out, Data{Labels: l, Missing: m})
		case t.num[c.Name] != nil:
			out = append(out, Data{Values: t.num[c.Name]})
		default:
			l, m := t.text[c.Name], t.miss[c.Name]
			v := make([]float64, len(l))
			for i := range v {
				v[i] = float64(len(l[i]))
				if m[i] {
					v[i] = math.NaN()
				}
			}
			out = append(out, Data{Values: v})
		}
	}
	return out
}

// both returns the compiled filter's and HCL's results on every row. It
// fails the test when the compiled filter's block form disagrees with its
// row form.
func both(t testing.TB, e *Expr, tb *table) (compiled, reference []tri) {
	t.Helper()
	f, err := e.Compile(tb.rows, tb.data(e))
	if err != nil {
		t.Fatal(err)
	}
	compiled = rowsOf(f.root(), tb.rows)
	if blocks := blocksOf(f.root(), tb.rows); blocks != nil && !slices.Equal(blocks, compiled) {
		t.Fatalf("%s: block form %v, row form %v", e.Text, blocks, compiled)
	}
	f.reference = true
	return compiled, rowsOf(f.root(), tb.rows)
}

// rowsOf evaluates c one row at a time.
func rowsOf(c cond, rows int) []tri {
	out := make([]tri, rows)
	for i := range out {
		out[i] = c.row(i)
	}
	return out
}

// blocksOf evaluates c in blocks of uneven sizes (nil when c has no block
// form).
func blocksOf(c cond, rows int) []tri {
	if c.block == nil {
		return nil
	}
	out := make([]tri, rows)
	for lo, n := 0, 1; lo < rows; lo, n = lo+n, n%blockRows+7 {
		c.block(lo, out[lo:min(lo+n, rows)])
	}
	return out
}

// gen writes random well-typed filters over the test schema, using every
// construct of the language, so that most of them pass Analyze.
type gen struct{ rng *rand.Rand }

func (g gen) pick(s ...string) string { return s[g.rng.IntN(len(s))] }

func (g gen) cond(depth int) string {
	if depth <= 0 {
		return g.cmp(0)
	}
	switch g.rng.IntN(9) {
	case 0:
		return g.cond(depth-1) + " && " + g.cond(depth-1)
	case 1:
		return g.cond(depth-1) + " || " + g.cond(depth-1)
	case 2:
		return "!" + g.atomCond(depth-1)
	case 3:
		return "(" + g.cond(depth-1) + ")"
	case 4:
		return g.atomCond(depth-1) + g.pick(" == ", " != ") + g.atomCond(depth-1)
	case 5:
		return "(" + g.cond(depth-1) + " ? " + g.cond(depth-1) + " : " + g.cond(depth-1) + ")"
	case 6:
		return g.pick("true", "false")
	}
	return g.cmp(depth - 1)
}

// atomCond is a condition that binds tighter than any binary operator.
func (g gen) atomCond(depth int) string {
	if g.rng.IntN(2) == 0 {
		return "(" + g.cond(depth) + ")"
	}
	return g.pick("true", "false", "!(a > 1)", "(s == \"A\")")
}

func (g gen) cmp(depth int) string {
	switch g.rng.IntN(4) {
	case 0:
		return g.text() + g.pick(" == ", " != ") + g.text()
	case 1:
		ord := g.pick("g", "h")
		lv := testLevels[ord]
		other := `"` + lv[g.rng.IntN(len(lv))] + `"`
		if g.rng.IntN(4) == 0 {
			other = g.pick("g", "h")
		}
		if g.rng.IntN(2) == 0 {
			return other + g.op() + ord
		}
		return ord + g.op() + other
	}
	return g.num(depth) + g.op() + g.num(depth)
}

func (g gen) op() string { return g.pick(" == ", " != ", " < ", " <= ", " > ", " >= ") }

func (g gen) text() string { return g.pick("s", "t", `"A"`, `"B"`, `""`, `"é"`, `"K"`) }

func (g gen) num(depth int) string {
	if depth > 0 {
		switch g.rng.IntN(6) {
		case 0:
			return "(" + g.num(depth-1) + g.pick(" + ", " - ", " * ", " / ", " % ") + g.num(depth-1) + ")"
		case 1:
			return "-" + g.num(depth-1)
		case 2:
			return "(" + g.cond(depth-1) + " ? " + g.num(depth-1) + " : " + g.num(depth-1) + ")"
		}
	}
	return g.pick("a", "b", "c", "-a", "(b)", "0", "-0", "1", "18", "0.1", "0.3", "2.5", "1e308", "1.7976931348623157e308")
}

// TestCompiledMatchesHCL is the main check of the compiled path: on random
// rows (ties, signed zeros, infinities, missing cells, text equal only
// after NFC), every random filter gives the same three-valued result per
// row as HCL's evaluation of the whole expression.
func TestCompiledMatchesHCL(t *testing.T) {
	rng := rand.New(rand.NewPCG(4, 20261202))
	tb := randomTable(rng, 128)
	g := gen{rng}
	accepted, tries := 0, 1000
	if raceBuild {
		tries = 100
	}
	for n := 0; n < tries; n++ {
		src := g.cond(1 + n%4)
		e, diags := analyze(src)
		if diags.HasErrors() {
			continue
		}
		accepted++
		c, r := both(t, e, tb)
		for i := range c {
			if c[i] != r[i] {
				t.Fatalf("%s\nrow %d (%s): compiled %d, HCL %d", src, i, tb.row(e, i), c[i], r[i])
			}
		}
	}
	if accepted < tries/2 {
		t.Errorf("only %d of %d random filters were accepted: the generator no longer exercises the compiler", accepted, tries)
	}
}

func (t *table) row(e *Expr, i int) string {
	var parts []string
	for _, c := range e.Columns {
		if v, ok := t.num[c.Name]; ok && c.Kind != Text {
			parts = append(parts, fmt.Sprintf("%s=%v", c.Name, v[i]))
		} else if l, ok := t.text[c.Name]; ok {
			parts = append(parts, fmt.Sprintf("%s=%q/%v", c.Name, l[i], t.miss[c.Name][i]))
		}
	}
	return strings.Join(parts, " ")
}

// TestRowsIgnoresWorkers: the kept rows do not depend on how many
// goroutines run the filter (blocks of 65 536 rows).
func TestRowsIgnoresWorkers(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 7))
	tb := randomTable(rng, 140_001) // three blocks of 65 536 rows
	for _, src := range []string{`a >= 1 && s != "B"`, `g >= "fancy" || c == 18 && (a + b) / 2 > 0.5`} {
		e, diags := analyze(src)
		if diags.HasErrors() {
			t.Fatal(diags)
		}
		f, err := e.Compile(tb.rows, tb.data(e))
		if err != nil {
			t.Fatal(err)
		}
		one, err := f.Rows(context.Background(), 1)
		if err != nil {
			t.Fatal(err)
		}
		for _, w := range []int{2, 3, 8} {
			got, err := f.Rows(context.Background(), w)
			if err != nil {
				t.Fatal(err)
			}
			if !slices.Equal(got, one) {
				t.Errorf("%s: %d workers keep %d rows, one worker %d", src, w, len(got), len(one))
			}
		}
		var want []int
		for i, v := range rowsOf(f.root(), tb.rows) {
			if v == isTrue {
				want = append(want, i)
			}
		}
		if !slices.Equal(one, want) {
			t.Errorf("%s: Rows differs from the per-row results", src)
		}
	}
}

func TestRowsCancelled(t *testing.T) {
	e, _ := analyze("a > 0")
	f, err := e.Compile(3, []Data{{Values: []float64{1, 2, 3}}})
	if err != nil {
		t.Fatal(err)
	}
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	if _, err := f.Rows(ctx, 1); err == nil {
		t.Error("a cancelled filter returned rows")
	}
}

// TestMissingIsUnknown pins the three-valued logic down row by row.
func TestMissingIsUnknown(t *testing.T) {
	nan := math.NaN()
	age := []float64{20, 10, nan, nan, 20}
	site := []string{"A", "B", "A", "B", ""}
	miss := []bool{false, false, false, false, true}
	tb := &table{rows: 5, num: map[string][]float64{"age": age}, text: map[string][]string{"site": site}, miss: map[string][]bool{"site": miss}}
	for _, tc := range []struct {
		src  string
		keep []int
	}{
		{`age >= 18`, []int{0, 4}},
		{`!(age >= 18)`, []int{1}},                     // a row without age is not "under 18" either
		{`age >= 18 || site == "A"`, []int{0, 2, 4}},   // unknown || true is true
		{`age >= 18 && site == "A"`, []int{0}},         // unknown && anything is never true
		{`!(age < 18 && site == "B")`, []int{0, 2, 4}}, // age missing, site A: !(unknown && false) = true
		{`site != "B"`, []int{0, 2}},
		{`true`, []int{0, 1, 2, 3, 4}},
		{`age == age`, []int{0, 1, 4}},
		{`(age > 15 ? 1 : 0) == 1`, []int{0, 4}},
		{`age / 0 > 0`, []int{0, 1, 4}},                 // 20/0 = +Inf, 10/0 = +Inf
		{`age * 0 / 0 > 0 || site == "A"`, []int{0, 2}}, // 0/0 is unknown
	} {
		e, diags := analyze(tc.src)
		if diags.HasErrors() {
			t.Fatalf("%s: %v", tc.src, diags)
		}
		f, err := e.Compile(tb.rows, tb.data(e))
		if err != nil {
			t.Fatal(err)
		}
		got, err := f.Rows(context.Background(), 1)
		if err != nil {
			t.Fatal(err)
		}
		if !slices.Equal(got, tc.keep) {
			t.Errorf("%s keeps %v, want %v", tc.src, got, tc.keep)
		}
		c, r := both(t, e, tb)
		if !slices.Equal(c, r) {
			t.Errorf("%s: compiled %v, HCL %v", tc.src, c, r)
		}
	}
}

// TestNumbersReadLikeCells: a literal is the float64 its text parses to,
// so 0.1 matches a cell written 0.1 (HCL's own 512-bit 0.1 would not), and
// 0.1 + 0.2 (computed by HCL from float64 values) is not 0.3.
func TestNumbersReadLikeCells(t *testing.T) {
	tb := &table{rows: 3, num: map[string][]float64{"a": {0.1, 0.3, 0.30000000000000004}, "b": {0.2, 0, 0}}}
	for src, want := range map[string][]int{
		`a == 0.1`:           {0},
		`a == 0.3`:           {1},
		`a > 0.3`:            {2},
		`a + b > 0.3`:        {0, 2},
		`-a < -0.1`:          {1, 2},
		`a == 1e-1`:          {0},
		`a >= 3e-1`:          {1, 2},
		`0.1 == a`:           {0},
		`!(0.3 < a)`:         {0, 1},
		`a == 100e-3`:        {0},
		`a != 0.3 == !false`: {0, 2},
	} {
		e, diags := analyze(src)
		if diags.HasErrors() {
			t.Fatalf("%s: %v", src, diags)
		}
		f, _ := e.Compile(tb.rows, tb.data(e))
		got, _ := f.Rows(context.Background(), 1)
		if !slices.Equal(got, want) {
			t.Errorf("%s keeps %v, want %v", src, got, want)
		}
		c, r := both(t, e, tb)
		if !slices.Equal(c, r) {
			t.Errorf("%s: compiled %v, HCL %v", src, c, r)
		}
	}
}

// TestOrdinalByLevel: grade >= "fancy" keeps fancy and above, by the
// declared order, not the alphabet.
func TestOrdinalByLevel(t *testing.T) {
	g := []float64{1, 2, 3, 4, math.NaN()}
	tb := &table{rows: 5, num: map[string][]float64{"g": g, "h": {4, 3, 2, 1, 1}}}
	for src, want := range map[string][]int{
		`g >= "fancy"`:    {2, 3},
		`g < "fancy"`:     {0, 1},
		`"standard" == g`: {1},
		`g != "cull"`:     {1, 2, 3},
		`g > h`:           {2, 3},
		`(h > "fancy" ? "cull" : "extra fancy") == g`: {0, 3},
	} {
		e, diags := analyze(src)
		if diags.HasErrors() {
			t.Fatalf("%s: %v", src, diags)
		}
		if e.Columns[0].Kind != Ordinal || !slices.Equal(e.Columns[0].Levels, testLevels["g"]) {
			t.Errorf("%s: column g is %v %q", src, e.Columns[0].Kind, e.Columns[0].Levels)
		}
		f, _ := e.Compile(tb.rows, tb.data(e))
		got, _ := f.Rows(context.Background(), 1)
		if !slices.Equal(got, want) {
			t.Errorf("%s keeps %v, want %v", src, got, want)
		}
	}
}

func TestTextComparesAfterNFC(t *testing.T) {
	tb := &table{rows: 4, text: map[string][]string{"s": {"é", "e\u0301", "e", "\u212a"}, "t": {"e\u0301", "é", "é", "K"}},
		miss: map[string][]bool{"s": make([]bool, 4), "t": make([]bool, 4)}}
	for src, want := range map[string][]int{
		`s == "é"`:          {0, 1},
		`s == "e\u0301"`:    {0, 1},    // the parser writes the literal in NFC
		`s == t && t != ""`: {0, 1, 3}, // NFC turns the Kelvin sign into K
		`s == "K"`:          {3},
		`s != "é"`:          {2, 3},
	} {
		e, diags := analyze(src)
		if diags.HasErrors() {
			t.Fatalf("%s: %v", src, diags)
		}
		f, _ := e.Compile(tb.rows, tb.data(e))
		got, _ := f.Rows(context.Background(), 1)
		if !slices.Equal(got, want) {
			t.Errorf("%s keeps %v, want %v", src, got, want)
		}
	}
}

func TestKinds(t *testing.T) {
	for src, want := range map[string]string{
		`age >= 18 && site != "B"`:             "age:number site:text",
		`x == y`:                               "x:number y:number",
		`x == y && y == "a"`:                   "x:text y:text",
		`g >= "fancy" || weight / height > 20`: "g:ordinal weight:number height:number",
		`"B" == site`:                          "site:text",
		`g == h`:                               "g:ordinal h:ordinal",
		`(flag ? 1 : 2) > 0`:                   "", // flag alone is not a condition: an error below
		`-(dose) <= -0.5`:                      "dose:number",
		`(n > 0 ? "yes" : label) == "no"`:      "n:number label:text",
	} {
		e, diags := analyze(src)
		if want == "" {
			if !diags.HasErrors() {
				t.Errorf("%s: no error", src)
			}
			continue
		}
		if diags.HasErrors() {
			t.Errorf("%s: %v", src, diags)
			continue
		}
		var got []string
		for _, c := range e.Columns {
			got = append(got, c.Name+":"+c.Kind.String())
		}
		if strings.Join(got, " ") != want {
			t.Errorf("%s: columns %s, want %s", src, strings.Join(got, " "), want)
		}
	}
}

func TestText(t *testing.T) {
	src := "(age  >=\n  18   # adults only\n  && site != \"B  C\") || /* also */ g == <<EOT\nfancy\nEOT\n"
	e, _ := hclsyntax.ParseExpression([]byte(src), "w.hcl", hcl.Pos{Line: 1, Column: 1})
	got := exprText([]byte(src), e.Range())
	want := "(age >= 18 && site != \"B  C\") || g == <<EOT\nfancy\nEOT"
	if got != want {
		t.Errorf("text = %q, want %q", got, want)
	}
}

// TestDiagnostics: each refusal points at the offending text and says why.
func TestDiagnostics(t *testing.T) {
	for _, tc := range []struct {
		src     string
		col     int // where the subject starts, on line 1
		summary string
		detail  string
	}{
		{`upper(site) == "B"`, 1, "Function calls not allowed", "functions such as upper(…) are not available"},
		{`var.age > 1`, 1, "Not a column name", `var.age has an attribute after the name "var"`},
		{`age[0] > 1`, 1, "Not a column name", "an index"},
		{`age > 18 && age == "x"`, 20, "Mismatched types in where", `column "age" (numbers, as age > 18 at where.hcl:1:1 says) with text`},
		{`site < "B"`, 1, "Text cannot be ordered", `declare them in a column block: column "site"`},
		{`g > 2`, 1, "Mismatched types in where", `Column "g" has levels, so it is compared with its labels, such as g >= "fancy", not with numbers.`},
		{`g >= "fancyy"`, 6, "Unknown level", `"fancyy" is not a level of column "g". Did you mean "fancy"? Its levels, low to high: "cull", "standard", "fancy", "extra fancy".`},
		{`g == k`, 6, "Mismatched types in where", "labels of one ordinal column"},
		{`flag && x > 1`, 1, "Column is not a condition", `Column "flag" is not true or false by itself: compare it with a value, such as flag == 1`},
		{`age`, 1, "Column is not a condition", ""},
		{`"age >= 18"`, 1, "Where is not a condition", "written without quotes"},
		{`age + 1`, 1, "Where is not a condition", "age + 1 is a number"},
		{`site == null`, 9, "Null not allowed in where", "missing cell"},
		{`site == "${x}"`, 9, "Template not allowed in where", "interpolations"},
		{`x > 1e400`, 5, "Number out of range", "1e400 is beyond the range"},
		{`[1] == x`, 1, "Expression not allowed in where", "a list is not available"},
		{`x > 1 < 2`, 9, "Mismatched types in where", "compares a condition with a number"},
		{`(x > 1 ? 1 : "a") == y`, 14, "Mismatched types in where", "The two results of ? : must be of one type"},
		{`site * 2 > 1 && site == "a"`, 25, "Mismatched types in where", `compares column "site" (numbers, as site * 2 at where.hcl:1:1 says) with text`},
		{`!age`, 2, "Column is not a condition", ""},
		{`g + 1 > 2`, 1, "Mismatched types in where", `Column "g" has levels, so it is compared with its labels; + needs numbers.`},
	} {
		_, diags := analyze(tc.src)
		if !diags.HasErrors() {
			t.Errorf("%s: no error", tc.src)
			continue
		}
		d := diags[0]
		if d.Subject == nil || d.Subject.Start.Line != 1 || d.Subject.Start.Column != tc.col || d.Summary != tc.summary || !strings.Contains(d.Detail, tc.detail) {
			t.Errorf("%s:\n got %v: %s: %s\nwant 1:%d: %s: …%s…", tc.src, d.Subject, d.Summary, d.Detail, tc.col, tc.summary, tc.detail)
		}
		if len(diags) > 1 {
			t.Errorf("%s: one mistake gave %d diagnostics: %v", tc.src, len(diags), diags)
		}
	}
}

func TestCompileChecksData(t *testing.T) {
	e, _ := analyze(`a > 1 && s == "x"`)
	if _, err := e.Compile(2, []Data{{Values: []float64{1, 2}}}); err == nil {
		t.Error("one column of data for two columns")
	}
	if _, err := e.Compile(2, []Data{{Values: []float64{1}}, {Labels: []string{"", ""}, Missing: []bool{false, false}}}); err == nil {
		t.Error("short column accepted")
	}
}
