// Package hrv computes heart-rate variability from a normal-to-normal (NN)
// interval series: the time-domain and frequency-domain measures of the
// Task Force of the ESC and NASPE ("Heart rate variability: standards of
// measurement, physiological interpretation, and clinical use", Circulation
// 93(5):1043-1065, 1996), Poincare descriptors, sample and approximate
// entropy and detrended fluctuation analysis.
//
// Metrics are plain functions over slices of NN intervals in milliseconds
// (RMSSD, SDNN, SampleEntropy, DFA, Spectrum, ...). Compute evaluates the full
// set for one window and reports, beside every value, the number of
// intervals used, their coverage of the window and the fraction corrected
// upstream; a value that is not defined for the data is NaN with a reason,
// never 0. Windowed and Stream run Compute over the windows of package
// window, in batch or live, with identical numbers. Columns and
// Metrics.Values give the table columns (units in every name) so that
// package features writes rows without knowing HRV.
//
// The package does not detect beats or correct ectopic beats (package ecg
// does), does not read files and writes no tables. It is research software,
// not a medical device: decisions built on these numbers need clinical
// validation and must defer to local regulation and licensed practice.
//
// Conventions: NN in ms at the API; times in seconds from the recording
// start; the time of an interval is the time of the beat that ends it.
package hrv
