package recording

import (
	"bufio"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
	"time"
)

// EDFWriteOptions adjusts WriteEDF. The zero value means the defaults.
type EDFWriteOptions struct {
	// RecordSeconds is the data record duration. When zero, the first of
	// 1, 0.5, 0.25, 0.2, 0.1, 2, 4, 5, 10, 0.05, 0.04, 0.02, 0.01 s that
	// holds a whole number of samples of every channel (1 s is common
	// practice; EDF+ asks for records of at most 61440 bytes).
	RecordSeconds float64
	// Patient and Recording are the EDF+ identification fields; "X X X X"
	// and "Startdate dd-MMM-yyyy X X X" (anonymous, Kemp and Olivan 2003)
	// when empty.
	Patient, Recording string
}

// WriteEDF writes rec to w as an EDF+C file (Kemp and Olivan 2003) with
// 16-bit samples and an "EDF Annotations" signal holding rec.Annotations.
//
// Each channel's physical range is its smallest and largest finite sample
// (widened by 1 when flat), written to the 8-character header fields rounded
// outwards, and mapped onto digital -32767..32767. NaN samples, and the tail
// of channels shorter than the longest one, are written as -32768, outside the
// declared digital range: Tidalbeat reads them back as NaN (other readers see
// a value below the physical minimum). Annotation text is Text, or Code
// when Text is empty, or "Code Text" when both are set; onsets are written
// to 100 microseconds. Samples lose precision to the 16-bit quantisation:
// at most half a digital step, (max-min)/65534/2.
//
// EDF header fields are fixed-width ASCII: channel names longer than 16
// bytes and units longer than 8 are cut, and bytes outside printable ASCII
// become '_'. A start that is unknown or outside 1985-2084 (the two-digit
// year range of EDF) is written as 01.01.85 00.00.00, the EDF+ convention
// for an anonymous start.
func WriteEDF(w io.Writer, rec *Recording, opt EDFWriteOptions) error {
	d := opt.RecordSeconds
	if d == 0 {
		for _, c := range []float64{1, 0.5, 0.25, 0.2, 0.1, 2, 4, 5, 10, 0.05, 0.04, 0.02, 0.01} {
			ok := true
			for _, ch := range rec.Channels {
				n := ch.RateHz * c
				if math.Abs(n-math.Round(n)) > 1e-9*n || math.Round(n) < 1 {
					ok = false
				}
			}
			if ok {
				d = c
				break
			}
		}
		if d == 0 {
			return fmt.Errorf("edf write %s: no record duration holds whole samples of every channel's rate: %w", rec.Name, ErrFormat)
		}
	}
	if !(d > 0) || math.IsInf(d, 0) {
		return fmt.Errorf("edf write %s: record duration %v s: %w", rec.Name, d, ErrHeader)
	}
	nSig := len(rec.Channels) + 1
	spr := make([]int, len(rec.Channels))
	var nRec int64
	for i, ch := range rec.Channels {
		if !(ch.RateHz > 0) || math.IsInf(ch.RateHz, 0) {
			return fmt.Errorf("edf write %s: channel %d (%s): rate %v Hz: %w", rec.Name, i, ch.Name, ch.RateHz, ErrHeader)
		}
		n := ch.RateHz * d
		if math.Abs(n-math.Round(n)) > 1e-9*n || math.Round(n) < 1 {
			return fmt.Errorf("edf write %s: channel %d (%s): %v Hz is not a whole number of samples per %v s record: %w", rec.Name, i, ch.Name, ch.RateHz, d, ErrFormat)
		}
		spr[i] = int(math.Round(n))
		nRec = max(nRec, (int64(len(ch.Samples))+int64(spr[i])-1)/int64(spr[i]))
	}
	if len(rec.Channels) == 0 {
		nRec = int64(math.Ceil(rec.Duration()/d)) + 1
	}
	nRec = max(nRec, 1)
	if nRec > 99999999 {
		return fmt.Errorf("edf write %s: %d data records do not fit the 8-character field: %w", rec.Name, nRec, ErrTooLarge)
	}
	start := rec.Start.UTC()
	if start.IsZero() || start.Year() < 1985 || start.Year() > 2084 {
		start = time.Date(1985, 1, 1, 0, 0, 0, 0, time.UTC) // EDF+ convention for an unknown start
	}
	frac := float64(start.Nanosecond()) / 1e9
	start = start.Truncate(time.Second)

	// Annotation texts, packed in order after each record's time-keeping TAL.
	tals := make([]string, 0, len(rec.Annotations))
	for i, a := range rec.Annotations {
		if math.IsNaN(a.Time) || math.IsInf(a.Time, 0) || math.IsNaN(a.Duration) || a.Duration < 0 || math.IsInf(a.Duration, 0) {
			return fmt.Errorf("edf write %s: annotation %d: time %v s, duration %v s: %w", rec.Name, i, a.Time, a.Duration, ErrData)
		}
		txt := a.Text
		switch {
		case a.Code != "" && a.Text == "":
			txt = a.Code
		case a.Code != "" && a.Text != "":
			txt = a.Code + " " + a.Text
		}
		txt = strings.Map(func(r rune) rune {
			if r < 0x20 {
				return ' '
			}
			return r
		}, txt)
		tal := edfOnset(a.Time + frac)
		if a.Duration > 0 {
			tal += "\x15" + strconv.FormatFloat(math.Round(a.Duration*1e4)/1e4, 'f', -1, 64)
		}
		tals = append(tals, tal+"\x14"+txt+"\x14\x00")
	}
	tkLen := len(edfOnset(float64(nRec)*d+frac)) + 3
	capBytes, total, longest := 64, 0, 0
	for _, t := range tals {
		total += len(t)
		longest = max(longest, len(t))
	}
	capBytes = max(capBytes, tkLen+longest)
	if need := int(int64(total)/nRec) + longest + tkLen; need > capBytes {
		capBytes = need
	}
	capBytes = (capBytes + 1) &^ 1
	annSamples := capBytes / 2

	bw := bufio.NewWriterSize(w, 1<<16)
	hdr := make([]byte, 0, 256*(nSig+1))
	put := func(s string, n int) {
		s = edfASCII(s)
		if len(s) > n {
			s = s[:n]
		}
		hdr = append(hdr, s...)
		for k := len(s); k < n; k++ {
			hdr = append(hdr, ' ')
		}
	}
	patient, recID := opt.Patient, opt.Recording
	if patient == "" {
		patient = "X X X X"
	}
	if recID == "" {
		recID = fmt.Sprintf("Startdate %02d-%s-%04d X X X", start.Day(), edfMonths[start.Month()-1], start.Year())
	}
	put("0", 8)
	put(patient, 80)
	put(recID, 80)
	put(start.Format("02.01.06"), 8)
	put(start.Format("15.04.05"), 8)
	put(strconv.Itoa(256*(nSig+1)), 8)
	put("EDF+C", 44)
	put(strconv.FormatInt(nRec, 10), 8)
	put(strconv.FormatFloat(d, 'f', -1, 64), 8)
	put(strconv.Itoa(nSig), 4)
	type rng struct{ lo, hi float64 }
	ranges := make([]rng, len(rec.Channels))
	loS, hiS := make([]string, nSig), make([]string, nSig)
	for i, ch := range rec.Channels {
		lo, hi := math.Inf(1), math.Inf(-1)
		for _, v := range ch.Samples {
			if !math.IsNaN(v) && !math.IsInf(v, 0) {
				lo, hi = math.Min(lo, v), math.Max(hi, v)
			}
		}
		if lo > hi {
			lo, hi = -1, 1
		} else if lo == hi {
			lo, hi = lo-1, hi+1
		}
		var err error
		if loS[i], ranges[i].lo, err = edfNumber(lo, false); err != nil {
			return fmt.Errorf("edf write %s: channel %d (%s): physical minimum %v: %w", rec.Name, i, ch.Name, lo, err)
		}
		if hiS[i], ranges[i].hi, err = edfNumber(hi, true); err != nil {
			return fmt.Errorf("edf write %s: channel %d (%s): physical maximum %v: %w", rec.Name, i, ch.Name, hi, err)
		}
	}
	loS[nSig-1], hiS[nSig-1] = "-1", "1"
	each := func(f func(i int) string, n int) {
		for i := 0; i < nSig; i++ {
			put(f(i), n)
		}
	}
	isAnn := func(i int) bool { return i == nSig-1 }
	each(func(i int) string {
		if isAnn(i) {
			return "EDF Annotations"
		}
		return rec.Channels[i].Name
	}, 16)
	each(func(int) string { return "" }, 80)
	each(func(i int) string {
		if isAnn(i) {
			return ""
		}
		return rec.Channels[i].Unit
	}, 8)
	each(func(i int) string { return loS[i] }, 8)
	each(func(i int) string { return hiS[i] }, 8)
	each(func(int) string { return "-32768" }, 8)
	each(func(i int) string {
		if isAnn(i) {
			return "32767"
		}
		return "32767"
	}, 8)
	// Ordinary signals use -32767..32767 so that -32768 can mark NaN.
	for i := 0; i < nSig-1; i++ {
		off := 256 + nSig*(16+80+8+8+8) + i*8
		copy(hdr[off:off+8], "-32767  ")
	}
	each(func(int) string { return "" }, 80)
	each(func(i int) string {
		if isAnn(i) {
			return strconv.Itoa(annSamples)
		}
		return strconv.Itoa(spr[i])
	}, 8)
	each(func(int) string { return "" }, 32)
	if _, err := bw.Write(hdr); err != nil {
		return err
	}

	recBuf := make([]byte, 0, 1<<12)
	annBuf := make([]byte, 0, capBytes)
	next := 0
	for k := int64(0); k < nRec; k++ {
		recBuf = recBuf[:0]
		for i, ch := range rec.Channels {
			r := ranges[i]
			scale := 65534 / (r.hi - r.lo)
			base := k * int64(spr[i])
			for j := int64(0); j < int64(spr[i]); j++ {
				dv := -32768
				if idx := base + j; idx < int64(len(ch.Samples)) {
					if v := ch.Samples[idx]; !math.IsNaN(v) && !math.IsInf(v, 0) {
						dv = int(math.Round((v-r.lo)*scale)) - 32767
						dv = min(max(dv, -32767), 32767)
					}
				}
				recBuf = append(recBuf, byte(dv), byte(dv>>8))
			}
		}
		a := append(annBuf[:0], edfOnset(float64(k)*d+frac)+"\x14\x14\x00"...)
		for next < len(tals) && len(a)+len(tals[next]) <= capBytes {
			a = append(a, tals[next]...)
			next++
		}
		if k == nRec-1 && next < len(tals) {
			return fmt.Errorf("edf write %s: annotations do not fit the annotation signal: %w", rec.Name, ErrTooLarge)
		}
		for len(a) < capBytes {
			a = append(a, 0)
		}
		recBuf = append(recBuf, a...)
		if _, err := bw.Write(recBuf); err != nil {
			return err
		}
	}
	return bw.Flush()
}

// edfOnset formats an onset as EDF+ wants it: a sign and up to 4 decimals.
func edfOnset(t float64) string {
	s := strconv.FormatFloat(math.Round(t*1e4)/1e4, 'f', -1, 64)
	if !strings.HasPrefix(s, "-") {
		s = "+" + s
	}
	return s
}

// edfNumber formats v in at most 8 characters, rounded down (up when up is
// set) so the written range still contains v, and returns the value written.
func edfNumber(v float64, up bool) (string, float64, error) {
	for prec := 6; prec >= 0; prec-- {
		p := math.Pow(10, float64(prec))
		r := math.Floor(v * p)
		if up {
			r = math.Ceil(v * p)
		}
		r /= p
		s := strconv.FormatFloat(r, 'f', prec, 64)
		if strings.Contains(s, ".") {
			s = strings.TrimRight(strings.TrimRight(s, "0"), ".")
		}
		if s == "-0" {
			s = "0"
		}
		if len(s) <= 8 {
			back, _ := strconv.ParseFloat(s, 64)
			return s, back, nil
		}
	}
	return "", 0, ErrTooLarge
}

// edfASCII replaces bytes outside printable ASCII, as EDF headers require.
func edfASCII(s string) string {
	return strings.Map(func(r rune) rune {
		if r < 0x20 || r > 0x7e {
			return '_'
		}
		return r
	}, s)
}
