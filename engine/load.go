package engine

import (
	"context"
	"errors"
	"fmt"
	"os"
	"strings"

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
	if len(plan.Tests) == 0 { // hostile.go
		diags = append(diags, nothingToCompute(plan))
	}
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
				Extra: dataFault{},
			})
			continue
		}
		have := map[string]int{}
		for _, h := range header {
			have[h]++
		}
		unknown := func(name string, where hcl.Range, what string) {
			if have[name] > 1 {
				diags = append(diags, &hcl.Diagnostic{
					Severity: hcl.DiagError, Summary: "Ambiguous column",
					Detail: fmt.Sprintf("The %s %q appears %d times in the header of %s, so it is not clear which one is meant. Give the columns distinct names in the data.",
						what, name, have[name], ds.PathAsWritten),
					Subject: where.Ptr(),
					Extra:   dataFault{},
				})
				return
			}
			if have[name] == 1 {
				return
			}
			detail := fmt.Sprintf("The %s %q is not a column of %s.", what, name, ds.PathAsWritten)
			if s := recipe.Suggest(name, header); s != "" {
				detail += fmt.Sprintf(" Did you mean %q?", s)
			}
			detail += " Its columns are: " + quoteList(header) + "." + separatorHint(ds, header) // hostile.go
			diags = append(diags, &hcl.Diagnostic{
				Severity: hcl.DiagError, Summary: "Unknown column",
				Detail: detail, Subject: where.Ptr(),
			})
		}
		for _, c := range ds.Columns {
			unknown(c.Name, c.DeclRange, "column block")
		}
		before := len(diags)
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
		for _, t := range plan.Tests {
			if t.Pairing.Dataset != ds {
				continue
			}
			for _, name := range t.Controls {
				unknown(name, t.ControlRanges[name], "control column")
			}
		}
		if ds.Where != nil { // the row filter (engine/where.go)
			for _, c := range ds.Where.Columns {
				unknown(c.Name, c.Range, "column")
			}
		}
		if len(diags) > before {
			continue
		}
		// Every column is there: a typed file (Parquet) can still store one
		// in a type that cannot be read as the recipe asks.
		spec, _ := datasetSpec(plan, ds)
		if err := dataset.Types(spec); err != nil {
			diags = append(diags, typeDiagnostics(plan, ds, err)...)
		}
	}
	return diags
}

// typeDiagnostics points each column of the wrong stored type at the recipe
// line that names it.
func typeDiagnostics(plan *recipe.Plan, ds *recipe.Dataset, err error) hcl.Diagnostics {
	var errs []error
	if j, ok := err.(interface{ Unwrap() []error }); ok {
		errs = j.Unwrap()
	} else {
		errs = []error{err}
	}
	var diags hcl.Diagnostics
	for _, e := range errs {
		d := &hcl.Diagnostic{Severity: hcl.DiagError, Summary: "Column cannot be read", Detail: e.Error() + ".", Subject: ds.PathRange.Ptr()}
		var ce *dataset.ColumnError
		if errors.As(e, &ce) {
			d.Subject = columnRange(plan, ds, ce.Column).Ptr()
		} else {
			d.Summary, d.Extra = "Cannot read dataset", dataFault{}
		}
		diags = append(diags, d)
	}
	return diags
}

// dataFault marks a diagnostic caused by the data (a file that cannot be
// read, an ambiguous header) rather than by the recipe text alone: the run
// failed on its input, so the exit code is 1, not 2.
type dataFault struct{}

// IsDataFault reports whether d was caused by the data rather than the
// recipe alone.
func IsDataFault(d *hcl.Diagnostic) bool {
	_, ok := d.Extra.(dataFault)
	return ok
}

func anyDataFault(diags hcl.Diagnostics) bool {
	for _, d := range diags {
		if d.Severity == hcl.DiagError && IsDataFault(d) {
			return true
		}
	}
	return false
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
			var col *dataset.ColumnError
			if errors.As(err, &col) {
				diags = append(diags, &hcl.Diagnostic{
					Severity: hcl.DiagError, Summary: "Column cannot be read",
					Detail: col.Error() + ".", Subject: columnRange(plan, ds, col.Column).Ptr(),
				})
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
		if t.Rows == 0 { // hostile.go
			diags = append(diags, noRows(ds))
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
// variables of each pairing (ordinal when the recipe gives levels), the
// grouping columns as labels, and the columns of the dataset's where.
func datasetSpec(plan *recipe.Plan, ds *recipe.Dataset) (dataset.Spec, bool) {
	f, _ := dataset.ParseFormat(string(ds.Format)) // checked by Check
	spec := dataset.Spec{Path: ds.Path, Format: f, Missing: ds.Missing}
	type key struct {
		name string
		kind dataset.Kind
	}
	seen := map[key]bool{}
	add := func(c dataset.ColumnSpec) {
		k := key{c.Name, c.Kind}
		if !seen[k] {
			seen[k] = true
			spec.Columns = append(spec.Columns, c)
		}
	}
	used := false
	for _, t := range plan.Tests {
		p := t.Pairing
		if p.Dataset != ds {
			continue
		}
		used = true
		for _, name := range pairingColumns(p) {
			add(valueSpec(ds, name))
		}
		for _, name := range t.Controls {
			add(valueSpec(ds, name))
		}
	}
	// A column may also group another pairing: it is then read a second
	// time, as labels.
	for _, t := range plan.Tests {
		if p := t.Pairing; p.Dataset == ds && p.By != "" {
			add(dataset.ColumnSpec{Name: p.By, Kind: dataset.Label})
		}
	}
	// The columns of the row filter, as it reads them (engine/where.go).
	for _, c := range whereSpecs(ds) {
		add(c)
	}
	return spec, used
}

// valueSpec is how a variable is read: ordinal through its declared levels,
// else as numbers.
func valueSpec(ds *recipe.Dataset, name string) dataset.ColumnSpec {
	if lv, ok := ds.Levels[name]; ok {
		return dataset.ColumnSpec{Name: name, Kind: dataset.Ordinal, Levels: lv}
	}
	return dataset.ColumnSpec{Name: name, Kind: dataset.Numeric}
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
		// A column block may give only a label: then its cells are numbers.
		if c.Name == ce.Column && c.Levels != nil {
			d.Summary = "Label not among the declared levels"
			d.Subject = c.LevelsRange.Ptr()
			return d
		}
	}
	d.Subject = columnRange(plan, ds, ce.Column).Ptr()
	return d
}

// columnRange is where the recipe names column of ds: the first pairing
// that lists it, else the first test that controls for it, else its first
// place in the dataset's where, else the dataset block (a whole-row problem
// has no column).
func columnRange(plan *recipe.Plan, ds *recipe.Dataset, column string) hcl.Range {
	for _, p := range plan.Pairings {
		if p.Dataset == ds {
			if r, ok := p.ColumnRanges[column]; ok {
				return r
			}
		}
	}
	for _, t := range plan.Tests {
		if t.Pairing.Dataset == ds {
			if r, ok := t.ControlRanges[column]; ok {
				return r
			}
		}
	}
	if ds.Where != nil {
		for _, c := range ds.Where.Columns {
			if c.Name == column {
				return c.Range
			}
		}
	}
	return ds.DeclRange
}

func quoteList(names []string) string {
	q := make([]string, len(names))
	for i, n := range names {
		q[i] = fmt.Sprintf("%q", n)
	}
	return strings.Join(q, ", ")
}
