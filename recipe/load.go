package recipe

import (
	"cmp"
	"fmt"
	"os"
	"path/filepath"
	"slices"
	"strings"

	"github.com/hashicorp/hcl/v2"
	"github.com/hashicorp/hcl/v2/hclsyntax"

	"concordat/engine/ledger"
)

// Defaults and limits of the recipe language.
const (
	defaultSeed         = 1
	defaultMaxShare     = 0.3
	defaultLevel        = 0.95
	defaultPermutations = 10000
	maxPermutations     = 1_000_000_000
	defaultResamples    = 2000 // Efron & Tibshirani (1993), An Introduction to the Bootstrap, ch. 19: ~1000+ for percentile ends
	minResamples        = 100
	maxResamples        = 100_000_000
	defaultDigits       = 3
	maxDigits           = 15 // float64 carries 15–17 significant digits
)

// defaultMissing are the tokens a dataset reads as missing unless it says otherwise.
var defaultMissing = []string{"", "NA"}

// Load reads, parses and checks the recipe at path. All problems are
// reported together as diagnostics whose Subject is a file:line:col range;
// the Plan is nil when the diagnostics contain an error. Warnings may come
// with a Plan.
func Load(path string) (*Plan, hcl.Diagnostics) {
	p, _, diags := LoadFiles(path)
	return p, diags
}

// LoadFiles is Load that also returns the parsed files, even when the recipe
// has errors, so that a command can print diagnostics with their source
// lines through hcl.NewDiagnosticTextWriter.
func LoadFiles(path string) (*Plan, map[string]*hcl.File, hcl.Diagnostics) {
	src, err := os.ReadFile(path)
	if err != nil {
		start := hcl.Pos{Line: 1, Column: 1}
		return nil, map[string]*hcl.File{}, hcl.Diagnostics{{
			Severity: hcl.DiagError,
			Summary:  "Cannot read recipe",
			Detail:   fmt.Sprintf("Reading the recipe failed: %v.", err),
			Subject:  &hcl.Range{Filename: path, Start: start, End: start},
		}}
	}
	return ParseFiles(src, path)
}

// Parse is Load for a recipe already in memory. filename names it in
// diagnostics, and relative paths inside it are resolved against
// filepath.Dir(filename).
func Parse(src []byte, filename string) (*Plan, hcl.Diagnostics) {
	p, _, diags := ParseFiles(src, filename)
	return p, diags
}

// ParseFiles is Parse that also returns the parsed files; see LoadFiles.
//
// When the recipe is not valid HCL only the syntax errors are reported: a
// tree recovered from broken syntax would produce misleading follow-on
// errors.
func ParseFiles(src []byte, filename string) (*Plan, map[string]*hcl.File, hcl.Diagnostics) {
	return parseFiles(src, filename, nil)
}

// parseFiles is ParseFiles with parameter overrides (param.go).
func parseFiles(src []byte, filename string, overrides []Override) (*Plan, map[string]*hcl.File, hcl.Diagnostics) {
	if diags := checkNesting(src, filename); diags.HasErrors() { // hostile.go
		return nil, map[string]*hcl.File{}, diags // no source line: it may be megabytes long
	}
	file, diags := hclsyntax.ParseConfig(src, filename, hcl.Pos{Line: 1, Column: 1, Byte: 0})
	files := map[string]*hcl.File{filename: file}
	if diags.HasErrors() {
		return nil, files, diags
	}
	body, ok := file.Body.(*hclsyntax.Body)
	if !ok { // cannot happen with the native syntax parser
		return nil, files, append(diags, &hcl.Diagnostic{
			Severity: hcl.DiagError,
			Summary:  "Unsupported recipe syntax",
			Detail:   "A recipe must be written in HCL native syntax.",
			Subject:  file.Body.MissingItemRange().Ptr(),
		})
	}

	dir := filepath.Dir(filename)
	name := strings.TrimSuffix(filepath.Base(filename), ".hcl")
	d := &decoder{dir: dir, recipePath: filename, ledgerPath: ledger.PathFor(filename), src: src, overrides: overrides}
	plan := d.decodeRecipe(body)
	diags = append(diags, d.diags...)
	sortDiagnostics(diags)
	if diags.HasErrors() {
		return nil, files, diags
	}
	plan.Path = filename
	plan.Dir = dir
	plan.Name = name
	plan.Source = src
	plan.Files = files
	return plan, files, diags
}

// sortDiagnostics orders diagnostics by where their subject starts, so that
// a reader meets them in the order of the file. The sort is stable: two
// problems at one place keep the order in which they were found.
func sortDiagnostics(diags hcl.Diagnostics) {
	slices.SortStableFunc(diags, func(a, b *hcl.Diagnostic) int {
		if a.Subject == nil || b.Subject == nil {
			return 0
		}
		return cmp.Or(
			cmp.Compare(a.Subject.Filename, b.Subject.Filename),
			cmp.Compare(a.Subject.Start.Byte, b.Subject.Start.Byte),
		)
	})
}
