package engine

import (
	"context"
	"errors"
	"fmt"
	"os"
	"strings"

	"github.com/agext/levenshtein"
	"github.com/hashicorp/hcl/v2"

	"concordat/engine/ledger"
	"concordat/io/dataset"
	"concordat/recipe"
)

// Check validates plan against the headers of its data files without reading
// any data: every dataset can be opened in its format, and every column a
// pairing or a `column` block names exists. Each problem points at the
// recipe text that named it and says what the data has.
func Check(plan *recipe.Plan) hcl.Diagnostics {
	var diags hcl.Diagnostics
	for _, ds := range plan.Datasets {
		f, err := dataset.ParseFormat(string(ds.Format))
		if err != nil {
			diags = append(diags, &hcl.Diagnostic{
				Severity: hcl.DiagError, Summary: "Unknown data format",
				Detail: err.Error(), Subject: ds.DeclRange.Ptr(),
			})
			continue
		}
		header, err := dataset.Header(ds.Path, f)
		if err != nil {
			detail := err.Error()
			if errors.Is(err, os.ErrNotExist) {
				detail = fmt.Sprintf("The data file %q does not exist: looked for %s (paths in a recipe are relative to its folder).", ds.PathAsWritten, ds.Path)
			}
			diags = append(diags, &hcl.Diagnostic{
				Severity: hcl.DiagError, Summary: "Cannot read dataset",
				Detail: detail, Subject: ds.PathRange.Ptr(),
			})
			continue
		}
		have := map[string]bool{}
		for _, h := range header {
			have[h] = true
		}
		unknown := func(name string, where hcl.Range, what string) {
			if have[name] {
				return
			}
			detail := fmt.Sprintf("The %s %q is not a column of %s.", what, name, ds.PathAsWritten)
			if s := nearest(name, header); s != "" {
				detail += fmt.Sprintf(" Did you mean %q?", s)
			}
			detail += " Its columns are: " + quoteList(header) + "."
			diags = append(diags, &hcl.Diagnostic{
				Severity: hcl.DiagError, Summary: "Unknown column",
				Detail: detail, Subject: where.Ptr(),
			})
		}
		for _, c := range ds.Columns {
			unknown(c.Name, c.DeclRange, "column block")
		}
		for _, p := range plan.Pairings {
			if p.Dataset != ds {
				continue
			}
			for _, name := range pairingColumns(p) {
				unknown(name, p.ColumnRanges[name], "column")
			}
			if p.By != "" {
				unknown(p.By, p.ColumnRanges[p.By], "grouping column")
			}
		}
	}
	return diags
}

// loadDatasets reads every dataset that a test uses, once, with only the
// columns the plan needs, and checks the sha256 pins.
func loadDatasets(ctx context.Context, plan *recipe.Plan) (map[string]*dataset.Table, []ledger.Input, error) {
	tables := map[string]*dataset.Table{}
	var inputs []ledger.Input
	var diags hcl.Diagnostics
	for _, ds := range plan.Datasets {
		spec, used := datasetSpec(plan, ds)
		if !used {
			continue
		}
		t, err := dataset.Read(ctx, spec)
		if err != nil {
			var ce *dataset.CellError
			if errors.As(err, &ce) {
				diags = append(diags, cellDiagnostic(plan, ds, ce))
				continue
			}
			return nil, nil, fmt.Errorf("dataset %q: %w", ds.Name, err)
		}
		if ds.SHA256 != "" && !strings.EqualFold(ds.SHA256, t.SHA256) {
			diags = append(diags, &hcl.Diagnostic{
				Severity: hcl.DiagError, Summary: "Data file changed",
				Detail: fmt.Sprintf("The recipe pins %s to sha256 %s, but the file now has sha256 %s (%d bytes). Restore the pinned file, or update the pin if the change is intended.",
					ds.PathAsWritten, ds.SHA256, t.SHA256, t.Bytes),
				Subject: ds.SHA256Range.Ptr(),
			})
			continue
		}
		tables[ds.Name] = t
		inputs = append(inputs, ledger.Input{
			Name: ds.Name, Path: relPath(plan.Dir, ds.Path),
			SHA256: t.SHA256, Bytes: t.Bytes, Rows: int64(t.Rows),
		})
	}
	if diags.HasErrors() {
		return nil, nil, &DiagnosticsError{Diags: diags, Data: true}
	}
	return tables, inputs, nil
}

// datasetSpec lists the columns of ds that the plan's tests need: the
// variables of each pairing (ordinal when the recipe gives levels) and the
// grouping columns as labels.
func datasetSpec(plan *recipe.Plan, ds *recipe.Dataset) (dataset.Spec, bool) {
	f, _ := dataset.ParseFormat(string(ds.Format)) // checked by Check
	spec := dataset.Spec{Path: ds.Path, Format: f, Missing: ds.Missing}
	seen := map[string]bool{}
	used := false
	for _, t := range plan.Tests {
		p := t.Pairing
		if p.Dataset != ds {
			continue
		}
		used = true
		for _, name := range pairingColumns(p) {
			if seen[name] {
				continue
			}
			seen[name] = true
			c := dataset.ColumnSpec{Name: name, Kind: dataset.Numeric}
			if lv, ok := ds.Levels[name]; ok {
				c.Kind, c.Levels = dataset.Ordinal, lv
			}
			spec.Columns = append(spec.Columns, c)
		}
	}
	for _, t := range plan.Tests {
		p := t.Pairing
		if p.Dataset != ds || p.By == "" || seen[p.By] {
			continue
		}
		seen[p.By] = true
		spec.Columns = append(spec.Columns, dataset.ColumnSpec{Name: p.By, Kind: dataset.Label})
	}
	return spec, used
}

// cellDiagnostic turns a bad data cell into a diagnostic that points at the
// recipe line that declared the column (its levels, when it has them).
func cellDiagnostic(plan *recipe.Plan, ds *recipe.Dataset, ce *dataset.CellError) *hcl.Diagnostic {
	d := &hcl.Diagnostic{
		Severity: hcl.DiagError, Summary: "Bad value in data",
		Detail:  ce.Error() + ".",
		Subject: ds.DeclRange.Ptr(),
	}
	for _, c := range ds.Columns {
		if c.Name == ce.Column {
			d.Summary = "Label not among the declared levels"
			d.Subject = c.LevelsRange.Ptr()
			return d
		}
	}
	for _, p := range plan.Pairings {
		if p.Dataset == ds {
			if r, ok := p.ColumnRanges[ce.Column]; ok {
				d.Subject = r.Ptr()
				break
			}
		}
	}
	return d
}

func quoteList(names []string) string {
	q := make([]string, len(names))
	for i, n := range names {
		q[i] = fmt.Sprintf("%q", n)
	}
	return strings.Join(q, ", ")
}

// nearest returns the candidate closest to name by edit distance when it is
// close enough to be a likely typo, else "".
func nearest(name string, candidates []string) string {
	best, bestD := "", len(name)/2+2
	for _, c := range candidates {
		if d := levenshtein.Distance(strings.ToLower(name), strings.ToLower(c), nil); d < bestD {
			best, bestD = c, d
		}
	}
	return best
}
