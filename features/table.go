package features

import (
	"fmt"
	"math"
	"time"
)

// Kind is the type of a column's values.
type Kind uint8

// Column kinds.
const (
	Float Kind = iota // float64; NaN means "no value" and is written empty/null
	Int               // a count, held as float64 in Row.Values and written as int64; NaN = null
	Text              // a string held in Row.Texts; "" is written empty/null
)

// String returns "float", "int" or "text".
func (k Kind) String() string {
	switch k {
	case Float:
		return "float"
	case Int:
		return "int"
	case Text:
		return "text"
	}
	return fmt.Sprintf("Kind(%d)", int(k))
}

// Column describes one column of a feature table. Names follow one scheme:
// lower-case words joined by underscores, ending in the unit (rmssd_ms,
// ve_l_min, hrv_coverage_frac); counts start with n_ (hrv_n_nn); a family's
// free-text reason ends in _reason. The HRV metric names are the hrv
// package's own Columns(), used verbatim.
type Column struct {
	Name   string
	Kind   Kind
	Family string // "", "hrv", "breathing", "activity" or "label"
	Doc    string // one line with the unit and meaning
}

// Row is one grid time: the end of every family's window. Values and Texts
// both have one entry per table column; Values holds Float and Int columns
// (NaN = no value), Texts holds Text columns ("" = none).
type Row struct {
	Seq    int64     // grid index: the row ends Seq steps after the anchor
	Time   time.Time // UTC window end (the row time)
	Offset float64   // seconds from the recording start to Time
	Values []float64
	Texts  []string
}

// Table is the feature table of one recording.
type Table struct {
	Record string // record name, written in the record column
	// StartKnown is false when the recording gave no start time: row times
	// are then elapsed time counted from the Unix epoch.
	StartKnown bool
	Columns    []Column // schema, without the fixed record/time columns
	Rows       []Row    // in time order, one per grid step
}

// Col returns the index of the named column, or -1.
func (t *Table) Col(name string) int {
	for i, c := range t.Columns {
		if c.Name == name {
			return i
		}
	}
	return -1
}

// Float returns column name of every row as a slice (NaN where empty). It
// returns nil when the column does not exist or holds text.
func (t *Table) Float(name string) []float64 {
	i := t.Col(name)
	if i < 0 || t.Columns[i].Kind == Text {
		return nil
	}
	out := make([]float64, len(t.Rows))
	for r := range t.Rows {
		out[r] = t.Rows[r].Values[i]
	}
	return out
}

// Strings returns text column name of every row, or nil when the column does
// not exist or is numeric.
func (t *Table) Strings(name string) []string {
	i := t.Col(name)
	if i < 0 || t.Columns[i].Kind != Text {
		return nil
	}
	out := make([]string, len(t.Rows))
	for r := range t.Rows {
		out[r] = t.Rows[r].Texts[i]
	}
	return out
}

// newRow returns a row with every value empty.
func newRow(ncol int) Row {
	r := Row{Values: make([]float64, ncol), Texts: make([]string, ncol)}
	for i := range r.Values {
		r.Values[i] = math.NaN()
	}
	return r
}
