// Command cohortparquet exports a cohort to a Hive-partitioned Parquet
// dataset, one partition per record (DIR/record=<name>/part-0.parquet),
// which Spark, DuckDB or polars read as one table with a record column.
//
//	go run ./examples/cohortparquet -o cohort RECORD...
//
// Without records it simulates a small cohort of trail runners (ten minutes
// each: sitting, then running at their own cadence).
package main

import (
	"flag"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"sync"
	"time"

	"github.com/tidalbeat/tidalbeat/features"
	"github.com/tidalbeat/tidalbeat/features/recording"
	"github.com/tidalbeat/tidalbeat/internal/sim"
)

func main() {
	out := flag.String("o", "cohort", "dataset directory")
	flag.Parse()
	if err := run(*out, flag.Args(), os.Stdout); err != nil {
		fmt.Fprintln(os.Stderr, "cohortparquet:", err)
		os.Exit(1)
	}
}

// runners simulates the demo cohort.
func runners() ([]*recording.Recording, error) {
	var recs []*recording.Recording
	for i, cadence := range []float64{158, 166, 174} {
		a, err := sim.AccelSimulate([]sim.AccelSegment{
			{Activity: sim.AccelSitting, DurationS: 240},
			{Activity: sim.AccelRunning, DurationS: 360, CadenceSPM: cadence},
		}, sim.AccelConfig{Seed: uint64(i + 1)})
		if err != nil {
			return nil, err
		}
		e, err := sim.ECGSimulate(sim.ECGConfig{DurationS: 600, MeanHR: 64 + 6*float64(i), RSAFraction: 0.04, NoisemV: 0.02, Seed: uint64(i + 1)})
		if err != nil {
			return nil, err
		}
		rec := &recording.Recording{Name: fmt.Sprintf("runner%02d", i+1), Start: time.Date(2026, 6, 1+i, 6, 0, 0, 0, time.UTC), StartKnown: true}
		rec.Channels = []recording.Channel{
			{Name: "ECG", Unit: "mV", RateHz: e.RateHz, Samples: e.Samples, Role: recording.RoleECG},
			{Name: "ax", Unit: "g", RateHz: a.RateHz, Samples: a.X, Role: recording.RoleAccX},
			{Name: "ay", Unit: "g", RateHz: a.RateHz, Samples: a.Y, Role: recording.RoleAccY},
			{Name: "az", Unit: "g", RateHz: a.RateHz, Samples: a.Z, Role: recording.RoleAccZ},
		}
		recs = append(recs, rec)
	}
	return recs, nil
}

// run extracts every record concurrently and writes one partition each.
func run(dir string, paths []string, w io.Writer) error {
	var recs []*recording.Recording
	if len(paths) == 0 {
		var err error
		if recs, err = runners(); err != nil {
			return err
		}
	}
	for _, p := range paths {
		r, err := recording.Open(p)
		if err != nil {
			return err
		}
		recs = append(recs, r)
	}
	tables := make([]*features.Table, len(recs))
	errs := make([]error, len(recs))
	var wg sync.WaitGroup
	for i, r := range recs {
		wg.Add(1)
		go func() {
			defer wg.Done()
			tables[i], errs[i] = features.Extract(r, features.Config{})
		}()
	}
	wg.Wait()
	cols := features.UnionColumns(tables...) // one schema for every partition
	for i, t := range tables {
		if errs[i] != nil {
			return errs[i]
		}
		part := filepath.Join(dir, "record="+t.Record)
		if err := os.MkdirAll(part, 0o755); err != nil {
			return err
		}
		f, err := os.Create(filepath.Join(part, "part-0.parquet"))
		if err != nil {
			return err
		}
		pw, err := features.NewWriter(f, features.Parquet, cols, features.WriteOptions{NoRecord: true})
		if err == nil {
			err = pw.Write(t)
			if cerr := pw.Close(); err == nil {
				err = cerr
			}
		}
		if cerr := f.Close(); err == nil {
			err = cerr
		}
		if err != nil {
			return err
		}
		fmt.Fprintf(w, "%s: %d rows\n", part, len(t.Rows))
	}
	cfg, err := features.Config{}.Resolved() // the defaults, written out in full
	if err != nil {
		return err
	}
	return features.WriteSidecar(dir, features.Meta{Config: cfg, Records: recordNames(tables), Columns: cols})
}

func recordNames(ts []*features.Table) []string {
	var out []string
	for _, t := range ts {
		out = append(out, t.Record)
	}
	return out
}
