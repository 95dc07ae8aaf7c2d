package filter

import (
	"context"
	"hash/fnv"
	"math"
	"math/rand/v2"
	"slices"
	"testing"

	"github.com/hashicorp/hcl/v2"
	"github.com/hashicorp/hcl/v2/hclsyntax"
	"github.com/zclconf/go-cty/cty"
)

// FuzzFilter feeds arbitrary text to the filter as an expression. Analyze
// must not panic and must point every refusal at the text. When it accepts,
// HCL must accept too — evaluating the normalised expression may fail only
// on arithmetic (0/0, Inf − Inf), never on a type or a name — and the
// compiled closures must give HCL's three-valued result on every row of a
// random table with missing cells, ties, signed zeros and infinities.
//
//	go test ./engine/filter -fuzz FuzzFilter -fuzztime 60s
func FuzzFilter(f *testing.F) {
	for _, s := range []string{
		`age >= 18 && site != "B"`,
		`!(a < 1) || s == "é"`,
		`g >= "fancy" && h < "extra fancy"`,
		`(a + b) / 2 > c || !(s != t)`,
		`(a > 1 ? b : -c) == 0`,
		`a == -0 && -1.5 <= b`,
		`(a > 1) == (s == "B")`,
		`a % 2 == 1`,
		`upper(s) == "B"`,
		`a.b > 1`,
		`s == "${t}"`,
		"a > 1 # comment\n && b < 2",
		`k == "low" || g != h`,
		`0.1 + 0.2 == 0.30000000000000004`,
	} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, src string) {
		expr, diags := hclsyntax.ParseExpression([]byte(src), "where.hcl", hcl.Pos{Line: 1, Column: 1})
		if diags.HasErrors() {
			return
		}
		e, diags := Analyze(expr, []byte(src), testEnv)
		for _, d := range diags {
			if d.Subject == nil {
				t.Fatalf("diagnostic without a subject: %s: %s", d.Summary, d.Detail)
			}
		}
		if e == nil {
			if !diags.HasErrors() {
				t.Fatal("no Expr and no error")
			}
			return
		}
		h := fnv.New64a()
		h.Write([]byte(src))
		rng := rand.New(rand.NewPCG(h.Sum64(), 1))
		const rows = 48
		data := fuzzData(e, rng, rows)
		flt, err := e.Compile(rows, data)
		if err != nil {
			t.Fatal(err)
		}
		p := rowsOf(flt.root(), rows)
		if b := blocksOf(flt.root(), rows); b != nil {
			for i := range b {
				if b[i] != p[i] {
					t.Fatalf("row %d: block form %d, row form %d", i, b[i], p[i])
				}
			}
		}
		var want []int
		for i, v := range p {
			if v == isTrue {
				want = append(want, i)
			}
		}
		if got, err := flt.Rows(context.Background(), 1); err != nil || !slices.Equal(got, want) && len(got)+len(want) > 0 {
			t.Fatalf("Rows = %v, %v; the rows that are true: %v", got, err, want)
		}
		ref := &Filter{expr: e, rows: rows, data: data, reference: true}
		r := rowsOf(ref.root(), rows)
		c := &compiler{f: flt, col: map[string]int{}}
		for j, col := range e.Columns {
			c.col[col.Name] = j
		}
		vars := c.bindings(e.norm)
		ctx := &hcl.EvalContext{Variables: map[string]cty.Value{}}
		for i := range rows {
			if got, want := p[i], r[i]; got != want {
				t.Fatalf("row %d: compiled %d, HCL %d", i, got, want)
			}
			bind(ctx, vars, i)
			if _, diags := e.norm.Value(ctx); diags.HasErrors() {
				for _, d := range diags {
					if d.Severity == hcl.DiagError && d.Summary != "Operation failed" {
						t.Fatalf("row %d: Analyze accepted what HCL refuses: %s: %s", i, d.Summary, d.Detail)
					}
				}
			}
		}
	})
}

// fuzzData makes random cells for each column of e.
func fuzzData(e *Expr, rng *rand.Rand, rows int) []Data {
	var out []Data
	for _, c := range e.Columns {
		var d Data
		switch c.Kind {
		case Text:
			d.Labels, d.Missing = make([]string, rows), make([]bool, rows)
			for i := range rows {
				if rng.IntN(5) == 0 {
					d.Missing[i] = true
				} else {
					d.Labels[i] = textPool[rng.IntN(len(textPool))]
				}
			}
		case Ordinal:
			d.Values = make([]float64, rows)
			for i := range rows {
				d.Values[i] = float64(1 + rng.IntN(len(c.Levels)))
				if rng.IntN(5) == 0 {
					d.Values[i] = math.NaN()
				}
			}
		default:
			d.Values = make([]float64, rows)
			for i := range rows {
				d.Values[i] = numPool[rng.IntN(len(numPool))]
				if rng.IntN(5) == 0 {
					d.Values[i] = math.NaN()
				}
			}
		}
		out = append(out, d)
	}
	return out
}
