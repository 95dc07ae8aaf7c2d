package filter_test

import (
	"context"
	"fmt"
	"math"

	"github.com/hashicorp/hcl/v2"
	"github.com/hashicorp/hcl/v2/hclsyntax"

	"concordat/engine/filter"
)

// A filter over a number column with missing cells and a text column: the
// row without an age is dropped by the comparison and by its negation alike.
func Example() {
	src := []byte(`age >= 18 && site != "B"`)
	expr, _ := hclsyntax.ParseExpression(src, "recipe.hcl", hcl.Pos{Line: 1, Column: 1})
	e, diags := filter.Analyze(expr, src, filter.Env{})
	if diags.HasErrors() {
		fmt.Println(diags)
		return
	}
	for _, c := range e.Columns {
		fmt.Println(c.Name, c.Kind)
	}
	f, err := e.Compile(4, []filter.Data{
		{Values: []float64{20, 15, math.NaN(), 40}},
		{Labels: []string{"A", "A", "A", "B"}, Missing: make([]bool, 4)},
	})
	if err != nil {
		fmt.Println(err)
		return
	}
	rows, _ := f.Rows(context.Background(), 1)
	fmt.Println(rows)
	// Output:
	// age number
	// site text
	// [0]
}
