package recipe

import (
	"bytes"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"slices"
	"strconv"
	"strings"

	"github.com/hashicorp/hcl/v2"
	"github.com/hashicorp/hcl/v2/hclsyntax"
	"github.com/zclconf/go-cty/cty"
)

// This file holds the recipe's parameters: `param "min_age" { default = 18 }`
// declares a value that other arguments use as param.min_age, and that
// `--param min_age=21` overrides for one run without editing the recipe.
//
// Parameters are decoded before anything else, so every argument (title,
// seed, permutations, a where filter, …) can use them. A default is a
// constant: a number, a string or true/false. An override is text from the
// command line, read as the type of the default.

// Param is a declared parameter with the value the plan was resolved with.
type Param struct {
	Name    string
	Default cty.Value // a number, string or bool
	Value   cty.Value // Default, or the override converted to Default's type
	Set     bool      // Value came from an override (--param)

	DeclRange hcl.Range
}

// An Override is a parameter value given outside the recipe, as text:
// `--param name=value`.
type Override struct {
	Name, Value string
}

// ParseOverride splits "name=value" at its first '='. The name must be a
// valid identifier; the value may be empty and may contain '='.
func ParseOverride(arg string) (Override, error) {
	name, value, ok := strings.Cut(arg, "=")
	switch {
	case !ok:
		return Override{}, fmt.Errorf("--param %q: write name=value", arg)
	case !hclsyntax.ValidIdentifier(name):
		return Override{}, fmt.Errorf("--param %q: %q is not a parameter name (letters, digits, '_' and '-', starting with a letter)", arg, name)
	}
	return Override{Name: name, Value: value}, nil
}

// LoadWith is LoadFiles with parameter overrides. An override of a
// parameter that the recipe does not declare, or whose value does not read
// as the type of its default, is an error diagnostic (without a subject in
// the recipe: the mistake is on the command line). A later override of one
// name replaces an earlier one.
func LoadWith(path string, overrides []Override) (*Plan, map[string]*hcl.File, hcl.Diagnostics) {
	src, err := os.ReadFile(path)
	if err != nil {
		return LoadFiles(path) // reports the read error as LoadFiles does
	}
	return parseFiles(src, path, overrides)
}

// paramSpec is the body of a param block.
var paramSpec = spec{
	where:    "in a param block",
	attrs:    []string{"default", "description"},
	required: []string{"default"},
}

// decodeParams reads the param blocks of the top-level body, applies the
// overrides, and sets the evaluation context in which every later argument
// sees param.NAME. It runs before the rest of the recipe is decoded.
func (d *decoder) decodeParams(body *hclsyntax.Body, overrides []Override) []*Param {
	var params []*Param
	seen := map[string]hcl.Range{}
	for _, b := range body.Blocks {
		// A malformed header is reported by content, with the other blocks.
		if b.Type != "param" || len(b.Labels) != 1 || strings.TrimSpace(b.Labels[0]) == "" {
			continue
		}
		name := b.Labels[0]
		ctx := b.DefRange()
		if !hclsyntax.ValidIdentifier(name) {
			d.errorf(b.LabelRanges[0], &ctx, "Invalid parameter name",
				"A parameter is used as param.%s, so its name must be an identifier: letters, digits, '_' and '-', starting with a letter.", name)
			continue
		}
		if first, dup := seen[name]; dup {
			d.errorf(b.LabelRanges[0], &ctx, "Duplicate param name",
				"A param named %s is already defined at %s. Each param needs its own name.", quote(name), pos(first))
			continue
		}
		seen[name] = b.DefRange()
		c := d.blockContent(b, paramSpec)
		p := &Param{Name: name, DeclRange: b.DefRange()}
		if a := c.attrs["description"]; a != nil {
			d.str(a)
		}
		a := c.attrs["default"]
		if a == nil || !a.ok {
			continue
		}
		switch t := a.val.Type(); t {
		case cty.Number, cty.String, cty.Bool:
			p.Default, p.Value = a.val, a.val
		default:
			d.wrongType(a, "a number, a string or true or false")
			continue
		}
		params = append(params, p)
	}

	for _, o := range overrides {
		i := slices.IndexFunc(params, func(p *Param) bool { return p.Name == o.Name })
		if i < 0 {
			d.overrideError(o, params)
			continue
		}
		p := params[i]
		v, err := convertOverride(o.Value, p.Default.Type())
		if err != nil {
			d.diags = append(d.diags, &hcl.Diagnostic{
				Severity: hcl.DiagError, Summary: "Invalid parameter value",
				Detail: fmt.Sprintf("--param %s=%s: %v (the recipe's default is %s, at %s).",
					o.Name, o.Value, err, valueText(p.Default), pos(p.DeclRange)),
			})
			continue
		}
		p.Value, p.Set = v, true
	}

	if len(params) > 0 {
		vals := map[string]cty.Value{}
		for _, p := range params {
			vals[p.Name] = p.Value
		}
		d.ctx = &hcl.EvalContext{Variables: map[string]cty.Value{"param": cty.ObjectVal(vals)}}
		d.params = params
	}
	return params
}

// overrideError reports an override of a parameter the recipe lacks.
func (d *decoder) overrideError(o Override, params []*Param) {
	names := make([]string, len(params))
	for i, p := range params {
		names[i] = p.Name
	}
	detail := fmt.Sprintf("--param %s=%s: the recipe declares no parameter %s.", o.Name, o.Value, quote(o.Name))
	if len(names) == 0 {
		detail += ` It declares none; a parameter is a block such as param "min_age" { default = 18 }, used as param.min_age.`
	} else {
		detail += didYouMean(o.Name, names) + " Declared: " + quoteList(names) + "."
	}
	d.diags = append(d.diags, &hcl.Diagnostic{Severity: hcl.DiagError, Summary: "Unknown parameter", Detail: detail})
}

// convertOverride reads an override's text as a value of type t: a number
// in decimal (as HCL writes one), true or false, or any text.
func convertOverride(s string, t cty.Type) (cty.Value, error) {
	switch t {
	case cty.String:
		return cty.StringVal(s), nil
	case cty.Bool:
		switch s {
		case "true":
			return cty.True, nil
		case "false":
			return cty.False, nil
		}
		return cty.NilVal, fmt.Errorf("%s is true or false, not %s", "the parameter", strconv.Quote(s))
	case cty.Number:
		// Decimal only, as HCL writes numbers (no 0x, no underscores).
		v, err := cty.ParseNumberVal(strings.TrimSpace(s))
		if err != nil || v.AsBigFloat().IsInf() {
			return cty.NilVal, fmt.Errorf("the parameter is a number, and %s is not one", strconv.Quote(s))
		}
		return v, nil
	}
	return cty.NilVal, fmt.Errorf("the parameter's default has the unsupported type %s", t.FriendlyName())
}

// valueText writes a parameter value as HCL would: numbers in their
// shortest exact form, strings quoted.
func valueText(v cty.Value) string {
	switch v.Type() {
	case cty.String:
		return quote(v.AsString())
	case cty.Bool:
		return strconv.FormatBool(v.True())
	case cty.Number:
		return v.AsBigFloat().Text('g', -1)
	}
	return v.GoString()
}

// paramSettings is a parameter as the ledger's settings record it.
type paramSettings struct {
	Name    string `json:"name"`
	Value   any    `json:"value"`
	Default any    `json:"default"`
	Set     bool   `json:"set"` // given on the command line
}

// paramsSettings lists the parameters for Settings; nil when there are
// none, so that the settings of a recipe without parameters are as they
// were before parameters existed.
func paramsSettings(params []*Param) []paramSettings {
	var out []paramSettings
	for _, p := range params {
		out = append(out, paramSettings{Name: p.Name, Value: jsonValue(p.Value), Default: jsonValue(p.Default), Set: p.Set})
	}
	return out
}

// jsonValue is a parameter value for encoding/json: a number keeps its
// exact decimal text (json.Number-like), so that a hash sees the value
// itself.
func jsonValue(v cty.Value) any {
	switch v.Type() {
	case cty.String:
		return v.AsString()
	case cty.Bool:
		return v.True()
	case cty.Number:
		text := v.AsBigFloat().Text('g', -1)
		if f, _ := v.AsBigFloat().Float64(); math.IsInf(f, 0) {
			return text // beyond float64, which RFC 8785 hashing reads numbers as
		}
		return jsonNumber(text)
	}
	return nil
}

// jsonNumber is a number that encodes as its own text.
type jsonNumber string

// MarshalJSON writes the number's text, which big.Float's 'g' format makes
// valid JSON.
func (n jsonNumber) MarshalJSON() ([]byte, error) { return []byte(n), nil }

func newJSONDecoder(b []byte) *json.Decoder {
	dec := json.NewDecoder(bytes.NewReader(b))
	dec.UseNumber()
	return dec
}

// OverridesOf returns the parameters of a ledger record's settings that were
// set on the command line, as overrides that reproduce the run. Settings
// without parameters give none.
func OverridesOf(settings []byte) ([]Override, error) {
	var s struct {
		Params []struct {
			Name  string `json:"name"`
			Value any    `json:"value"`
			Set   bool   `json:"set"`
		} `json:"params"`
	}
	if len(settings) == 0 {
		return nil, nil
	}
	dec := newJSONDecoder(settings)
	if err := dec.Decode(&s); err != nil {
		return nil, fmt.Errorf("read parameters of the record: %w", err)
	}
	var out []Override
	for _, p := range s.Params {
		if !p.Set {
			continue
		}
		var text string
		switch v := p.Value.(type) {
		case string:
			text = v
		case bool:
			text = strconv.FormatBool(v)
		default:
			text = fmt.Sprint(v)
		}
		out = append(out, Override{Name: p.Name, Value: text})
	}
	return out, nil
}

// paramValues maps each parameter's name to its value.
func paramValues(params []*Param) map[string]cty.Value {
	if len(params) == 0 {
		return nil
	}
	out := make(map[string]cty.Value, len(params))
	for _, q := range params {
		out[q.Name] = q.Value
	}
	return out
}

// describeParams writes the param blocks for Plan.Describe, each with the
// value it resolved to as its default, and the recipe's own default in a
// comment when --param changed it.
func describeParams(b *strings.Builder, params []*Param) {
	for _, p := range params {
		fmt.Fprintf(b, "\nparam %s {\ndefault = %s", quote(p.Name), valueText(p.Value))
		if p.Set {
			fmt.Fprintf(b, " # from --param; the recipe's default is %s", valueText(p.Default))
		}
		b.WriteString("\n}\n")
	}
}
