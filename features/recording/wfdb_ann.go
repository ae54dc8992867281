package recording

import (
	"bufio"
	"fmt"
	"io"
	"math"
	"os"
	"strconv"
	"strings"
)

// MIT annotation format (WFDB annotation files, PhysioNet documentation,
// from memory): a sequence of 16-bit little-endian words, each with a 6-bit
// type A in the high bits and a 10-bit field I in the low bits. A is an
// annotation code (1..49) and I the time since the previous annotation in
// samples, or A is one of the pseudo-codes below that modify the stream;
// the word 0 ends the file.
const (
	annSKIP = 59 // next 4 bytes: a 32-bit interval (high 16-bit word first), added to the time
	annNUM  = 60 // I is the num field of the preceding annotation (persists)
	annSUB  = 61 // I is the subtype of the preceding annotation
	annCHN  = 62 // I is the channel of the preceding annotation (persists)
	annAUX  = 63 // I bytes of auxiliary text follow, padded to an even count
	annMax  = 49 // largest annotation code (ACMAX)
)

// wfdbMnemonics holds the standard mnemonic of each annotation code (WFDB
// ecgcodes table, PhysioNet annotation documentation, from memory); codes
// without one (0, 15, 17, 42-49) are written as their decimal number.
var wfdbMnemonics = [annMax + 1]string{
	1: "N", 2: "L", 3: "R", 4: "a", 5: "V", 6: "F", 7: "J", 8: "A", 9: "S", 10: "E",
	11: "j", 12: "/", 13: "Q", 14: "~", 16: "|", 18: "s", 19: "T", 20: "*",
	21: "D", 22: "\"", 23: "=", 24: "p", 25: "B", 26: "^", 27: "t", 28: "+", 29: "u", 30: "?",
	31: "!", 32: "[", 33: "]", 34: "e", 35: "n", 36: "@", 37: "x", 38: "f", 39: "(", 40: ")", 41: "r",
}

// beatCodes are the mnemonics of QRS (beat) annotations: the WFDB
// beat-annotation code table (PhysioNet annotation documentation, from
// memory).
var beatCodes = map[string]bool{
	"N": true, "L": true, "R": true, "a": true, "V": true, "F": true, "J": true, "A": true, "S": true,
	"E": true, "j": true, "/": true, "Q": true, "B": true, "e": true, "n": true, "r": true, "f": true,
}

func isBeatCode(c string) bool { return beatCodes[c] }

// WFDBMnemonic returns the standard mnemonic of a WFDB annotation code, or
// its decimal number when it has none.
func WFDBMnemonic(code int) string {
	if code >= 0 && code <= annMax && wfdbMnemonics[code] != "" {
		return wfdbMnemonics[code]
	}
	return strconv.Itoa(code)
}

// WFDBCode returns the WFDB annotation code of a mnemonic (or decimal
// number) as returned by WFDBMnemonic.
func WFDBCode(mnemonic string) (int, bool) {
	for c, m := range wfdbMnemonics {
		if m != "" && m == mnemonic {
			return c, true
		}
	}
	if c, err := strconv.Atoi(mnemonic); err == nil && c >= 0 && c <= annMax {
		return c, true
	}
	return 0, false
}

// maxAnnotationBytes bounds an annotation file read whole (256 MiB).
const maxAnnotationBytes = 256 << 20

// ReadWFDBAnnotations reads a WFDB annotation file in MIT format. rateHz
// (the record's frame rate) converts sample numbers to seconds; a leading
// note annotation "## time resolution: F" overrides it, as WFDB writers
// record a finer tick that way. Annotations keep file order; Annotator is
// the file's extension.
func ReadWFDBAnnotations(path string, rateHz float64) ([]Annotation, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, fmt.Errorf("wfdb annotations %s: %w: %w", path, ErrNotFound, err)
	}
	defer f.Close()
	data, err := io.ReadAll(io.LimitReader(f, maxAnnotationBytes+1))
	if err != nil {
		return nil, fmt.Errorf("wfdb annotations %s: %w", path, err)
	}
	if len(data) > maxAnnotationBytes {
		return nil, fmt.Errorf("wfdb annotations %s: larger than %d bytes: %w", path, maxAnnotationBytes, ErrTooLarge)
	}
	ann := ""
	if i := strings.LastIndexByte(path, '.'); i >= 0 {
		ann = path[i+1:]
	}
	anns, err := ParseWFDBAnnotations(data, rateHz)
	if err != nil {
		return nil, fmt.Errorf("wfdb annotations %s: %w", path, err)
	}
	for i := range anns {
		anns[i].Annotator = ann
	}
	return anns, nil
}

// ParseWFDBAnnotations decodes MIT-format annotation bytes (see
// ReadWFDBAnnotations). Bytes after the end-of-file word are ignored, as
// WFDB does; a stream that stops without one is accepted when it stops on a
// word boundary.
func ParseWFDBAnnotations(data []byte, rateHz float64) ([]Annotation, error) {
	if !(rateHz > 0) || math.IsInf(rateHz, 0) {
		return nil, fmt.Errorf("annotation rate %v Hz: %w", rateHz, ErrHeader)
	}
	anns := make([]Annotation, 0, min(len(data)/2, 1<<20))
	var t int64
	num, chn := 0, 0
	cur := -1
	for i := 0; i+1 < len(data); {
		w := uint16(data[i]) | uint16(data[i+1])<<8
		at := i
		i += 2
		a, v := int(w>>10), int(w&0x3ff)
		switch {
		case a == 0 && v == 0:
			return finishAnns(anns, rateHz), nil
		case a == annSKIP:
			if i+4 > len(data) {
				return nil, fmt.Errorf("byte %d: SKIP interval: %w", at, ErrTruncated)
			}
			hi := uint32(data[i]) | uint32(data[i+1])<<8
			lo := uint32(data[i+2]) | uint32(data[i+3])<<8
			t += int64(int32(hi<<16 | lo))
			i += 4
		case a == annNUM || a == annSUB || a == annCHN || a == annAUX:
			if cur < 0 {
				return nil, fmt.Errorf("byte %d: modifier %d before any annotation: %w", at, a, ErrData)
			}
			switch a {
			case annNUM:
				anns[cur].Num, num = v, v
			case annSUB:
				anns[cur].Subtype = v
			case annCHN:
				anns[cur].Channel, chn = v, v
			case annAUX:
				if i+v > len(data) {
					return nil, fmt.Errorf("byte %d: AUX of %d bytes: %w", at, v, ErrTruncated)
				}
				anns[cur].Text = strings.TrimRight(string(data[i:i+v]), "\x00")
				i += (v + 1) &^ 1
			}
		case a > annMax:
			return nil, fmt.Errorf("byte %d: annotation code %d: %w", at, a, ErrData)
		default:
			t += int64(v)
			anns = append(anns, Annotation{Sample: t, Code: WFDBMnemonic(a), Num: num, Channel: chn})
			cur = len(anns) - 1
		}
	}
	if len(data)%2 != 0 {
		return nil, fmt.Errorf("odd length %d without end-of-file word: %w", len(data), ErrTruncated)
	}
	return finishAnns(anns, rateHz), nil
}

// finishAnns applies the time resolution note and converts samples to seconds.
func finishAnns(anns []Annotation, rate float64) []Annotation {
	const tr = "## time resolution: "
	if len(anns) > 0 && anns[0].Sample == 0 && anns[0].Code == "\"" && strings.HasPrefix(anns[0].Text, tr) {
		if f, err := strconv.ParseFloat(strings.TrimSpace(anns[0].Text[len(tr):]), 64); err == nil && f > 0 && !math.IsInf(f, 0) {
			rate = f
		}
	}
	for i := range anns {
		anns[i].Time = float64(anns[i].Sample) / rate
	}
	return anns
}

// WriteWFDBAnnotations writes anns to w in MIT annotation format, in the
// given order. Each annotation's Sample is used when >= 0, otherwise
// round(Time*rateHz). Code must be a mnemonic or number accepted by
// WFDBCode (1..49); Text becomes the AUX field (stored with a terminating
// NUL byte); Subtype, Channel and Num are written as SUB, CHN and NUM words
// when non-zero or changed. Intervals over 1023 samples or negative use SKIP.
// Reading the result with ReadWFDBAnnotations gives back the same
// annotations, and re-writing those gives the same bytes.
func WriteWFDBAnnotations(w io.Writer, anns []Annotation, rateHz float64) error {
	if !(rateHz > 0) || math.IsInf(rateHz, 0) {
		return fmt.Errorf("wfdb annotations: rate %v Hz: %w", rateHz, ErrHeader)
	}
	bw := bufio.NewWriter(w)
	word := func(a, v int) {
		u := uint16(a<<10 | v&0x3ff)
		bw.WriteByte(byte(u))
		bw.WriteByte(byte(u >> 8))
	}
	var prev int64
	num, chn := 0, 0
	for i, an := range anns {
		code, ok := WFDBCode(an.Code)
		if !ok || code == 0 {
			return fmt.Errorf("wfdb annotations: annotation %d: code %q has no WFDB annotation code (1..%d): %w", i, an.Code, annMax, ErrData)
		}
		s := an.Sample
		if s < 0 {
			if math.IsNaN(an.Time) || math.IsInf(an.Time, 0) {
				return fmt.Errorf("wfdb annotations: annotation %d: time %v: %w", i, an.Time, ErrData)
			}
			s = int64(math.Round(an.Time * rateHz))
		}
		d := s - prev
		if d > 1023 || d < 0 {
			// One SKIP holds a 32-bit interval; longer ones take several.
			for first := true; first || d != 0; first = false {
				step := min(max(d, math.MinInt32), math.MaxInt32)
				word(annSKIP, 0)
				u := uint32(int32(step))
				for _, x := range []uint32{u >> 16, u & 0xffff} {
					bw.WriteByte(byte(x))
					bw.WriteByte(byte(x >> 8))
				}
				d -= step
			}
			word(code, 0)
		} else {
			word(code, int(d))
		}
		prev = s
		for _, f := range []struct {
			name string
			v    int
		}{{"subtype", an.Subtype}, {"channel", an.Channel}, {"num", an.Num}} {
			if f.v < 0 || f.v > 1023 {
				return fmt.Errorf("wfdb annotations: annotation %d: %s %d outside 0..1023: %w", i, f.name, f.v, ErrData)
			}
		}
		if an.Subtype != 0 {
			word(annSUB, an.Subtype)
		}
		if an.Channel != chn {
			word(annCHN, an.Channel)
			chn = an.Channel
		}
		if an.Num != num {
			word(annNUM, an.Num)
			num = an.Num
		}
		if an.Text != "" {
			b := append([]byte(an.Text), 0)
			if len(b) > 1023 {
				return fmt.Errorf("wfdb annotations: annotation %d: text of %d bytes (max 1022): %w", i, len(an.Text), ErrData)
			}
			word(annAUX, len(b))
			bw.Write(b)
			if len(b)%2 == 1 {
				bw.WriteByte(0)
			}
		}
	}
	word(0, 0)
	return bw.Flush()
}
