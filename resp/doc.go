// Package resp turns respiratory inductance bands (rib cage and abdomen) into
// breaths: calibration, breath segmentation, per-breath timing and volume,
// thoraco-abdominal coordination and candidate apnea/hypopnea events, plus
// ECG-derived respiration and respiratory sinus arrhythmia from beat times.
// It does not write tables or open files; package features does that, and
// the window engine (package window) does the windowing: Summarize is the
// pure per-window function features calls, Windows a batch convenience.
//
// Data flow: band samples (both at one rate, 10-500 Hz) -> Detect or Stream
// (one core: identical breaths for any chunking) -> Result (breaths, pause
// excursions, gaps) -> DetectEvents or EventStream (one core again) ->
// Summarize per window.
//
// Volumes. Without calibration the bands are summed with equal weights and
// every volume is in arbitrary units (fields and columns named AU / _au).
// QDC (Sackner et al. 1989) gives a relative rib-cage weight from natural
// breathing; it is exact only for constant tidal volume, depends on the
// breath-selection rule otherwise and is posture-specific (De Groote et al.
// 2001): the caveat travels in QDCResult and Calibration. Litres (fields and
// columns named L / _l) exist only after an absolute calibration against
// reference volumes (FitVolume, FitWeights, CalibrateAbsolute).
//
// Events are candidates. The AASM amplitude and duration criteria (Berry et
// al. 2012) are applied to the band sum, but AASM hypopnea scoring also needs
// an oxygen desaturation or an arousal, which bands alone do not give; an
// SpO2 series, when supplied, is used for the desaturation criterion.
// Arousals are never available here. An event is known only after the
// breathing has recovered (EventOptions.RecoveryS), so a live caller holds
// rows back by that much.
//
// Tidalbeat is research software, not a medical device: alarms or decisions
// built on it need clinical validation and must defer to local regulation and
// licensed practice.
package resp
