package acceptance

import (
	"bytes"
	"fmt"
	"github.com/beatnote/beatnote/report/words"
	"image/color"
	"math"
	"slices"
	"time"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"

	"github.com/beatnote/beatnote/diagnose"
	"github.com/beatnote/beatnote/diagnose/series"
	"github.com/beatnote/beatnote/parse"
	"github.com/beatnote/beatnote/report/escape"
)

// TimeSpan is an interval of Unix milliseconds, From ≤ To.
type TimeSpan struct {
	FromMs, ToMs int64
}

// LinearTrend is a straight line over time: value = Intercept + SlopePerHour·(t − OriginMs)/3.6e6.
type LinearTrend struct {
	OriginMs     int64
	Intercept    float64
	SlopePerHour float64
	Label        string // legend text, e.g. "trend −1.2 MHz/h"
}

// DensityCurve is a fitted probability density to draw over a histogram.
type DensityCurve struct {
	PDF   func(x float64) float64 // density in 1/unit of x
	Label string                  // legend text, e.g. "Maxwellian fit, mean 3.1 ps"
	// Note is the caption sentence about the curve (whether the fit holds).
	Note string
}

// ChartMarks are the engine's findings a port's charts annotate. Every member is optional.
type ChartMarks struct {
	RxPowerChanges []int64      // change points in received power, Unix ms
	BERBursts      []TimeSpan   // intervals of pre-FEC BER bursts
	SOPSpikes      []int64      // SOP-rate spikes, Unix ms
	LOTrend        *LinearTrend // carrier-offset trend
	DGDFit         *DensityCurve
	// QLimitDB is the Q-factor limit (FEC threshold as Q) when the engine knows it.
	QLimitDB *float64
	// OSNRChanges are steps in the reported OSNR, Unix ms.
	OSNRChanges []int64
}

// Chart is one rendered chart.
type Chart struct {
	Title   string
	Caption string
	PNG     []byte
	// WidthMM and HeightMM are the size the image was drawn for.
	WidthMM, HeightMM float64
}

// Chart geometry: drawn once at a fixed size and resolution so the bytes are reproducible.
const (
	chartWidthMM  = 180
	chartHeightMM = 62
	chartDPI      = 150
)

var (
	colData    = color.RGBA{R: 0x1f, G: 0x4e, B: 0x79, A: 0xff}
	colLimit   = color.RGBA{R: 0xc0, G: 0x1c, B: 0x28, A: 0xff}
	colMark    = color.RGBA{R: 0xe0, G: 0x7a, B: 0x10, A: 0xff}
	colShade   = color.RGBA{R: 0xfb, G: 0xd9, B: 0xb0, A: 0xff}
	colFit     = color.RGBA{R: 0x2a, G: 0x7f, B: 0x3e, A: 0xff}
	colHistBar = color.RGBA{R: 0xb8, G: 0xcc, B: 0xe4, A: 0xff}
)

// portCharts renders the charts the port's data allows, in a fixed order. firstIndex numbers the
// charts across the document (see renderChart).
func (a *Report) portCharts(port string, firstIndex int) ([]Chart, error) {
	s := a.series[port]
	if s == nil {
		return nil, nil
	}
	m := a.marks[port]
	var out []Chart
	add := func(c *Chart, err error) error {
		if err != nil {
			return err
		}
		if c != nil {
			out = append(out, *c)
		}
		return nil
	}
	a.chartIndex = firstIndex
	if err := add(a.chartQ(s, m)); err != nil {
		return nil, err
	}
	if err := add(a.chartRxPower(s, m)); err != nil {
		return nil, err
	}
	if err := add(a.chartOSNR(s, m, a.criterionOf(port, parse.OSNRdB.Column()))); err != nil {
		return nil, err
	}
	if err := add(a.chartDGD(s, m)); err != nil {
		return nil, err
	}
	if err := add(a.chartSOP(s, m)); err != nil {
		return nil, err
	}
	if err := add(a.chartLO(s, m)); err != nil {
		return nil, err
	}
	return out, nil
}

// newPlot makes a plot in the report's chart style: sans-serif text sized for a printed page.
func newPlot(title string) *plot.Plot {
	p := plot.New()
	sans := func(size vg.Length) font.Font {
		return font.Font{Typeface: "Liberation", Variant: "Sans", Size: size}
	}
	p.Title.Text = title
	p.Title.TextStyle.Font = sans(11)
	p.Title.Padding = vg.Points(4)
	for _, ax := range []*plot.Axis{&p.X, &p.Y} {
		ax.Label.TextStyle.Font = sans(9)
		ax.Tick.Label.Font = sans(8)
	}
	p.Legend.TextStyle.Font = sans(8)
	p.Legend.Top = true
	p.Legend.Left = false
	p.Legend.Padding = vg.Points(1)
	p.Add(plotter.NewGrid(), legendBackdrop{})
	return p
}

// legendBackdrop clears the ground under the legend (top right) after the grid and before the
// data are drawn, so that no grid line runs through the legend's text. The size is the
// legend's own (plot.Legend.Rectangle); its place is the top right corner newPlot puts it in.
type legendBackdrop struct{}

// Plot implements plot.Plotter.
func (legendBackdrop) Plot(c draw.Canvas, p *plot.Plot) {
	r := p.Legend.Rectangle(c)
	w, h := r.Max.X-r.Min.X, r.Max.Y-r.Min.Y
	if w <= 0 || h <= 0 {
		return
	}
	pad := vg.Points(3)
	// The legend's entries start one descent below the top (plot.Legend.Draw).
	descent := p.Legend.TextStyle.FontExtents().Descent
	x0, y0, x1, y1 := c.Max.X-w-pad, c.Max.Y-h-descent-pad, c.Max.X+pad, c.Max.Y+pad
	c.FillPolygon(color.White, []vg.Point{{X: x0, Y: y0}, {X: x1, Y: y0}, {X: x1, Y: y1}, {X: x0, Y: y1}})
}

// addLegend adds a legend entry. Its text is drawn into the chart image, where a line break
// would start a new line and a control character has no glyph, so it is shown as escape.Visible
// shows it: one line of printable text, whatever an input put into it.
func addLegend(p *plot.Plot, label string, thumbs ...plot.Thumbnailer) {
	p.Legend.Add(escape.Visible(label), thumbs...)
}

// legendRoom raises hi so a legend of n entries in the top right corner sits above the data:
// each entry takes about 10 % of the plot's height (8-point text on a 62 mm chart), plus 5 %
// clear between the legend and the highest sample.
func legendRoom(lo, hi float64, n int) float64 {
	f := 0.10*float64(n) + 0.05
	return hi + f/(1-f)*(hi-lo)
}

// burstsCaption is the caption sentence on the shaded BER bursts.
func burstsCaption(bursts []TimeSpan) string {
	if n := len(bursts); n > 0 {
		return fmt.Sprintf(" Shaded: %s found by the analysis.", words.Plural(n, "pre-FEC BER burst", "pre-FEC BER bursts"))
	}
	return " The analysis found no BER burst."
}

// count is 1 for true, for tallying legend entries.
func count(b bool) int {
	if b {
		return 1
	}
	return 0
}

func newTimePlot(title, yLabel string, spanMs int64) *plot.Plot {
	p := newPlot(title)
	p.Y.Label.Text = yLabel
	p.X.Label.Text = "time (UTC)"
	format := "15:04"
	switch {
	case spanMs > 60*86400*1000:
		format = "2006-01-02"
	case spanMs > 20*3600*1000:
		format = "Jan 02 15:04"
	}
	p.X.Tick.Marker = timeTicker{format: format}
	return p
}

// chartBuckets is how many equal slices of time a long trace is drawn from: about one a pixel
// column of the plotting area (a chart is 180 mm wide at 150 dpi, 1,063 pixels).
const chartBuckets = 1024

// addSeries draws a telemetry trace, broken wherever the samples stop for more than three
// typical intervals, so that a gap in the log is not drawn as data. A stretch of more than four
// samples per bucket (a year of one-minute samples, say) is drawn from the first, smallest,
// largest and last sample of each bucket (m4), which rasterizes to nearly the same pixels as
// every sample and keeps every excursion; drawn whole, a year took minutes to rasterize.
func addSeries(p *plot.Plot, ts []int64, vs []float64, label string) error {
	if len(ts) == 0 {
		return nil
	}
	gap := 3 * max(series.MedianStepMs(ts), 1)
	t0, span := ts[0], max(ts[len(ts)-1]-ts[0], 1)
	start := 0
	for i := 1; i <= len(ts); i++ {
		if i < len(ts) && ts[i]-ts[i-1] <= gap {
			continue
		}
		l := ""
		if start == 0 {
			l = label
		}
		segT, segV := ts[start:i], vs[start:i]
		chunk := len(segT)
		if len(segT) > 4*chartBuckets {
			// Stroked as lines of 64 points (sharing their ends): the rasterizer's cost grows
			// with the square of the cells one stroke puts on a pixel row, and an m4 trace puts
			// one or more in every column.
			segT, segV = m4(segT, segV, t0, span, chartBuckets)
			chunk = 64
		}
		xy := timeXY(segT, segV)
		if len(xy) == 1 { // a lone sample between gaps: draw it as a dot
			sc, err := plotter.NewScatter(xy)
			if err != nil {
				return err
			}
			sc.GlyphStyle.Color, sc.GlyphStyle.Radius, sc.GlyphStyle.Shape = colData, vg.Points(1.2), draw.CircleGlyph{}
			p.Add(sc)
		}
		for c := 0; c < len(xy)-1; c += chunk {
			if err := addLine(p, xy[c:min(c+chunk+1, len(xy))], colData, vg.Points(1), nil, l); err != nil {
				return err
			}
			l = ""
		}
		start = i
	}
	return nil
}

// timeTicker puts ticks on round UTC times: a step from one minute to a year (of 365 days)
// chosen to give four to eight major ticks.
type timeTicker struct{ format string }

var tickStepsS = []int64{60, 120, 300, 600, 900, 1800, 3600, 7200, 10800, 21600, 43200, 86400, 172800, 604800,
	14 * 86400, 28 * 86400, 91 * 86400, 182 * 86400, 365 * 86400}

// Ticks implements plot.Ticker.
func (tt timeTicker) Ticks(min, max float64) []plot.Tick {
	span := max - min
	step := tickStepsS[len(tickStepsS)-1]
	for _, s := range tickStepsS {
		if span/float64(s) <= 7 {
			step = s
			break
		}
	}
	minor := step / 4
	if minor < 1 {
		minor = 1
	}
	var ticks []plot.Tick
	first := int64(math.Ceil(min/float64(minor))) * minor
	for t := first; float64(t) <= max; t += minor {
		tk := plot.Tick{Value: float64(t)}
		if t%step == 0 {
			tk.Label = time.Unix(t, 0).UTC().Format(tt.format)
		}
		ticks = append(ticks, tk)
	}
	return ticks
}

// m4 keeps, of the samples in each of n equal slices of the time span [t0, t0+span], the first,
// the smallest, the largest and the last, in time order: the M4 aggregation of Jugel, Jerzak,
// Hackenbroich and Markl, "M4: A Visualization-Oriented Time Series Data Aggregation", PVLDB
// 7(10), 2014, which draws the same line pixels as all samples when a slice is one pixel column.
func m4(ts []int64, vs []float64, t0, span int64, n int) ([]int64, []float64) {
	ot, ov := make([]int64, 0, 4*n), make([]float64, 0, 4*n)
	bucket := func(t int64) int64 { return min((t-t0)*int64(n)/span, int64(n-1)) }
	for i := 0; i < len(ts); {
		b := bucket(ts[i])
		j, lo, hi := i, i, i
		for j < len(ts) && bucket(ts[j]) == b {
			if vs[j] < vs[lo] {
				lo = j
			}
			if vs[j] > vs[hi] {
				hi = j
			}
			j++
		}
		keep := [4]int{i, lo, hi, j - 1}
		slices.Sort(keep[:])
		for k, x := range keep {
			if k == 0 || x != keep[k-1] {
				ot, ov = append(ot, ts[x]), append(ov, vs[x])
			}
		}
		i = j
	}
	return ot, ov
}

func timeXY(ts []int64, vs []float64) plotter.XYs {
	xy := make(plotter.XYs, len(ts))
	for i := range ts {
		xy[i].X = float64(ts[i]) / 1000
		xy[i].Y = vs[i]
	}
	return xy
}

// minMax is the smallest and largest finite value (±Inf when there is none).
func minMax(vs []float64) (lo, hi float64) {
	lo, hi = math.Inf(1), math.Inf(-1)
	for _, v := range vs {
		if !math.IsNaN(v) && !math.IsInf(v, 0) {
			lo, hi = math.Min(lo, v), math.Max(hi, v)
		}
	}
	return lo, hi
}

// rangeOf is the axis range for vs and extra: their span padded by 8 % on each side.
func rangeOf(vs []float64, extra ...float64) (lo, hi float64) {
	lo, hi = math.Inf(1), math.Inf(-1)
	for _, v := range append(append([]float64(nil), vs...), extra...) {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			continue
		}
		lo, hi = math.Min(lo, v), math.Max(hi, v)
	}
	if lo == hi {
		lo, hi = lo-1, hi+1
	}
	pad := (hi - lo) * 0.08
	return lo - pad, hi + pad
}

func addLine(p *plot.Plot, xy plotter.XYs, c color.Color, width vg.Length, dashes []vg.Length, label string) error {
	l, err := plotter.NewLine(xy)
	if err != nil {
		return err
	}
	l.Color, l.Width, l.Dashes = c, width, dashes
	p.Add(l)
	if label != "" {
		addLegend(p, label, l)
	}
	return nil
}

// Dash patterns of limit lines: each limit on one chart gets its own, so two limits never look
// alike even in grey print.
var (
	dashLong    = []vg.Length{vg.Points(6), vg.Points(3)}
	dashDashDot = []vg.Length{vg.Points(6), vg.Points(2.5), vg.Points(1.5), vg.Points(2.5)}
)

func addHLine(p *plot.Plot, x0, x1, y float64, c color.Color, dashes []vg.Length, label string) error {
	return addLine(p, plotter.XYs{{X: x0, Y: y}, {X: x1, Y: y}}, c, vg.Points(1.2), dashes, label)
}

// addTopMarks puts a downward triangle at the top of the plot at each time.
func addTopMarks(p *plot.Plot, timesMs []int64, y float64, label string) error {
	if len(timesMs) == 0 {
		return nil
	}
	xy := make(plotter.XYs, len(timesMs))
	for i, t := range timesMs {
		xy[i].X, xy[i].Y = float64(t)/1000, y
	}
	sc, err := plotter.NewScatter(xy)
	if err != nil {
		return err
	}
	sc.GlyphStyle.Shape = draw.PyramidGlyph{}
	sc.GlyphStyle.Color = colMark
	sc.GlyphStyle.Radius = vg.Points(3)
	p.Add(sc)
	addLegend(p, label, sc)
	return nil
}

func addVMarks(p *plot.Plot, timesMs []int64, lo, hi float64, label string) error {
	for i, t := range timesMs {
		x := float64(t) / 1000
		l := ""
		if i == 0 {
			l = label
		}
		if err := addLine(p, plotter.XYs{{X: x, Y: lo}, {X: x, Y: hi}}, colMark, vg.Points(1.5), nil, l); err != nil {
			return err
		}
	}
	return nil
}

// addSpans shades time intervals; minWidthS keeps short ones visible on a long axis.
func addSpans(p *plot.Plot, spans []TimeSpan, lo, hi, minWidthS float64, label string) error {
	for i, sp := range spans {
		x0, x1 := float64(sp.FromMs)/1000, float64(sp.ToMs)/1000
		if x1-x0 < minWidthS {
			mid := (x0 + x1) / 2
			x0, x1 = mid-minWidthS/2, mid+minWidthS/2
		}
		poly, err := plotter.NewPolygon(plotter.XYs{{X: x0, Y: lo}, {X: x1, Y: lo}, {X: x1, Y: hi}, {X: x0, Y: hi}})
		if err != nil {
			return err
		}
		poly.Color = colShade
		poly.LineStyle.Width = 0
		p.Add(poly)
		if i == 0 && label != "" {
			addLegend(p, label, poly)
		}
	}
	return nil
}

// renderChart draws p to a PNG. Each chart of a document is made one pixel wider than the one
// before: fpdf (v0.12) orders images of equal pixel width by map iteration, so equal widths
// would make the PDF bytes differ between runs. One pixel in about a thousand does not show.
func (a *Report) renderChart(p *plot.Plot, title, caption string) (*Chart, error) {
	extra := vg.Length(a.chartIndex) * vg.Inch / chartDPI
	a.chartIndex++
	c := vgimg.NewWith(vgimg.UseWH(chartWidthMM*vg.Millimeter+extra, chartHeightMM*vg.Millimeter),
		vgimg.UseDPI(chartDPI), vgimg.UseBackgroundColor(color.White))
	// Title and axis labels are drawn into the image: one line of printable text each (as
	// addLegend does for the legend).
	for _, t := range []*string{&p.Title.Text, &p.X.Label.Text, &p.Y.Label.Text} {
		*t = escape.Visible(*t)
	}
	p.Draw(draw.New(c))
	var buf bytes.Buffer
	if _, err := (vgimg.PngCanvas{Canvas: c}).WriteTo(&buf); err != nil {
		return nil, fmt.Errorf("acceptance: chart %q: %w", title, err)
	}
	return &Chart{Title: title, Caption: caption, PNG: buf.Bytes(), WidthMM: chartWidthMM, HeightMM: chartHeightMM}, nil
}

// chartQ draws the Q-factor over time with its limit, or the pre-FEC BER on a log axis with the
// FEC threshold when the log has no Q.
func (a *Report) chartQ(s *parse.Series, m ChartMarks) (*Chart, error) {
	if ts, vs := s.Present(parse.QdB); len(ts) >= 2 {
		span := ts[len(ts)-1] - ts[0]
		p := newTimePlot("Q-factor over time", "Q (dB)", span)
		var extra []float64
		if m.QLimitDB != nil {
			extra = append(extra, *m.QLimitDB)
		}
		lo, top := rangeOf(vs, extra...)
		hi := legendRoom(lo, top, 1+count(m.QLimitDB != nil)+count(len(m.BERBursts) > 0))
		if err := addSpans(p, m.BERBursts, lo, top, float64(span)/1000/250, "BER burst"); err != nil {
			return nil, err
		}
		if err := addSeries(p, ts, vs, "Q"); err != nil {
			return nil, err
		}
		caption := "Q-factor as reported by the module."
		if m.QLimitDB != nil {
			if err := addHLine(p, float64(ts[0])/1000, float64(ts[len(ts)-1])/1000, *m.QLimitDB, colLimit, dashLong, fmt.Sprintf("FEC limit %.2f dB", *m.QLimitDB)); err != nil {
				return nil, err
			}
			caption = fmt.Sprintf("Q-factor as reported; dashed line: the FEC limit expressed as Q (%.2f dB).", *m.QLimitDB)
		}
		caption += burstsCaption(m.BERBursts)
		p.Y.Min, p.Y.Max = lo, hi
		return a.renderChart(p, "Q-factor over time", caption)
	}
	ts, vs := s.Present(parse.PreFECBER)
	var pts []int64
	var pvs []float64
	zeros := 0
	for i, v := range vs {
		if v > 0 {
			pts, pvs = append(pts, ts[i]), append(pvs, v)
		} else {
			zeros++
		}
	}
	if len(pts) < 2 {
		return nil, nil
	}
	span := pts[len(pts)-1] - pts[0]
	p := newTimePlot("Pre-FEC BER over time", "pre-FEC BER", span)
	p.Y.Scale = plot.LogScale{}
	p.Y.Tick.Marker = plot.LogTicks{Prec: -1}
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, v := range pvs {
		lo, hi = math.Min(lo, v), math.Max(hi, v)
	}
	limit := 0.0
	if a.profile != nil && a.profile.FECThresholdBER > 0 {
		limit = a.profile.FECThresholdBER
		lo, hi = math.Min(lo, limit), math.Max(hi, limit)
	}
	lo, top := lo/2, hi*2
	hi = hi * 30 // the legend sits above top
	if err := addSpans(p, m.BERBursts, lo, top, float64(span)/1000/250, "BER burst"); err != nil {
		return nil, err
	}
	if err := addSeries(p, pts, pvs, "pre-FEC BER"); err != nil {
		return nil, err
	}
	caption := "Pre-FEC BER as reported by the module (log scale)."
	if limit > 0 {
		if err := addHLine(p, float64(pts[0])/1000, float64(pts[len(pts)-1])/1000, limit, colLimit, dashLong, fmt.Sprintf("FEC threshold %.3g", limit)); err != nil {
			return nil, err
		}
		caption = fmt.Sprintf("Pre-FEC BER as reported (log scale); dashed line: the FEC threshold %.3g of profile %s.", limit, a.profile.ID)
	}
	if zeros > 0 {
		caption += fmt.Sprintf(" %s with BER 0 cannot be drawn on a log scale and %s left out of the chart only.", words.Plural(zeros, "sample", "samples"), map[bool]string{true: "is", false: "are"}[zeros == 1])
	}
	caption += burstsCaption(m.BERBursts)
	p.Y.Min, p.Y.Max = lo, hi
	return a.renderChart(p, "Pre-FEC BER over time", caption)
}

func (a *Report) chartRxPower(s *parse.Series, m ChartMarks) (*Chart, error) {
	ts, vs := s.Present(parse.RxPowerDBm)
	if len(ts) < 2 {
		return nil, nil
	}
	p := newTimePlot("Received power over time", "Rx power (dBm)", ts[len(ts)-1]-ts[0])
	vlo, vhi := minMax(vs)
	caption := "Total received optical power."
	// The axis takes in a limit when the power comes within 6 dB of it; further away it would
	// only flatten the trace. Every limit the axis then shows is drawn, each in its own dash.
	type limit struct {
		v      float64
		name   string
		near   bool
		dashes []vg.Length
	}
	var limits []limit
	if pf := a.profile; pf != nil && pf.RxPowerMinDBm < pf.RxPowerMaxDBm {
		limits = []limit{
			{pf.RxPowerMinDBm, "sensitivity", vlo-pf.RxPowerMinDBm < 6, dashLong},
			{pf.RxPowerMaxDBm, "overload", pf.RxPowerMaxDBm-vhi < 6, dashDashDot},
		}
	}
	extra := []float64{}
	for _, l := range limits {
		if l.near {
			extra = append(extra, l.v)
		}
	}
	var lo, top, hi float64
	// A limit the legend's room above the data would bring onto the axis is drawn too, the
	// room then made above it: a limit value the axis shows is never said to lie outside.
	for range 2 {
		lo, top = rangeOf(vs, extra...)
		drawn := 0
		for _, l := range limits {
			drawn += count(l.v >= lo && l.v <= top)
		}
		hi = legendRoom(lo, top, 1+drawn+count(len(m.RxPowerChanges) > 0))
		more := false
		for i, l := range limits {
			if !l.near && l.v > top && l.v <= hi {
				limits[i].near, extra, more = true, append(extra, l.v), true
			}
		}
		if !more {
			break
		}
	}
	if err := addSeries(p, ts, vs, "Rx power"); err != nil {
		return nil, err
	}
	x0, x1 := float64(ts[0])/1000, float64(ts[len(ts)-1])/1000
	for _, l := range limits {
		if l.v >= lo && l.v <= top {
			if err := addHLine(p, x0, x1, l.v, colLimit, l.dashes, fmt.Sprintf("%s limit %.1f dBm", l.name, l.v)); err != nil {
				return nil, err
			}
			caption += fmt.Sprintf(" The module's %s limit, %.1f dBm, is drawn as a line.", l.name, l.v)
		} else {
			side := "below"
			if l.v > top {
				side = "above"
			}
			caption += fmt.Sprintf(" The %s limit, %.1f dBm, lies %s the chart's range.", l.name, l.v, side)
		}
	}
	if err := addVMarks(p, m.RxPowerChanges, lo, top, "change point"); err != nil {
		return nil, err
	}
	switch n := len(m.RxPowerChanges); {
	case n > 0:
		caption += markedCaption(n, "change point", "change points")
	case vhi-vlo >= 10:
		caption += fmt.Sprintf(" The fall to %.1f dBm is loss of signal (see the evidence); the analysis looks for steps only while the signal is present and marked none.", vlo)
	default:
		caption += " The analysis marked no step while the signal was present."
	}
	p.Y.Min, p.Y.Max = lo, hi
	return a.renderChart(p, "Received power over time", caption)
}

// markedCaption is the caption sentence on n orange vertical lines marking what one (many) names.
func markedCaption(n int, one, many string) string {
	lines := "lines"
	if n == 1 {
		lines = "line"
	}
	return fmt.Sprintf(" Orange vertical %s: %s found by the analysis.", lines, words.Plural(n, one, many))
}

// criterionOf is the port's criterion on metric, nil when it has none.
func (a *Report) criterionOf(port, metric string) *diagnose.Criterion {
	for i := range a.Ports {
		if a.Ports[i].Port != port {
			continue
		}
		for j, c := range a.Ports[i].Criteria {
			if c.Metric == metric {
				return &a.Ports[i].Criteria[j]
			}
		}
	}
	return nil
}

// chartOSNR draws the reported OSNR over time with the required OSNR and the OSNR steps the
// analysis found. It is drawn only where the OSNR tells part of the story: a step was found or
// the OSNR criterion is not passed.
func (a *Report) chartOSNR(s *parse.Series, m ChartMarks, crit *diagnose.Criterion) (*Chart, error) {
	ts, vs := s.Present(parse.OSNRdB)
	if len(ts) < 2 || (len(m.OSNRChanges) == 0 && (crit == nil || crit.Verdict == diagnose.Pass)) {
		return nil, nil
	}
	p := newTimePlot("OSNR over time", "OSNR (dB, 0.1 nm)", ts[len(ts)-1]-ts[0])
	var extra []float64
	if crit != nil {
		extra = append(extra, crit.Limit)
	}
	lo, top := rangeOf(vs, extra...)
	hi := legendRoom(lo, top, 1+len(extra)+count(len(m.OSNRChanges) > 0))
	if err := addSeries(p, ts, vs, "OSNR"); err != nil {
		return nil, err
	}
	caption := "OSNR as the module reports it (0.1 nm reference bandwidth)."
	if crit != nil {
		x0, x1 := float64(ts[0])/1000, float64(ts[len(ts)-1])/1000
		if err := addHLine(p, x0, x1, crit.Limit, colLimit, dashLong, fmt.Sprintf("required OSNR %.2f dB", crit.Limit)); err != nil {
			return nil, err
		}
		caption += fmt.Sprintf(" Dashed line: the required OSNR, %.2f dB (the criterion's limit).", crit.Limit)
	}
	if err := addVMarks(p, m.OSNRChanges, lo, top, "OSNR step"); err != nil {
		return nil, err
	}
	if n := len(m.OSNRChanges); n > 0 {
		caption += markedCaption(n, "OSNR step", "OSNR steps")
	} else {
		caption += " The analysis found no OSNR step."
	}
	p.Y.Min, p.Y.Max = lo, hi
	return a.renderChart(p, "OSNR over time", caption)
}

func (a *Report) chartDGD(s *parse.Series, m ChartMarks) (*Chart, error) {
	_, vs := s.Present(parse.DGDps)
	if len(vs) < 10 {
		return nil, nil
	}
	p := newPlot("DGD distribution")
	p.X.Label.Text = "DGD (ps)"
	p.Y.Label.Text = "probability density (1/ps)"
	bins := int(math.Ceil(math.Sqrt(float64(len(vs)))))
	bins = max(8, min(bins, 40))
	h, err := plotter.NewHist(plotter.Values(vs), bins)
	if err != nil {
		return nil, err
	}
	h.Normalize(1)
	h.FillColor = colHistBar
	h.LineStyle.Color = colData
	h.LineStyle.Width = vg.Points(0.5)
	p.Add(h)
	addLegend(p, "measured ("+words.Plural(len(vs), "sample", "samples")+")", h)
	caption := fmt.Sprintf("Histogram of %d DGD samples, normalised to unit area.", len(vs))
	if m.DGDFit != nil && m.DGDFit.PDF != nil {
		_, hi := rangeOf(vs)
		n := 200
		xy := make(plotter.XYs, n+1)
		for i := 0; i <= n; i++ {
			x := hi * float64(i) / float64(n)
			xy[i].X, xy[i].Y = x, m.DGDFit.PDF(x)
		}
		if err := addLine(p, xy, colFit, vg.Points(1.5), nil, m.DGDFit.Label); err != nil {
			return nil, err
		}
		caption += " Green curve: " + m.DGDFit.Label + ". " + m.DGDFit.Note
	}
	if a.profile != nil && a.profile.DGDTolerancePs > 0 {
		caption += fmt.Sprintf(" The module tolerates up to %.0f ps instantaneous DGD.", a.profile.DGDTolerancePs)
	}
	top := 0.0
	for _, b := range h.Bins {
		top = math.Max(top, b.Weight) // after Normalize the bar height is the density
	}
	if m.DGDFit != nil && m.DGDFit.PDF != nil {
		_, hi := rangeOf(vs)
		for i := 0; i <= 200; i++ {
			if d := m.DGDFit.PDF(hi * float64(i) / 200); d > top && !math.IsInf(d, 0) {
				top = d
			}
		}
	}
	p.X.Min, p.Y.Min, p.Y.Max = 0, 0, legendRoom(0, top*1.05, 1+count(m.DGDFit != nil && m.DGDFit.PDF != nil))
	return a.renderChart(p, "DGD distribution", caption)
}

func (a *Report) chartSOP(s *parse.Series, m ChartMarks) (*Chart, error) {
	ts, vs := s.Present(parse.SOPRateKradPerS)
	if len(ts) < 2 {
		return nil, nil
	}
	span := ts[len(ts)-1] - ts[0]
	p := newTimePlot("SOP rate of change over time", "SOP rate (krad/s)", span)
	// The tracking limit is drawn when the rate reaches a third of it; below that it would only
	// flatten the trace, and the caption gives the figure instead.
	var extra []float64
	_, vhi := minMax(vs)
	farBelow := false
	if a.profile != nil && a.profile.SOPTrackingKradS > 0 {
		if vhi >= a.profile.SOPTrackingKradS/3 {
			extra = append(extra, a.profile.SOPTrackingKradS)
		} else {
			farBelow = true
		}
	}
	lo, hi := rangeOf(vs, extra...)
	lo = math.Min(lo, 0)
	top := hi
	hi = legendRoom(lo, hi, 1+len(extra)+count(len(m.BERBursts) > 0)+count(len(m.SOPSpikes) > 0))
	if err := addSpans(p, m.BERBursts, lo, top, float64(span)/1000/250, "BER burst"); err != nil {
		return nil, err
	}
	if err := addSeries(p, ts, vs, "SOP rate"); err != nil {
		return nil, err
	}
	caption := "Rate of change of the state of polarization."
	if len(extra) > 0 {
		if err := addHLine(p, float64(ts[0])/1000, float64(ts[len(ts)-1])/1000, extra[0], colLimit, dashLong, fmt.Sprintf("tracking limit %.0f krad/s", extra[0])); err != nil {
			return nil, err
		}
		caption += fmt.Sprintf(" Dashed line: the module's SOP tracking limit %.0f krad/s.", extra[0])
	}
	if farBelow {
		caption += fmt.Sprintf(" The module tracks up to %.0f krad/s, far above this trace.", a.profile.SOPTrackingKradS)
	}
	if err := addTopMarks(p, m.SOPSpikes, top, "SOP spike start"); err != nil {
		return nil, err
	}
	caption += burstsCaption(m.BERBursts)
	if n := len(m.SOPSpikes); n > 0 {
		caption += fmt.Sprintf(" Triangles: the start of %s.", words.Plural(n, "SOP-rate spike", "SOP-rate spikes"))
	}
	p.Y.Min, p.Y.Max = lo, hi
	return a.renderChart(p, "SOP rate of change over time", caption)
}

func (a *Report) chartLO(s *parse.Series, m ChartMarks) (*Chart, error) {
	ts, vs := s.Present(parse.LOOffsetMHz)
	if len(ts) < 2 {
		return nil, nil
	}
	p := newTimePlot("Carrier (LO) frequency offset over time", "LO offset (MHz)", ts[len(ts)-1]-ts[0])
	lo, hi := rangeOf(vs)
	hi = legendRoom(lo, hi, 1)
	if err := addSeries(p, ts, vs, "LO offset"); err != nil {
		return nil, err
	}
	caption := "Carrier frequency offset between signal and local oscillator."
	if tr := m.LOTrend; tr != nil {
		at := func(t int64) float64 { return tr.Intercept + tr.SlopePerHour*float64(t-tr.OriginMs)/3.6e6 }
		y0, y1 := at(ts[0]), at(ts[len(ts)-1])
		lo, hi = rangeOf(vs, y0, y1)
		hi = legendRoom(lo, hi, 2)
		label := tr.Label
		if label == "" {
			label = fmt.Sprintf("trend %+.3g MHz/h", tr.SlopePerHour)
		}
		if err := addLine(p, plotter.XYs{{X: float64(ts[0]) / 1000, Y: y0}, {X: float64(ts[len(ts)-1]) / 1000, Y: y1}}, colFit, vg.Points(1.5), nil, label); err != nil {
			return nil, err
		}
		caption += " Green line: " + label + "."
	}
	if a.profile != nil && a.profile.LOOffsetRangeMHz > 0 {
		rng := a.profile.LOOffsetRangeMHz
		caption += fmt.Sprintf(" The receiver captures offsets within ±%.0f MHz.", rng)
		// Draw the capture limit the data comes within half the range of.
		vlo, vhi := minMax(vs)
		x0, x1 := float64(ts[0])/1000, float64(ts[len(ts)-1])/1000
		for _, lim := range []float64{rng, -rng} {
			if (lim > 0 && vhi > lim/2) || (lim < 0 && vlo < lim/2) {
				dashes := dashLong
				if lim < 0 {
					dashes = dashDashDot
				}
				if err := addHLine(p, x0, x1, lim, colLimit, dashes, fmt.Sprintf("capture limit %+.0f MHz", lim)); err != nil {
					return nil, err
				}
				lo, hi = math.Min(lo, lim), math.Max(hi, lim)
				hi = math.Max(hi, legendRoom(lo, math.Max(vhi, lim), 4))
				caption += fmt.Sprintf(" The capture limit %+.0f MHz is drawn as a line.", lim)
			}
		}
	}
	p.Y.Min, p.Y.Max = lo, hi
	return a.renderChart(p, "Carrier (LO) frequency offset over time", caption)
}
