package recipe

import (
	"bytes"
	"slices"
	"strings"
	"testing"

	"github.com/hashicorp/hcl/v2"
	"github.com/hashicorp/hcl/v2/hclsyntax"
)

func TestSkeleton(t *testing.T) {
	cols := []SkeletonColumn{
		{Name: "tree id", Distinct: 300, Labels: []string{"T1", "T2"}},
		{Name: "shade", Numeric: true, Distinct: 19},
		{Name: `grade "A"`, Distinct: 3, Labels: []string{"cull", "fancy ${x}", "standard"}},
		{Name: "empty"},
	}
	var buf bytes.Buffer
	if err := WriteSkeleton(&buf, "data/2026 Orchard-harvest.csv", "csv", cols); err != nil {
		t.Fatal(err)
	}
	plan, diags := Parse(buf.Bytes(), "skeleton.hcl")
	if diags.HasErrors() {
		t.Fatalf("skeleton does not load: %v\n%s", diags, buf.String())
	}
	ds := plan.Datasets[0]
	if ds.Name != "data_2026_orchard_harvest" || ds.PathAsWritten != "data/2026 Orchard-harvest.csv" {
		t.Errorf("dataset %q at %q", ds.Name, ds.PathAsWritten)
	}
	// The text column of few labels gets its labels, exactly, as levels.
	if lv := ds.Levels[`grade "A"`]; !slices.Equal(lv, []string{"cull", "fancy ${x}", "standard"}) {
		t.Errorf("levels %q", lv)
	}
	if p := plan.Pairings[0]; !slices.Equal(p.Columns, []string{"shade", `grade "A"`}) {
		t.Errorf("paired %q", p.Columns)
	}
	if !strings.Contains(buf.String(), `# "tree id": text with 300 distinct values`) {
		t.Errorf("the identifier column is not mentioned:\n%s", buf.String())
	}
	if plan.Tables[0].Format != Markdown || len(plan.Tests[0].Measures) != 2 {
		t.Errorf("table or test not as documented")
	}
}

// FuzzSkeleton: whatever the column names and labels of a data file, the
// skeleton is valid HCL and keeps every name and label exactly.
func FuzzSkeleton(f *testing.F) {
	f.Add("grade", "low", "high", "data.csv")
	f.Add("a\"b${c}", "%{x}", "\x00\n", "dir/ü.tsv")
	f.Fuzz(func(t *testing.T, name, l1, l2, path string) {
		if name == "" || l1 == l2 {
			return
		}
		cols := []SkeletonColumn{{Name: name, Distinct: 2, Labels: []string{l1, l2}}, {Name: name + "_n", Numeric: true}}
		var buf bytes.Buffer
		if err := WriteSkeleton(&buf, path, "csv", cols); err != nil {
			t.Fatal(err)
		}
		file, diags := hclsyntax.ParseConfig(buf.Bytes(), "s.hcl", hcl.Pos{Line: 1, Column: 1})
		if diags.HasErrors() {
			t.Fatalf("not HCL: %v\n%s", diags, buf.String())
		}
		ds := file.Body.(*hclsyntax.Body).Blocks[0]
		got, d := ds.Body.Attributes["path"].Expr.Value(nil)
		// Invalid UTF-8 is written as U+FFFD, one per bad byte.
		valid := func(s string) string { return string([]rune(s)) }
		if d.HasErrors() || got.AsString() != valid(path) {
			t.Errorf("path %q read back as %q", path, got.AsString())
		}
		col := ds.Body.Blocks[0]
		if col.Labels[0] != valid(name) {
			t.Errorf("column %q read back as %q", name, col.Labels[0])
		}
	})
}
