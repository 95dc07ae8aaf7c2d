package render

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"flag"
	"io"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"
)

var update = flag.Bool("update", false, "rewrite the golden files in testdata/")

// orchard is a small invented result table: canopy shade against fruit grade
// in an orchard survey, with a tiny p-value, an undefined estimate and
// warnings.
func orchard() *Table {
	return &Table{
		Title:   "Canopy shade and fruit grade (invented data)",
		Columns: []string{"x", "y", "measure", "n", "estimate", "p", "warnings"},
		Rows: [][]Cell{
			{Text("shade_pct"), Text("grade"), Text("spearman"), Int(48), Real(-0.4127538), Prob(0.0035121), List(nil)},
			{Text("shade_pct"), Text("grade"), Text("kendall_b"), Int(48), Real(-0.30519), Prob(2.7e-7), List([]string{})},
			{Text("shade_pct"), Text("sugar_brix"), Text("spearman"), Int(47), Real(-0.0000004), Prob(0.99981), List([]string{"1 row dropped: sugar_brix missing"})},
			{Text("tree_age"), Text("grade|class"), Text("spearman"), Int(3), Real(math.NaN()), Prob(math.NaN()), List([]string{"tree_age is constant", `label "extra fancy", merged`})},
		},
		Notes: []string{"p-values are two-sided, adjusted by Holm's method.", "— marks a value that is undefined; see warnings."},
	}
}

// intervals is a small invented table of confidence intervals, rounded to
// two decimals in Markdown: a bound that rounds to -0, an interval with one
// undefined bound, p-values that keep three decimals regardless, and a
// header that names the level with Percent.
func intervals() *Table {
	return &Table{
		Title:   "Sensor agreement with intervals (invented data)",
		Columns: []string{"pair", "rho", Percent(0.95) + "% CI", "p"},
		Rows: [][]Cell{
			{Text("a / b"), Real(0.8123), Interval(0.6391, 0.9102), Prob(0.00002)},
			{Text("a / c"), Real(0.2641), Interval(-0.0004, 0.5), Prob(0.0861)},
			{Text("b / c"), Real(-0.4127538), Interval(-0.6633, -0.0853), Prob(0.0213)},
			{Text("c / d"), Real(math.NaN()), Interval(math.NaN(), 0.31), Prob(math.NaN())},
		},
		Notes: []string{"— marks an undefined value."},
	}
}

func TestGolden(t *testing.T) {
	for _, tc := range []struct {
		table  func() *Table
		format Format
		file   string
		digits int
	}{
		{orchard, Markdown, "orchard.md", 3},
		{orchard, CSV, "orchard.csv", 3},
		{orchard, CSV, "orchard_shortest.csv", -1},
		{orchard, JSON, "orchard.json", 3},
		{intervals, Markdown, "intervals.md", 2},
		{intervals, CSV, "intervals.csv", 2},
		{intervals, CSV, "intervals_shortest.csv", -1},
		{intervals, JSON, "intervals.json", 2},
	} {
		t.Run(tc.file, func(t *testing.T) {
			var buf bytes.Buffer
			if err := Encode(&buf, tc.table(), tc.format, tc.digits); err != nil {
				t.Fatal(err)
			}
			golden := filepath.Join("testdata", tc.file)
			if *update {
				if err := os.WriteFile(golden, buf.Bytes(), 0o644); err != nil {
					t.Fatal(err)
				}
			}
			want, err := os.ReadFile(golden)
			if err != nil {
				t.Fatalf("%v (run go test -update to create it)", err)
			}
			if !bytes.Equal(buf.Bytes(), want) {
				t.Errorf("%s differs from golden file %s:\ngot:\n%s\nwant:\n%s", tc.format, golden, buf.Bytes(), want)
			}
			// Determinism contract: the same table gives the same bytes.
			var again bytes.Buffer
			if err := Encode(&again, tc.table(), tc.format, tc.digits); err != nil {
				t.Fatal(err)
			}
			if !bytes.Equal(buf.Bytes(), again.Bytes()) {
				t.Error("two encodings of the same table differ")
			}
		})
	}
}

func encode(t *testing.T, tab *Table, f Format, digits int) string {
	t.Helper()
	var buf bytes.Buffer
	if err := Encode(&buf, tab, f, digits); err != nil {
		t.Fatalf("Encode %s: %v", f, err)
	}
	return buf.String()
}

func TestNull(t *testing.T) {
	tab := &Table{Columns: []string{"estimate", "p"}, Rows: [][]Cell{{Real(math.NaN()), Prob(math.NaN())}}}
	if got, want := encode(t, tab, Markdown, 3), "| estimate |   p |\n| -------: | --: |\n|        — |   — |\n"; got != want {
		t.Errorf("Markdown:\ngot  %q\nwant %q", got, want)
	}
	if got, want := encode(t, tab, CSV, 3), "estimate,p\n,\n"; got != want {
		t.Errorf("CSV: got %q, want %q", got, want)
	}
	if got, want := encode(t, tab, JSON, 3), "[\n  {\n    \"estimate\": null,\n    \"p\": null\n  }\n]\n"; got != want {
		t.Errorf("JSON: got %q, want %q", got, want)
	}
	// A text cell without a value is null too, unlike an empty string.
	txt := &Table{Columns: []string{"method", "label"}, Rows: [][]Cell{{NoText(), Text("")}}}
	if got, want := encode(t, txt, JSON, 3), "[\n  {\n    \"method\": null,\n    \"label\": \"\"\n  }\n]\n"; got != want {
		t.Errorf("JSON NoText: got %q, want %q", got, want)
	}
	if got, want := encode(t, txt, CSV, 3), "method,label\n,\n"; got != want {
		t.Errorf("CSV NoText: got %q, want %q", got, want)
	}
	if got := encode(t, txt, Markdown, 3); !strings.Contains(got, "| —      |") {
		t.Errorf("Markdown NoText: got %q", got)
	}
	// Infinities are not JSON numbers; they are written as null.
	inf := &Table{Columns: []string{"a", "b"}, Rows: [][]Cell{{Real(math.Inf(1)), Real(math.Inf(-1))}}}
	if got, want := encode(t, inf, JSON, 3), "[\n  {\n    \"a\": null,\n    \"b\": null\n  }\n]\n"; got != want {
		t.Errorf("JSON infinities: got %q, want %q", got, want)
	}
	if got, want := encode(t, inf, CSV, 3), "a,b\nInf,-Inf\n"; got != want {
		t.Errorf("CSV infinities: got %q, want %q", got, want)
	}
}

func TestNegativeZero(t *testing.T) {
	negZero := math.Copysign(0, -1)
	for _, tc := range []struct {
		f      float64
		digits int
		want   string
	}{
		{-0.0000004, 3, "0.000"},
		{-0.0004999, 3, "0.000"},
		{-0.0005001, 3, "-0.001"},
		{negZero, 3, "0.000"},
		{negZero, 0, "0"},
		{negZero, -1, "0"},
		{-1e-300, 3, "0.000"},
		{-1e-300, -1, "-1e-300"},
		{-0.25, 1, "-0.2"}, // round half to even
	} {
		if got := fixed(tc.f, tc.digits); got != tc.want {
			t.Errorf("fixed(%g, %d) = %q, want %q", tc.f, tc.digits, got, tc.want)
		}
	}
	tab := &Table{Columns: []string{"r"}, Rows: [][]Cell{{Real(negZero)}}}
	if got, want := encode(t, tab, JSON, 3), "[\n  {\n    \"r\": 0\n  }\n]\n"; got != want {
		t.Errorf("JSON -0: got %q, want %q", got, want)
	}
	if got, want := encode(t, tab, CSV, -1), "r\n0\n"; got != want {
		t.Errorf("CSV -0: got %q, want %q", got, want)
	}
}

func TestProbBound(t *testing.T) {
	for _, tc := range []struct {
		p      float64
		digits int
		want   string
	}{
		{0.00004, 3, "< 0.001"},
		{0, 3, "< 0.001"},
		{0.0009996, 3, "< 0.001"}, // would round to 0.001, but is below it
		{0.001, 3, "0.001"},
		{0.0123, 3, "0.012"},
		{1, 3, "1.000"},
		{2e-5, 4, "< 0.0001"},
		{2e-5, -1, "2e-05"}, // shortest: no bound
	} {
		if got := mdCell(Prob(tc.p), tc.digits); got != tc.want {
			t.Errorf("Markdown Prob(%g) with %d digits = %q, want %q", tc.p, tc.digits, got, tc.want)
		}
	}
	// A Real is never shown as a bound, and CSV never shows one.
	if got := mdCell(Real(0.00004), 3); got != "0.000" {
		t.Errorf("Markdown Real(0.00004) = %q, want 0.000", got)
	}
	if got := csvCell(Prob(0.00004), 3); got != "0.000" {
		t.Errorf("CSV Prob(0.00004) = %q, want 0.000", got)
	}
}

func TestProbMinimumDigits(t *testing.T) {
	// Markdown keeps at least three decimals for p-values, so p < 0.001
	// stays visible in a table rounded to fewer; more than three are kept.
	for _, tc := range []struct {
		p      float64
		digits int
		want   string
	}{
		{0.0004, 0, "< 0.001"},
		{0.5, 0, "0.500"},
		{0.04, 0, "0.040"},
		{1, 0, "1.000"},
		{0.0123, 1, "0.012"},
		{0.0004, 2, "< 0.001"},
		{0.00004, 5, "0.00004"},
		{0.000004, 5, "< 0.00001"},
		{0.0123456, 6, "0.012346"},
	} {
		if got := mdCell(Prob(tc.p), tc.digits); got != tc.want {
			t.Errorf("Markdown Prob(%g) with %d digits = %q, want %q", tc.p, tc.digits, got, tc.want)
		}
	}
	// Reals and CSV follow digits as given.
	if got := mdCell(Real(0.5), 0); got != "0" {
		t.Errorf("Markdown Real(0.5) with 0 digits = %q, want 0 (half to even)", got)
	}
	if got := csvCell(Prob(0.04), 0); got != "0" {
		t.Errorf("CSV Prob(0.04) with 0 digits = %q, want 0", got)
	}
}

func TestInterval(t *testing.T) {
	nan, negZero := math.NaN(), math.Copysign(0, -1)
	for _, tc := range []struct {
		lo, hi  float64
		digits  int
		md, csv string
	}{
		{0.25, 0.75, 3, "[0.250, 0.750]", "[0.250, 0.750]"},
		{-0.6633, -0.0853, 2, "[-0.66, -0.09]", "[-0.66, -0.09]"},
		{-0.0004, 0.5, 3, "[0.000, 0.500]", "[0.000, 0.500]"}, // no "-0.000"
		{negZero, negZero, 0, "[0, 0]", "[0, 0]"},
		{negZero, 1, -1, "[0, 1]", "[0, 1]"},
		{-0.0004, 0.1, -1, "[-0.0004, 0.1]", "[-0.0004, 0.1]"},
		{1.0 / 3, 2.0 / 3, -1, "[0.3333333333333333, 0.6666666666666666]", "[0.3333333333333333, 0.6666666666666666]"},
		{-1, 1, 1, "[-1.0, 1.0]", "[-1.0, 1.0]"},
		{math.Inf(-1), 0.5, 1, "[-Inf, 0.5]", "[-Inf, 0.5]"},
		{nan, 0.5, 3, "—", ""},
		{0.5, nan, 3, "—", ""},
		{nan, nan, -1, "—", ""},
	} {
		c := Interval(tc.lo, tc.hi)
		if c.Kind() != KindInterval {
			t.Fatalf("Interval(%g, %g).Kind() = %v", tc.lo, tc.hi, c.Kind())
		}
		if got := mdCell(c, tc.digits); got != tc.md {
			t.Errorf("Markdown Interval(%g, %g) with %d digits = %q, want %q", tc.lo, tc.hi, tc.digits, got, tc.md)
		}
		if got := csvCell(c, tc.digits); got != tc.csv {
			t.Errorf("CSV Interval(%g, %g) with %d digits = %q, want %q", tc.lo, tc.hi, tc.digits, got, tc.csv)
		}
	}
	if got := KindInterval.String(); got != "interval" {
		t.Errorf("KindInterval.String() = %q", got)
	}

	// Markdown right-aligns an interval column, undefined cells included.
	tab := &Table{Columns: []string{"ci"}, Rows: [][]Cell{{Interval(0.1, 0.2)}, {Interval(nan, 0.2)}}}
	if got, want := encode(t, tab, Markdown, 1), "|         ci |\n| ---------: |\n| [0.1, 0.2] |\n|          — |\n"; got != want {
		t.Errorf("Markdown:\ngot  %q\nwant %q", got, want)
	}
	// CSV quotes the field, which holds a comma.
	if got, want := encode(t, tab, CSV, 1), "ci\n\"[0.1, 0.2]\"\n\n"; got != want {
		t.Errorf("CSV: got %q, want %q", got, want)
	}
}

func TestIntervalJSON(t *testing.T) {
	// JSON holds the exact bounds as a two-element array, null when a bound
	// is undefined; an infinite bound alone is null inside the array, as an
	// infinite Real is.
	tab := &Table{Columns: []string{"ci", "n"}, Rows: [][]Cell{
		{Interval(1.0/3, 0.9102), Int(1)},
		{Interval(math.Copysign(0, -1), 2.7e-7), Int(2)},
		{Interval(math.NaN(), 0.5), Int(3)},
		{Interval(0.5, math.NaN()), Int(4)},
		{Interval(math.Inf(-1), 0.5), Int(5)},
	}}
	out := encode(t, tab, JSON, 1)
	// The layout is json.MarshalIndent's with a two-space indent.
	var compact, indented bytes.Buffer
	if err := json.Compact(&compact, []byte(out)); err != nil {
		t.Fatalf("invalid JSON: %v\n%s", err, out)
	}
	if err := json.Indent(&indented, compact.Bytes(), "", "  "); err != nil {
		t.Fatal(err)
	}
	if indented.String()+"\n" != out {
		t.Errorf("layout differs from json.Indent:\ngot:\n%s\nwant:\n%s", out, indented.String())
	}
	var got []struct {
		CI []*float64 `json:"ci"`
	}
	if err := json.Unmarshal([]byte(out), &got); err != nil {
		t.Fatal(err)
	}
	f := func(v float64) *float64 { return &v }
	want := [][]*float64{{f(1.0 / 3), f(0.9102)}, {f(0), f(2.7e-7)}, nil, nil, {nil, f(0.5)}}
	for i := range want {
		if len(got[i].CI) != len(want[i]) {
			t.Errorf("row %d: ci = %v, want %v", i+1, got[i].CI, want[i])
			continue
		}
		for j := range want[i] {
			g, w := got[i].CI[j], want[i][j]
			if (g == nil) != (w == nil) || g != nil && *g != *w {
				t.Errorf("row %d: ci[%d] = %v, want %v", i+1, j, g, w)
			}
		}
	}
	if !strings.Contains(out, `"ci": null`) {
		t.Errorf("undefined interval not written as null:\n%s", out)
	}
}

func TestPercent(t *testing.T) {
	for _, tc := range []struct {
		level float64
		want  string
	}{
		{0.95, "95"},
		{0.57, "57"}, // 100 × 0.57 = 56.99999999999999 in float64
		{0.999, "99.9"},
		{0.975, "97.5"},
		{0.9, "90"},
		{0.99, "99"},
		{0.9999, "99.99"},
		{0.99995, "99.995"},
		{0.07, "7"}, // 7.000000000000001 in float64
		{0.5, "50"},
		{1e-9, "0.0000001"}, // plain decimals, never exponent form
		{1, "100"},
		{math.NaN(), "NaN"},
		{math.Inf(1), "Inf"},
	} {
		if got := Percent(tc.level); got != tc.want {
			t.Errorf("Percent(%v) = %q, want %q", tc.level, got, tc.want)
		}
	}
}

func TestMarkdownEscape(t *testing.T) {
	tab := &Table{
		Title:   "block A | block B\nspring",
		Columns: []string{"a|b"},
		Rows:    [][]Cell{{Text("north|south\r\nrow")}, {List([]string{"x|y", "z"})}},
		Notes:   []string{"one\ntwo"},
	}
	want := "block A \\| block B spring\n\n" +
		"| a\\|b             |\n" +
		"| ---------------- |\n" +
		"| north\\|south row |\n" +
		"| x\\|y; z          |\n" +
		"\n- one two\n"
	if got := encode(t, tab, Markdown, 3); got != want {
		t.Errorf("got:\n%s\nwant:\n%s", got, want)
	}
}

func TestMarkdownAlignment(t *testing.T) {
	// A column is numeric only when all its cells are numbers; mixed and
	// empty tables are left-aligned.
	tab := &Table{
		Columns: []string{"n", "mixed"},
		Rows:    [][]Cell{{Int(5), Int(1)}, {Int(12), Text("all")}},
	}
	want := "|   n | mixed |\n| --: | ----- |\n|   5 | 1     |\n|  12 | all   |\n"
	if got := encode(t, tab, Markdown, 3); got != want {
		t.Errorf("got:\n%s\nwant:\n%s", got, want)
	}
	empty := &Table{Columns: []string{"n"}}
	if got, want := encode(t, empty, Markdown, 3), "| n   |\n| --- |\n"; got != want {
		t.Errorf("empty table: got %q, want %q", got, want)
	}
}

func TestCSVEscape(t *testing.T) {
	fields := []string{`plain`, `with, comma`, `with "quotes"`, "two\nlines", ` lead space`, ``}
	row := make([]Cell, len(fields))
	cols := make([]string, len(fields))
	for i, s := range fields {
		row[i] = Text(s)
		cols[i] = "c" + strconv.Itoa(i)
	}
	cols[1] = "name, with comma"
	row = append(row, List([]string{"a, b", `"c"`}))
	cols = append(cols, "warnings")
	out := encode(t, &Table{Columns: cols, Rows: [][]Cell{row}}, CSV, 3)

	records, err := csv.NewReader(strings.NewReader(out)).ReadAll()
	if err != nil {
		t.Fatalf("read back: %v\n%s", err, out)
	}
	if len(records) != 2 {
		t.Fatalf("read back %d records, want 2", len(records))
	}
	want := append(fields, `a, b; "c"`)
	for i := range want {
		if records[0][i] != cols[i] {
			t.Errorf("header %d = %q, want %q", i, records[0][i], cols[i])
		}
		if records[1][i] != want[i] {
			t.Errorf("field %d = %q, want %q", i, records[1][i], want[i])
		}
	}
	if !strings.Contains(out, `"with ""quotes"""`) {
		t.Errorf("quotes not doubled as RFC 4180 says:\n%s", out)
	}
}

func TestJSONRoundTrip(t *testing.T) {
	special := []float64{
		0.1, 1.0 / 3, -2.5, 1e-6, 9.99999e-7, 1e-7, 1e20, 1e21, 123456789012345678,
		math.SmallestNonzeroFloat64, math.MaxFloat64, -math.MaxFloat64, 2.7e-7, 0,
	}
	rng := rand.New(rand.NewPCG(20261202, 1)) // fixed seed
	for range 500 {
		special = append(special, math.Float64frombits(rng.Uint64()))
	}
	tab := &Table{Columns: []string{"z_real", "a_prob", "n", "label", "warnings"}}
	var want []float64
	for i, f := range special {
		if math.IsNaN(f) || math.IsInf(f, 0) {
			continue
		}
		want = append(want, f)
		tab.Rows = append(tab.Rows, []Cell{
			Real(f), Prob(f), Int(math.MaxInt64 - int64(i)), Text("näive <&> \"q\"\t\u2028"), List([]string{"w" + strconv.Itoa(i)}),
		})
	}
	out := encode(t, tab, JSON, 3)

	dec := json.NewDecoder(strings.NewReader(out))
	dec.UseNumber()
	var got []map[string]any
	if err := dec.Decode(&got); err != nil {
		t.Fatalf("decode: %v", err)
	}
	if len(got) != len(want) {
		t.Fatalf("decoded %d objects, want %d", len(got), len(want))
	}
	for i, obj := range got {
		for _, key := range []string{"z_real", "a_prob"} {
			f, err := obj[key].(json.Number).Float64()
			if err != nil || f != want[i] {
				t.Errorf("row %d %s = %v (%v), want %v", i, key, obj[key], err, want[i])
			}
		}
		n, err := obj["n"].(json.Number).Int64()
		if err != nil || n != math.MaxInt64-int64(i) {
			t.Errorf("row %d n = %v (%v)", i, obj["n"], err)
		}
		if obj["label"] != "näive <&> \"q\"\t\u2028" {
			t.Errorf("row %d label = %q", i, obj["label"])
		}
		if w, ok := obj["warnings"].([]any); !ok || len(w) != 1 || w[0] != "w"+strconv.Itoa(i) {
			t.Errorf("row %d warnings = %v", i, obj["warnings"])
		}
	}
}

func TestJSONKeyOrder(t *testing.T) {
	// Columns in an order that is neither alphabetical nor Go map order.
	cols := []string{"test", "x", "y", "estimate", "alternative", "warnings"}
	row := []Cell{Text("x"), Text("a"), Text("b"), Real(0.5), Text("two-sided"), List(nil)}
	out := encode(t, &Table{Columns: cols, Rows: [][]Cell{row, row}}, JSON, 3)
	member := regexp.MustCompile(`(?m)^    "([^"]*)": `)
	var keys []string
	for _, m := range member.FindAllStringSubmatch(out, -1) {
		keys = append(keys, m[1])
	}
	want := strings.Join(append(cols, cols...), ",")
	if strings.Join(keys, ",") != want {
		t.Errorf("keys in order %v, want %v", keys, want)
	}
	// And the text is valid JSON.
	var v []map[string]any
	if err := json.Unmarshal([]byte(out), &v); err != nil {
		t.Fatal(err)
	}
}

func TestJSONEmpty(t *testing.T) {
	if got := encode(t, &Table{Columns: []string{"x"}}, JSON, 3); got != "[]\n" {
		t.Errorf("empty table: got %q, want %q", got, "[]\n")
	}
}

func TestEncodeErrors(t *testing.T) {
	for name, tc := range map[string]struct {
		tab *Table
		f   Format
	}{
		"short row":      {&Table{Columns: []string{"a", "b"}, Rows: [][]Cell{{Int(1)}}}, CSV},
		"zero cell":      {&Table{Columns: []string{"a"}, Rows: [][]Cell{{{}}}}, JSON},
		"invalid format": {&Table{Columns: []string{"a"}}, Format(0)},
		"nil table":      {nil, Markdown},
	} {
		var buf bytes.Buffer
		err := Encode(&buf, tc.tab, tc.f, 3)
		if err == nil {
			t.Errorf("%s: no error", name)
		}
		if buf.Len() != 0 {
			t.Errorf("%s: wrote %q before failing", name, buf.String())
		}
	}
}

func TestParseFormat(t *testing.T) {
	for _, f := range []Format{Markdown, CSV, JSON} {
		got, err := ParseFormat(f.String())
		if err != nil || got != f {
			t.Errorf("ParseFormat(%q) = %v, %v", f.String(), got, err)
		}
	}
	if _, err := ParseFormat("xlsx"); err == nil {
		t.Error("ParseFormat(xlsx): no error")
	}
	if got := Format(0).String(); got != "Format(0)" {
		t.Errorf("Format(0).String() = %q", got)
	}
}

// TestJSONStringFastPath checks the plain-ASCII shortcut of jsonString
// against encoding/json on every single byte, on mixed strings and on
// random ones.
func TestJSONStringFastPath(t *testing.T) {
	var cases []string
	for b := range 256 {
		cases = append(cases, string([]byte{byte(b)}), "a"+string([]byte{byte(b)})+"z")
	}
	cases = append(cases, "", "canopy shade (%)", `say "hi"`, `C:\data`, "tab\there", "é", "\u2028", "<b>&</b>", "\xff\xfe")
	rng := rand.New(rand.NewPCG(7, 11))
	for range 2000 {
		b := make([]byte, rng.IntN(12))
		for i := range b {
			b[i] = byte(rng.IntN(256))
		}
		cases = append(cases, string(b))
	}
	for _, s := range cases {
		if got, want := jsonString(s), encodedJSONString(s); got != want {
			t.Errorf("jsonString(%q) = %s, encoding/json gives %s", s, got, want)
		}
	}
}

func FuzzJSONString(f *testing.F) {
	for _, s := range []string{"", "x", `"`, "\\", "\x00", "é", "\u2028", "\xff"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		if got, want := jsonString(s), encodedJSONString(s); got != want {
			t.Errorf("jsonString(%q) = %s, encoding/json gives %s", s, got, want)
		}
	})
}

// TestRowFunc checks that a table whose rows come from RowFunc encodes to
// the same bytes as the same table held in Rows, in every format, and
// that a bad row is reported with its number.
func TestRowFunc(t *testing.T) {
	for _, table := range []func() *Table{orchard, intervals} {
		held := table()
		lazy := table()
		rows := lazy.Rows
		lazy.Rows, lazy.NumRows = nil, len(rows)
		lazy.RowFunc = func(i int, dst []Cell) []Cell { return append(dst, rows[i]...) }
		for _, f := range []Format{Markdown, CSV, JSON} {
			for _, digits := range []int{-1, 2} {
				var want, got bytes.Buffer
				if err := Encode(&want, held, f, digits); err != nil {
					t.Fatal(err)
				}
				if err := Encode(&got, lazy, f, digits); err != nil {
					t.Fatal(err)
				}
				if got.String() != want.String() {
					t.Errorf("%s, %s, digits %d: RowFunc table gives\n%s\nRows table gives\n%s", held.Title, f, digits, got.String(), want.String())
				}
			}
		}
	}
	bad := &Table{Columns: []string{"a", "b"}, NumRows: 3, RowFunc: func(i int, dst []Cell) []Cell {
		if i == 2 {
			return append(dst, Text("x"))
		}
		return append(dst, Text("x"), Int(1))
	}}
	for _, f := range []Format{Markdown, CSV, JSON} {
		err := Encode(io.Discard, bad, f, -1)
		if err == nil || !strings.Contains(err.Error(), "row 3 has 1 cells for 2 columns") {
			t.Errorf("%s: Encode of a short row = %v, want the row named", f, err)
		}
	}
}

// TestJSONNumberMatchesEncodingJSON checks jsonNumber against
// encoding/json's float formatting (the same rules: shortest round trip,
// exponent form outside [1e-6, 1e21), two-digit negative exponents
// shortened) on random bit patterns and on the boundaries.
func TestJSONNumberMatchesEncodingJSON(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 9))
	cases := []float64{1e-6, 9.999999999999999e-7, 1e21, 9.99999999999999e20, 1e-7, 1.5e-300, 5e-324, math.MaxFloat64, -2.5e-8, 0.1, 123456.789}
	for range 20000 {
		f := math.Float64frombits(rng.Uint64())
		if !math.IsNaN(f) && !math.IsInf(f, 0) {
			cases = append(cases, f)
		}
	}
	for _, f := range cases {
		want, err := json.Marshal(f)
		if err != nil {
			t.Fatal(err)
		}
		if got := jsonNumber(f); got != string(want) {
			t.Errorf("jsonNumber(%v) = %s, encoding/json writes %s", f, got, want)
		}
	}
}
