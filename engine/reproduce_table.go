package engine

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"

	"concordat/engine/ledger"
	"concordat/io/render"
	"concordat/recipe"
)

// This file lays a Reproduction out as a table (a file of its own, or a
// section after a readable table's results) and records it in the ledger.

// reproductionColumns are the keys of the reproduction record, in order.
var reproductionColumns = []string{
	"published", "line", "test", "x", "y", "group", "measure", "value",
	"printed", "recomputed", "outcome", "reproduces_with", "conventions_tried", "note",
}

// reproductionRecords is the reproduction as records: one row per printed
// value, every digit of the recomputed value, names rather than labels.
func reproductionRecords(rp *Reproduction) *render.Table {
	t := &render.Table{Columns: reproductionColumns, Kinds: []render.Kind{
		render.KindText, render.KindInt, render.KindText, render.KindText, render.KindText, render.KindText,
		render.KindText, render.KindText, render.KindText, render.KindReal, render.KindText, render.KindList,
		render.KindInt, render.KindText,
	}}
	for _, v := range rp.Values {
		r := v.Row
		t.Rows = append(t.Rows, []render.Cell{
			render.Text(rp.Published.Name), render.Int(int64(r.DeclRange.Start.Line)), render.Text(r.Test.Name),
			render.Text(r.X), render.Text(r.Y), render.Text(r.Group), render.Text(r.Measure.String()),
			render.Text(v.Value), render.Text(v.Printed), render.Real(v.Recomputed), render.Text(v.Outcome.String()),
			render.List(v.Reproduces), render.Int(int64(v.Tried)), optText(v.Note),
		})
	}
	return t
}

// reproductionReadable is the reproduction as a table for people: the
// printed value beside the recomputed one with the digits that tell them
// apart, the outcome, and the conventions that reproduce a value that did
// not match; the summary and the reading rules in notes under it.
func reproductionReadable(tb *recipe.Table, rp *Reproduction) *render.Table {
	pb := rp.Published
	grouped := slices.ContainsFunc(pb.Rows, func(r *recipe.PublishedRow) bool { return r.Group != "all" })
	cols := []string{"x", "y"}
	if grouped {
		cols = append(cols, "group")
	}
	cols = append(cols, "measure", "value", "printed", "recomputed", "outcome", "reproduces with")
	what := pb.Name
	if pb.Source != "" {
		what = pb.Source
	}
	t := &render.Table{Title: "Reproduction of " + what + ": " + rp.Summary(), Columns: cols, Label: tb.Label}
	apa := tb.Style == recipe.StyleAPA
	// LaTeX sets a minus sign (U+2212) in math mode; a hyphen would print
	// as a hyphen.
	minus := "-"
	if tb.Format == recipe.LaTeX {
		minus = "−"
	}
	for _, v := range rp.Values {
		r := v.Row
		ds := r.Test.Pairing.Dataset
		row := []render.Cell{render.Text(ds.LabelOf(r.X)), render.Text(ds.LabelOf(r.Y))}
		if grouped {
			row = append(row, render.Text(r.Group))
		}
		printed := v.Printed
		if v.Value == "stars" && printed == "" {
			printed = "(none)"
		}
		short, more := v.ShortReasons()
		if more > 0 {
			short = append(slices.Clone(short), fmt.Sprintf("and %d more", more))
		}
		reasons := render.List(short)
		switch {
		case v.Outcome == NotComparable:
			reasons = render.List([]string{v.Note})
		case v.Outcome != Matched && len(v.Reproduces) == 0:
			reasons = render.List([]string{fmt.Sprintf("none of the %d conventions tried", v.Tried)})
		}
		row = append(row, render.Text(r.Measure.String()), render.Text(valueName(v.Value)), render.Text(printed),
			render.Text(strings.Replace(recomputedCell(v, apa), "-", minus, 1)), render.Text(v.Outcome.String()), reasons)
		t.Rows = append(t.Rows, row)
	}
	t.Notes = append(t.Notes, rp.Summary()+".")
	t.Notes = append(t.Notes,
		"A printed number matches when the recomputed value rounds to it: it lies within half a unit of the last printed digit, either end included (round-half-up and round-half-to-even both accepted). A bound such as < .001 is compared as printed; n exactly.")
	if len(pb.Stars) > 0 {
		var legend []string
		for _, l := range pb.Stars {
			legend = append(legend, l.Marks+" "+pb.MarksMeaning(l.Marks))
		}
		legend = append(legend, "no marks "+pb.MarksMeaning(""))
		t.Notes = append(t.Notes, "Marks, as the paper's legend defines them: "+strings.Join(legend, "; ")+".")
	}
	if slices.ContainsFunc(pb.Rows, func(r *recipe.PublishedRow) bool {
		return r.PValue != nil && r.PValue.Kind == recipe.PrintedNotSignificant
	}) {
		t.Notes = append(t.Notes, "ns: p ≥ "+shortNumber(pb.NotSignificantBelow())+".")
	}
	if slices.ContainsFunc(pb.Rows, func(r *recipe.PublishedRow) bool { return r.Test.Adjust.String() != "none" }) {
		t.Notes = append(t.Notes, "p-values are compared after the test's multiplicity adjustment.")
	}
	t.Notes = append(t.Notes,
		"For a value that does not match, the cell was recomputed under other conventions, one at a time and then two at a time: the other deletion rule, tie rules and the no-ties formula, another measure of the same family, one- or two-sided, exact or approximate p-values, the untied null and continuity corrections, another multiplicity adjustment (the family's other p-values as run), truncation, n before deletion. Those that reproduce the value and keep the row's other matches are listed.")
	return t
}

// valueName is a value's name in a readable table.
func valueName(v string) string {
	if v == "p_value" {
		return "p"
	}
	return v
}

// recomputedCell writes the recomputed value with the digits that show
// how it compares with the printed one: two decimals more than printed
// for an estimate, p with four decimals (two significant digits below
// .0001), n whole. The APA style drops the leading zero of estimates and
// p-values.
func recomputedCell(v ReproducedValue, apa bool) string {
	if math.IsNaN(v.Recomputed) {
		return "—"
	}
	var s string
	switch v.Value {
	case "estimate":
		s = recomputedText(v.Recomputed, v.Row.Estimate.Decimals()+2)
	case "n":
		return strconv.Itoa(int(v.Recomputed))
	default:
		s = pText(v.Recomputed)
	}
	if apa {
		if rest, ok := strings.CutPrefix(s, "0."); ok {
			s = "." + rest
		} else if rest, ok := strings.CutPrefix(s, "-0."); ok {
			s = "-." + rest
		}
	}
	return s
}

// shortNumber writes a threshold as a table would: ".05".
func shortNumber(v float64) string {
	return strings.TrimPrefix(strconv.FormatFloat(v, 'f', -1, 64), "0")
}

// renderTableWith renders a table block, adding the reproduction report it
// asks for: after its results in a readable format, or alone in a table
// that has no tests.
func renderTableWith(plan *recipe.Plan, tb *recipe.Table, rows []Result, figs map[string]renderedFigure, repros map[string]*Reproduction) ([]byte, error) {
	if tb.Reproduction == nil {
		return renderTable(plan, tb, rows, figs)
	}
	rp := repros[tb.Reproduction.Name]
	var doc *render.Document
	if len(tb.Tests) > 0 {
		doc = tableDocument(plan, tb, rows, figs)
	} else {
		title := plan.Title
		if tb.Caption != "" {
			title = tb.Caption
		}
		doc = &render.Document{Title: title}
		if tb.Format == recipe.HTML {
			doc.Footer = cautions
		}
	}
	style := styleOf(tb)
	if tb.Format.Readable() {
		rt := reproductionReadable(tb, rp)
		if len(tb.Tests) == 0 && tb.Caption != "" {
			rt.Title = tb.Caption + ": " + rp.Summary()
		}
		doc.Tables = append(doc.Tables, rt)
	} else {
		style = render.Style{Numbers: render.Plain, Digits: -1}
		rt := reproductionRecords(rp)
		rt.Title = doc.Title
		doc.Tables = []*render.Table{rt}
	}
	var buf bytes.Buffer
	if err := render.Write(&buf, doc, formatOf(tb.Format), style); err != nil {
		return nil, fmt.Errorf("render table %q: %w", tb.Name, err)
	}
	return buf.Bytes(), nil
}

// reproductionStep records a reproduction in the ledger as a step of its
// own, after the tests' steps: its name is the block's header,
// `published "table_2"`; its input hash covers the block's settings (every
// printed value as written) and the input hashes of the tests it compares
// with; its result hash is the sha256 of its records in the JSON encoding,
// diagnoses included.
func reproductionStep(rp *Reproduction, testSteps []ledger.Step) (ledger.Step, error) {
	pb := rp.Published
	var inputs []string
	for _, st := range testSteps {
		if slices.ContainsFunc(pb.Rows, func(r *recipe.PublishedRow) bool { return r.Test.Name == st.Test }) {
			inputs = append(inputs, st.InputSHA256)
		}
	}
	name := "published " + strconv.Quote(pb.Name)
	inHash, err := ledger.Hash(struct {
		Published any      `json:"published"`
		Tests     []string `json:"tests"`
	}{pb.Settings(), nonNilStrings(inputs)})
	if err != nil {
		return ledger.Step{}, fmt.Errorf("hash inputs of %s: %w", name, err)
	}
	h := sha256.New()
	if err := render.Encode(h, reproductionRecords(rp), render.JSON, -1); err != nil {
		return ledger.Step{}, err
	}
	return ledger.Step{Test: name, InputSHA256: inHash, ResultSHA256: hex.EncodeToString(h.Sum(nil)), Results: len(rp.Values)}, nil
}
