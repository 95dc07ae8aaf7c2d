package dataset

import (
	"fmt"
	"strconv"
	"strings"
	"unicode/utf8"
)

// ColumnSpec asks for one column of a file.
type ColumnSpec struct {
	Name string // exactly as in the header or the Parquet schema
	Kind Kind
	// Levels lists an Ordinal column's labels from low to high; label
	// Levels[i] is read as i+1. It must be empty for the other kinds.
	Levels []string
}

// Spec says which file to read and how.
type Spec struct {
	Path   string // the file to read, already resolved by the caller
	Format Format
	// Missing lists the cells read as missing in CSV and TSV files, in
	// every kind of column. A cell must equal a token exactly: no trimming,
	// no case folding. Include "" for empty cells.
	Missing []string
	// Columns are the only columns read; they are returned in this order.
	// A name may appear twice with different kinds, as a Label and as a
	// Numeric or Ordinal column, and is then read both ways (a column that
	// is both a variable and a grouping column). The same name and kind
	// twice, or one name as both Numeric and Ordinal, is an error.
	Columns []ColumnSpec
}

// Column holds one column's values, one per data row.
type Column struct {
	Name string
	Kind Kind
	// Values holds a Numeric or Ordinal column's values; NaN is missing.
	// An Ordinal label Levels[i] is i+1. Nil for a Label column.
	Values []float64
	// Labels holds a Label column's text; a missing cell is "". Nil for the
	// other kinds.
	Labels []string
	// Missing marks a Label column's missing cells. Nil for the other
	// kinds, whose missing values are NaN.
	Missing []bool
}

// Table is what Read returns: the file's identity and the requested columns.
type Table struct {
	Path   string
	SHA256 string // lowercase hex SHA-256 of the bytes that were parsed
	Bytes  int64  // the number of bytes that were parsed: the file's size
	Rows   int    // data rows, the header excluded
	// Columns follow [Spec.Columns]: one per requested column, in the
	// order requested. A name repeats when it was requested with two
	// kinds; use [Table.Column] to look a column up by name and kind.
	Columns []Column
}

// Column returns the column read with the given name and kind, or nil when
// the spec did not ask for that pair.
func (t *Table) Column(name string, kind Kind) *Column {
	for i := range t.Columns {
		if c := &t.Columns[i]; c.Name == name && c.Kind == kind {
			return c
		}
	}
	return nil
}

// checkSpec reports a spec that a caller should never have built: these are
// recipe problems the recipe package is expected to catch first.
//
// A name may be requested once as a Label and once as a Numeric or Ordinal
// column; requesting the same (name, kind) twice, or a name as both Numeric
// and Ordinal, is contradictory.
func checkSpec(spec Spec) error {
	type nameKind struct {
		name string
		kind Kind
	}
	seen := make(map[nameKind]bool, len(spec.Columns))
	valueKind := make(map[string]Kind, len(spec.Columns)) // Numeric or Ordinal
	for _, c := range spec.Columns {
		switch c.Kind {
		case Numeric, Label:
			if len(c.Levels) > 0 {
				return fmt.Errorf("column %q: levels are given but the column is %s, not ordinal", c.Name, c.Kind)
			}
		case Ordinal:
			if len(c.Levels) == 0 {
				return fmt.Errorf("column %q: an ordinal column needs its levels", c.Name)
			}
			lv := make(map[string]bool, len(c.Levels))
			for _, l := range c.Levels {
				if lv[l] {
					return fmt.Errorf("column %q: level %q is listed twice", c.Name, l)
				}
				lv[l] = true
			}
		default:
			return fmt.Errorf("column %q: invalid kind %d", c.Name, int(c.Kind))
		}
		k := nameKind{c.Name, c.Kind}
		if seen[k] {
			return fmt.Errorf("column %q is requested twice as %s", c.Name, c.Kind)
		}
		seen[k] = true
		if c.Kind == Label {
			continue
		}
		if vk, ok := valueKind[c.Name]; ok && vk != c.Kind {
			return fmt.Errorf("column %q is requested both as numeric and as ordinal", c.Name)
		}
		valueKind[c.Name] = c.Kind
	}
	return nil
}

// sink receives one column's values, from Arrow arrays or as text, and
// stores them by kind. The Parquet reader uses it for every column read
// through record batches; the CSV reader applies the same value rules
// through textParser.cell.
type sink struct {
	col     *Column
	spec    ColumnSpec
	missing map[string]bool
	levels  map[string]float64 // Ordinal
	intern  map[string]string  // Label: one string per distinct label
}

func newSink(col *Column, cs ColumnSpec, missing map[string]bool) *sink {
	s := &sink{col: col, spec: cs, missing: missing}
	switch cs.Kind {
	case Ordinal:
		s.levels = make(map[string]float64, len(cs.Levels))
		for i, l := range cs.Levels {
			s.levels[l] = float64(i + 1)
		}
	case Label:
		s.intern = make(map[string]string)
	}
	return s
}

// add stores one cell; a non-nil cellProblem says why it cannot be read.
func (s *sink) add(cell string) *cellProblem {
	c := s.col
	if s.missing[cell] {
		if c.Kind == Label {
			c.Labels = append(c.Labels, "")
			c.Missing = append(c.Missing, true)
		} else {
			c.Values = append(c.Values, nan)
		}
		return nil
	}
	switch c.Kind {
	case Numeric:
		v, p := parseNumber(cell)
		if p != nil {
			return p
		}
		c.Values = append(c.Values, v)
	case Ordinal:
		v, ok := s.levels[cell]
		if !ok {
			return levelProblem(cell, s.spec.Levels)
		}
		c.Values = append(c.Values, v)
	case Label:
		l, ok := s.intern[cell]
		if !ok {
			if p := labelProblem(cell); p != nil {
				return p
			}
			l = strings.Clone(cell)
			s.intern[l] = l
		}
		c.Labels = append(c.Labels, l)
		c.Missing = append(c.Missing, false)
	}
	return nil
}

// addMissing stores a missing value (a Parquet null).
func (s *sink) addMissing() {
	c := s.col
	if c.Kind == Label {
		c.Labels = append(c.Labels, "")
		c.Missing = append(c.Missing, true)
		return
	}
	c.Values = append(c.Values, nan)
}

// labelProblem refuses a label that is not UTF-8 text: it would name a
// group in every table, and tables are UTF-8. Checked once per distinct
// label. (A numeric or ordinal cell with such bytes is refused anyway, as
// not a number or not a level.)
func labelProblem(cell string) *cellProblem {
	if utf8.ValidString(cell) {
		return nil
	}
	return &cellProblem{reason: "is not valid UTF-8 text", hint: "save the file as UTF-8; spreadsheet programs offer it as \"CSV UTF-8\""}
}

// levelProblem explains a label that is not among the levels, with a hint
// when it differs from one only in case or surrounding spaces.
func levelProblem(cell string, levels []string) *cellProblem {
	q := make([]string, len(levels))
	for i, l := range levels {
		q[i] = strconv.Quote(l)
	}
	p := &cellProblem{reason: "is not one of the declared levels " + strings.Join(q, ", ")}
	t := strings.TrimSpace(cell)
	for _, l := range levels {
		if strings.EqualFold(t, strings.TrimSpace(l)) {
			p.hint = fmt.Sprintf("did you mean %q? levels must match exactly, including case and spaces", l)
			break
		}
	}
	if cell == "" && p.hint == "" {
		p.hint = `if empty cells mean "no value", add "" to the dataset's missing tokens`
	}
	return p
}
