// Package ecg turns a single-lead ECG into R-peak times, a cleaned NN series
// with every correction counted, and per-window signal-quality indices.
// It does not window or aggregate features; package features does that.
package ecg
