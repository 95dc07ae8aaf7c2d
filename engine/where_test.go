package engine

import (
	"context"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"reflect"
	"strings"
	"testing"
)

// whereData writes a random cohort table: age (with missing cells), site
// and grade labels (with missing cells), a group, and tied x and y.
func whereData(rows int, seed uint64) (csv string, keep func(i int) bool) {
	rng := rand.New(rand.NewPCG(seed, 3))
	type row struct {
		age         float64
		site, grade string
		group       string
		x, y        int
	}
	grades := []string{"cull", "standard", "fancy", "extra fancy"}
	var rs []row
	for range rows {
		r := row{age: float64(rng.IntN(60)), site: string(rune('A' + rng.IntN(3))), grade: grades[rng.IntN(4)],
			group: fmt.Sprint(1 + rng.IntN(3)), x: rng.IntN(6), y: rng.IntN(6)}
		if rng.IntN(8) == 0 {
			r.age = math.NaN()
		}
		if rng.IntN(10) == 0 {
			r.site = "NA"
		}
		if rng.IntN(10) == 0 {
			r.grade = "NA"
		}
		if rng.IntN(30) == 0 {
			r.group = "NA"
		}
		r.y = (r.y + r.x) / 2 // a monotone relation with heavy ties
		if rng.IntN(15) == 0 {
			r.x = -1 // written as a missing cell
		}
		rs = append(rs, r)
	}
	var b strings.Builder
	b.WriteString("age,site,grade,grp,x,y\n")
	for _, r := range rs {
		age := "NA"
		if !math.IsNaN(r.age) {
			age = fmt.Sprint(r.age)
		}
		x := fmt.Sprint(r.x)
		if r.x < 0 {
			x = "NA"
		}
		fmt.Fprintf(&b, "%s,%s,%s,%s,%s,%d\n", age, r.site, r.grade, r.group, x, r.y)
	}
	// The reference rule, written out by hand in three-valued logic for
	// age >= 18 && site != "B" || grade == "extra fancy":
	// 0 false, 1 true, 2 unknown.
	and := func(a, b int) int {
		if a == 0 || b == 0 {
			return 0
		}
		return max(a, b)
	}
	or := func(a, b int) int {
		if a == 1 || b == 1 {
			return 1
		}
		return max(a, b)
	}
	tv := func(known, v bool) int {
		switch {
		case !known:
			return 2
		case v:
			return 1
		}
		return 0
	}
	keep = func(i int) bool {
		r := rs[i]
		adult := tv(!math.IsNaN(r.age), r.age >= 18)
		notB := tv(r.site != "NA", r.site != "B")
		top := tv(r.grade != "NA", r.grade == "extra fancy")
		return or(and(adult, notB), top) == 1
	}
	return b.String(), keep
}

const whereRecipe = `
dataset "d" {
  path  = "d.csv"
  where = age >= 18 && site != "B" || grade == "extra fancy"  # adults outside site B, and every top grade
  column "grade" { levels = ["cull", "standard", "fancy", "extra fancy"] }
}
pairing "p" {
  dataset = "d"
  x  = ["x"]
  y  = ["y"]
  by = "grp"
}
test "t" {
  pairing  = "p"
  measures = ["spearman", "kendall_b"]
  p_value  = "asymptotic"
}
table "o" {
  tests = ["t"]
  path  = "o.json"
}
`

// TestWhereEqualsAFilteredFile: a recipe with a where gives the numbers
// of the same recipe without it, run on a file holding only the rows that
// a hand-written three-valued rule keeps; each result also says how many
// rows the filter excluded.
func TestWhereEqualsAFilteredFile(t *testing.T) {
	const rows = 600
	data, keep := whereData(rows, 11)
	lines := strings.SplitAfter(data, "\n")
	var kept strings.Builder
	kept.WriteString(lines[0])
	nKept := 0
	for i := range rows {
		if keep(i) {
			kept.WriteString(lines[1+i])
			nKept++
		}
	}
	if nKept == 0 || nKept == rows {
		t.Fatalf("the filter keeps %d of %d rows: a poor test", nKept, rows)
	}
	plain := strings.Replace(whereRecipe, "where =", "# where =", 1)
	got := mustCompute(t, plan(t, whereRecipe, map[string]string{"d.csv": data})).Results
	want := mustCompute(t, plan(t, plain, map[string]string{"d.csv": kept.String()})).Results
	if len(got) != len(want) || len(got) == 0 {
		t.Fatalf("%d results with where, %d on the filtered file", len(got), len(want))
	}
	if got[0].NDropped == 0 {
		t.Fatal("no row of the filtered sample misses x: the missing rule is not exercised")
	}
	note := fmt.Sprintf(`%d of %d rows excluded by where: age >= 18 && site != "B" || grade == "extra fancy"`, rows-nKept, rows)
	for i := range got {
		g, w := got[i], want[i]
		if len(g.Warnings) == 0 || !strings.HasPrefix(g.Warnings[0], note) {
			t.Errorf("%s %s: warnings %q lack %q", g.Group, g.Measure, g.Warnings, note)
			continue
		}
		g.Warnings[0] = strings.TrimPrefix(strings.TrimPrefix(g.Warnings[0], note), "; ")
		if g.Warnings[0] == "" {
			g.Warnings = g.Warnings[1:]
		}
		g.pFamily, w.pFamily = 0, 0
		if !reflect.DeepEqual(fmt.Sprintf("%+v", g), fmt.Sprintf("%+v", w)) {
			t.Errorf("result %d differs:\nwhere: %+v\nfile:  %+v", i, g, w)
		}
	}
}

// TestWhereColumnsAreCheckedAgainstTheHeader: a misspelled column in a
// where is reported before anything runs, at its place in the recipe.
func TestWhereColumnsAreCheckedAgainstTheHeader(t *testing.T) {
	src := strings.Replace(whereRecipe, "site != ", "sitee != ", 1)
	data, _ := whereData(20, 1)
	p := plan(t, src, map[string]string{"d.csv": data})
	diags := Check(p)
	if len(diags) != 1 {
		t.Fatalf("got %d diagnostics, want 1: %v", len(diags), diags)
	}
	d := diags[0]
	if d.Summary != "Unknown column" || d.Subject == nil || d.Subject.Start.Line != 4 || d.Subject.Start.Column != 24 ||
		!strings.Contains(d.Detail, `The column "sitee" is not a column of d.csv. Did you mean "site"?`) {
		t.Errorf("diagnostic = %s at %v: %s", d.Summary, d.Subject, d.Detail)
	}
}

// TestWhereBadCellPointsAtTheWhere: a cell that a filter column cannot be
// read as is reported at the filter's mention of the column.
func TestWhereBadCellPointsAtTheWhere(t *testing.T) {
	data := "age,site,grade,grp,x,y\n20,A,cull,1,1,1\nadult,A,cull,1,2,2\n"
	_, err := Compute(context.Background(), plan(t, whereRecipe, map[string]string{"d.csv": data}), Options{})
	var de *DiagnosticsError
	if !errors.As(err, &de) || len(de.Diags) != 1 {
		t.Fatalf("err = %v", err)
	}
	d := de.Diags[0]
	if d.Subject == nil || d.Subject.Start.Line != 4 || d.Subject.Start.Column != 11 || !strings.Contains(d.Detail, `"adult"`) {
		t.Errorf("diagnostic = %s at %v: %s", d.Summary, d.Subject, d.Detail)
	}
}

// TestWhereExcludingEveryRow leaves every result undefined, and says why.
func TestWhereExcludingEveryRow(t *testing.T) {
	src := strings.Replace(whereRecipe, `where = age >= 18`, `where = age > 1000`, 1)
	src = strings.Replace(src, `|| grade == "extra fancy"`, "", 1)
	data, _ := whereData(50, 2)
	for _, r := range mustCompute(t, plan(t, src, map[string]string{"d.csv": data})).Results {
		if r.N != 0 || r.NDropped != 0 || !strings.HasPrefix(r.Warnings[0], "50 of 50 rows excluded by where: age > 1000 && site != \"B\"") {
			t.Errorf("%s: n = %d, dropped %d, warnings %q", r.Group, r.N, r.NDropped, r.Warnings)
		}
	}
}

// TestWhereParquetTypePointsAtTheWhere: a Parquet column stored as text
// cannot be compared with a number; Check says so at the filter.
func TestWhereParquetTypePointsAtTheWhere(t *testing.T) {
	p := plan(t, fmt.Sprintf(`
dataset "sensors" {
  path  = %q
  where = alarm_level > 2 && station != "north"
}
pairing "p" {
  dataset = "sensors"
  x = ["temp_c"]
  y = ["humidity"]
}
test "t" { pairing = "p" }
table "o" {
  tests = ["t"]
  path  = "o.csv"
}
`, writePipelineParquet(t)), nil)
	diags := Check(p)
	if len(diags) != 1 {
		t.Fatalf("got %d diagnostics, want 1: %v", len(diags), diags)
	}
	d := diags[0]
	if d.Summary != "Column cannot be read" || d.Subject == nil || d.Subject.Start.Line != 4 || d.Subject.Start.Column != 11 ||
		!strings.Contains(d.Detail, `column "alarm_level" holds text`) {
		t.Errorf("diagnostic = %s at %v: %s", d.Summary, d.Subject, d.Detail)
	}
}
