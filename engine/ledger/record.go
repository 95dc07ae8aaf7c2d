package ledger

import (
	"encoding/json"
	"path/filepath"
	"runtime"
	"runtime/debug"
	"slices"
	"strings"
	"time"
)

// FormatV1 identifies the first version of the record layout. Read refuses
// records of any format but FormatV1 and FormatV2.
const FormatV1 = "concordat-ledger/1"

// FormatV2 is FormatV1 with Cached: a record whose run took some results
// from the step cache. Like the times, Cached is not covered by
// run_sha256, so a run and its cached rerun hash the same. Append writes
// FormatV1 when Cached is empty, so that records without it are as they
// always were.
const FormatV2 = "concordat-ledger/2"

// A Record is one run of a recipe, stored as one JSON line. The JSON keys
// and their order are fixed by the struct.
//
// The layout of a format never changes. Read refuses unknown fields, so a
// build that does not know a field fails to verify a ledger that has it; and
// run_sha256 covers every field above it, so a field added to the hashed
// part would change the hash of records written before it existed. Adding,
// removing or renaming a field (here or in the types a Record holds)
// therefore needs a new Format version, which Read learns to accept beside
// FormatV1, so that ledgers already committed keep verifying.
type Record struct {
	Format   string          `json:"format"`   // FormatV1; Append fills it when empty
	Recipe   File            `json:"recipe"`   // the recipe file
	Title    string          `json:"title"`    // the recipe's title
	Tool     Tool            `json:"tool"`     // the program that ran it
	Seed     int64           `json:"seed"`     // the recipe's random seed
	Settings json.RawMessage `json:"settings"` // the recipe's resolved settings, as the caller encodes them
	Inputs   []Input         `json:"inputs"`   // data read, in recipe order
	Steps    []Step          `json:"steps"`    // one per test, in recipe order
	Outputs  []Output        `json:"outputs"`  // tables written, in recipe order

	// RunSHA256 is the hex SHA-256 of the canonical JSON of every field
	// above; see the package documentation for why times are left out.
	RunSHA256 string `json:"run_sha256"`
	// PrevSHA256 is the hex SHA-256 of the previous line's bytes, without
	// its newline, or "" in the first record.
	PrevSHA256 string `json:"prev_sha256"`

	Started  string `json:"started"`  // RFC 3339, UTC (see Timestamp); never hashed into RunSHA256
	Finished string `json:"finished"` // RFC 3339, UTC; never hashed into RunSHA256

	// Cached names the tests whose results the run took from the step
	// cache rather than computing them (FormatV2 only; never hashed into
	// RunSHA256).
	Cached []string `json:"cached,omitempty"`
}

// A File is a file that a run read, named relative to the recipe's folder
// (which holds the ledger, unless the run was given an output folder) with
// forward slashes.
type File struct {
	Path   string `json:"path"`
	SHA256 string `json:"sha256"` // lowercase hex
	Bytes  int64  `json:"bytes"`
}

// An Input is a data set that a run read.
type Input struct {
	Name   string `json:"name"`   // the dataset block's label
	Path   string `json:"path"`   // relative to the recipe's folder, forward slashes
	SHA256 string `json:"sha256"` // lowercase hex of the file's bytes
	Bytes  int64  `json:"bytes"`
	Rows   int64  `json:"rows"` // data rows read
}

// A Step is one test of the recipe, with hashes that the caller computes of
// what went into it and what came out. The ledger stores them as given.
type Step struct {
	Test string `json:"test"` // the test's name in the recipe

	// InputSHA256 is the caller's hash (see Hash) of the test's resolved
	// settings, including the kinds, levels and missing-value tokens of the
	// dataset columns it uses, together with the SHA-256 of each data file
	// it read. Equal values mean the test saw the same data, read the same
	// way.
	InputSHA256 string `json:"input_sha256"`

	// ResultSHA256 is the caller's hash of the result records the test
	// produced, in a canonical encoding; it covers nothing about the tool,
	// the times or the tables' layout. It is the value to compare when
	// asking whether two runs, on other machines or builds, got the same
	// numbers.
	ResultSHA256 string `json:"result_sha256"`

	Results int `json:"results"` // the number of result records
}

// An Output is a table that a run wrote.
type Output struct {
	Table  string `json:"table"`  // the table block's label
	Path   string `json:"path"`   // relative to the ledger's folder, forward slashes
	Format string `json:"format"` // "markdown", "csv", "json", …
	SHA256 string `json:"sha256"`
	Bytes  int64  `json:"bytes"`
}

// A Tool is the build of concordat that ran a recipe.
type Tool struct {
	Version string   `json:"version"` // concordat's own version
	Go      string   `json:"go"`      // runtime.Version()
	OS      string   `json:"os"`      // runtime.GOOS
	Arch    string   `json:"arch"`    // runtime.GOARCH
	Modules []Module `json:"modules"` // the linked modules that compute results, sorted by path
}

// A Module is a dependency as the Go build recorded it.
type Module struct {
	Path    string `json:"path"`
	Version string `json:"version"`
	Sum     string `json:"sum,omitempty"`     // the go.sum hash, when the build knows it
	Replace string `json:"replace,omitempty"` // the replacement's path, when go.mod replaces the module
}

// computing lists the modules whose code can change a number or an output's
// bytes: reading data, decoding the recipe, and the numerics.
var computing = []string{
	"github.com/apache/arrow-go/v18",
	"github.com/hashicorp/hcl/v2",
	"github.com/zclconf/go-cty",
	"gonum.org/v1/gonum",
}

// CurrentTool describes the running program: version as given by the
// caller, the Go version, OS and architecture, and the versions of the
// computing modules linked into the binary (arrow-go, hcl, go-cty, gonum),
// sorted by path. A module that is not linked in is left out. For a replaced
// module the replacement's version and sum are recorded, with its path in
// Replace.
func CurrentTool(version string) Tool {
	t := Tool{
		Version: version,
		Go:      runtime.Version(),
		OS:      runtime.GOOS,
		Arch:    runtime.GOARCH,
		Modules: []Module{},
	}
	info, ok := debug.ReadBuildInfo()
	if !ok {
		return t
	}
	for _, dep := range info.Deps {
		if !slices.Contains(computing, dep.Path) {
			continue
		}
		m := Module{Path: dep.Path, Version: dep.Version, Sum: dep.Sum}
		if r := dep.Replace; r != nil {
			m.Version, m.Sum, m.Replace = r.Version, r.Sum, r.Path
		}
		t.Modules = append(t.Modules, m)
	}
	slices.SortFunc(t.Modules, func(a, b Module) int { return strings.Compare(a.Path, b.Path) })
	return t
}

// PathFor returns the ledger file of a recipe: beside it, named after it
// without its ".hcl" extension, e.g. "recipes/orchard.hcl" →
// "recipes/orchard.ledger.jsonl".
func PathFor(recipePath string) string {
	dir, name := filepath.Split(recipePath)
	return filepath.Join(dir, strings.TrimSuffix(name, ".hcl")+".ledger.jsonl")
}

// Timestamp formats t for Record.Started and Record.Finished: RFC 3339 in
// UTC, with the fractional seconds that t has.
func Timestamp(t time.Time) string {
	return t.UTC().Format(time.RFC3339Nano)
}
