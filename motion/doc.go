// Package motion turns 3-axis acceleration into per-epoch activity measures:
// ENMO, MAD, activity counts, intensity class, posture and inclination,
// steps and cadence, posture changes, non-wear periods and a motion-artefact
// flag that ECG and respiration quality scores can use.
//
// Input is three device axes in g or m/s^2 (9.80665 m/s^2 per g), uniformly
// sampled at 10 to 500 Hz, sample i at i/rate seconds from the recording
// start. The sensor is taken to be worn on the chest with the device +y axis
// toward the head, +x toward the wearer's left and +z out of the chest;
// Options.Mount sets any other orientation. NaN or infinite samples are kept,
// flagged and treated as gaps; nothing is dropped.
//
// The work is split the way the rest of Tidalbeat is:
//
//   - Derive runs one causal per-sample core (unit conversion, optional
//     calibration, mounting, count band-pass, step detector, gravity
//     tracking) and returns per-sample records (Sample) with the step times
//     and posture-change events.
//   - Summarize is the pure per-window function: it turns the samples of one
//     window of the shared engine (package window) into an Epoch. Package
//     features calls it for its own grids; EpochsOf and Epochs call it for
//     consecutive epochs; Stream feeds the same core and the same Summarize
//     through the engine's streaming driver, so live and batch results are
//     identical (tested over random chunkings).
//   - Calibrate (auto-calibration against gravity, after van Hees et al. 2014)
//     is a batch helper; NonWear (after van Hees et al. 2011 and 2013) finds
//     non-wear periods in batch and NonWearStream in bounded memory from
//     chunks (per-block per-axis statistics, the same periods for any
//     chunking). NonWearStream also gives the causal live reading
//     TrailingFrac, which package features reports per window as
//     nonwear_frac. All run their windows through the same engine.
//
// Measures and their sources: ENMO after van Hees et al., PLoS One 8(4):e61691,
// 2013; MAD after Vähä-Ypyä et al., Clin Physiol Funct Imaging 35(1):64-70,
// 2015, with intensity cut-points 91 and 414 mg from Vähä-Ypyä et al., PLoS
// One 10(8):e0134813, 2015, which were validated for hip-worn sensors in adults
// and not for the chest (they are options). Activity counts are Tidalbeat's
// own: a documented band-pass, rectify, dead-band, clip and integrate pipeline
// reported as proportional integration, zero crossings and time above
// threshold (CountOptions gives every constant and its provenance). They are
// not equal to, and must not be compared with, any device's proprietary
// counts or the cut-points defined for those.
//
// The package does not write tables or open files (package features and the
// command line do), and it does not resample: irregular phone time stamps
// must be put on a uniform grid first.
//
// Research software, not a medical device: alarms or decisions built on these
// measures need clinical validation and must defer to local regulation and
// licensed practice.
package motion
