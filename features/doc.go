// Package features composes the modality packages and the window engine into
// one time-aligned feature table per recording, in batch or as a stream, and
// owns the output formats. Signal processing lives in ecg, resp and motion;
// window boundaries come from package window; files are read by
// features/recording.
//
// # API summary
//
//	tab, err := features.Extract(rec, features.Config{})        // *recording.Recording -> *Table
//	s, err := features.NewStream(hdr, cfg)                       // live: s.Gap(ch, iv); s.Push(ch, samples); for r := range s.Ready() {...}; s.Close()
//	cols, err := features.WriteFile("t.parquet", features.WriteOptions{}, tab, tab2)  // .csv, .jsonl/.ndjson, .parquet by extension
//	w, err := features.NewWriter(out, features.Parquet, cols, opt)  // w.Write(tab); w.Close()  (one schema, many tables)
//	err = features.WriteSidecar("t.parquet", features.Meta{Config: resolved, Inputs: hashes})  // t.parquet.meta.json
//	files, _ := features.RecordFiles(path); hashes, _ := features.HashFiles(files...)         // SHA-256 of the inputs
//	labels, err := features.ReadLabelsCSV(r)                     // start,end,label (RFC 3339) -> Config.Labels
//
// A Table has Columns (Name, Kind, Family, Doc) and Rows; a Row has Seq (grid
// index since the anchor), Time (UTC window end, the row time), Offset
// (seconds from the recording start) and one entry per column in Values
// (Float and Int columns; NaN = empty) or Texts (Text columns; "" = empty).
// Table.Float(name) and Table.Strings(name) return a column. Written tables
// start with the fixed columns record, time_utc, t_s and seq
// (FixedColumns); NaN is written as an empty field (CSV) or null (JSON
// Lines, Parquet), always with the family's reason column beside it.
//
// # Rows and windows
//
// Rows sit on a grid every Config.Step (30 s) anchored to the Unix epoch, so
// rows of different recordings and families join on time: the first row is
// the first grid time after the start, the last the first at or after the
// end. Each family has its own window ending at the row time, a window.Grid
// sharing the step and anchor:
//
//   - hrv, 5 min (Task Force 1996): beats from ecg.Detect on the ECG channel
//     (or the record's beat annotations, Config.BeatsAnnotator); NN cleaning
//     by ecg.CleanRR once per step in a context of at least 60 s (whole
//     steps) on each side;
//     hrv.Compute per window, its Columns used verbatim (rmssd_ms, ...).
//   - ecg_quality, one step: ecg.WindowQuality (lead-off, flat, kSQI, sSQI,
//     pSQI, basSQI, bSQI) over the last step, present whenever beats are
//     detected.
//   - breathing, 60 s (common practice, methods reference 7): resp.Detect
//     breaths, candidate events in a 150 s / 90 s context, resp.Summarize
//     columns verbatim (resp_rate_per_min, ve_au_min, ...). Bands are not
//     calibrated, so litre columns stay empty with resp's reason.
//   - activity, 30 s (common practice): motion.Derive and motion.EpochsOf,
//     with motion's column names (enmo_mg, n_steps, ...).
//
// Every family writes <family>_coverage_frac and <family>_reason, and the
// counts behind its values (hrv_n_beats, hrv_n_nn, resp_n_breaths,
// activity_n_samples, ...), counts even for windows below the coverage
// minimum. A family whose channels are missing keeps its columns empty with
// the reason ("no ECG channel", "no respiratory band"); that is not an
// error. Channel roles come from the recording and Config.Roles overrides
// them by channel name.
//
// # Labels
//
// Non-beat annotations (WFDB rhythm changes become intervals until the next
// change; EDF+ annotations keep their duration) and Config.Labels (for
// example from ReadLabelsCSV) become three columns per label name:
// label_<name>_overlap_frac over Config.LabelSpan (one step) before the row
// time, label_<name>_since_s (since the last event ended, at or before the
// row time) and label_<name>_until_s (until the next one starts, after the
// row time); empty when there is no such event.
//
// # Batch and streaming
//
// Extract and Stream call the same per-window cores through the window
// engine's batch and streaming drivers, and the modality packages' own
// batch/stream pairs (ecg.Detect/ecg.Detector, resp.Detect/resp.Stream,
// motion.Derive/motion.Stream); for the same samples their rows are
// identical, bit for bit (tested over random chunkings). In batch the
// families and their windows run concurrently.
//
// Latency: a row is released by the Push that completes the last of its
// windows. After the row time, activity waits for motion's undecided step
// run (about a second), ECG quality for the beat detector's decision delay
// (ecg.Detector.Latency plus 1 s), HRV for that delay and the cleaning
// context (60 s at the default step), breathing for resp's 120-s breath
// buffer and the 90-s event context (about 3.5 min). Each Push costs tens of
// microseconds (BenchmarkStreamDay: push_us).
//
// Memory: batch holds the recording plus the per-sample motion trace and
// the beat and breath lists (BenchmarkExtractDay, peak_heap_MB: about 0.7
// GiB for a 24-hour ECG + bands + accelerometer recording, the recording
// itself 0.35 GiB). A Stream keeps only open windows and their context: its
// heap after a GC is under 1 MB and does not grow with the hours pushed
// (BenchmarkStreamDay: hour1_heap_MB, max_heap_MB), provided every channel
// is pushed (push NaN for lost samples).
//
// Research software, not a medical device: anything built on these
// features needs clinical validation and must defer to local regulation and
// licensed practice.
package features
