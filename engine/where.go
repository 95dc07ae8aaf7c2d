package engine

import (
	"context"
	"fmt"
	"strconv"

	"github.com/zclconf/go-cty/cty"

	"concordat/engine/filter"
	"concordat/io/dataset"
	"concordat/recipe"
)

// This file connects a dataset's row filter (recipe.Dataset.Where, checked
// and typed by engine/filter) to a run: which columns it reads, the rows it
// keeps before any grouping or pairing, the note every result of the
// dataset carries, and what the step hash records.

// whereOutcome is what a dataset's filter did in a run. Its exported
// fields, in this order, are what a test's step hash records of it.
type whereOutcome struct {
	Text    string        `json:"text"`    // the filter as written (comments and spacing normalised)
	Columns []whereColumn `json:"columns"` // how each of its columns was read
	Rows    int           `json:"rows"`    // data rows before the filter
	Kept    int           `json:"kept"`    // rows for which it is true
	// Params are the recipe parameters the filter uses, with the values it
	// ran with; left out when it uses none, so that the step hash of a
	// filter without parameters is as it always was.
	Params []whereParam `json:"params,omitempty"`

	kept []int // the kept rows, in file order
}

type whereParam struct {
	Name  string `json:"name"`
	Value string `json:"value"` // as HCL writes it: 21, "B", true
}

type whereColumn struct {
	Name   string   `json:"name"`
	Kind   string   `json:"kind"`
	Levels []string `json:"levels"`
}

// whereSpecs lists the columns ds's filter reads, as the dataset reads
// them: numbers, labels, or ordinal through the declared levels.
func whereSpecs(ds *recipe.Dataset) []dataset.ColumnSpec {
	if ds.Where == nil {
		return nil
	}
	var out []dataset.ColumnSpec
	for _, c := range ds.Where.Columns {
		out = append(out, whereSpec(c))
	}
	return out
}

func whereSpec(c filter.Column) dataset.ColumnSpec {
	switch c.Kind {
	case filter.Number:
		return dataset.ColumnSpec{Name: c.Name, Kind: dataset.Numeric}
	case filter.Text:
		return dataset.ColumnSpec{Name: c.Name, Kind: dataset.Label}
	case filter.Ordinal:
		return dataset.ColumnSpec{Name: c.Name, Kind: dataset.Ordinal, Levels: c.Levels}
	}
	panic(fmt.Sprintf("engine: filter column %q of kind %v", c.Name, c.Kind))
}

// applyWheres runs the filter of every loaded dataset that has one, with up
// to workers goroutines (the kept rows do not depend on how many). The
// result maps a dataset's name to its outcome; a dataset without a filter
// has no entry.
func applyWheres(ctx context.Context, plan *recipe.Plan, tables map[string]*dataset.Table, workers int) (map[string]*whereOutcome, error) {
	out := map[string]*whereOutcome{}
	for _, ds := range plan.Datasets {
		tbl, ok := tables[ds.Name]
		if !ok || ds.Where == nil {
			continue
		}
		w := &whereOutcome{Text: ds.Where.Text, Rows: tbl.Rows}
		for _, p := range ds.Where.Params {
			w.Params = append(w.Params, whereParam{Name: p.Name, Value: paramText(p.Value)})
		}
		data := make([]filter.Data, len(ds.Where.Columns))
		for i, c := range ds.Where.Columns {
			s := whereSpec(c)
			col := tbl.Column(s.Name, s.Kind)
			if col == nil {
				panic(fmt.Sprintf("engine: filter column %q was not loaded as %v", s.Name, s.Kind))
			}
			data[i] = filter.Data{Values: col.Values, Labels: col.Labels, Missing: col.Missing}
			w.Columns = append(w.Columns, whereColumn{Name: s.Name, Kind: s.Kind.String(), Levels: nonNilStrings(s.Levels)})
		}
		f, err := ds.Where.Compile(tbl.Rows, data)
		if err != nil {
			return nil, fmt.Errorf("dataset %q: %w", ds.Name, err)
		}
		if w.kept, err = f.Rows(ctx, workers); err != nil {
			return nil, fmt.Errorf("dataset %q: %w", ds.Name, err)
		}
		w.Kept = len(w.kept)
		out[ds.Name] = w
	}
	return out, nil
}

// rows returns the kept rows, or nil (every row) when there is no filter.
func (w *whereOutcome) rows() []int {
	if w == nil {
		return nil
	}
	return w.kept
}

// note is said in every result of the dataset, whatever the group, even
// when nothing was excluded: a reader should know that a filter ran.
func (w *whereOutcome) note() string {
	if w == nil {
		return ""
	}
	note := fmt.Sprintf("%d of %d rows excluded by where: %s", w.Rows-w.Kept, w.Rows, w.Text)
	for i, p := range w.Params {
		sep := ", "
		if i == 0 {
			sep = " with "
		}
		note += sep + "param." + p.Name + " = " + p.Value
	}
	return note
}

// paramText writes a parameter's value as HCL would.
func paramText(v cty.Value) string {
	switch v.Type() {
	case cty.String:
		return strconv.Quote(v.AsString())
	case cty.Bool:
		return strconv.FormatBool(v.True())
	case cty.Number:
		return v.AsBigFloat().Text('g', -1)
	}
	return v.GoString()
}

// joinNotes joins two notes of one group into one warning.
func joinNotes(a, b string) string {
	switch {
	case a == "":
		return b
	case b == "":
		return a
	}
	return a + "; " + b
}
