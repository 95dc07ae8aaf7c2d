package recipe

import (
	"fmt"
	"io"
	"strconv"
	"strings"

	"github.com/hashicorp/hcl/v2/hclwrite"

	"concordat/engine/stats"
)

// describePairs is how many pairs of a pairing Describe lists by name.
const describePairs = 12

// Describe writes the resolved plan as a recipe with every default written
// out, resolved paths and pair lists in comments, formatted like hclwrite
// formats HCL. The text depends only on the plan, so it can be compared
// with a golden file, and it parses as a recipe that resolves to the same
// plan when it sits in the same folder.
func (p *Plan) Describe(w io.Writer) error {
	var b strings.Builder
	fmt.Fprintf(&b, "# Resolved plan of %s\n", quote(p.Path))
	fmt.Fprintf(&b, "# Paths are relative to %s; the ledger is %s.\n\n", quote(p.Dir), quote(p.LedgerPath()))
	fmt.Fprintf(&b, "title = %s\n", quote(p.Title))
	fmt.Fprintf(&b, "seed = %d\n", p.Seed)
	describeParams(&b, p.Params) // param.go

	for _, ds := range p.Datasets {
		fmt.Fprintf(&b, "\ndataset %s {\n", quote(ds.Name))
		b.WriteString("path = " + quote(ds.PathAsWritten) + resolvedNote(ds.PathAsWritten, ds.Path) + "\n")
		b.WriteString("format = " + quote(string(ds.Format)) + "\n")
		if ds.SHA256 != "" {
			b.WriteString("sha256 = " + quote(ds.SHA256) + "\n")
		}
		b.WriteString("missing = " + hclList(ds.Missing) + "\n")
		if ds.Where != nil {
			b.WriteString("where = " + ds.Where.Text + "\n")
		}
		if ds.SHA256 == "" {
			b.WriteString("# sha256: not pinned\n")
		}
		for _, c := range ds.Columns {
			fmt.Fprintf(&b, "\ncolumn %s {\n", quote(c.Name))
			if c.Levels != nil {
				fmt.Fprintf(&b, "levels = %s\n", hclList(c.Levels))
			}
			if c.Label != "" {
				fmt.Fprintf(&b, "label = %s\n", quote(c.Label))
			}
			b.WriteString("}\n")
		}
		b.WriteString("}\n")
	}

	for _, pr := range p.Pairings {
		fmt.Fprintf(&b, "\npairing %s {\n", quote(pr.Name))
		b.WriteString("dataset = " + quote(pr.Dataset.Name) + "\n")
		if len(pr.Columns) > 0 {
			b.WriteString("columns = " + hclList(pr.Columns) + "\n")
		} else {
			b.WriteString("x = " + hclList(pr.X) + "\n")
			b.WriteString("y = " + hclList(pr.Y) + "\n")
		}
		b.WriteString("missing = " + quote(pr.Missing.String()) + "\n")
		if pr.By != "" {
			b.WriteString("by = " + quote(pr.By) + "\n")
		} else {
			b.WriteString("# by: none (one analysis over all rows)\n")
		}
		fmt.Fprintf(&b, "# %d %s:\n", len(pr.Pairs), plural(len(pr.Pairs), "pair", "pairs"))
		for i, pair := range pr.Pairs {
			if i == describePairs {
				fmt.Fprintf(&b, "#   … and %d more\n", len(pr.Pairs)-describePairs)
				break
			}
			b.WriteString("#   " + quote(pair.X) + " ~ " + quote(pair.Y) + "\n")
		}
		b.WriteString("}\n")
	}

	for _, t := range p.Ties {
		fmt.Fprintf(&b, "\nties %s {\nrank = %s\nmax_share = %s\n}\n",
			quote(t.Name), quote(t.Rule.String()), num(t.MaxShare))
	}

	for _, t := range p.Tests {
		fmt.Fprintf(&b, "\ntest %s {\n", quote(t.Name))
		b.WriteString("pairing = " + quote(t.Pairing.Name) + "\n")
		if !t.Ties.Builtin {
			b.WriteString("ties = " + quote(t.Ties.Name) + "\n")
		}
		b.WriteString("measures = " + hclList(measureWordsOf(t.Measures)) + "\n")
		b.WriteString("alternative = " + quote(t.Alternative.String()) + "\n")
		b.WriteString("p_value = " + quote(t.PValue.String()) + "\n")
		b.WriteString("permutations = " + strconv.Itoa(t.Permutations) + " # draws, when a result's p-value is by permutation\n")
		b.WriteString("adjust = " + quote(t.Adjust.String()) + "\n")
		if len(t.Controls) > 0 {
			b.WriteString("controls = " + hclList(t.Controls) + "\n")
		}
		if t.Ties.Builtin {
			fmt.Fprintf(&b, "# ties: built-in default, rank = %s, max_share = %s\n",
				quote(t.Ties.Rule.String()), num(t.Ties.MaxShare))
		}
		fmt.Fprintf(&b, "\ninterval {\nlevel = %s\nmethod = %s\n", num(t.Interval.Level), quote(t.Interval.Method.String()))
		if t.Interval.Method != IntervalFisher {
			fmt.Fprintf(&b, "resamples = %d\n", t.Interval.Resamples)
		}
		b.WriteString("}\n}\n")
	}

	for _, t := range p.Tables {
		fmt.Fprintf(&b, "\ntable %s {\n", quote(t.Name))
		names := make([]string, len(t.Tests))
		for i, tt := range t.Tests {
			names[i] = tt.Name
		}
		if len(names) > 0 {
			b.WriteString("tests = " + hclList(names) + "\n")
		}
		if t.Reproduction != nil {
			b.WriteString("reproduction = " + quote(t.Reproduction.Name) + "\n")
		}
		b.WriteString("format = " + quote(t.Format.String()) + "\n")
		b.WriteString("path = " + quote(t.PathAsWritten) + resolvedNote(t.PathAsWritten, t.Path) + "\n")
		b.WriteString("digits = " + strconv.Itoa(t.Digits) + "\n")
		t.Present.describe(&b)
		b.WriteString("}\n")
	}
	for _, f := range p.Figures {
		f.describe(&b)
	}
	for _, pb := range p.Published {
		pb.describe(&b)
	}

	_, err := w.Write(hclwrite.Format([]byte(b.String())))
	return err
}

// resolvedNote is a trailing comment naming the resolved path when it
// differs from the path as written.
func resolvedNote(written, resolved string) string {
	if written == resolved {
		return ""
	}
	return " # " + quote(resolved)
}

func hclList(list []string) string {
	return "[" + quoteList(list) + "]"
}

// num writes a float in the shortest form that reads back exactly.
func num(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }

func plural(n int, one, many string) string {
	if n == 1 {
		return one
	}
	return many
}

func measureWordsOf(ms []stats.Measure) []string {
	out := make([]string, len(ms))
	for i, m := range ms {
		out[i] = m.String()
	}
	return out
}

// Settings returns the resolved plan as plain data for the ledger: every
// default explicit, blocks in recipe order, only slices and structs (no
// maps), paths as written so that the record does not depend on where the
// recipe was checked out. Marshalled with encoding/json it is byte-stable.
//
// Pairs are not listed: they follow from x and y (x outer, y inner) or from
// columns (every i<j pair in order), and a matrix of a thousand columns
// would otherwise add half a million entries to every record.
func (p *Plan) Settings() any {
	s := planSettings{Title: p.Title, Seed: p.Seed, Params: paramsSettings(p.Params)}
	for _, ds := range p.Datasets {
		d := datasetSettings{
			Name: ds.Name, Path: ds.PathAsWritten, Format: string(ds.Format),
			SHA256: ds.SHA256, Missing: nonNil(ds.Missing), Columns: []columnSettings{},
		}
		if ds.Where != nil {
			d.Where = ds.Where.Text
		}
		for _, c := range ds.Columns {
			d.Columns = append(d.Columns, columnSettings{Name: c.Name, Levels: nonNil(c.Levels), Label: c.Label})
		}
		s.Datasets = append(s.Datasets, d)
	}
	for _, pr := range p.Pairings {
		s.Pairings = append(s.Pairings, pairingSettings{
			Name: pr.Name, Dataset: pr.Dataset.Name,
			X: nonNil(pr.X), Y: nonNil(pr.Y), Columns: nonNil(pr.Columns),
			NPairs: len(pr.Pairs), Missing: pr.Missing.String(), By: pr.By,
		})
	}
	for _, t := range p.Tests {
		s.Tests = append(s.Tests, testSettings{
			Name:    t.Name,
			Pairing: t.Pairing.Name,
			Ties: tiesSettings{
				Name: t.Ties.Name, Builtin: t.Ties.Builtin,
				Rank: t.Ties.Rule.String(), MaxShare: t.Ties.MaxShare,
			},
			Measures:     measureWordsOf(t.Measures),
			Alternative:  t.Alternative.String(),
			PValue:       t.PValue.String(),
			Permutations: t.Permutations,
			Interval: intervalSettings{
				Level: t.Interval.Level, Method: t.Interval.Method.String(), Resamples: t.Interval.Resamples,
			},
			Adjust:   t.Adjust.String(),
			Controls: nonNil(t.Controls),
		})
	}
	for _, t := range p.Tables {
		names := make([]string, len(t.Tests))
		for i, tt := range t.Tests {
			names[i] = tt.Name
		}
		ts := tableSettings{
			Name: t.Name, Tests: names, Format: t.Format.String(), Path: t.PathAsWritten, Digits: t.Digits,
			Present: t.Present.settings(),
		}
		if t.Reproduction != nil {
			ts.Reproduction = t.Reproduction.Name
		}
		s.Tables = append(s.Tables, ts)
	}
	for _, f := range p.Figures {
		s.Figures = append(s.Figures, f.settings())
	}
	for _, pb := range p.Published {
		s.Published = append(s.Published, pb.settings())
	}
	s.Datasets = nonNil(s.Datasets)
	s.Pairings = nonNil(s.Pairings)
	s.Tests = nonNil(s.Tests)
	s.Tables = nonNil(s.Tables)
	return s
}

// nonNil turns a nil slice into an empty one, so that JSON shows [] rather
// than null and the encoding does not depend on how a slice was built.
func nonNil[T any](s []T) []T {
	if s == nil {
		return []T{}
	}
	return s
}

type planSettings struct {
	Title    string            `json:"title"`
	Seed     int64             `json:"seed"`
	Datasets []datasetSettings `json:"datasets"`
	Pairings []pairingSettings `json:"pairings"`
	Tests    []testSettings    `json:"tests"`
	Tables   []tableSettings   `json:"tables"`
	// Figures are left out when there are none, so that the settings of
	// a recipe without figures are as they always were.
	Figures []figureSettings `json:"figures,omitempty"`
	// Params are the param blocks with their values; left out when there
	// are none, so that the settings of a recipe without them are as they
	// always were.
	Params []paramSettings `json:"params,omitempty"`
	// Published tables are left out when there are none, likewise.
	Published []publishedSettings `json:"published,omitempty"`
}

type datasetSettings struct {
	Name    string           `json:"name"`
	Path    string           `json:"path"`
	Format  string           `json:"format"`
	SHA256  string           `json:"sha256"`
	Missing []string         `json:"missing"`
	Columns []columnSettings `json:"columns"`
	// Where is the row filter's text; left out when there is none, so
	// that the settings of a recipe without one are as they always were.
	Where string `json:"where,omitempty"`
}

type columnSettings struct {
	Name   string   `json:"name"`
	Levels []string `json:"levels"`
	Label  string   `json:"label,omitempty"` // left out when there is none, as before labels existed
}

type pairingSettings struct {
	Name    string   `json:"name"`
	Dataset string   `json:"dataset"`
	X       []string `json:"x"`
	Y       []string `json:"y"`
	Columns []string `json:"columns"`
	NPairs  int      `json:"n_pairs"`
	Missing string   `json:"missing"`
	By      string   `json:"by"`
}

type tiesSettings struct {
	Name     string  `json:"name"`
	Builtin  bool    `json:"builtin"`
	Rank     string  `json:"rank"`
	MaxShare float64 `json:"max_share"`
}

type intervalSettings struct {
	Level     float64 `json:"level"`
	Method    string  `json:"method"`
	Resamples int     `json:"resamples"`
}

type testSettings struct {
	Name         string           `json:"name"`
	Pairing      string           `json:"pairing"`
	Ties         tiesSettings     `json:"ties"`
	Measures     []string         `json:"measures"`
	Alternative  string           `json:"alternative"`
	PValue       string           `json:"p_value"`
	Permutations int              `json:"permutations"`
	Interval     intervalSettings `json:"interval"`
	Adjust       string           `json:"adjust"`
	Controls     []string         `json:"controls"`
}

type tableSettings struct {
	Name   string   `json:"name"`
	Tests  []string `json:"tests"`
	Format string   `json:"format"`
	Path   string   `json:"path"`
	Digits int      `json:"digits"`
	// Present is left out for a table with the default layout and style,
	// so that the settings of such a table are as they always were.
	Present *presentSettings `json:"present,omitempty"`
	// Reproduction names the published table whose report the table
	// writes; left out when none.
	Reproduction string `json:"reproduction,omitempty"`
}
