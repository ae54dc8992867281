package ecg_test

// TEMPORARY: a minimal format-212 signal and MIT annotation reader for record
// 100, used only until features/recording (the project's WFDB reader) lands;
// it is deleted then. It reads exactly what the record 100 header states
// (2 signals, 360 Hz, gain 200 adu/mV, ADC zero 1024; PhysioNet WFDB
// signal and annotation format specifications, from memory).

import (
	"encoding/binary"
	"os"
	"testing"
)

type refBeat struct {
	sample int
	code   int
}

func read212(t testing.TB, path string) (mlii, v5 []float64) {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	n := len(b) / 3
	mlii = make([]float64, n)
	v5 = make([]float64, n)
	for i := 0; i < n; i++ {
		b0, b1, b2 := int(b[3*i]), int(b[3*i+1]), int(b[3*i+2])
		s0 := b0 | (b1&0x0f)<<8
		s1 := b2 | (b1&0xf0)<<4
		if s0 >= 2048 {
			s0 -= 4096
		}
		if s1 >= 2048 {
			s1 -= 4096
		}
		mlii[i] = float64(s0-1024) / 200
		v5[i] = float64(s1-1024) / 200
	}
	return mlii, v5
}

// isBeatCode: MIT annotation codes that mark beats (N L R a V F J A S E j / Q
// e j n f r B), from memory of the WFDB code table.
func isBeatCode(c int) bool {
	switch c {
	case 1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12, 13, 25, 34, 35, 37, 38, 41:
		return true
	}
	return false
}

func readAtr(t testing.TB, path string) []refBeat {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	var out []refBeat
	s := 0
	for i := 0; i+1 < len(b); {
		w := int(binary.LittleEndian.Uint16(b[i:]))
		i += 2
		code, val := w>>10, w&0x3ff
		switch code {
		case 0:
			if val == 0 {
				return out
			}
		case 59: // SKIP: 32-bit interval, high word first
			hi := int(binary.LittleEndian.Uint16(b[i:]))
			lo := int(binary.LittleEndian.Uint16(b[i+2:]))
			i += 4
			s += int(int32(uint32(hi<<16 | lo)))
		case 60, 61, 62:
		case 63:
			i += val + val%2
		default:
			s += val
			if isBeatCode(code) {
				out = append(out, refBeat{sample: s, code: code})
			}
		}
	}
	return out
}
