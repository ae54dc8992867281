package main

import (
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"strings"
	"time"

	"github.com/tidalbeat/tidalbeat/features/recording"
	"github.com/tidalbeat/tidalbeat/motion"
	"github.com/tidalbeat/tidalbeat/window"
)

func init() {
	register(subcommand{name: "activity", summary: "per-epoch steps, cadence, ENMO, MAD, counts, intensity and posture from a 3-axis accelerometer", run: runActivity})
}

// runActivity implements:
// tidalbeat activity RECORD [-x NAME -y NAME -z NAME] [-epoch 30s] [-o FILE]
// [-unit g|m/s2] [-mount +y,+x,+z] [-calibrate] [-range G].
func runActivity(args []string, stdout, stderr io.Writer) error {
	fs := newFlags("activity", stderr)
	xn := fs.String("x", "", "channel `NAME` of the x axis (default: the channel whose role is acc x)")
	yn := fs.String("y", "", "channel `NAME` of the y axis (default: the acc y channel)")
	zn := fs.String("z", "", "channel `NAME` of the z axis (default: the acc z channel)")
	epoch := fs.Duration("epoch", 30*time.Second, "epoch length; epochs are consecutive and aligned to UTC multiples of it")
	out := fs.String("o", "", "output CSV `FILE` (default standard output)")
	unit := fs.String("unit", "", "unit of the samples, g or m/s2 (default: from the channel, g when it has none)")
	mount := fs.String("mount", "", "device axes pointing up, left and forward on the body, e.g. +y,+x,+z (the default chest mounting)")
	calibrate := fs.Bool("calibrate", false, "auto-calibrate offset and scale against gravity from still periods first")
	rangeG := fs.Float64("range", 0, "sensor full-scale range in `g`, to flag saturated samples (0: unknown)")
	fs.Usage = func() {
		fmt.Fprintln(stderr, "usage: tidalbeat activity RECORD [-x NAME -y NAME -z NAME] [-epoch 30s] [-o FILE]")
		fmt.Fprintln(stderr, "Writes one CSV row per epoch (units in the column names) and prints the total step count on standard error.")
		fmt.Fprintln(stderr, "Activity counts are Tidalbeat's own (band-pass, rectify, integrate), not any device's proprietary counts.")
		fs.PrintDefaults()
	}
	pos, err := parseInterspersed(fs, args)
	if err != nil {
		return err
	}
	if len(pos) != 1 {
		return fmt.Errorf("%w: activity takes one RECORD, got %d arguments", errUsage, len(pos))
	}
	if *epoch <= 0 {
		return fmt.Errorf("%w: -epoch %v must be positive", errUsage, *epoch)
	}
	if math.IsNaN(*rangeG) || *rangeG < 0 {
		return fmt.Errorf("%w: -range %v", errUsage, *rangeG)
	}
	opts := motion.Options{RangeG: *rangeG}
	if *mount != "" {
		m, err := parseMount(*mount)
		if err != nil {
			return fmt.Errorf("%w: -mount: %v", errUsage, err)
		}
		opts.Mount = m
	}
	rec, err := recording.Open(pos[0])
	if err != nil {
		return err
	}
	axes, err := activityAxes(rec, *xn, *yn, *zn)
	if err != nil {
		return err
	}
	rate := axes[0].RateHz
	if rate < motion.MinRateHz || rate > motion.MaxRateHz {
		return fmt.Errorf("accelerometer at %g Hz, outside %d..%d Hz (for CSV input, check the unit of the time column, e.g. a header \"timestamp[ms]\"): %w",
			rate, motion.MinRateHz, motion.MaxRateHz, motion.ErrInput)
	}
	for _, c := range axes[1:] {
		if c.RateHz != rate {
			return fmt.Errorf("accelerometer channels %q at %v Hz and %q at %v Hz: resample them to one rate first", axes[0].Name, rate, c.Name, c.RateHz)
		}
	}
	u := *unit
	if u == "" {
		u = axes[0].Unit
		for _, c := range axes[1:] {
			if c.Unit != u {
				return fmt.Errorf("accelerometer channels in different units (%q, %q): set -unit", u, c.Unit)
			}
		}
		if u == "" {
			fmt.Fprintln(stderr, "activity: channels carry no unit; assuming g (set -unit m/s2 if not)")
		}
	}
	if opts.Unit, err = motion.ParseUnit(u); err != nil {
		if *unit != "" {
			return fmt.Errorf("%w: -unit: %v", errUsage, err)
		}
		return fmt.Errorf("channel unit %q is not an acceleration unit (set -unit): %w", u, err)
	}
	n := min(len(axes[0].Samples), len(axes[1].Samples), len(axes[2].Samples))
	if m := max(len(axes[0].Samples), len(axes[1].Samples), len(axes[2].Samples)); m != n {
		fmt.Fprintf(stderr, "activity: axes hold %d, %d and %d samples; using the first %d of each (%.1f s dropped from the longest)\n",
			len(axes[0].Samples), len(axes[1].Samples), len(axes[2].Samples), n, float64(m-n)/rate)
	}
	x, y, z := axes[0].Samples[:n], axes[1].Samples[:n], axes[2].Samples[:n]
	if *calibrate {
		cal, err := motion.Calibrate(x, y, z, rate, opts.Unit, motion.CalibrationOptions{})
		switch {
		case errors.Is(err, motion.ErrCalibration):
			fmt.Fprintf(stderr, "activity: not calibrated: %v\n", err)
		case err != nil:
			return err
		default:
			opts.Calibration = cal
			fmt.Fprintf(stderr, "activity: calibrated from %d still windows (sphere error %.1f -> %.1f mg)\n", cal.Points, cal.ErrorBeforeMg, cal.ErrorAfterMg)
		}
	}
	tr, err := motion.Derive(x, y, z, rate, opts)
	if err != nil {
		return err
	}
	var gaps []window.Interval
	for _, c := range axes {
		gaps = append(gaps, c.Gaps...)
	}
	spec := window.Spec{Length: *epoch, Step: *epoch}
	origin := rec.Start
	if !rec.StartKnown {
		spec.Anchor = window.AnchorStart
		fmt.Fprintln(stderr, "activity: the record gives no start time; epochs count from its first sample and epoch_start_utc is relative to year 1")
	}
	epochs, err := motion.EpochsOf(tr, origin, spec, gaps, opts)
	if err != nil {
		return err
	}
	nonwear, err := motion.NonWear(x, y, z, rate, opts.Unit, motion.NonWearOptions{})
	if err != nil {
		return err
	}
	w := stdout
	var f *os.File
	if *out != "" {
		if f, err = os.Create(*out); err != nil {
			return err
		}
		defer f.Close()
		w = f
	}
	cw := csv.NewWriter(w)
	if err := cw.Write(append(motion.Columns(), "nonwear")); err != nil {
		return err
	}
	for _, e := range epochs {
		if err := cw.Write(append(e.Values(), fmt.Sprint(inAnyInterval((e.Start+e.End)/2, nonwear)))); err != nil {
			return err
		}
	}
	cw.Flush()
	if err := cw.Error(); err != nil {
		return err
	}
	if f != nil {
		if err := f.Close(); err != nil {
			return err
		}
	}
	fmt.Fprintf(stderr, "total steps: %d\n", len(tr.StepTimes))
	return nil
}

// activityAxes returns the x, y and z channels, by name when given, else by
// role.
func activityAxes(rec *recording.Recording, names ...string) ([3]*recording.Channel, error) {
	var axes [3]*recording.Channel
	roles := []recording.Role{recording.RoleAccX, recording.RoleAccY, recording.RoleAccZ}
	for k, name := range names {
		var ok bool
		if name != "" {
			if axes[k], ok = rec.ChannelByName(name); !ok {
				return axes, fmt.Errorf("%w: no channel named %q in %s (channels: %s)", errUsage, name, rec.Name, channelNames(rec))
			}
			continue
		}
		if axes[k], ok = rec.Channel(roles[k]); !ok {
			return axes, fmt.Errorf("%w: no %s channel recognised in %s: name them with -x, -y, -z (channels: %s)", errUsage, roles[k], rec.Name, channelNames(rec))
		}
	}
	for k := range axes {
		if len(axes[k].Samples) == 0 {
			return axes, fmt.Errorf("channel %q of %s holds no samples", axes[k].Name, rec.Name)
		}
	}
	return axes, nil
}

func channelNames(rec *recording.Recording) string {
	var s []string
	for _, c := range rec.Channels {
		s = append(s, fmt.Sprintf("%q", c.Name))
	}
	if len(s) == 0 {
		return "none"
	}
	return strings.Join(s, ", ")
}

// parseMount reads "+y,+x,+z": the device axes pointing up, left, forward.
func parseMount(s string) (motion.Mount, error) {
	parts := strings.Split(s, ",")
	if len(parts) != 3 {
		return motion.Mount{}, fmt.Errorf("%q: want three signed axes such as +y,+x,+z", s)
	}
	table := map[string]motion.Axis{"+x": motion.PosX, "x": motion.PosX, "-x": motion.NegX, "+y": motion.PosY, "y": motion.PosY,
		"-y": motion.NegY, "+z": motion.PosZ, "z": motion.PosZ, "-z": motion.NegZ}
	var a [3]motion.Axis
	for k, p := range parts {
		v, ok := table[strings.ToLower(strings.TrimSpace(p))]
		if !ok {
			return motion.Mount{}, fmt.Errorf("%q: axis %q is not one of +x -x +y -y +z -z", s, p)
		}
		a[k] = v
	}
	m := motion.Mount{Up: a[0], Left: a[1], Forward: a[2]}
	return m, m.Validate()
}

func inAnyInterval(t float64, iv []window.Interval) bool {
	for _, v := range iv {
		if t >= v.Start && t < v.End {
			return true
		}
	}
	return false
}
