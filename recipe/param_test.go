package recipe

import (
	"bytes"
	"encoding/json"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"github.com/hashicorp/hcl/v2"
	"github.com/zclconf/go-cty/cty"
)

const paramRecipe = `
title = "At least ${param.min_age} years (${param.site})"
seed  = param.seed

param "min_age" {
  default     = 18
  description = "youngest respondent included"
}
param "site" {
  default = "north"
}
param "seed" {
  default = 7
}
param "exact" {
  default = false
}

dataset "survey" {
  path  = "survey.csv"
  where = age >= param.min_age
}
pairing "p" {
  dataset = "survey"
  x       = ["sleep"]
  y       = ["mood"]
}
test "t" {
  pairing      = "p"
  permutations = param.min_age * 100
  p_value      = param.exact ? "exact" : "auto"
}
table "out" {
  tests = ["t"]
  path  = "out/t.csv"
}
`

func parseWith(t *testing.T, src string, overrides ...Override) (*Plan, hcl.Diagnostics) {
	t.Helper()
	dir := t.TempDir()
	path := filepath.Join(dir, "recipe.hcl")
	if err := os.WriteFile(path, []byte(src), 0o644); err != nil {
		t.Fatal(err)
	}
	p, _, diags := LoadWith(path, overrides)
	return p, diags
}

func TestParamsResolveEverywhere(t *testing.T) {
	p, diags := parseWith(t, paramRecipe)
	if diags.HasErrors() {
		t.Fatal(diags)
	}
	if p.Title != "At least 18 years (north)" || p.Seed != 7 || p.Tests[0].Permutations != 1800 || p.Tests[0].PValue != PAuto {
		t.Errorf("defaults: title %q, seed %d, permutations %d, p_value %v", p.Title, p.Seed, p.Tests[0].Permutations, p.Tests[0].PValue)
	}
	if w := p.Datasets[0].Where; len(w.Params) != 1 || w.Params[0].Name != "min_age" || len(w.Columns) != 1 {
		t.Errorf("where: params %v, columns %v", w.Params, w.Columns)
	}

	p, diags = parseWith(t, paramRecipe,
		Override{"min_age", "21.5"}, Override{"site", "south = 2"}, Override{"exact", "true"}, Override{"seed", "9"}, Override{"seed", "10"})
	if diags.HasErrors() {
		t.Fatal(diags)
	}
	if p.Title != "At least 21.5 years (south = 2)" || p.Seed != 10 || p.Tests[0].Permutations != 2150 || p.Tests[0].PValue != PExact {
		t.Errorf("overridden: title %q, seed %d, permutations %d, p_value %v", p.Title, p.Seed, p.Tests[0].Permutations, p.Tests[0].PValue)
	}
	if v := p.Datasets[0].Where.Params[0].Value; !v.RawEquals(cty.NumberFloatVal(21.5)) {
		t.Errorf("where sees %#v", v)
	}

	// The settings record every parameter, its default and whether it was set.
	settings, err := json.Marshal(p.Settings())
	if err != nil {
		t.Fatal(err)
	}
	want := `"params":[{"name":"min_age","value":21.5,"default":18,"set":true},{"name":"site","value":"south = 2","default":"north","set":true},{"name":"seed","value":10,"default":7,"set":true},{"name":"exact","value":true,"default":false,"set":true}]`
	if !strings.Contains(string(settings), want) {
		t.Errorf("settings %s\nlack %s", settings, want)
	}
	// … from which the run's overrides are read back for verify.
	back, err := OverridesOf(settings)
	if err != nil {
		t.Fatal(err)
	}
	if want := []Override{{"min_age", "21.5"}, {"site", "south = 2"}, {"seed", "10"}, {"exact", "true"}}; !slices.Equal(back, want) {
		t.Errorf("OverridesOf = %v, want %v", back, want)
	}
	// Describe writes the resolved value, and still parses.
	var desc bytes.Buffer
	if err := p.Describe(&desc); err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(desc.String(), `default = 21.5 # from --param; the recipe's default is 18`) {
		t.Errorf("describe:\n%s", desc.String())
	}
}

// A recipe without parameters has the settings it always had: no params key.
func TestNoParamsNoSettingsKey(t *testing.T) {
	p, diags := parseWith(t, `
dataset "d" { path = "d.csv" }
pairing "p" {
  dataset = "d"
  x = ["a"]
  y = ["b"]
}
test "t" { pairing = "p" }
table "o" {
  tests = ["t"]
  path = "o.csv"
}`)
	if diags.HasErrors() {
		t.Fatal(diags)
	}
	settings, _ := json.Marshal(p.Settings())
	if bytes.Contains(settings, []byte("params")) {
		t.Errorf("settings mention params: %s", settings)
	}
	if o, err := OverridesOf(settings); err != nil || o != nil {
		t.Errorf("OverridesOf = %v, %v", o, err)
	}
}

func TestParamDiagnostics(t *testing.T) {
	for _, c := range []struct {
		name      string
		src       string
		overrides []Override
		want      string
	}{
		{"list default", `param "x" { default = [1] }`, nil, "default must be a number, a string or true or false"},
		{"no default", `param "x" {}`, nil, `The argument "default" is required in a param block`},
		{"duplicate", "param \"x\" { default = 1 }\nparam \"x\" { default = 2 }", nil, `A param named "x" is already defined`},
		{"bad name", `param "2x" { default = 1 }`, nil, "must be an identifier"},
		{"unknown attribute", `param "x" {
  default = 1
  value = 2
}`, nil, `An argument named "value" is not expected in a param block`},
		{"unknown override", `param "min_age" { default = 1 }`, []Override{{"min_ag", "3"}}, `--param min_ag=3: the recipe declares no parameter "min_ag". Did you mean "min_age"? Declared: "min_age".`},
		{"override without params", `title = "x"`, []Override{{"a", "3"}}, "It declares none"},
		{"not a number", `param "n" { default = 1 }`, []Override{{"n", "1,5"}}, `the parameter is a number, and "1,5" is not one`},
		{"not a bool", `param "b" { default = true }`, []Override{{"b", "yes"}}, `true or false, not "yes"`},
		{"unknown reference", "param \"n\" { default = 1 }\ntitle = param.m", nil, `does not have an attribute named "m"`},
		{"param out of range", "param \"n\" { default = -1 }\nseed = param.n", nil, "seed must be a whole number"},
	} {
		_, diags := parseWith(t, c.src, c.overrides...)
		if !diags.HasErrors() || !strings.Contains(diags.Error(), c.want) {
			t.Errorf("%s: %v\nwant an error mentioning %q", c.name, diags, c.want)
		}
	}
}

func TestParseOverride(t *testing.T) {
	for arg, want := range map[string]Override{
		"min_age=21":  {"min_age", "21"},
		"site=":       {"site", ""},
		"expr=a=b":    {"expr", "a=b"},
		"with-dash=1": {"with-dash", "1"},
	} {
		got, err := ParseOverride(arg)
		if err != nil || got != want {
			t.Errorf("ParseOverride(%q) = %v, %v; want %v", arg, got, err, want)
		}
	}
	for _, arg := range []string{"min_age", "=3", "2x=1", "a b=1", "param.x=1"} {
		if _, err := ParseOverride(arg); err == nil {
			t.Errorf("ParseOverride(%q) accepted", arg)
		}
	}
}

// FuzzParseOverride: a --param argument either parses into a valid name and
// the text after the first '=', or is refused; a value read as a number,
// bool or string never panics, and a number's text reads back as itself.
func FuzzParseOverride(f *testing.F) {
	for _, s := range []string{"min_age=21", "x=", "a=b=c", "n=1e400", "n=-0", "n=0x10", "b=true", "=", "é=1"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, arg string) {
		o, err := ParseOverride(arg)
		if err != nil {
			return
		}
		if o.Name+"="+o.Value != arg {
			t.Fatalf("%q split into %q and %q", arg, o.Name, o.Value)
		}
		for _, ty := range []cty.Type{cty.Number, cty.String, cty.Bool} {
			v, err := convertOverride(o.Value, ty)
			if err != nil {
				continue
			}
			if !v.Type().Equals(ty) {
				t.Fatalf("%q as %s gave %#v", o.Value, ty.FriendlyName(), v)
			}
			if ty == cty.Number {
				again, err := convertOverride(valueText(v), cty.Number)
				if err != nil || !again.RawEquals(v) {
					t.Fatalf("%q reads as %s, which reads back as %#v (%v)", o.Value, valueText(v), again, err)
				}
			}
		}
	})
}
