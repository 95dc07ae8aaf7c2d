package render_test

import (
	"math"
	"os"

	"concordat/io/render"
)

func ExampleEncode() {
	t := &render.Table{
		Title:   "Sensor agreement (invented)",
		Columns: []string{"pair", "n", "rho", "p"},
		Rows: [][]render.Cell{
			{render.Text("probe_a / probe_b"), render.Int(30), render.Real(0.8123), render.Prob(0.00002)},
			{render.Text("probe_a / probe_c"), render.Int(2), render.Real(math.NaN()), render.Prob(math.NaN())},
		},
		Notes: []string{"rho is undefined for n < 3."},
	}
	if err := render.Encode(os.Stdout, t, render.Markdown, 3); err != nil {
		panic(err)
	}
	// Output:
	// Sensor agreement (invented)
	//
	// | pair              |   n |   rho |       p |
	// | ----------------- | --: | ----: | ------: |
	// | probe_a / probe_b |  30 | 0.812 | < 0.001 |
	// | probe_a / probe_c |   2 |     — |       — |
	//
	// - rho is undefined for n < 3.
}
