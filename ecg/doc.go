// Package ecg turns a single-lead ECG into R-peak times, a cleaned NN series
// with every correction counted, and per-window signal-quality indices.
//
// Detection (Detect, Detector) is the Pan-Tompkins algorithm (Pan and
// Tompkins, IEEE Trans Biomed Eng 32(3):230-236, 1985) run at the signal's
// own rate, 100 to 1000 Hz, on either polarity: causal conditioning
// (baseline high-pass, 50/60 Hz notches, 5-15 Hz detection band), 5-point
// derivative, squaring, 150 ms moving-window integration, dual adaptive
// thresholds on the integrated and band-passed signals, search-back at 166 %
// of RR average 2, T-wave discrimination by slope, a 200 ms refractory period
// and the irregular-rhythm rule, with a learning phase at the start and after
// every gap. R-peaks are refined to the extremum of the conditioned signal,
// with parabolic sub-sample interpolation up to and including 250 Hz
// (Options.InterpMaxHz). NaN samples, flat
// lines and saturation are gaps. The streaming Detector and the batch Detect
// share one core and give identical beats for any chunking.
//
// MatchBeats and Summarize score detections against reference annotations
// beat by beat (150 ms matching). CleanRR turns beat times into an NN series
// with the time-varying thresholds of Lipponen and Tarvainen (2019), or a
// percentage rule, and counts and flags every change. WindowQuality computes
// the signal-quality indices of one window, including the bSQI agreement
// with DetectEnvelope, a second detector of independent design.
//
// Inputs are in mV and seconds; RR and NN are in ms. The package does not
// read files, window or aggregate: package features does that with the
// shared window engine. Research software, not a medical device: beats and
// quality flags are not validated for clinical decisions.
package ecg
