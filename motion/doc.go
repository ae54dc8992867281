// Package motion turns 3-axis acceleration into per-epoch activity measures:
// ENMO, MAD, activity counts, intensity, posture, steps and non-wear.
// It does not write tables or open files; package features does that.
package motion
