// Package features composes the modality packages and the window engine into
// one time-aligned feature table per recording, in batch or as a stream, and
// owns the output formats. Signal processing lives in ecg, resp and motion;
// window boundaries come from package window.
//
// # API summary
//
//	tab, err := features.Extract(rec, features.Config{})   // *recording.Recording -> *Table
//	s, err := features.NewStream(hdr, cfg)                  // live: s.Push(ch, samples); s.Ready(); s.Close()
//	features.WriteFile("out.parquet", features.WriteOptions{}, tab)  // .csv, .jsonl, .parquet by extension
//	features.WriteSidecar("out.parquet", features.Meta{...})         // out.parquet.meta.json
//	labels, err := features.ReadLabelsCSV(r)                // start,end,label (RFC 3339 UTC) -> Config.Labels
//
// A Table has Columns (name, kind, family, doc) and Rows; each Row has Seq
// (grid index since the anchor), Time (UTC window end = row time), Offset
// (seconds from the recording start) and one value per column in Values
// (NaN = empty) or Texts. Tables are written with the fixed columns record,
// time_utc, t_s and seq first (FixedColumns).
//
// # Rows and windows
//
// Rows sit on a grid every Config.Step (30 s) anchored to the Unix epoch, so
// rows of different recordings and families join on time. Each family has
// its own window ending at the row time: HRV 5 min (Task Force 1996),
// breathing 60 s and activity 30 s (common practice, methods reference 7),
// each a window.Grid sharing the step and anchor. Every family writes
// <family>_coverage_frac and <family>_reason beside its values; the counts
// behind the values (hrv_n_nn, activity_n_samples, ...) are columns too. A
// family whose channels are missing keeps its columns empty with the reason
// ("no ECG channel", "family not available"); it is not an error.
//
// # Labels
//
// Non-beat annotations (WFDB rhythm changes and events, EDF+ annotations) and
// Config.Labels (for example from a CSV of UTC intervals) become three
// columns per label: label_<name>_overlap_frac (over Config.LabelSpan before
// the row time), label_<name>_since_s and label_<name>_until_s.
//
// # Batch and streaming
//
// Extract and Stream call the same per-window cores through the window
// engine's batch and streaming drivers, and the modality packages' own
// batch/stream pairs; for the same samples their rows are identical (tested
// over random chunkings).
//
// Research software, not a medical device.
package features
