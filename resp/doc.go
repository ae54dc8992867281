// Package resp turns respiratory inductance bands (rib cage and abdomen) into
// breaths: calibration, breath segmentation, per-breath timing and volume,
// thoraco-abdominal coordination and candidate apnea/hypopnea events.
// It does not write tables or open files; package features does that.
package resp
