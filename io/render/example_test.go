package render_test

import (
	"fmt"
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

func ExampleInterval() {
	level := 0.95
	t := &render.Table{
		Columns: []string{"pair", "rho", render.Percent(level) + "% CI", "p"},
		Rows: [][]render.Cell{
			{render.Text("probe_a / probe_b"), render.Real(0.8123), render.Interval(0.6391, 0.9102), render.Prob(0.00002)},
			{render.Text("probe_a / probe_c"), render.Real(0.0101), render.Interval(-0.0004, 0.4), render.Prob(0.41)},
			{render.Text("probe_b / probe_c"), render.Real(math.NaN()), render.Interval(math.NaN(), math.NaN()), render.Prob(math.NaN())},
		},
	}
	// One decimal for estimates; p-values keep three in Markdown.
	if err := render.Encode(os.Stdout, t, render.Markdown, 1); err != nil {
		panic(err)
	}
	// Output:
	// | pair              | rho |     95% CI |       p |
	// | ----------------- | --: | ---------: | ------: |
	// | probe_a / probe_b | 0.8 | [0.6, 0.9] | < 0.001 |
	// | probe_a / probe_c | 0.0 | [0.0, 0.4] |   0.410 |
	// | probe_b / probe_c |   — |          — |       — |
}

func ExamplePercent() {
	for _, level := range []float64{0.95, 0.57, 0.975, 0.999} {
		fmt.Println(render.Percent(level) + "% CI")
	}
	// Output:
	// 95% CI
	// 57% CI
	// 97.5% CI
	// 99.9% CI
}
