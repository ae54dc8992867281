package report

import (
	"bytes"
	"encoding/xml"
	"errors"
	"io"
	"math"
	"strings"
	"testing"
)

// DocStats is what checkDocument learns about a rendered report.
type docStats struct {
	figures map[string]int // figure id -> drawn SVG elements inside it
	svgs    int
	caution bool
}

// checkDocument parses an XHTML report with encoding/xml (strict mode, so a
// missing end tag or an unescaped '<' or '&' fails) and counts, for every
// <figure id=...>, the drawing elements (path, line, rect, circle, polygon,
// polyline, text) inside its <svg>. It fails on anything that would reach the
// network: script, link, img, iframe, or any href/src/url(...) that is not a
// fragment or a namespace declaration.
func checkDocument(t *testing.T, doc []byte) docStats {
	t.Helper()
	st := docStats{figures: map[string]int{}}
	dec := xml.NewDecoder(bytes.NewReader(doc))
	dec.Strict = true
	var stack []string
	fig := ""
	inSVG := 0
	for {
		tok, err := dec.Token()
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			t.Fatalf("report does not parse as XML: %v", err)
		}
		switch x := tok.(type) {
		case xml.StartElement:
			name := x.Name.Local
			stack = append(stack, name)
			switch name {
			case "script", "link", "img", "iframe", "object", "embed":
				t.Errorf("report contains <%s>", name)
			}
			for _, a := range x.Attr {
				if a.Name.Space == "xmlns" || a.Name.Local == "xmlns" {
					continue
				}
				v := strings.TrimSpace(a.Value)
				if (a.Name.Local == "href" || a.Name.Local == "src") && !strings.HasPrefix(v, "#") {
					t.Errorf("<%s %s=%q> points outside the file", name, a.Name.Local, v)
				}
				if strings.Contains(v, "url(http") || strings.Contains(v, "url(//") {
					t.Errorf("<%s> attribute %s loads %q", name, a.Name.Local, v)
				}
				if name == "figure" && a.Name.Local == "id" {
					fig = a.Value
					st.figures[fig] += 0
				}
				if name == "p" && a.Name.Local == "id" && a.Value == "caution" {
					st.caution = true
				}
			}
			if name == "svg" {
				inSVG++
				st.svgs++
			}
			if inSVG > 0 && fig != "" {
				switch name {
				case "path", "line", "rect", "circle", "polygon", "polyline", "text":
					st.figures[fig]++
				}
			}
		case xml.EndElement:
			if n := len(stack); n > 0 {
				stack = stack[:n-1]
			}
			switch x.Name.Local {
			case "svg":
				inSVG--
			case "figure":
				fig = ""
			}
		case xml.CharData:
			if strings.Contains(string(x), "url(http") || strings.Contains(string(x), "@import") {
				t.Errorf("report text loads something: %.80q", string(x))
			}
		}
	}
	if len(stack) != 0 {
		t.Errorf("unclosed elements at end: %v", stack)
	}
	return st
}

// sampleInput is a small hand-made input exercising every figure; its
// numbers are arbitrary (this test checks drawing, not physiology).
func sampleInput() *Input {
	in := &Input{Record: "sample & <test>", Duration: 1200}
	t := 0.0
	for i := 0; i < 1200; i++ {
		rr := 800 + 50*math.Sin(2*math.Pi*float64(i)/20)
		t += rr / 1000
		in.Beats.TimeS = append(in.Beats.TimeS, t)
		in.Beats.RRms = append(in.Beats.RRms, rr)
		in.Beats.Corrected = append(in.Beats.Corrected, i%97 == 0)
	}
	in.Beats.Gaps = []Span{{Start: 300, End: 330}}
	for f := 0.0; f <= 0.5; f += 0.005 {
		in.Spectrum.FreqHz = append(in.Spectrum.FreqHz, f)
		in.Spectrum.PowerMs2 = append(in.Spectrum.PowerMs2, 1000*math.Exp(-(f-0.05)*(f-0.05)/0.001))
	}
	in.Spectrum.Bands = []Span{{0.003, 0.04, "VLF"}, {0.04, 0.15, "LF"}, {0.15, 0.4, "HF"}}
	in.Breath = Breath{T0S: 100, RateHz: 10}
	for i := 0; i < 600; i++ {
		in.Breath.Samples = append(in.Breath.Samples, math.Sin(2*math.Pi*0.25*float64(i)/10))
	}
	for k := 0; k < 15; k++ {
		in.Breath.Peaks = append(in.Breath.Peaks, 101+4*float64(k))
		in.Breath.Troughs = append(in.Breath.Troughs, 103+4*float64(k))
	}
	in.Breath.Events = []Span{{Start: 130, End: 145, Label: "obstructive apnea"}}
	for i := 0; i < 40; i++ {
		ts := 30 * float64(i+1)
		in.Trends.TimeS = append(in.Trends.TimeS, ts)
		in.Trends.VE = append(in.Trends.VE, 6+float64(i%5))
		in.Trends.RatePerMn = append(in.Trends.RatePerMn, 12+float64(i%3))
		in.Activity.TimeS = append(in.Activity.TimeS, ts-30)
		in.Activity.ENMOmg = append(in.Activity.ENMOmg, float64(i))
		in.Activity.MADmg = append(in.Activity.MADmg, 2*float64(i))
		in.Activity.Steps = append(in.Activity.Steps, float64(i%7))
		in.Activity.Posture = append(in.Activity.Posture, []string{"upright", "supine"}[i/20])
	}
	in.Trends.VE[3] = math.NaN()
	in.Activity.EpochS = 30
	for _, fam := range []string{QualityECG, QualityBreathing, QualityMotion} {
		r := QualityRow{Family: fam}
		for i := 0; i < 40; i++ {
			r.TimeS = append(r.TimeS, 30*float64(i))
			r.EndS = append(r.EndS, 30*float64(i+1))
			r.Score = append(r.Score, float64(i%10)/9)
		}
		r.Score[5] = math.NaN()
		in.Quality = append(in.Quality, r)
	}
	in.Labels = []Span{{Start: 0, End: 600, Label: "rest"}}
	in.Segments = []SegmentStat{{Label: "rest", Start: 0, End: 600, Values: []Fact{{"mean HR (beats/min)", "75.0"}}}}
	return in
}

func TestWriteParsesAndDrawsEveryFigure(t *testing.T) {
	var buf bytes.Buffer
	if err := Write(&buf, sampleInput()); err != nil {
		t.Fatal(err)
	}
	st := checkDocument(t, buf.Bytes())
	if !st.caution {
		t.Error("caution paragraph missing")
	}
	if !strings.Contains(buf.String(), "not a medical device") {
		t.Error("caution text missing")
	}
	if st.svgs != len(FigureIDs) {
		t.Errorf("%d <svg> elements, want %d", st.svgs, len(FigureIDs))
	}
	for _, id := range FigureIDs {
		n, ok := st.figures[id]
		if !ok {
			t.Errorf("figure %s missing", id)
			continue
		}
		// Axes, ticks and labels alone give a few dozen elements; data adds
		// more. 20 is a floor that an empty canvas cannot reach.
		if n < 20 {
			t.Errorf("figure %s has only %d drawn elements", id, n)
		}
	}
	if strings.Contains(buf.String(), "sample & <test>") {
		t.Error("record name not escaped")
	}
}

// An empty input still renders every figure, each saying it has no data.
func TestWriteEmptyInput(t *testing.T) {
	var buf bytes.Buffer
	if err := Write(&buf, &Input{Record: "empty"}); err != nil {
		t.Fatal(err)
	}
	st := checkDocument(t, buf.Bytes())
	for _, id := range FigureIDs {
		if _, ok := st.figures[id]; !ok {
			t.Errorf("figure %s missing", id)
		}
	}
	if got := strings.Count(buf.String(), "(no data:"); got < len(FigureIDs) {
		t.Errorf("%d no-data notes, want at least %d", got, len(FigureIDs))
	}
	if err := Write(&buf, nil); !errors.Is(err, ErrInput) {
		t.Errorf("nil input: err = %v, want ErrInput", err)
	}
}

// NaN and Inf anywhere must not panic or leak into the SVG as "NaN".
func TestWriteNonFinite(t *testing.T) {
	in := sampleInput()
	for i := range in.Beats.RRms {
		if i%3 == 0 {
			in.Beats.RRms[i] = math.NaN()
		}
	}
	in.Spectrum.PowerMs2[4] = math.Inf(1)
	in.Breath.Samples[10] = math.NaN()
	in.Activity.ENMOmg[0] = math.Inf(-1)
	var buf bytes.Buffer
	if err := Write(&buf, in); err != nil {
		t.Fatal(err)
	}
	checkDocument(t, buf.Bytes())
	if strings.Contains(buf.String(), "NaN") {
		t.Error("NaN written into the document")
	}
}

// postureRuns: one run per posture, unknown epochs absorbed, runs shorter
// than the 5-min QDC span merged into the run before them (or after, at the
// start), one run for the whole record without posture.
func TestPostureRuns(t *testing.T) {
	mk := func(post ...string) *Analysis {
		a := &Analysis{Input: &Input{}}
		for i, p := range post {
			a.Input.Activity.TimeS = append(a.Input.Activity.TimeS, 60*float64(i))
			a.Input.Activity.Posture = append(a.Input.Activity.Posture, p)
		}
		return a
	}
	rep := func(p string, n int) []string {
		var out []string
		for range n {
			out = append(out, p)
		}
		return out
	}
	cat := func(parts ...[]string) []string {
		var out []string
		for _, p := range parts {
			out = append(out, p...)
		}
		return out
	}
	for _, c := range []struct {
		name string
		post []string
		end  float64
		want []Span
	}{
		{"none", nil, 600, []Span{{0, 600, ""}}},
		{"one posture", rep("upright", 10), 600, []Span{{0, 600, "upright"}}},
		{"two postures", cat(rep("upright", 10), rep("supine", 10)), 1200, []Span{{0, 600, "upright"}, {600, 1200, "supine"}}},
		{"short middle run merged back", cat(rep("upright", 10), rep("left", 2), rep("supine", 10)), 1320,
			[]Span{{0, 720, "upright"}, {720, 1320, "supine"}}},
		{"short first run merged forward", cat(rep("left", 2), rep("supine", 10)), 720, []Span{{0, 720, "supine"}}},
		{"unknown absorbed", cat(rep("upright", 5), rep("", 3), rep("upright", 5)), 780, []Span{{0, 780, "upright"}}},
	} {
		got := mk(c.post...).postureRuns(c.end)
		if len(got) != len(c.want) {
			t.Errorf("%s: runs %v, want %v", c.name, got, c.want)
			continue
		}
		for i := range got {
			if got[i] != c.want[i] {
				t.Errorf("%s: runs %v, want %v", c.name, got, c.want)
				break
			}
		}
	}
}
