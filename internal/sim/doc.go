// Package sim is Tidalbeat's deterministic physiology simulator, shared by
// tests and the demo: ECG waveforms with known R-peaks and beat types,
// respiratory bands with known breaths, accelerometry with known steps and
// postures, and the demo day that schedules them. Every generator takes an
// explicit seed and returns the ground truth it was built from. Simulated
// data is for tests and the demo only; it is not physiology to learn from.
package sim
