package engine

import (
	"fmt"
	"strings"

	"github.com/hashicorp/hcl/v2"

	"concordat/recipe"
)

// Data that is readable but cannot be what the recipe meant: said plainly
// instead of computing from it.

// noRows is the error for a dataset whose file has a header (or a Parquet
// schema) and no data rows: nothing can be correlated, and a run that
// wrote tables of undefined results would hide a file that was truncated
// or exported empty. (Rows removed by a where filter are different: the
// results say how many, and why.)
func noRows(ds *recipe.Dataset) *hcl.Diagnostic {
	return &hcl.Diagnostic{
		Severity: hcl.DiagError, Summary: "Dataset has no rows",
		Detail: fmt.Sprintf("%s has column names but no data rows, so there is nothing to correlate. Check that the file is the complete export.",
			ds.PathAsWritten),
		Subject: ds.PathRange.Ptr(),
		Extra:   dataFault{},
	}
}

// separatorHint explains a header of one column whose name holds the
// separator of another convention: a semicolon-separated file (common
// where the comma is the decimal mark) read as comma-separated, or a
// comma-separated file read as tab-separated.
func separatorHint(ds *recipe.Dataset, header []string) string {
	if len(header) != 1 {
		return ""
	}
	switch h := header[0]; {
	case strings.Contains(h, ";"):
		return fmt.Sprintf(" The header is one column that holds semicolons: %s looks semicolon-separated, as spreadsheets write CSV where the comma is the decimal mark. Save it as comma-separated with \".\" as the decimal mark (or as tab-separated, .tsv).", ds.PathAsWritten)
	case ds.Format == recipe.DataTSV && strings.Contains(h, ","):
		return fmt.Sprintf(" The header is one column that holds commas: %s looks comma-separated, not tab-separated; set format = \"csv\".", ds.PathAsWritten)
	case ds.Format == recipe.DataCSV && strings.Contains(h, "\t"):
		return fmt.Sprintf(" The header is one column that holds tabs: %s looks tab-separated; set format = \"tsv\".", ds.PathAsWritten)
	}
	return ""
}

// nothingToCompute is the error for a recipe without a test: a run would
// compute nothing and record an empty run in the ledger, which is almost
// always a file that is empty or not the recipe meant.
func nothingToCompute(plan *recipe.Plan) *hcl.Diagnostic {
	start := hcl.Pos{Line: 1, Column: 1}
	return &hcl.Diagnostic{
		Severity: hcl.DiagError, Summary: "Nothing to compute",
		Detail:  "The recipe declares no test block, so a run would compute nothing. A recipe needs a dataset, a pairing and a test (and a table to write the results to); `concordat inspect --recipe DATAFILE` writes a skeleton to start from.",
		Subject: &hcl.Range{Filename: plan.Path, Start: start, End: start},
	}
}
