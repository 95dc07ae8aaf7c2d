package recipe

import (
	"bytes"
	"fmt"
	"slices"
	"strings"

	"github.com/hashicorp/hcl/v2"
	"github.com/hashicorp/hcl/v2/hclsyntax"
	"github.com/hashicorp/hcl/v2/hclwrite"
	"github.com/zclconf/go-cty/cty"
)

// Pin returns the recipe src with the sha256 pin of each dataset named in
// hashes set to its hash, for `concordat run --pin`. A dataset that has a
// sha256 gets the new value in place of the old; one without gets a sha256
// line right after its path, indented like it and with its "=" in the same
// column. changed lists the datasets whose pin changed, in recipe order;
// when it is empty, out is src.
//
// Every other byte is kept: comments, blank lines, order, tabs. (The edit
// is made at the byte ranges that HCL's parser reports, with the value
// written by hclwrite; printing the file through hclwrite instead would turn
// tab indentation into spaces.) src must parse; a dataset whose path shares
// its line with other text (a one-line block) cannot take a new line and is
// an error diagnostic pointing at it.
func Pin(src []byte, filename string, hashes map[string]string) (out []byte, changed []string, diags hcl.Diagnostics) {
	f, diags := hclsyntax.ParseConfig(src, filename, hcl.Pos{Line: 1, Column: 1})
	if diags.HasErrors() {
		return nil, nil, diags
	}
	type splice struct {
		start, end int
		text       []byte
	}
	var edits []splice
	for _, b := range f.Body.(*hclsyntax.Body).Blocks {
		if b.Type != "dataset" || len(b.Labels) != 1 {
			continue
		}
		name := b.Labels[0]
		h, ok := hashes[name]
		if !ok {
			continue
		}
		value := hclwrite.TokensForValue(cty.StringVal(h)).Bytes()
		if a, ok := b.Body.Attributes["sha256"]; ok {
			r := a.Expr.Range()
			if bytes.Equal(src[r.Start.Byte:r.End.Byte], value) {
				continue
			}
			edits = append(edits, splice{r.Start.Byte, r.End.Byte, value})
			changed = append(changed, name)
			continue
		}
		path, ok := b.Body.Attributes["path"]
		if !ok {
			continue // a recipe error that Load reports
		}
		line, at, ok := lineAfter(src, path)
		if !ok {
			rng := path.SrcRange
			diags = append(diags, &hcl.Diagnostic{
				Severity: hcl.DiagError, Summary: "Cannot pin this dataset",
				Detail:  fmt.Sprintf("The path of dataset %s shares its line with other text, so a sha256 line cannot follow it. Put path on a line of its own, or add sha256 = \"%s\" by hand.", quote(name), h),
				Subject: &rng,
			})
			continue
		}
		edits = append(edits, splice{at, at, append(append(line, value...), lineEnd(src, at)...)})
		changed = append(changed, name)
	}
	if diags.HasErrors() {
		return nil, nil, diags
	}
	if len(changed) == 0 {
		return src, nil, nil
	}
	slices.SortFunc(edits, func(a, b splice) int { return b.start - a.start })
	out = slices.Clone(src)
	for _, e := range edits {
		out = slices.Concat(out[:e.start], e.text, out[e.end:])
	}
	return out, changed, nil
}

// lineAfter returns the start of a "sha256 = " line to insert after the
// line of the path attribute, and where to insert it: after that line's
// end. The new line is indented like the path line, and its "=" stands in
// the path's column, followed by the path's spacing. ok is false when the
// path does not sit alone on its line.
func lineAfter(src []byte, path *hclsyntax.Attribute) (line []byte, at int, ok bool) {
	start := path.NameRange.Start.Byte
	lineStart := bytes.LastIndexByte(src[:start], '\n') + 1
	indent := src[lineStart:start]
	if strings.TrimLeft(string(indent), " \t") != "" {
		return nil, 0, false
	}
	end := bytes.IndexByte(src[path.SrcRange.End.Byte:], '\n')
	if end < 0 {
		return nil, 0, false
	}
	rest := strings.TrimSpace(string(src[path.SrcRange.End.Byte : path.SrcRange.End.Byte+end]))
	if rest != "" && !strings.HasPrefix(rest, "#") && !strings.HasPrefix(rest, "//") {
		return nil, 0, false // more on this line than a comment: a one-line block
	}
	at = path.SrcRange.End.Byte + end + 1

	// name, then spaces up to "=", then the spacing after "=".
	between := src[path.NameRange.End.Byte:path.Expr.Range().Start.Byte]
	eq := bytes.IndexByte(between, '=')
	if eq < 0 {
		return nil, 0, false
	}
	const name = "sha256"
	pad := max(1, len("path")+eq-len(name))
	line = slices.Concat(indent, []byte(name), bytes.Repeat([]byte(" "), pad), between[eq:])
	return line, at, true
}

// lineEnd returns the line ending used by the line that ends just before
// at: CRLF or LF.
func lineEnd(src []byte, at int) []byte {
	if at >= 2 && src[at-2] == '\r' {
		return []byte("\r\n")
	}
	return []byte("\n")
}
