package recording

import (
	"strings"
	"unicode"
)

// GuessRole guesses a channel's role from its name and unit. The rules are
// common practice for channel labels in PhysioNet, EDF and wearable exports:
//
//   - ECG: names starting with ECG or EKG, the limb and augmented leads
//     (I, II, III, aVR, aVL, aVF), modified limb leads (MLI, MLII, MLIII) and
//     precordial leads (V1...V6, V), or any name containing "ecg".
//   - rib-cage band: names with "chest", "thorax", "thor", "rib", "rc" as a
//     word, or "resp" with "chest"/"thor".
//   - abdominal band: names with "abdo", "abd", "abdomen", "ab" as a word.
//   - accelerometer: acc_x, accx, "acc x", x_acc, accel_x, ax (and y, z).
//   - SpO2: names containing "spo2", "sao2" or "oxygen saturation".
//
// Anything else is RoleUnknown. The unit decides only for bare names: a lead
// name (II, V5) must be in a voltage unit to be ECG, and a bare x, y or z in
// an acceleration unit (g, mg, m/s2) is an accelerometer axis.
func GuessRole(name, unit string) Role {
	n := strings.ToLower(strings.TrimSpace(name))
	words := strings.FieldsFunc(n, func(r rune) bool { return !unicode.IsLetter(r) && !unicode.IsDigit(r) })
	has := func(w string) bool {
		for _, x := range words {
			if x == w {
				return true
			}
		}
		return false
	}
	compact := strings.Join(words, "")
	switch {
	case strings.Contains(n, "spo2") || strings.Contains(n, "sao2") || strings.Contains(n, "oxygen saturation"):
		return RoleSpO2
	case strings.Contains(n, "ecg") || strings.Contains(n, "ekg"):
		return RoleECG
	}
	if r, ok := accRole(words, compact); ok {
		return r
	}
	switch {
	case strings.Contains(n, "abdo") || has("abd") || has("ab") || strings.Contains(n, "abdomen"):
		return RoleAbdomen
	case strings.Contains(n, "chest") || strings.Contains(n, "thor") || strings.Contains(n, "rib") || has("rc"):
		return RoleRibCage
	}
	if len(words) == 1 && len(words[0]) == 1 && isAccelUnit(unit) {
		if r, ok := accRole([]string{"acc", words[0]}, ""); ok {
			return r // "x" in m/s2
		}
	}
	if len(words) == 1 && isLeadName(words[0]) {
		u := strings.ToLower(strings.TrimSpace(unit))
		if u == "" || strings.HasSuffix(u, "v") {
			return RoleECG
		}
	}
	return RoleUnknown
}

func isAccelUnit(u string) bool {
	switch strings.ToLower(strings.ReplaceAll(strings.TrimSpace(u), " ", "")) {
	case "g", "mg", "m/s2", "m/s^2", "m/s²", "ms-2", "m*s-2":
		return true
	}
	return false
}

func isLeadName(w string) bool {
	switch w {
	case "i", "ii", "iii", "avr", "avl", "avf", "mli", "mlii", "mliii", "v", "v1", "v2", "v3", "v4", "v5", "v6", "ml", "lead":
		return true
	}
	return false
}

// accRole recognises accelerometer axis labels: an accelerometer word
// (acc, accel, acceleration, accelerometer) next to an axis letter, as in
// acc_x, "chest acc x", x_acc, "Accel Z", or fused (accx, xacc), and the bare
// ax, ay, az.
func accRole(words []string, compact string) (Role, bool) {
	axis := func(w string) (Role, bool) {
		switch w {
		case "x":
			return RoleAccX, true
		case "y":
			return RoleAccY, true
		case "z":
			return RoleAccZ, true
		}
		return RoleUnknown, false
	}
	isAcc := func(w string) bool {
		switch w {
		case "acc", "accel", "acceleration", "accelerometer", "accelerometry":
			return true
		}
		return false
	}
	for i, w := range words {
		if isAcc(w) {
			if i+1 < len(words) {
				if r, ok := axis(words[i+1]); ok {
					return r, true
				}
			}
			if i > 0 {
				if r, ok := axis(words[i-1]); ok {
					return r, true
				}
			}
		}
		for _, pre := range []string{"accelerometer", "acceleration", "accel", "acc"} {
			if len(w) == len(pre)+1 && strings.HasPrefix(w, pre) {
				if r, ok := axis(w[len(pre):]); ok {
					return r, true
				}
			}
			if len(w) == len(pre)+1 && strings.HasSuffix(w, pre) {
				if r, ok := axis(w[:1]); ok {
					return r, true
				}
			}
		}
	}
	if len(words) == 1 && len(compact) == 2 && compact[0] == 'a' {
		return axis(compact[1:])
	}
	return RoleUnknown, false
}
