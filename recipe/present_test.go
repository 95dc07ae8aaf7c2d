package recipe

import (
	"slices"
	"strings"
	"testing"

	"concordat/engine/stats"
)

func TestLoadPresent(t *testing.T) {
	p := load(t, "present.hcl")
	ds := p.Datasets[0]
	if ds.LabelOf("probe_a") != "Probe A (% VWC)" || ds.LabelOf("probe_b") != "probe_b" || ds.LabelOf("site") != "Field site" {
		t.Errorf("labels: %q %q %q", ds.LabelOf("probe_a"), ds.LabelOf("probe_b"), ds.LabelOf("site"))
	}
	// A column block with only a label does not make the column ordinal.
	if _, ok := ds.Levels["probe_a"]; ok {
		t.Error("probe_a has levels")
	}
	if lv := ds.Levels["wetness"]; len(lv) != 3 {
		t.Errorf("wetness levels %q", lv)
	}
	paper, matrix, records := p.Tables[0], p.Tables[1], p.Tables[2]
	if paper.Format != LaTeX || paper.Style != StyleAPA || paper.Digits != apaDigits || paper.Groups != GroupBlocks ||
		paper.Caption != "Agreement of the probes" || paper.Label != "tab:agree" || len(paper.Columns) != 8 {
		t.Errorf("paper: %+v", paper.Present)
	}
	if matrix.Format != HTML || matrix.Layout != LayoutMatrix || matrix.Groups != GroupTables || !matrix.Marks ||
		!slices.Equal(matrix.Show, []string{"n", "p"}) || len(matrix.Figures) != 2 || matrix.Digits != defaultDigits {
		t.Errorf("matrix: %+v", matrix.Present)
	}
	if records.Format != Parquet || records.Format.Readable() || records.Present.settings() != nil {
		t.Errorf("records: %v %+v", records.Format, records.Present)
	}
	heat, ranks := p.Figures[0], p.Figures[1]
	if heat.Kind != FigureHeatmap || heat.Measure != stats.KendallB || heat.Group != "north" || heat.Format != "png" || heat.Width != 18 || heat.Height != defaultFigureHeight {
		t.Errorf("heat: %+v", heat)
	}
	if ranks.Kind != FigureRankScatter || ranks.X != "probe_b" || ranks.Y != "probe_a" || ranks.Group != "all" || ranks.Format != "svg" {
		t.Errorf("ranks: %+v", ranks)
	}
}

func TestPresentDiagnostics(t *testing.T) {
	const head = `dataset "d" {
  path = "d.csv"
  column "a" {}
}
pairing "p" {
  dataset = "d"
  x       = ["a"]
  y       = ["b", "c"]
}
test "t" {
  pairing = "p"
}
`
	for _, tc := range []struct {
		name string
		src  string
		want []wantDiag
	}{
		{"column block needs levels or label", head, []wantDiag{
			{3, 3, "Missing required argument", "levels"},
		}},
		{"tables", strings.Replace(head, "column \"a\" {}", "column \"a\" { label = \"\" }", 1) + `table "a" {
  tests   = ["t"]
  path    = "a.json"
  style   = "apa"
  caption = "c"
}
table "b" {
  tests   = ["t"]
  path    = "b.md"
  layout  = "matrix"
  groups  = "blocks"
  columns = ["x", "report"]
}
table "c" {
  tests   = ["t"]
  path    = "c.csv"
  columns = ["notes", "p_valeu"]
  show    = ["n"]
  label   = "tab one"
}
`, []wantDiag{
			{3, 24, "Empty value", "label must not be empty"},
			{16, 3, "Setting does not apply to this format", "a json table holds the result record"},
			{17, 3, "Setting does not apply to this format", ""},
			{23, 13, "Groups of a matrix", "each group gets a table of its own"},
			{24, 3, "Columns of a matrix", "show = [\"n\", \"p\"]"},
			{29, 14, "Column needs a readable format", "use \"warnings\""},
			{29, 23, "Unknown table column", `Did you mean "p_value"?`},
			{30, 3, "Setting needs a matrix", ""},
			{31, 13, "Invalid label", "tab:shade"},
			{31, 3, "Setting does not apply to this format", ""},
		}},
		{"figures", head + `figure "f" {
  test = "t"
  kind = "heatmap"
  x    = "a"
  measure = "pearson"
  path = "f.gif"
}
figure "g" {
  test  = "t"
  kind  = "scatter"
  x     = "c"
  y     = "b"
  group = "north"
  measure = "spearman"
  path  = "d.csv"
  width = 2
}
figure "h" {
  test = "tt"
  kind = "pie"
  path = "g.svg"
}
table "t" {
  tests   = ["t"]
  path    = "t.tex"
  figures = ["f"]
}
`, []wantDiag{
			{3, 3, "Missing required argument", ""},
			{16, 3, "Setting does not apply to a heatmap", "x chooses the pair"},
			{17, 13, "Measure not computed", `Test "t" computes "spearman"`},
			{18, 10, "Unknown figure format", ".svg or .png"},
			{23, 11, "Pair not in the test", `does not pair "c" with "b"`},
			{25, 11, "No groups", "has no by"},
			{26, 3, "Setting does not apply to a scatter", ""},
			{27, 11, "Unknown figure format", ""},
			{27, 11, "Figure would overwrite another file", "the data file of dataset"},
			{28, 11, "Value out of range", "width is in centimetres, from 4 to 100; got 2."},
			{31, 10, "Unknown test", `Did you mean "t"?`},
			{32, 10, "Unknown figure kind", `Known kinds: "rank_scatter", "scatter", "heatmap"`},
			{38, 3, "Figures need an HTML table", "a latex table cannot"},
		}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			_, diags := Parse([]byte(tc.src), "dir/recipe.hcl")
			checkDiags(t, diags, tc.want)
		})
	}
}
