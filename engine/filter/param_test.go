package filter

import (
	"context"
	"math"
	"slices"
	"strings"
	"testing"

	"github.com/hashicorp/hcl/v2"
	"github.com/hashicorp/hcl/v2/hclsyntax"
	"github.com/zclconf/go-cty/cty"
)

// analyzeWith analyses src with the test schema and the given parameters.
func analyzeWith(src string, params map[string]cty.Value) (*Expr, hcl.Diagnostics) {
	e, diags := hclsyntax.ParseExpression([]byte(src), "where.hcl", hcl.Pos{Line: 1, Column: 1})
	if diags.HasErrors() {
		return nil, diags
	}
	env := testEnv
	env.Params = params
	return Analyze(e, []byte(src), env)
}

// A parameter is a constant of its own type: a number compared with a
// numeric column, a string with a text column or as a label of an ordinal
// one. It is not a column, and the filter records the values it used.
func TestParamsAreConstants(t *testing.T) {
	params := map[string]cty.Value{
		"min":   cty.NumberFloatVal(2),
		"site":  cty.StringVal("B"),
		"grade": cty.StringVal("fancy"),
		"on":    cty.True,
	}
	a := []float64{1, 2, 3, math.NaN()}
	s := []string{"A", "B", "B", "B"}
	g := []float64{1, 3, 4, 2} // cull, fancy, extra fancy, standard
	for _, c := range []struct {
		src    string
		cols   []string
		params []string
		want   []int
	}{
		{"a >= param.min", []string{"a"}, []string{"min"}, []int{1, 2}},
		{"s == param.site && a < param.min + 1", []string{"s", "a"}, []string{"site", "min"}, []int{1}},
		{"g >= param.grade", []string{"g"}, []string{"grade"}, []int{1, 2}},
		{"param.on && a > 1", []string{"a"}, []string{"on"}, []int{1, 2}},
		{"-param.min < a", []string{"a"}, []string{"min"}, []int{0, 1, 2}},
	} {
		e, diags := analyzeWith(c.src, params)
		if diags.HasErrors() {
			t.Errorf("%s: %v", c.src, diags)
			continue
		}
		var names []string
		var data []Data
		for _, col := range e.Columns {
			names = append(names, col.Name)
			switch col.Name {
			case "a":
				data = append(data, Data{Values: a})
			case "s":
				data = append(data, Data{Labels: s, Missing: make([]bool, len(s))})
			case "g":
				data = append(data, Data{Values: g})
			}
		}
		if !slices.Equal(names, c.cols) {
			t.Errorf("%s: columns %q, want %q", c.src, names, c.cols)
		}
		var used []string
		for _, p := range e.Params {
			used = append(used, p.Name)
			if !p.Value.RawEquals(params[p.Name]) {
				t.Errorf("%s: param %s = %#v", c.src, p.Name, p.Value)
			}
		}
		if !slices.Equal(used, c.params) {
			t.Errorf("%s: params %q, want %q", c.src, used, c.params)
		}
		f, err := e.Compile(len(a), data)
		if err != nil {
			t.Fatal(err)
		}
		rows, err := f.Rows(context.Background(), 1)
		if err != nil {
			t.Fatal(err)
		}
		if !slices.Equal(rows, c.want) {
			t.Errorf("%s: rows %v, want %v", c.src, rows, c.want)
		}
	}
}

func TestParamMistakes(t *testing.T) {
	params := map[string]cty.Value{"min": cty.NumberIntVal(2), "site": cty.StringVal("B")}
	for src, want := range map[string]string{
		"a >= param.mni":      `The recipe declares no parameter "mni". Declared: "min", "site".`,
		"a >= param.site":     "compared",
		"g >= param.site":     `"B"`,
		`a >= param["min"]`:   "Not a column name",
		"a >= param.min.more": "Not a column name",
	} {
		_, diags := analyzeWith(src, params)
		if !diags.HasErrors() {
			t.Errorf("%s: no error", src)
			continue
		}
		if !strings.Contains(diags.Error(), want) {
			t.Errorf("%s: %v, want it to mention %q", src, diags, want)
		}
	}
	if _, diags := analyzeWith("a >= param.min", nil); !strings.Contains(diags.Error(), `Declare one with param "min"`) {
		t.Errorf("no parameters: %v", diags)
	}
}
