package features

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/parquet-go/parquet-go"
)

// smallTable is a hand-made table with every kind of value and empty cell.
func smallTable() *Table {
	cols := []Column{
		{Name: "rmssd_ms", Kind: Float},
		{Name: "hrv_n_nn", Kind: Int},
		{Name: "hrv_reason", Kind: Text},
	}
	t0 := time.Date(2026, 6, 1, 8, 0, 30, 0, time.UTC)
	t := &Table{Record: "r1", Columns: cols}
	vals := []struct {
		v, n float64
		s    string
	}{{41.25, 312, ""}, {math.NaN(), 12, "too few beats, \"short\""}, {1.0 / 3, math.NaN(), ""}}
	for i, x := range vals {
		r := newRow(len(cols))
		r.Seq = t0.Unix()/30 + int64(i)
		r.Time = t0.Add(time.Duration(i) * 30 * time.Second)
		r.Offset = 22.75 + 30*float64(i)
		r.Values[0], r.Values[1], r.Texts[2] = x.v, x.n, x.s
		t.Rows = append(t.Rows, r)
	}
	return t
}

func TestWriteCSVNaNEmpty(t *testing.T) {
	path := filepath.Join(t.TempDir(), "t.csv")
	if _, err := WriteFile(path, WriteOptions{}, smallTable()); err != nil {
		t.Fatal(err)
	}
	f, _ := os.Open(path)
	defer f.Close()
	recs, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	want := [][]string{
		{"record", "time_utc", "t_s", "seq", "rmssd_ms", "hrv_n_nn", "hrv_reason"},
		{"r1", "2026-06-01T08:00:30Z", "22.75", strconv.FormatInt(smallTable().Rows[0].Seq, 10), "41.25", "312", ""},
		{"r1", "2026-06-01T08:01:00Z", "52.75", strconv.FormatInt(smallTable().Rows[1].Seq, 10), "", "12", "too few beats, \"short\""},
		{"r1", "2026-06-01T08:01:30Z", "82.75", strconv.FormatInt(smallTable().Rows[2].Seq, 10), "0.3333333333333333", "", ""},
	}
	for i := range want {
		if strings.Join(recs[i], "|") != strings.Join(want[i], "|") {
			t.Errorf("csv line %d = %q, want %q", i, recs[i], want[i])
		}
	}
	// Floats are written with the shortest representation that reads back
	// exactly (strconv 'g', -1).
	if v, _ := strconv.ParseFloat(recs[3][4], 64); v != 1.0/3 {
		t.Errorf("1/3 read back as %v", v)
	}
}

func TestWriteJSONLNull(t *testing.T) {
	var buf bytes.Buffer
	tab := smallTable()
	w, err := NewWriter(&buf, JSONL, tab.Columns, WriteOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if err := w.Write(tab); err != nil {
		t.Fatal(err)
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimSpace(buf.String()), "\n")
	if len(lines) != 3 {
		t.Fatalf("%d lines", len(lines))
	}
	var m map[string]any
	if err := json.Unmarshal([]byte(lines[1]), &m); err != nil {
		t.Fatalf("line 2 %q: %v", lines[1], err)
	}
	if v, ok := m["rmssd_ms"]; !ok || v != nil {
		t.Errorf("NaN rmssd_ms written as %v (present %v), want null", v, ok)
	}
	if m["hrv_reason"] != "too few beats, \"short\"" || m["hrv_n_nn"] != 12.0 {
		t.Errorf("row 2 = %v", m)
	}
	if err := json.Unmarshal([]byte(lines[0]), &m); err != nil || m["hrv_reason"] != nil || m["rmssd_ms"] != 41.25 {
		t.Errorf("row 1 = %v (%v)", m, err)
	}
	if !strings.HasPrefix(lines[0], `{"record":"r1","time_utc":"2026-06-01T08:00:30Z","t_s":22.75,`) {
		t.Errorf("column order: %s", lines[0])
	}
}

// TestWriteParquetReadBack writes a table and reads it back with
// parquet-go's generic reader (the reference implementation of the format
// on our side), comparing every value.
func TestWriteParquetReadBack(t *testing.T) {
	path := filepath.Join(t.TempDir(), "t.parquet")
	tab := smallTable()
	if _, err := WriteFile(path, WriteOptions{}, tab); err != nil {
		t.Fatal(err)
	}
	type back struct {
		Record  string    `parquet:"record"`
		TimeUTC time.Time `parquet:"time_utc,timestamp(microsecond)"`
		Ts      float64   `parquet:"t_s"`
		Seq     *int64    `parquet:"seq,optional"`
		RMSSD   *float64  `parquet:"rmssd_ms,optional"`
		NNN     *int64    `parquet:"hrv_n_nn,optional"`
		Reason  *string   `parquet:"hrv_reason,optional"`
	}
	rows, err := parquet.ReadFile[back](path)
	if err != nil {
		t.Fatal(err)
	}
	if len(rows) != 3 {
		t.Fatalf("%d rows", len(rows))
	}
	for i, r := range rows {
		w := tab.Rows[i]
		if r.Record != "r1" || !r.TimeUTC.Equal(w.Time) || r.Ts != w.Offset || r.Seq == nil || *r.Seq != w.Seq {
			t.Errorf("row %d fixed columns %+v", i, r)
		}
		checkF := func(name string, got *float64, want float64) {
			if math.IsNaN(want) != (got == nil) || (got != nil && *got != want) {
				t.Errorf("row %d %s = %v, want %v (NaN = null)", i, name, got, want)
			}
		}
		checkF("rmssd_ms", r.RMSSD, w.Values[0])
		if math.IsNaN(w.Values[1]) != (r.NNN == nil) || (r.NNN != nil && float64(*r.NNN) != w.Values[1]) {
			t.Errorf("row %d hrv_n_nn = %v, want %v", i, r.NNN, w.Values[1])
		}
		if (w.Texts[2] == "") != (r.Reason == nil) || (r.Reason != nil && *r.Reason != w.Texts[2]) {
			t.Errorf("row %d reason = %v, want %q", i, r.Reason, w.Texts[2])
		}
	}
	// Columns keep the table order (not parquet-go's alphabetical default).
	f, _ := os.Open(path)
	defer f.Close()
	st, _ := f.Stat()
	pf, err := parquet.OpenFile(f, st.Size())
	if err != nil {
		t.Fatal(err)
	}
	var names []string
	for _, c := range pf.Schema().Columns() {
		names = append(names, c[0])
	}
	if got := strings.Join(names, ","); got != "record,time_utc,t_s,seq,rmssd_ms,hrv_n_nn,hrv_reason" {
		t.Errorf("parquet column order %s", got)
	}
}

func TestWriteUnionSchemaAndFormats(t *testing.T) {
	a, b := smallTable(), smallTable()
	b.Record = "r2"
	b.Columns = append(append([]Column(nil), b.Columns...), Column{Name: "label_nap_overlap_frac", Kind: Float})
	for i := range b.Rows {
		b.Rows[i].Values = append(b.Rows[i].Values, 0.5)
		b.Rows[i].Texts = append(b.Rows[i].Texts, "")
	}
	path := filepath.Join(t.TempDir(), "u.csv")
	cols, err := WriteFile(path, WriteOptions{}, a, b)
	if err != nil {
		t.Fatal(err)
	}
	if len(cols) != 4 {
		t.Fatalf("union has %d columns", len(cols))
	}
	data, _ := os.ReadFile(path)
	lines := strings.Split(strings.TrimSpace(string(data)), "\n")
	if len(lines) != 7 || !strings.HasSuffix(lines[1], ",") || !strings.HasSuffix(lines[4], ",0.5") {
		t.Errorf("union csv:\n%s", data)
	}
	for _, p := range []string{"x.txt", "x", "x.parq"} {
		if _, err := FormatOf(p); err == nil {
			t.Errorf("FormatOf(%q) accepted", p)
		}
	}
	for p, want := range map[string]Format{"a.CSV": CSV, "a.jsonl": JSONL, "a.ndjson": JSONL, "a.parquet": Parquet} {
		if f, err := FormatOf(p); err != nil || f != want {
			t.Errorf("FormatOf(%q) = %v, %v", p, f, err)
		}
	}
}

func TestSidecar(t *testing.T) {
	dir := t.TempDir()
	for _, n := range []string{"rec.hea", "rec.dat", "rec.atr", "other.hea"} {
		os.WriteFile(filepath.Join(dir, n), []byte(n), 0o644)
	}
	files, err := RecordFiles(filepath.Join(dir, "rec"))
	if err != nil || len(files) != 3 {
		t.Fatalf("record files %v, %v", files, err)
	}
	in, err := HashFiles(files...)
	if err != nil {
		t.Fatal(err)
	}
	// SHA-256 (FIPS 180-4) of the 7 bytes "rec.atr", computed with GNU
	// coreutils: printf rec.atr | sha256sum.
	if in[0].SHA256 != "c02066873d5bf5554b7980823031150a720b10f379fc4377e305ff76f1c3261b" || in[0].Bytes != 7 {
		t.Errorf("hash %s", in[0].SHA256)
	}
	table := filepath.Join(dir, "out.csv")
	if err := WriteSidecar(table, Meta{Config: Config{Step: DefaultStep}, Records: []string{"rec"}, Inputs: in, Columns: smallTable().Columns}); err != nil {
		t.Fatal(err)
	}
	var m map[string]any
	data, _ := os.ReadFile(table + ".meta.json")
	if err := json.Unmarshal(data, &m); err != nil {
		t.Fatal(err)
	}
	if m["version"] != Version || m["library"] != "tidalbeat" {
		t.Errorf("sidecar %v", m)
	}
	if cfg := m["config"].(map[string]any); cfg["step_ns"] != float64(30e9) {
		t.Errorf("config %v", cfg)
	}
	if cols := m["columns"].([]any); cols[1].(map[string]any)["kind"] != "int" {
		t.Errorf("columns %v", cols)
	}
}

// Counts are integers in the schema (Parquet INT64, JSON integers): the
// breathing family types resp's count columns by the naming scheme.
func TestBreathingCountColumnsAreInts(t *testing.T) {
	kinds := map[string]Kind{}
	for _, c := range breathingCols() {
		kinds[c.Name] = c.Kind
	}
	for _, name := range []string{"resp_n_breaths", "n_sighs", "n_apneas", "n_hypopneas"} {
		k, ok := kinds[name]
		if !ok || k != Int {
			t.Errorf("column %s: kind %v (present %v), want Int", name, k, ok)
		}
	}
	if kinds["ve_l_min"] != Float || kinds["resp_rate_per_min"] != Float {
		t.Errorf("measurement columns must stay Float")
	}
}
