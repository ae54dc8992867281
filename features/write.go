package features

import (
	"bufio"
	"encoding/csv"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"sort"
	"strconv"
	"strings"
	"time"

	"github.com/parquet-go/parquet-go"
)

// Fixed columns written before a table's own columns.
var fixedColumns = []Column{
	{Name: "record", Kind: Text, Doc: "record name"},
	{Name: "time_utc", Kind: Text, Doc: "row time: UTC end of every family's window (RFC 3339; a Parquet timestamp in microseconds)"},
	{Name: "t_s", Kind: Float, Doc: "row time in seconds from the recording start"},
	{Name: "seq", Kind: Int, Doc: "grid index: the row time is seq steps after the anchor (the Unix epoch by default)"},
}

// FixedColumns returns the columns every written table starts with: record,
// time_utc, t_s and seq.
func FixedColumns() []Column { return append([]Column(nil), fixedColumns...) }

// Format is an output table format.
type Format int

// Output formats, chosen by FormatOf from the file extension.
const (
	CSV     Format = iota // .csv: comma-separated, header line, NaN as an empty field
	JSONL                 // .jsonl or .ndjson: one JSON object per row, NaN as null
	Parquet               // .parquet: Snappy-compressed, NaN as null
)

// String returns "csv", "jsonl" or "parquet".
func (f Format) String() string {
	switch f {
	case CSV:
		return "csv"
	case JSONL:
		return "jsonl"
	case Parquet:
		return "parquet"
	}
	return fmt.Sprintf("Format(%d)", int(f))
}

// FormatOf returns the format named by path's extension (any case).
func FormatOf(path string) (Format, error) {
	switch strings.ToLower(filepath.Ext(path)) {
	case ".csv":
		return CSV, nil
	case ".jsonl", ".ndjson":
		return JSONL, nil
	case ".parquet":
		return Parquet, nil
	}
	return 0, fmt.Errorf("features: output %q: extension must be .csv, .jsonl, .ndjson or .parquet: %w", path, ErrConfig)
}

// WriteOptions adjusts the writers. The zero value writes the record column.
type WriteOptions struct {
	// NoRecord leaves out the record column (Hive-partitioned datasets carry
	// the record in the directory name record=<name>).
	NoRecord bool
}

// UnionColumns returns every column of the tables, in first-seen order, so
// tables of records with different label sets can share one schema.
func UnionColumns(tables ...*Table) []Column {
	var out []Column
	seen := map[string]bool{}
	for _, t := range tables {
		for _, c := range t.Columns {
			if !seen[c.Name] {
				seen[c.Name] = true
				out = append(out, c)
			}
		}
	}
	return out
}

// Writer writes rows of one or more tables with a common schema.
type Writer struct {
	f      Format
	cols   []Column // table columns (without the fixed ones)
	opt    WriteOptions
	csv    *csv.Writer
	bw     *bufio.Writer
	pq     *parquet.Writer
	pqCols []int // for each parquet leaf: index into all (fixed + cols)
	buf    []string
	prow   []parquet.Row
}

// NewWriter returns a writer of format f for tables whose columns are (a
// subset of) cols. Close flushes it; the caller closes w.
func NewWriter(w io.Writer, f Format, cols []Column, opt WriteOptions) (*Writer, error) {
	tw := &Writer{f: f, cols: cols, opt: opt}
	all := tw.all()
	switch f {
	case CSV:
		tw.csv = csv.NewWriter(w)
		names := make([]string, len(all))
		for i, c := range all {
			names[i] = c.Name
		}
		if err := tw.csv.Write(names); err != nil {
			return nil, fmt.Errorf("features: csv header: %w", err)
		}
	case JSONL:
		tw.bw = bufio.NewWriter(w)
	case Parquet:
		g := orderedGroup{Group: parquet.Group{}}
		for _, c := range all {
			var n parquet.Node
			switch {
			case c.Name == "time_utc":
				n = parquet.Timestamp(parquet.Microsecond)
			case c.Name == "record":
				n = parquet.String()
			case c.Kind == Text:
				n = parquet.Optional(parquet.String())
			case c.Kind == Int:
				n = parquet.Optional(parquet.Int(64))
			case c.Name == "t_s":
				n = parquet.Leaf(parquet.DoubleType)
			default:
				n = parquet.Optional(parquet.Leaf(parquet.DoubleType))
			}
			if _, dup := g.Group[c.Name]; dup {
				return nil, fmt.Errorf("features: duplicate column %q: %w", c.Name, ErrConfig)
			}
			g.Group[c.Name] = n
			g.order = append(g.order, c.Name)
		}
		schema := parquet.NewSchema("tidalbeat_features", g)
		tw.pq = parquet.NewWriter(w, schema, parquet.Compression(&parquet.Snappy),
			parquet.CreatedBy("tidalbeat", Version, ""))
		idx := map[string]int{}
		for i, c := range all {
			idx[c.Name] = i
		}
		for _, path := range schema.Columns() {
			tw.pqCols = append(tw.pqCols, idx[path[0]])
		}
	default:
		return nil, fmt.Errorf("features: unknown format %d: %w", int(f), ErrConfig)
	}
	return tw, nil
}

func (tw *Writer) all() []Column {
	if tw.opt.NoRecord {
		return append(FixedColumns()[1:], tw.cols...)
	}
	return append(FixedColumns(), tw.cols...)
}

// cell is one written value: text (ok when present) or number (NaN = null).
type cell struct {
	kind Kind
	s    string
	v    float64
	null bool
}

// cellsOf returns the row's values in writer column order.
func (tw *Writer) cellsOf(t *Table, r *Row, idx []int, dst []cell) []cell {
	dst = dst[:0]
	if !tw.opt.NoRecord {
		dst = append(dst, cell{kind: Text, s: t.Record})
	}
	dst = append(dst, cell{kind: Text, s: r.Time.UTC().Format(time.RFC3339Nano)},
		cell{kind: Float, v: r.Offset}, cell{kind: Int, v: float64(r.Seq)})
	for ci, c := range tw.cols {
		j := idx[ci]
		switch {
		case j < 0:
			dst = append(dst, cell{kind: c.Kind, null: true, v: math.NaN()})
		case c.Kind == Text:
			dst = append(dst, cell{kind: Text, s: r.Texts[j], null: r.Texts[j] == ""})
		default:
			v := r.Values[j]
			dst = append(dst, cell{kind: c.Kind, v: v, null: math.IsNaN(v) || math.IsInf(v, 0)})
		}
	}
	return dst
}

// Write appends every row of t. Columns of the writer's schema that t lacks
// are written empty.
func (tw *Writer) Write(t *Table) error {
	idx := make([]int, len(tw.cols))
	pos := map[string]int{}
	for i, c := range t.Columns {
		pos[c.Name] = i
	}
	for i, c := range tw.cols {
		j, ok := pos[c.Name]
		if !ok {
			j = -1
		} else if t.Columns[j].Kind != c.Kind {
			return fmt.Errorf("features: %s: column %q is %v in the table, %v in the schema: %w", t.Record, c.Name, t.Columns[j].Kind, c.Kind, ErrConfig)
		}
		idx[i] = j
	}
	var cs []cell
	all := tw.all()
	tw.prow = tw.prow[:0]
	for ri := range t.Rows {
		r := &t.Rows[ri]
		if len(r.Values) != len(t.Columns) || len(r.Texts) != len(t.Columns) {
			return fmt.Errorf("features: %s: row %d has %d values for %d columns: %w", t.Record, ri, len(r.Values), len(t.Columns), ErrInput)
		}
		cs = tw.cellsOf(t, r, idx, cs)
		var err error
		switch tw.f {
		case CSV:
			err = tw.writeCSV(cs)
		case JSONL:
			err = tw.writeJSON(all, cs)
		case Parquet:
			tw.prow = append(tw.prow, tw.parquetRow(r, cs))
			if len(tw.prow) >= 1024 {
				err = tw.flushParquet()
			}
		}
		if err != nil {
			return fmt.Errorf("features: %s: row %d: %w", t.Record, ri, err)
		}
	}
	if tw.f == Parquet {
		return tw.flushParquet()
	}
	return nil
}

func formatNum(c cell) string {
	if c.null {
		return ""
	}
	if c.kind == Int {
		return strconv.FormatInt(int64(c.v), 10)
	}
	// Shortest representation that reads back to the same float64.
	return strconv.FormatFloat(c.v, 'g', -1, 64)
}

func (tw *Writer) writeCSV(cs []cell) error {
	tw.buf = tw.buf[:0]
	for _, c := range cs {
		if c.kind == Text {
			tw.buf = append(tw.buf, c.s)
		} else {
			tw.buf = append(tw.buf, formatNum(c))
		}
	}
	return tw.csv.Write(tw.buf)
}

func (tw *Writer) writeJSON(all []Column, cs []cell) error {
	b := []byte{'{'}
	for i, c := range cs {
		if i > 0 {
			b = append(b, ',')
		}
		b = strconv.AppendQuote(b, all[i].Name)
		b = append(b, ':')
		switch {
		case c.null:
			b = append(b, "null"...)
		case c.kind == Text:
			q, err := json.Marshal(c.s)
			if err != nil {
				return err
			}
			b = append(b, q...)
		default:
			b = append(b, formatNum(c)...)
		}
	}
	b = append(b, '}', '\n')
	_, err := tw.bw.Write(b)
	return err
}

func (tw *Writer) parquetRow(r *Row, cs []cell) parquet.Row {
	row := make(parquet.Row, len(tw.pqCols))
	for leaf, ai := range tw.pqCols {
		c := cs[ai]
		name := tw.all()[ai].Name
		var v parquet.Value
		required := name == "record" || name == "time_utc" || name == "t_s"
		switch {
		case name == "time_utc":
			v = parquet.Int64Value(r.Time.UnixMicro())
		case c.null && !required:
			row[leaf] = parquet.Value{}.Level(0, 0, leaf)
			continue
		case c.kind == Text:
			v = parquet.ByteArrayValue([]byte(c.s))
		case c.kind == Int:
			v = parquet.Int64Value(int64(c.v))
		default:
			v = parquet.DoubleValue(c.v)
		}
		def := 1
		if required {
			def = 0
		}
		row[leaf] = v.Level(0, def, leaf)
	}
	return row
}

func (tw *Writer) flushParquet() error {
	if len(tw.prow) == 0 {
		return nil
	}
	_, err := tw.pq.WriteRows(tw.prow)
	tw.prow = tw.prow[:0]
	return err
}

// Close flushes buffered output (and writes the Parquet footer).
func (tw *Writer) Close() error {
	switch tw.f {
	case CSV:
		tw.csv.Flush()
		return tw.csv.Error()
	case JSONL:
		return tw.bw.Flush()
	case Parquet:
		if err := tw.flushParquet(); err != nil {
			return err
		}
		return tw.pq.Close()
	}
	return nil
}

// WriteFile writes tables to path in the format its extension names, with
// the union of their columns, and returns the schema written.
func WriteFile(path string, opt WriteOptions, tables ...*Table) ([]Column, error) {
	f, err := FormatOf(path)
	if err != nil {
		return nil, err
	}
	out, err := os.Create(path)
	if err != nil {
		return nil, fmt.Errorf("features: %w", err)
	}
	cols := UnionColumns(tables...)
	w, err := NewWriter(out, f, cols, opt)
	if err == nil {
		for _, t := range tables {
			if err = w.Write(t); err != nil {
				break
			}
		}
		if cerr := w.Close(); err == nil {
			err = cerr
		}
	}
	if cerr := out.Close(); err == nil {
		err = cerr
	}
	if err != nil {
		return nil, fmt.Errorf("features: writing %s: %w", path, err)
	}
	return cols, nil
}

// orderedGroup is a Parquet group whose columns keep the table's order
// instead of the alphabetical order of parquet.Group.
type orderedGroup struct {
	parquet.Group
	order []string
}

// Fields returns the group's fields in table order.
func (g orderedGroup) Fields() []parquet.Field {
	fs := g.Group.Fields()
	rank := make(map[string]int, len(g.order))
	for i, n := range g.order {
		rank[n] = i
	}
	sort.SliceStable(fs, func(i, j int) bool { return rank[fs[i].Name()] < rank[fs[j].Name()] })
	return fs
}
