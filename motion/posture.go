package motion

import (
	"fmt"
	"math"
)

// Posture is the body posture read from the gravity vector of a chest-worn
// sensor.
type Posture int

// Postures. Lying postures are told apart by which body axis gravity lies
// along; the rules are common practice (methods reference section 6.4, no
// source) with the lying threshold configurable.
const (
	PostureUnknown Posture = iota // no valid data
	PostureUpright                // standing, sitting or walking: up axis within LyingDeg of vertical
	PostureSupine                 // lying on the back
	PostureProne                  // lying face down
	PostureLeft                   // lying on the left side
	PostureRight                  // lying on the right side
)

// String returns the label used in tables: "upright", "supine", "prone",
// "left", "right" or "unknown".
func (p Posture) String() string {
	switch p {
	case PostureUnknown:
		return "unknown"
	case PostureUpright:
		return "upright"
	case PostureSupine:
		return "supine"
	case PostureProne:
		return "prone"
	case PostureLeft:
		return "left"
	case PostureRight:
		return "right"
	}
	return fmt.Sprintf("Posture(%d)", int(p))
}

// Lying reports whether p is one of the lying postures.
func (p Posture) Lying() bool { return p >= PostureSupine && p <= PostureRight }

// Inclination returns the angle in degrees between the body's up axis and
// the measured gravity reaction (up, left, forward in g, body axes):
// arccos(up/|g|) (derived, methods reference 6.4). It is NaN for a zero or
// non-finite vector.
func Inclination(up, left, forward float64) float64 {
	n := math.Sqrt(up*up + left*left + forward*forward)
	if !(n > 0) || math.IsInf(n, 0) {
		return math.NaN()
	}
	c := math.Max(-1, math.Min(1, up/n))
	return math.Acos(c) * 180 / math.Pi
}

// AxisAngle returns the angle in degrees between the horizontal plane and
// device axis a3 given gravity components a1, a2, a3 (g):
// arctan(a3/sqrt(a1^2 + a2^2)), the "z-angle" of wrist-worn sleep studies
// when a3 is the z axis (van Hees et al. 2018, Sci Rep; methods reference
// 6.4). NaN for a zero vector.
func AxisAngle(a1, a2, a3 float64) float64 {
	h := math.Hypot(a1, a2)
	if h == 0 && a3 == 0 || math.IsNaN(h) || math.IsNaN(a3) {
		return math.NaN()
	}
	return math.Atan2(a3, h) * 180 / math.Pi
}

// ClassifyPosture returns the posture for a gravity reaction vector in body
// axes (up, left, forward, any scale) with lyingDeg the inclination beyond
// which the wearer is lying (60° when zero, common practice).
func ClassifyPosture(up, left, forward, lyingDeg float64) Posture {
	if lyingDeg == 0 {
		lyingDeg = 60
	}
	return classify(up, left, forward, lyingDeg)
}

func classify(up, left, forward, lyingDeg float64) Posture {
	inc := Inclination(up, left, forward)
	switch {
	case math.IsNaN(inc):
		return PostureUnknown
	case inc < lyingDeg:
		return PostureUpright
	case math.Abs(forward) >= math.Abs(left):
		if forward >= 0 {
			return PostureSupine // chest faces up
		}
		return PostureProne
	case left < 0:
		return PostureLeft // the left side is down, so "up" points to the wearer's right
	default:
		return PostureRight
	}
}
