package report

import (
	"bytes"
	"fmt"
	"image/color"
	"math"
	"sort"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgsvg"
)

// Figure sizes: one column of a laptop screen.
const (
	figW = 9 * vg.Inch
	figH = 3.2 * vg.Inch
)

// maxPoints caps the points of one scatter so a day-long recording does not
// produce a figure of many megabytes; thinning is by a fixed stride and is
// stated in the caption.
const maxPoints = 5000

var (
	colLine    = color.NRGBA{R: 0x1f, G: 0x4e, B: 0x79, A: 0xff}
	colMark    = color.NRGBA{R: 0xc0, G: 0x1c, B: 0x28, A: 0xff}
	colAlt     = color.NRGBA{R: 0x2e, G: 0x7d, B: 0x32, A: 0xff}
	colGap     = color.NRGBA{R: 0x80, G: 0x80, B: 0x80, A: 0x50}
	colEvent   = color.NRGBA{R: 0xe6, G: 0x7e, B: 0x22, A: 0x60}
	colLabel   = color.NRGBA{R: 0x5b, G: 0x8d, B: 0xd6, A: 0x22}
	colLabel2  = color.NRGBA{R: 0x5b, G: 0x8d, B: 0xd6, A: 0x44}
	bandColors = []color.Color{
		color.NRGBA{R: 0xb0, G: 0xb0, B: 0xb0, A: 0x50},
		color.NRGBA{R: 0x5b, G: 0x8d, B: 0xd6, A: 0x50},
		color.NRGBA{R: 0x66, G: 0xbb, B: 0x6a, A: 0x50},
		color.NRGBA{R: 0xff, G: 0xb7, B: 0x4d, A: 0x50},
	}
)

// figure is one rendered SVG with its caption.
type figure struct {
	ID, Title, Caption string
	w, h               vg.Length
	plots              []*plot.Plot // stacked vertically, sharing the width
}

// spans fills vertical bands over the whole height of the data area; with
// Text set it writes each span's label at the top left of its band.
type spans struct {
	S     []Span
	Color func(i int) color.Color
	Text  bool
}

func (s spans) Plot(c draw.Canvas, p *plot.Plot) {
	tx, _ := p.Transforms(&c)
	for i, sp := range s.S {
		if !(sp.End > sp.Start) {
			continue
		}
		x0, x1 := tx(sp.Start), tx(sp.End)
		if x1 < c.Min.X || x0 > c.Max.X {
			continue
		}
		pts := []vg.Point{{X: x0, Y: c.Min.Y}, {X: x1, Y: c.Min.Y}, {X: x1, Y: c.Max.Y}, {X: x0, Y: c.Max.Y}}
		c.FillPolygon(s.Color(i), c.ClipPolygonX(pts))
		if s.Text && sp.Label != "" && x1 > c.Min.X && x0 < c.Max.X {
			sty := text.Style{Color: color.Gray{Y: 0x40}, Font: font.From(plot.DefaultFont, 7), Handler: p.TextHandler, YAlign: draw.YTop}
			c.FillText(sty, vg.Point{X: max(x0, c.Min.X) + vg.Points(2), Y: c.Max.Y - vg.Points(2)}, sp.Label)
		}
	}
}

// labelBands shades labelled segments in two alternating tones and names them.
func labelBands(labels []Span, k float64) spans {
	return spans{S: scaleSpans(labels, k), Text: true, Color: func(i int) color.Color {
		if i%2 == 0 {
			return colLabel
		}
		return colLabel2
	}}
}

// cells fills rectangles [X0,X1) x [Y0,Y1) in data coordinates.
type cells struct {
	X0, X1, Y0, Y1 []float64
	Colors         []color.Color
}

func (s cells) Plot(c draw.Canvas, p *plot.Plot) {
	tx, ty := p.Transforms(&c)
	for i := range s.X0 {
		pts := []vg.Point{
			{X: tx(s.X0[i]), Y: ty(s.Y0[i])}, {X: tx(s.X1[i]), Y: ty(s.Y0[i])},
			{X: tx(s.X1[i]), Y: ty(s.Y1[i])}, {X: tx(s.X0[i]), Y: ty(s.Y1[i])},
		}
		c.FillPolygon(s.Colors[i], c.ClipPolygonXY(pts))
	}
}

func (s cells) DataRange() (xmin, xmax, ymin, ymax float64) {
	xmin, ymin = math.Inf(1), math.Inf(1)
	xmax, ymax = math.Inf(-1), math.Inf(-1)
	for i := range s.X0 {
		xmin, xmax = math.Min(xmin, s.X0[i]), math.Max(xmax, s.X1[i])
		ymin, ymax = math.Min(ymin, s.Y0[i]), math.Max(ymax, s.Y1[i])
	}
	return
}

// xys builds plotter.XYs from paired slices, skipping NaN/Inf pairs (gonum
// plot rejects them) and scaling x.
func xys(x, y []float64, xscale float64) plotter.XYs {
	n := min(len(x), len(y))
	out := make(plotter.XYs, 0, n)
	for i := 0; i < n; i++ {
		if isFinite(x[i]) && isFinite(y[i]) {
			out = append(out, plotter.XY{X: x[i] * xscale, Y: y[i]})
		}
	}
	return out
}

// lineSegments splits a series at NaN values and at time steps larger than
// maxDx (data gaps) so lines are not drawn across missing data.
func lineSegments(x, y []float64, xscale, maxDx float64) []plotter.XYs {
	var out []plotter.XYs
	var cur plotter.XYs
	prev := math.NaN()
	n := min(len(x), len(y))
	for i := 0; i < n; i++ {
		if !isFinite(x[i]) || !isFinite(y[i]) {
			if len(cur) > 0 {
				out = append(out, cur)
				cur = nil
			}
			continue
		}
		if len(cur) > 0 && maxDx > 0 && x[i]-prev > maxDx {
			out = append(out, cur)
			cur = nil
		}
		cur = append(cur, plotter.XY{X: x[i] * xscale, Y: y[i]})
		prev = x[i]
	}
	if len(cur) > 0 {
		out = append(out, cur)
	}
	return out
}

func isFinite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

func addLines(p *plot.Plot, segs []plotter.XYs, col color.Color, width vg.Length) error {
	for _, s := range segs {
		l, err := plotter.NewLine(s)
		if err != nil {
			return err
		}
		l.Color = col
		l.Width = width
		p.Add(l)
	}
	return nil
}

func addScatter(p *plot.Plot, pts plotter.XYs, col color.Color, shape draw.GlyphDrawer, r vg.Length) error {
	if len(pts) == 0 {
		return nil
	}
	s, err := plotter.NewScatter(pts)
	if err != nil {
		return err
	}
	s.GlyphStyle.Color = col
	s.GlyphStyle.Shape = shape
	s.GlyphStyle.Radius = r
	p.Add(s)
	return nil
}

// noData labels an empty plot so the figure is still drawn and says why.
func noData(p *plot.Plot, why string) {
	p.Title.Text += " (no data: " + why + ")"
	p.X.Min, p.X.Max, p.Y.Min, p.Y.Max = 0, 1, 0, 1
	p.HideAxes()
}

func newPlot(title, xlabel, ylabel string) *plot.Plot {
	p := plot.New()
	p.Title.Text = title
	p.X.Label.Text = xlabel
	p.Y.Label.Text = ylabel
	return p
}

// render draws the figure's plots stacked vertically onto c.
func (f figure) render(c vg.CanvasSizer) (err error) {
	defer func() {
		// gonum/plot panics on some degenerate inputs (for example a tiling
		// that does not fit); a report must fail with an error instead.
		if r := recover(); r != nil {
			err = fmt.Errorf("%w: drawing figure: %v", ErrInput, r)
		}
	}()
	dc := draw.New(c)
	plots := f.plots
	if len(plots) == 1 {
		plots[0].Draw(dc)
	} else {
		grid := make([][]*plot.Plot, len(plots))
		for i, p := range plots {
			grid[i] = []*plot.Plot{p}
		}
		t := draw.Tiles{Rows: len(plots), Cols: 1, PadY: vg.Points(6), PadTop: vg.Points(4), PadBottom: vg.Points(4)}
		canv := plot.Align(grid, t, dc)
		for i, p := range plots {
			p.Draw(canv[i][0])
		}
	}
	return nil
}

// svg renders the figure as an inline SVG element.
func (f figure) svg() ([]byte, error) {
	c := vgsvg.New(f.w, f.h)
	if err := f.render(c); err != nil {
		return nil, err
	}
	var buf bytes.Buffer
	if _, err := c.WriteTo(&buf); err != nil {
		return nil, err
	}
	return stripProlog(buf.Bytes()), nil
}

// stripProlog removes the XML declaration and leading comment so the SVG can
// sit inline inside the XHTML body.
func stripProlog(b []byte) []byte {
	if i := bytes.Index(b, []byte("<svg")); i > 0 {
		b = b[i:]
	}
	return b
}

// tachogram: heart rate from NN with quality shading, gaps and corrected beats.
func figTachogram(in *Input) (figure, error) {
	f := figure{ID: "fig-tachogram", Title: "Heart-rate tachogram"}
	p := newPlot("Heart rate from NN intervals", "time (min)", "heart rate (beats/min)")
	b := in.Beats
	if len(b.TimeS) < 2 {
		noData(p, "fewer than two beats")
	} else {
		p.Add(labelBands(in.Labels, 1.0/60))
		p.Add(spans{S: scaleSpans(lowQuality(in.Quality, QualityECG), 1.0/60), Color: func(int) color.Color { return colEvent }})
		p.Add(spans{S: scaleSpans(b.Gaps, 1.0/60), Color: func(int) color.Color { return colGap }})
		hr := make([]float64, len(b.RRms))
		for i, rr := range b.RRms {
			hr[i] = math.NaN()
			if rr > 0 {
				hr[i] = 60000 / rr
			}
		}
		if err := addLines(p, lineSegments(b.TimeS, hr, 1.0/60, 3), colLine, vg.Points(0.8)); err != nil {
			return f, err
		}
		var cx, cy []float64
		for i := range b.TimeS {
			if i < len(b.Corrected) && b.Corrected[i] && i < len(hr) {
				cx, cy = append(cx, b.TimeS[i]), append(cy, hr[i])
			}
		}
		if err := addScatter(p, xys(cx, cy, 1.0/60), colMark, draw.CrossGlyph{}, vg.Points(2.5)); err != nil {
			return f, err
		}
		f.Caption = fmt.Sprintf("%d intervals; %d corrected (red crosses). Grey: no usable ECG; orange: windows of low ECG quality; blue: labelled segments.",
			len(b.RRms), len(cx))
	}
	f.w, f.h, f.plots = figW, figH, []*plot.Plot{p}
	return f, nil
}

func scaleSpans(s []Span, k float64) []Span {
	out := make([]Span, len(s))
	for i, v := range s {
		out[i] = Span{Start: v.Start * k, End: v.End * k, Label: v.Label}
	}
	return out
}

// lowQuality returns the windows of a family whose score is below 0.5,
// merged where they overlap.
func lowQuality(rows []QualityRow, family string) []Span {
	var out []Span
	for _, r := range rows {
		if r.Family != family {
			continue
		}
		for i := range r.Score {
			if i < len(r.TimeS) && i < len(r.EndS) && isFinite(r.Score[i]) && r.Score[i] < 0.5 {
				s := Span{Start: r.TimeS[i], End: r.EndS[i]}
				if n := len(out); n > 0 && s.Start <= out[n-1].End {
					out[n-1].End = math.Max(out[n-1].End, s.End)
					continue
				}
				out = append(out, s)
			}
		}
	}
	return out
}

// figPSD: HRV spectrum with the frequency bands shaded.
func figPSD(in *Input) (figure, error) {
	f := figure{ID: "fig-psd", Title: "HRV power spectral density"}
	p := newPlot("HRV power spectrum", "frequency (Hz)", "PSD (ms²/Hz)")
	s := in.Spectrum
	pts := xys(s.FreqHz, s.PowerMs2, 1)
	if len(pts) < 2 {
		noData(p, "no spectrum")
	} else {
		p.Add(spans{S: s.Bands, Color: func(i int) color.Color { return bandColors[i%len(bandColors)] }})
		if err := addLines(p, []plotter.XYs{pts}, colLine, vg.Points(1)); err != nil {
			return f, err
		}
		p.X.Min = 0
		p.X.Max = pts[len(pts)-1].X
		if n := len(s.Bands); n > 0 && s.Bands[n-1].End > 0 {
			p.X.Max = math.Min(p.X.Max, s.Bands[n-1].End*1.1)
		}
		p.Y.Min = 0
		var names []string
		for _, bd := range s.Bands {
			names = append(names, fmt.Sprintf("%s %.3g-%.3g Hz", bd.Label, bd.Start, bd.End))
		}
		f.Caption = fmt.Sprintf("%s over %.0f-%.0f s. Shaded bands: %s.", s.Method, s.WindowS[0], s.WindowS[1], joinComma(names))
		if len(s.BandPower) > 0 {
			var bp []string
			for _, x := range s.BandPower {
				bp = append(bp, x.Name+" "+x.Value)
			}
			f.Caption += " " + joinComma(bp) + "."
		}
	}
	f.w, f.h, f.plots = figW, figH, []*plot.Plot{p}
	return f, nil
}

func joinComma(s []string) string {
	var b bytes.Buffer
	for i, x := range s {
		if i > 0 {
			b.WriteString(", ")
		}
		b.WriteString(x)
	}
	return b.String()
}

// figPoincare: NN(i+1) against NN(i).
func figPoincare(in *Input) (figure, error) {
	f := figure{ID: "fig-poincare", Title: "Poincaré plot"}
	p := newPlot("Poincaré plot", "NN(i) (ms)", "NN(i+1) (ms)")
	rr := in.Beats.RRms
	var x, y []float64
	for i := 0; i+1 < len(rr); i++ {
		if isFinite(rr[i]) && isFinite(rr[i+1]) && rr[i] > 0 && rr[i+1] > 0 {
			x, y = append(x, rr[i]), append(y, rr[i+1])
		}
	}
	if len(x) < 2 {
		noData(p, "fewer than three intervals")
	} else {
		stride := 1
		if len(x) > maxPoints {
			stride = (len(x) + maxPoints - 1) / maxPoints
		}
		var px, py []float64
		for i := 0; i < len(x); i += stride {
			px, py = append(px, x[i]), append(py, y[i])
		}
		lo := math.Min(minOf(x), minOf(y))
		hi := math.Max(maxOf(x), maxOf(y))
		if err := addLines(p, []plotter.XYs{{{X: lo, Y: lo}, {X: hi, Y: hi}}}, colGap, vg.Points(1)); err != nil {
			return f, err
		}
		if err := addScatter(p, xys(px, py, 1), colLine, draw.CircleGlyph{}, vg.Points(1.2)); err != nil {
			return f, err
		}
		f.Caption = fmt.Sprintf("%d successive NN pairs", len(x))
		if stride > 1 {
			f.Caption += fmt.Sprintf(" (1 in %d drawn)", stride)
		}
		f.Caption += "; grey line: identity."
	}
	f.w, f.h, f.plots = 6*vg.Inch, 6*vg.Inch, []*plot.Plot{p}
	return f, nil
}

func minOf(v []float64) float64 {
	m := math.Inf(1)
	for _, x := range v {
		m = math.Min(m, x)
	}
	return m
}

func maxOf(v []float64) float64 {
	m := math.Inf(-1)
	for _, x := range v {
		m = math.Max(m, x)
	}
	return m
}

// figBreathing: an excerpt of the breathing signal with breaths and events.
func figBreathing(in *Input) (figure, error) {
	f := figure{ID: "fig-breathing", Title: "Breathing trace"}
	b := in.Breath
	unit := b.Unit
	if unit == "" {
		unit = "a.u."
	}
	p := newPlot("Breathing signal with detected breaths and events", "time (s)", "volume ("+unit+")")
	if len(b.Samples) < 2 || !(b.RateHz > 0) {
		noData(p, "no breathing signal")
	} else {
		t := make([]float64, len(b.Samples))
		for i := range t {
			t[i] = b.T0S + float64(i)/b.RateHz
		}
		t1 := t[len(t)-1]
		p.Add(spans{S: b.Events, Color: func(int) color.Color { return colEvent }})
		if err := addLines(p, lineSegments(t, b.Samples, 1, 0), colLine, vg.Points(0.8)); err != nil {
			return f, err
		}
		at := func(times []float64) ([]float64, []float64) {
			var x, y []float64
			for _, tt := range times {
				i := int(math.Round((tt - b.T0S) * b.RateHz))
				if i >= 0 && i < len(b.Samples) {
					x, y = append(x, tt), append(y, b.Samples[i])
				}
			}
			return x, y
		}
		px, py := at(b.Peaks)
		tx, ty := at(b.Troughs)
		if err := addScatter(p, xys(px, py, 1), colMark, draw.TriangleGlyph{}, vg.Points(2.5)); err != nil {
			return f, err
		}
		if err := addScatter(p, xys(tx, ty, 1), colAlt, draw.CircleGlyph{}, vg.Points(2)); err != nil {
			return f, err
		}
		p.X.Min, p.X.Max = b.T0S, t1
		nev := 0
		for _, e := range b.Events {
			if e.End > b.T0S && e.Start < t1 {
				nev++
			}
		}
		f.Caption = fmt.Sprintf("%.0f-%.0f s: end-inspiration peaks (red): %d, end-expiration troughs (green): %d, candidate events (orange): %d. %s",
			b.T0S, t1, len(px), len(tx), nev, b.Note)
	}
	f.w, f.h, f.plots = figW, figH, []*plot.Plot{p}
	return f, nil
}

// figVentilation: minute ventilation and breathing rate per window.
func figVentilation(in *Input) (figure, error) {
	f := figure{ID: "fig-ventilation", Title: "Minute ventilation and breathing rate"}
	tr := in.Trends
	unit := tr.VEUnit
	if unit == "" {
		unit = "a.u."
	}
	pv := newPlot("Minute ventilation", "", "VE ("+unit+")")
	pr := newPlot("Breathing rate", "time (min)", "rate (breaths/min)")
	ve := lineSegments(tr.TimeS, tr.VE, 1.0/60, 0)
	rate := lineSegments(tr.TimeS, tr.RatePerMn, 1.0/60, 0)
	if len(ve) == 0 && len(rate) == 0 {
		noData(pv, "no breathing windows")
		noData(pr, "no breathing windows")
	} else {
		for _, p := range []*plot.Plot{pv, pr} {
			p.Add(labelBands(in.Labels, 1.0/60))
			p.Add(spans{S: scaleSpans(in.Breath.Events, 1.0/60), Color: func(int) color.Color { return colEvent }})
		}
		if err := addLines(pv, ve, colLine, vg.Points(1)); err != nil {
			return f, err
		}
		if err := addLines(pr, rate, colAlt, vg.Points(1)); err != nil {
			return f, err
		}
		f.Caption = fmt.Sprintf("%d windows; orange: candidate apnea/hypopnea events; blue: labelled segments.", len(tr.TimeS))
	}
	f.w, f.h, f.plots = figW, 2*figH, []*plot.Plot{pv, pr}
	return f, nil
}

// figActivity: ENMO/MAD, posture and steps per epoch.
func figActivity(in *Input) (figure, error) {
	f := figure{ID: "fig-activity", Title: "Activity, posture and steps"}
	a := in.Activity
	pa := newPlot("Activity", "", "acceleration (mg)")
	pp := newPlot("Posture", "", "")
	ps := newPlot("Steps", "time (min)", "steps per epoch")
	if len(a.TimeS) == 0 {
		for _, p := range []*plot.Plot{pa, pp, ps} {
			noData(p, "no accelerometer epochs")
		}
	} else {
		if err := addLines(pa, lineSegments(a.TimeS, a.ENMOmg, 1.0/60, 0), colLine, vg.Points(1)); err != nil {
			return f, err
		}
		if err := addLines(pa, lineSegments(a.TimeS, a.MADmg, 1.0/60, 0), colMark, vg.Points(1)); err != nil {
			return f, err
		}
		// Posture as coloured cells on a nominal axis.
		names := postureNames(a.Posture)
		idx := map[string]int{}
		for i, n := range names {
			idx[n] = i
		}
		var c cells
		for i, t := range a.TimeS {
			if i >= len(a.Posture) || a.Posture[i] == "" {
				continue
			}
			k := idx[a.Posture[i]]
			c.X0 = append(c.X0, t/60)
			c.X1 = append(c.X1, (t+a.EpochS)/60)
			c.Y0 = append(c.Y0, float64(k)-0.4)
			c.Y1 = append(c.Y1, float64(k)+0.4)
			c.Colors = append(c.Colors, bandColors[(k+1)%len(bandColors)])
		}
		if len(c.X0) > 0 {
			pp.Add(c)
			var ticks plot.ConstantTicks
			for i, n := range names {
				ticks = append(ticks, plot.Tick{Value: float64(i), Label: n})
			}
			pp.Y.Tick.Marker = ticks
			pp.Y.Min, pp.Y.Max = -0.5, float64(len(names))-0.5
		} else {
			noData(pp, "posture unknown")
		}
		if err := addLines(ps, lineSegments(a.TimeS, a.Steps, 1.0/60, 0), colAlt, vg.Points(1)); err != nil {
			return f, err
		}
		total := 0.0
		for _, s := range a.Steps {
			if isFinite(s) {
				total += s
			}
		}
		// Share the time axis.
		lo, hi := a.TimeS[0]/60, (a.TimeS[len(a.TimeS)-1]+a.EpochS)/60
		for _, p := range []*plot.Plot{pa, pp, ps} {
			p.X.Min, p.X.Max = lo, hi
		}
		f.Caption = fmt.Sprintf("%d epochs of %.0f s; ENMO (blue) and MAD (red) in mg; %.0f steps in all.", len(a.TimeS), a.EpochS, total)
	}
	f.w, f.h, f.plots = figW, 2.6*figH, []*plot.Plot{pa, pp, ps}
	return f, nil
}

func postureNames(p []string) []string {
	seen := map[string]bool{}
	var out []string
	for _, s := range p {
		if s != "" && !seen[s] {
			seen[s] = true
			out = append(out, s)
		}
	}
	sort.Strings(out)
	return out
}

// figQuality: one row per family, one cell per window coloured by score.
func figQuality(in *Input) (figure, error) {
	f := figure{ID: "fig-quality", Title: "Per-window signal quality"}
	p := newPlot("Signal quality per window (green good, red poor, grey no data)", "time (min)", "")
	var c cells
	var ticks plot.ConstantTicks
	nw := 0
	for k, r := range in.Quality {
		ticks = append(ticks, plot.Tick{Value: float64(k), Label: r.Family})
		for i := range r.Score {
			if i >= len(r.TimeS) || i >= len(r.EndS) {
				break
			}
			c.X0 = append(c.X0, r.TimeS[i]/60)
			c.X1 = append(c.X1, r.EndS[i]/60)
			c.Y0 = append(c.Y0, float64(k)-0.4)
			c.Y1 = append(c.Y1, float64(k)+0.4)
			c.Colors = append(c.Colors, qualityColor(r.Score[i]))
			nw++
		}
	}
	if nw == 0 {
		noData(p, "no windows")
	} else {
		p.Add(c)
		p.Y.Tick.Marker = ticks
		p.Y.Min, p.Y.Max = -0.5, float64(len(in.Quality))-0.5
		f.Caption = fmt.Sprintf("%d windows over %d families. Score, 1 best: the window's coverage by valid data times, for the ECG signal, the agreement of two independent beat detectors (bSQI, Li, Mark and Clifford 2008); for HRV, the share of intervals needing no correction; for breathing, the share of clean breaths.", nw, len(in.Quality))
	}
	f.w, f.h, f.plots = figW, vg.Length(1.2+0.45*float64(max(1, len(in.Quality))))*vg.Inch, []*plot.Plot{p}
	return f, nil
}

// qualityColor maps a score in [0,1] from red through yellow to green.
func qualityColor(s float64) color.Color {
	if !isFinite(s) {
		return color.NRGBA{R: 0xc8, G: 0xc8, B: 0xc8, A: 0xff}
	}
	s = math.Max(0, math.Min(1, s))
	if s < 0.5 {
		return color.NRGBA{R: 0xd7, G: uint8(0x30 + s*2*(0xc0-0x30)), B: 0x27, A: 0xff}
	}
	return color.NRGBA{R: uint8(0xd7 - (s-0.5)*2*(0xd7-0x1a)), G: uint8(0xc0 - (s-0.5)*2*(0xc0-0x98)), B: 0x27 + uint8((s-0.5)*2*0x23), A: 0xff}
}
