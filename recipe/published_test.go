package recipe

import (
	"bytes"
	"encoding/json"
	"testing"

	"concordat/engine/stats"
)

// TestPublishedGolden checks how published blocks are described and
// recorded, and that the description reads back as the same settings;
// `go test ./recipe -update` rewrites the golden files.
func TestPublishedGolden(t *testing.T) {
	p := load(t, "published.hcl")
	var desc bytes.Buffer
	if err := p.Describe(&desc); err != nil {
		t.Fatal(err)
	}
	settings, err := json.MarshalIndent(p.Settings(), "", "  ")
	if err != nil {
		t.Fatal(err)
	}
	golden(t, "published.describe.golden", desc.Bytes())
	golden(t, "published.settings.golden", append(settings, '\n'))
	again, diags := Parse(desc.Bytes(), p.Path)
	if diags.HasErrors() {
		t.Fatalf("Describe output does not parse: %v", diags)
	}
	settings2, _ := json.MarshalIndent(again.Settings(), "", "  ")
	if !bytes.Equal(settings, settings2) {
		t.Errorf("Describe output resolves to other settings:\n%s", settings2)
	}
}

func TestPublishedDecode(t *testing.T) {
	p := load(t, "published.hcl")
	if len(p.Published) != 1 {
		t.Fatalf("%d published blocks", len(p.Published))
	}
	pb := p.Published[0]
	if pb.Name != "table_3" || pb.Test != p.Tests[0] || !pb.Strict || pb.Source != "Invented et al. (2024), Table 3" {
		t.Errorf("block = %+v", pb)
	}
	// The legend, fewest marks first whatever the order written.
	if len(pb.Stars) != 3 || pb.Stars[0] != (StarLevel{"*", 0.05}) || pb.Stars[2] != (StarLevel{"***", 0.001}) {
		t.Errorf("stars = %v", pb.Stars)
	}
	r0, r1, r2 := pb.Rows[0], pb.Rows[1], pb.Rows[2]
	if r0.Estimate == nil || !r0.Estimate.Negative || r0.Estimate.Marks != "**" || r0.N != 1204 || r0.NText != "1,204" ||
		r0.PValue.Kind != PrintedRounded || r0.Group != "all" || r0.Measure != stats.Spearman {
		t.Errorf("row 1 = %+v", r0)
	}
	// Written as (c, b) with y = b dependent: the pairing's pair is
	// (b, c), so the result to compare is Somers' d with x dependent.
	if r1.X != "b" || r1.Y != "c" || r1.Measure != stats.SomersDXY || r1.Group != "north" ||
		r1.PValue.Kind != PrintedNotSignificant || r1.N != -1 {
		t.Errorf("row 2 = %+v", r1)
	}
	if r2.Test != p.Tests[1] || r2.Measure != stats.Spearman || r2.Estimate != nil || r2.N != 98 {
		t.Errorf("row 3 = %+v", r2)
	}
	if p.Tables[0].Reproduction != pb || len(p.Tables[0].Tests) != 0 || p.Tables[1].Reproduction != pb {
		t.Errorf("tables = %+v, %+v", p.Tables[0], p.Tables[1])
	}
}

func TestPublishedDiagnostics(t *testing.T) {
	const head = `dataset "d" {
  path = "d.csv"
}
pairing "p" {
  dataset = "d"
  x = ["a", "b"]
  y = ["c"]
}
test "t" {
  pairing  = "p"
  measures = ["spearman", "kendall_b"]
}
`
	// Lines of the recipe under test start at 13 when it follows head.
	tests := []struct {
		name string
		src  string
		want []wantDiag
	}{
		{"malformed estimate points at the character", head + `published "x" {
  test = "t"
  row {
    x = "a"
    y = "c"
    measure = "spearman"
    estimate = ".4.2"
  }
}`, []wantDiag{{19, 19, "Unreadable printed value", `The estimate ".4.2" cannot be read: a number has one decimal point.`}}},
		{"malformed p-value after a Unicode minus", head + `published "x" {
  test = "t"
  row {
    x = "a"
    y = "c"
    measure = "spearman"
    p_value = "p < .0o1"
  }
}`, []wantDiag{{19, 22, "Unreadable printed value", `unexpected "o" after the number`}}},
		{"printed value as a number", head + `published "x" {
  test = "t"
  row {
    x = "a"
    y = "c"
    measure = "spearman"
    estimate = 0.420
  }
}`, []wantDiag{{19, 16, "Printed value is not a string", `estimate = "0.420"`}}},
		{"unknown test and unknown column", head + `published "x" {
  test = "tt"
  row {
    x = "a"
    y = "cc"
    estimate = ".1"
  }
}
published "y" {
  test = "t"
  row {
    x = "a"
    y = "cc"
    measure = "spearman"
    estimate = ".1"
  }
}`, []wantDiag{
			{14, 10, "Unknown test", `Did you mean "t"?`},
			{25, 9, "Pair not in the test", `The pairing has no column "cc". Did you mean "c"?`},
		}},
		{"measure missing, unknown, not computed, two-way", head + `test "u" {
  pairing  = "p"
  measures = ["spearman"]
}
published "x" {
  test = "t"
  row {
    x = "a"
    y = "c"
    estimate = ".1"
  }
  row {
    x = "a"
    y = "c"
    measure = "spearmann"
    estimate = ".1"
  }
  row {
    test = "u"
    x = "a"
    y = "c"
    measure = "pearson"
    estimate = ".1"
  }
  row {
    x = "a"
    y = "c"
    measure = "somers_d"
    estimate = ".1"
  }
}`, []wantDiag{
			{19, 3, "Missing measure", `computes "spearman", "kendall_b"`},
			{27, 15, "Unknown measure", `Did you mean "spearman"?`},
			{34, 15, "Measure not computed", `Test "u" computes "spearman", not "pearson"`},
			{40, 15, "Measure needs a direction", `"somers_d_yx"`},
		}},
		{"marks and legend", head + `published "x" {
  test  = "t"
  stars = { "*" = 0.05, "a" = 0.01, "**" = 2, "***" = 0.05 }
  row {
    x = "a"
    y = "c"
    measure = "spearman"
    estimate = ".42**"
  }
}`, []wantDiag{
			{15, 25, "Invalid significance marks", `got "a"`},
			{15, 37, "Value out of range", `The threshold of "**" must lie between 0 and 1`},
		}},
		{"marks without legend", head + `published "y" {
  test = "t"
  row {
    x = "a"
    y = "c"
    measure = "spearman"
    estimate = ".42**"
    p_value = "†"
  }
}`, []wantDiag{
			{19, 16, "Marks without a legend", `carries the marks "**"`},
			{20, 15, "Marks without a legend", `carries the marks "†"`},
		}},
		{"nothing to compare, duplicate row, group without by, out of range", head + `published "x" {
  test = "t"
  row {
    x = "a"
    y = "c"
    measure = "spearman"
  }
  row {
    x = "c"
    y = "a"
    measure = "spearman"
    estimate = "1.2"
    n = -3
  }
  row {
    x = "a"
    y = "c"
    measure = "spearman"
    p_value = ".5"
  }
  row {
    x = "a"
    y = "c"
    group = "north"
    measure = "kendall_b"
    n = "many"
  }
}`, []wantDiag{
			{15, 3, "Nothing to compare", ""},
			{24, 16, "Estimate out of range", `"1.2"`},
			{25, 9, "Value out of range", "n must be a whole number"},
			{27, 3, "Duplicate printed row", "first is at recipe.hcl:20:3"},
			{36, 13, "No groups", `has no by`},
			{38, 9, "Unreadable printed value", `The n "many" cannot be read`},
		}},
		{"no rows, no test, tables", head + `published "x" {
  source = "somewhere"
}
table "a" {
  path = "a.md"
}
table "b" {
  tests = ["t"]
  reproduction = "x"
  path = "b.csv"
}
table "c" {
  reproduction = "y"
  path = "c.md"
  columns = ["x"]
}`, []wantDiag{
			{13, 1, "Missing required argument", `"test"`},
			{13, 1, "No printed rows", ""},
			{16, 1, "Missing required argument", `"tests" is required in a table block (or "reproduction"`},
			{21, 3, "Two tables in one file", "A csv file holds one table"},
			{25, 18, "Unknown published table", `Did you mean "x"?`},
		}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			plan, diags := Parse([]byte(tc.src), "recipe.hcl")
			if plan != nil {
				t.Errorf("got a plan despite errors")
			}
			checkDiags(t, diags, tc.want)
		})
	}
}

func TestParsePrintedN(t *testing.T) {
	for in, want := range map[string]int{"212": 212, "1,204": 1204, "1\u2009204": 1204, "N = 212": 212, "n=35": 35} {
		if got, ok := parsePrintedN(in); !ok || got != want {
			t.Errorf("parsePrintedN(%q) = %d, %v; want %d", in, got, ok, want)
		}
	}
	for _, in := range []string{"", "N", "n 212", "2.5", ",12", "-3", "1234567890"} {
		if _, ok := parsePrintedN(in); ok {
			t.Errorf("parsePrintedN(%q) accepted", in)
		}
	}
}
