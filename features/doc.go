// Package features composes the modality packages and the window engine into
// one time-aligned feature table per recording, in batch or as a stream, and
// owns the output formats. Signal processing lives in ecg, resp and motion.
package features
