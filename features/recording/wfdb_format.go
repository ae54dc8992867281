package recording

import "math"

// wfdbFormat describes one WFDB signal storage format: samples are stored in
// groups of groupSamples samples in groupBytes bytes. The layouts follow
// "WFDB signal file formats" (PhysioNet documentation, from memory):
//
//	8    8-bit first differences (two's complement), starting from the initial value
//	16   16-bit two's complement, little-endian
//	24   24-bit two's complement, little-endian
//	32   32-bit two's complement, little-endian
//	61   16-bit two's complement, big-endian
//	80   8-bit offset binary (stored value - 128)
//	160  16-bit offset binary, little-endian (stored value - 32768)
//	212  two 12-bit two's complement samples in 3 bytes: the first is byte 0
//	     plus the low nibble of byte 1 as its high bits, the second is byte 2
//	     plus the high nibble of byte 1 as its high bits
//	310  three 10-bit samples in two 16-bit little-endian words: bits 1-10 of
//	     word 0, bits 1-10 of word 1, and bits 11-15 of word 0 (low) with bits
//	     11-15 of word 1 (high); bit 0 of each word unused
//	311  three 10-bit samples in one 32-bit little-endian word: bits 0-9,
//	     10-19 and 20-29; bits 30-31 unused
//
// invalid is the stored value that marks an invalid sample (the most negative
// value of the format's range; format 8 has none because it stores
// differences).
type wfdbFormat struct {
	groupSamples, groupBytes int
	// need[k] is how many bytes of a group must be present for sample k of
	// the group to be complete (used for the final partial group).
	need       []int
	invalid    int64
	hasInvalid bool
}

var wfdbFormats = map[int]wfdbFormat{
	8:   {1, 1, []int{1}, 0, false},
	16:  {1, 2, []int{2}, -1 << 15, true},
	24:  {1, 3, []int{3}, -1 << 23, true},
	32:  {1, 4, []int{4}, -1 << 31, true},
	61:  {1, 2, []int{2}, -1 << 15, true},
	80:  {1, 1, []int{1}, -1 << 7, true},
	160: {1, 2, []int{2}, -1 << 15, true},
	212: {2, 3, []int{2, 3}, -1 << 11, true},
	310: {3, 4, []int{2, 4, 4}, -1 << 9, true},
	311: {3, 4, []int{2, 3, 4}, -1 << 9, true},
}

// WFDBFormats lists the signal formats this package reads, in increasing order.
func WFDBFormats() []int { return []int{8, 16, 24, 32, 61, 80, 160, 212, 310, 311} }

func signExtend(v uint32, bits uint) int64 {
	shift := 32 - bits
	return int64(int32(v<<shift) >> shift)
}

// decodeGroup decodes one complete group of format f from b (len(b) ==
// groupBytes) into out (len(out) == groupSamples). Format 8 yields the
// stored difference; the caller integrates it.
func decodeGroup(f int, b []byte, out []int64) {
	switch f {
	case 8:
		out[0] = int64(int8(b[0]))
	case 80:
		out[0] = int64(b[0]) - 128
	case 16:
		out[0] = int64(int16(uint16(b[0]) | uint16(b[1])<<8))
	case 61:
		out[0] = int64(int16(uint16(b[1]) | uint16(b[0])<<8))
	case 160:
		out[0] = int64(uint16(b[0])|uint16(b[1])<<8) - 32768
	case 24:
		out[0] = signExtend(uint32(b[0])|uint32(b[1])<<8|uint32(b[2])<<16, 24)
	case 32:
		out[0] = int64(int32(uint32(b[0]) | uint32(b[1])<<8 | uint32(b[2])<<16 | uint32(b[3])<<24))
	case 212:
		out[0] = signExtend(uint32(b[0])|uint32(b[1]&0x0f)<<8, 12)
		out[1] = signExtend(uint32(b[2])|uint32(b[1]&0xf0)<<4, 12)
	case 310:
		w0 := uint32(b[0]) | uint32(b[1])<<8
		w1 := uint32(b[2]) | uint32(b[3])<<8
		out[0] = signExtend(w0>>1&0x3ff, 10)
		out[1] = signExtend(w1>>1&0x3ff, 10)
		out[2] = signExtend(w0>>11|(w1>>11)<<5, 10)
	case 311:
		w := uint32(b[0]) | uint32(b[1])<<8 | uint32(b[2])<<16 | uint32(b[3])<<24
		out[0] = signExtend(w&0x3ff, 10)
		out[1] = signExtend(w>>10&0x3ff, 10)
		out[2] = signExtend(w>>20&0x3ff, 10)
	}
}

// DecodeWFDB decodes the stored values of a byte stream in WFDB signal format
// f, in file order (all signals of a file interleaved frame by frame), and
// appends them to dst. A final partial group yields the samples it holds
// completely. Format 8 values are the stored differences (not integrated).
// It returns ErrFormat for an unknown format.
func DecodeWFDB(dst []int64, f int, b []byte) ([]int64, error) {
	info, ok := wfdbFormats[f]
	if !ok {
		return dst, ErrFormat
	}
	var tmp [3]int64
	var pad [4]byte
	for len(b) > 0 {
		n := info.groupBytes
		g := b
		if len(b) < n {
			copy(pad[:], b)
			for i := len(b); i < n; i++ {
				pad[i] = 0
			}
			g = pad[:n]
		}
		decodeGroup(f, g, tmp[:info.groupSamples])
		for k := 0; k < info.groupSamples; k++ {
			if len(b) >= info.need[k] {
				dst = append(dst, tmp[k])
			}
		}
		if len(b) < n {
			break
		}
		b = b[n:]
	}
	return dst, nil
}

// samplesInBytes returns how many complete samples of format f fit in n bytes.
func samplesInBytes(f int, n int64) int64 {
	info := wfdbFormats[f]
	full := n / int64(info.groupBytes) * int64(info.groupSamples)
	rem := n % int64(info.groupBytes)
	for k := 0; k < info.groupSamples; k++ {
		if rem > 0 && rem >= int64(info.need[k]) {
			full++
		}
	}
	return full
}

// bytesForSamples returns the bytes needed to store n samples in format f.
func bytesForSamples(f int, n int64) int64 {
	info := wfdbFormats[f]
	g := int64(info.groupSamples)
	full := n / g * int64(info.groupBytes)
	if r := n % g; r > 0 {
		full += int64(info.need[r-1])
	}
	return full
}

// encodeWFDB appends the stored form of values in format f (format 8 takes
// differences) to dst. It is used by the fixture generator and tests.
func encodeWFDB(dst []byte, f int, v []int64) []byte {
	info := wfdbFormats[f]
	for i := 0; i < len(v); i += info.groupSamples {
		var s [3]int64
		k := copy(s[:info.groupSamples], v[i:min(len(v), i+info.groupSamples)])
		switch f {
		case 8:
			dst = append(dst, byte(int8(s[0])))
		case 80:
			dst = append(dst, byte(s[0]+128))
		case 16:
			dst = append(dst, byte(s[0]), byte(s[0]>>8))
		case 61:
			dst = append(dst, byte(s[0]>>8), byte(s[0]))
		case 160:
			u := uint16(s[0] + 32768)
			dst = append(dst, byte(u), byte(u>>8))
		case 24:
			dst = append(dst, byte(s[0]), byte(s[0]>>8), byte(s[0]>>16))
		case 32:
			dst = append(dst, byte(s[0]), byte(s[0]>>8), byte(s[0]>>16), byte(s[0]>>24))
		case 212:
			a, b := uint32(s[0])&0xfff, uint32(s[1])&0xfff
			g := []byte{byte(a), byte(a>>8&0x0f | b>>4&0xf0), byte(b)}
			dst = append(dst, g[:info.need[k-1]]...)
		case 310:
			a, b, c := uint32(s[0])&0x3ff, uint32(s[1])&0x3ff, uint32(s[2])&0x3ff
			w0 := a<<1 | (c&0x1f)<<11
			w1 := b<<1 | (c>>5)<<11
			g := []byte{byte(w0), byte(w0 >> 8), byte(w1), byte(w1 >> 8)}
			dst = append(dst, g[:info.need[k-1]]...)
		case 311:
			w := uint32(s[0])&0x3ff | (uint32(s[1])&0x3ff)<<10 | (uint32(s[2])&0x3ff)<<20
			g := []byte{byte(w), byte(w >> 8), byte(w >> 16), byte(w >> 24)}
			dst = append(dst, g[:info.need[k-1]]...)
		}
	}
	return dst
}

var nan = math.NaN()
