package recipe

import (
	"fmt"
	"path/filepath"

	"github.com/hashicorp/hcl/v2"

	"concordat/engine/filter"
	"concordat/engine/ledger"
	"concordat/engine/stats"
)

// Plan is a recipe with every reference resolved and every default filled
// in. Blocks appear in the order the recipe declares them.
type Plan struct {
	Path   string               // recipe path as given
	Dir    string               // folder that relative paths are resolved against
	Name   string               // file name without .hcl; the ledger is <Dir>/<Name>.ledger.jsonl
	Source []byte               // the recipe bytes, for hashing
	Files  map[string]*hcl.File // parsed files, for hcl.NewDiagnosticTextWriter
	OutDir string               // set by ConfineOutputs (outdir.go): outputs and the ledger go here; "" means Dir

	Title  string
	Seed   int64    // default 1
	Params []*Param // the param blocks, in recipe order, with their resolved values (param.go)

	Datasets []*Dataset
	Ties     []*Ties // the ties blocks the recipe declares (not the built-in default)
	Pairings []*Pairing
	Tests    []*Test
	Tables   []*Table
	Figures  []*Figure // figure blocks, in recipe order (present.go)

	Published []*Published // published tables to reproduce, in recipe order (published.go)
}

// LedgerPath returns where the run ledger of this recipe lives:
// <Dir>/<Name>.ledger.jsonl, or in OutDir when it is set (outdir.go).
func (p *Plan) LedgerPath() string {
	if p.OutDir != "" {
		return filepath.Join(p.OutDir, filepath.Base(ledger.PathFor(p.Path)))
	}
	return ledger.PathFor(p.Path)
}

// DataFormat is the file format of a dataset.
type DataFormat string

// Dataset formats, by recipe word.
const (
	DataCSV     DataFormat = "csv"
	DataTSV     DataFormat = "tsv"
	DataParquet DataFormat = "parquet"
)

// Dataset is a data file and how to read it.
type Dataset struct {
	Name          string
	Path          string // resolved: filepath.Join(Plan.Dir, PathAsWritten) unless absolute
	PathAsWritten string
	Format        DataFormat // from the extension unless `format` says otherwise
	SHA256        string     // optional pin: 64 lowercase hex digits, or ""
	Missing       []string   // tokens read as missing; default ["", "NA"]

	// Levels maps an ordinal text column to its labels, low to high.
	Levels  map[string][]string
	Columns []*ColumnDecl // the column blocks, in recipe order

	// Where is the row filter (`where = age >= 18 && site != "B"`),
	// checked and typed: its text, its range, and the columns it reads
	// with their kinds and where it names them (for the engine to check
	// against the data's header). Nil when the dataset has no where.
	Where *filter.Expr

	DeclRange   hcl.Range
	PathRange   hcl.Range // where the path was written, for "cannot read" diagnostics
	SHA256Range hcl.Range // where the pin was written, for "data file changed" diagnostics
}

// ColumnDecl is one `column "name" { levels = [...], label = "..." }`
// block: at least one of the two.
type ColumnDecl struct {
	Name        string
	Levels      []string  // nil when the block gives only a label
	Label       string    // the human label for tables and figures; "" for none
	DeclRange   hcl.Range // the block header
	LevelsRange hcl.Range // the levels list, for "label not in levels" data errors
}

// MissingRule says how observations with a missing value are dropped. The
// zero value is invalid.
type MissingRule int

const (
	_        MissingRule = iota
	Pairwise             // drop a row only for the pairs whose x or y is missing in it
	Listwise             // drop a row from every pair when any listed column is missing in it
)

// String returns the recipe word for the rule.
func (m MissingRule) String() string {
	switch m {
	case Pairwise:
		return "pairwise"
	case Listwise:
		return "listwise"
	}
	return fmt.Sprintf("MissingRule(%d)", int(m))
}

// Pairing says which columns of a dataset are correlated with which.
type Pairing struct {
	Name    string
	Dataset *Dataset

	X, Y, Columns []string // as written; either X and Y, or Columns
	// Pairs is X×Y with x outer and y inner, or every i<j pair of Columns,
	// in the order written.
	Pairs   []Pair
	Missing MissingRule // default Pairwise
	By      string      // optional grouping column, "" when absent

	// ColumnRanges says where each column name (including By) was first
	// written, so that the engine can point at it when the data lacks it.
	ColumnRanges map[string]hcl.Range

	DeclRange hcl.Range
}

// Pair is one (x, y) column pair.
type Pair struct{ X, Y string }

// Ties is a tie-handling policy.
type Ties struct {
	Name      string
	Rule      stats.TieRule // default stats.TieAverage
	MaxShare  float64       // warn when a column has a larger share of tied values; default 0.3, in (0, 1]
	Builtin   bool          // the default used by tests that name no ties block
	DeclRange hcl.Range
}

// defaultTies returns the policy of a test that names no ties block.
func defaultTies() *Ties {
	return &Ties{Name: "average", Rule: stats.TieAverage, MaxShare: defaultMaxShare, Builtin: true}
}

// PMethod is how p-values are computed. The zero value is invalid.
type PMethod int

const (
	_            PMethod = iota
	PAuto                // per result, the most accurate method affordable (see engine)
	PExact               // the exact null distribution, or all arrangements; permutations when neither is affordable
	PAsymptotic          // a large-sample approximation (t or normal)
	PPermutation         // Monte Carlo permutations, Permutations draws
)

// String returns the recipe word for the method.
func (m PMethod) String() string {
	switch m {
	case PAuto:
		return "auto"
	case PExact:
		return "exact"
	case PAsymptotic:
		return "asymptotic"
	case PPermutation:
		return "permutation"
	}
	return fmt.Sprintf("PMethod(%d)", int(m))
}

// IntervalMethod is how confidence intervals are computed. The zero value is
// invalid.
type IntervalMethod int

const (
	_ IntervalMethod = iota
	// IntervalFisher uses a Fisher-type z transform, z = atanh(r), with a
	// standard error that depends on the measure:
	//
	//	pearson:   1/√(n−3)            R. A. Fisher (1921), On the "probable error" of a
	//	                               coefficient of correlation deduced from a small
	//	                               sample, Metron 1, 3–32.
	//	spearman:  √((1 + r²/2)/(n−3))  D. G. Bonett and T. A. Wright (2000), Sample size
	//	                               requirements for estimating Pearson, Kendall and
	//	                               Spearman correlations, Psychometrika 65(1), 23–28.
	//	kendall_b: √(0.437/(n−4))       E. C. Fieller, H. O. Hartley and E. S. Pearson
	//	                               (1957), Tests for rank correlation coefficients I,
	//	                               Biometrika 44(3/4), 470–481.
	//
	// The bounds are transformed back with tanh. The other Kendall-type
	// measures (kendall_a, kendall_c, gamma, Somers' d) have no such
	// transform in common use; they get a Wald interval from their
	// asymptotic standard error (engine/stats.OrdinalSE).
	IntervalFisher
	// IntervalBootstrap is the percentile interval of paired bootstrap
	// resamples (B. Efron (1979), Bootstrap methods: another look at the
	// jackknife, Annals of Statistics 7(1), 1–26).
	IntervalBootstrap
	// IntervalBCa is the bias-corrected and accelerated bootstrap interval
	// (B. Efron (1987), Better bootstrap confidence intervals, JASA 82(397),
	// 171–185).
	IntervalBCa
)

// String returns the recipe word for the method.
func (m IntervalMethod) String() string {
	switch m {
	case IntervalFisher:
		return "fisher"
	case IntervalBootstrap:
		return "bootstrap"
	case IntervalBCa:
		return "bca"
	}
	return fmt.Sprintf("IntervalMethod(%d)", int(m))
}

// Interval is the confidence interval a test reports.
type Interval struct {
	Level     float64        // default 0.95, in (0, 1)
	Method    IntervalMethod // default IntervalFisher
	Resamples int            // bootstrap resamples; default 2000, used by bootstrap and bca
	DeclRange hcl.Range      // the interval block, or the test's header when defaulted
}

// Test is a set of measures computed over every pair of a pairing.
type Test struct {
	Name    string
	Pairing *Pairing
	Ties    *Ties // never nil: the built-in average-rank policy when the recipe names none

	Measures     []stats.Measure   // default [stats.Spearman]
	Alternative  stats.Alternative // default stats.TwoSided
	PValue       PMethod           // default PAuto
	Interval     *Interval         // never nil: level 0.95, Fisher-type, by default
	Permutations int               // Monte Carlo draws for permutation p-values; default 10000
	Adjust       stats.Adjustment  // multiplicity adjustment over the test's results, per measure; default none

	// Controls are the columns partialled out: with controls, spearman and
	// pearson are partial correlations (ranks, or values, of the pairing's
	// dataset after deleting rows missing any of x, y or a control).
	Controls      []string
	ControlRanges map[string]hcl.Range // where each control was written

	DeclRange hcl.Range
}

// TableFormat is the file format of an output table. The zero value is
// invalid.
type TableFormat int

const (
	_        TableFormat = iota
	Markdown             // a pipe table
	CSV                  // comma-separated, one row per result record
	JSON                 // an array of result records
	TSV                  // tab-separated, one row per result record
	LaTeX                // a booktabs table environment
	HTML                 // a standalone page, with figures
	Parquet              // typed result records
)

// Readable reports whether f is for people (markdown, latex, html), whose
// tables take a layout, a number style and labels, rather than a file of
// result records for programs (csv, tsv, json, parquet).
func (f TableFormat) Readable() bool { return f == Markdown || f == LaTeX || f == HTML }

// String returns the recipe word for the format.
func (f TableFormat) String() string {
	switch f {
	case Markdown:
		return "markdown"
	case CSV:
		return "csv"
	case JSON:
		return "json"
	case TSV:
		return "tsv"
	case LaTeX:
		return "latex"
	case HTML:
		return "html"
	case Parquet:
		return "parquet"
	}
	return fmt.Sprintf("TableFormat(%d)", int(f))
}

// Table is an output file holding the results of some tests.
type Table struct {
	Name          string
	Tests         []*Test
	Format        TableFormat // from the extension unless `format` says otherwise
	Path          string      // resolved like Dataset.Path
	PathAsWritten string
	Digits        int // decimal places; default 3 (2 with style = "apa"), 0..15
	DeclRange     hcl.Range

	// How the table is laid out and written (present.go); the zero value
	// of each is its default.
	Present

	// Reproduction is the published table whose reproduction report the
	// table writes (after the tests' results, if it has tests); nil for
	// none (published.go; the engine side is engine/reproduce.go).
	Reproduction *Published

	pathRange hcl.Range // where the path was written
}
