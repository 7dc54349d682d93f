package acceptance

import (
	"strings"
	"testing"
	"time"

	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"

	"github.com/beatnote/beatnote/diagnose"
	"github.com/beatnote/beatnote/parse"
	"github.com/beatnote/beatnote/report/escape"
)

// powerSeries is an invented flat power trace at level dBm, with an optional drop to drop dBm
// over the last third (the layout only depends on the levels).
func powerSeries(level, drop float64) *parse.Series {
	n := 90
	s := &parse.Series{Port: "p", TimesMs: make([]int64, n)}
	s.Values[parse.RxPowerDBm] = make([]float64, n)
	start := time.Date(2026, 3, 1, 0, 0, 0, 0, time.UTC).UnixMilli()
	for i := range s.TimesMs {
		s.TimesMs[i] = start + int64(i)*60_000
		s.Values[parse.RxPowerDBm][i] = level
		if drop != 0 && i > 60 {
			s.Values[parse.RxPowerDBm][i] = drop
		}
	}
	return s
}

// A caption says a limit lies outside the chart only when the axis does not show it, and never
// says no change was found under a visible drop.
func TestRxPowerCaptionMatchesTheChart(t *testing.T) {
	a := &Report{profile: fixtureProfile()} // window −12…0 dBm
	for _, tc := range []struct {
		name         string
		s            *parse.Series
		want, refuse []string
	}{
		{"near the overload limit", powerSeries(-3, 0), []string{"overload limit, 0.0 dBm, is drawn"}, []string{"0.0 dBm, lies"}},
		{"far from both limits", powerSeries(-6, 0), []string{"overload limit, 0.0 dBm, lies above", "sensitivity limit, -12.0 dBm, lies below"}, nil},
		// The legend's room above the trace brings 0 dBm onto the axis: it is drawn, not said to lie above.
		{"a loss of signal", powerSeries(-6, -40), []string{"fall to -40.0 dBm is loss of signal", "overload limit, 0.0 dBm, is drawn"}, []string{"no step", "0.0 dBm, lies"}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			c, err := a.chartRxPower(tc.s, ChartMarks{})
			if err != nil || c == nil {
				t.Fatalf("chart: %v", err)
			}
			for _, w := range tc.want {
				if !strings.Contains(c.Caption, w) {
					t.Errorf("caption lacks %q:\n%s", w, c.Caption)
				}
			}
			for _, r := range tc.refuse {
				if strings.Contains(c.Caption, r) {
					t.Errorf("caption says %q:\n%s", r, c.Caption)
				}
			}
		})
	}
}

// The OSNR chart is drawn where the OSNR tells part of the story (a step found, or its
// criterion not passed), with the required OSNR and each step marked; not for a passing port
// without a step.
func TestOSNRChartOnlyWhereItMatters(t *testing.T) {
	s := powerSeries(-6, 0)
	s.Values[parse.OSNRdB] = s.Values[parse.RxPowerDBm]
	for i := range s.Values[parse.OSNRdB] {
		s.Values[parse.OSNRdB][i] = 31.5
		if i > 40 {
			s.Values[parse.OSNRdB][i] = 26
		}
	}
	crit := diagnose.Criterion{Metric: "osnr_db", Limit: 24.03, Verdict: diagnose.Marginal}
	a := &Report{Ports: []diagnose.PortResult{{Port: "p", Criteria: []diagnose.Criterion{crit}}}}
	c, err := a.chartOSNR(s, ChartMarks{OSNRChanges: []int64{s.TimesMs[41]}}, a.criterionOf("p", "osnr_db"))
	if err != nil || c == nil {
		t.Fatalf("no OSNR chart: %v", err)
	}
	for _, w := range []string{"required OSNR, 24.03 dB", "Orange vertical line: 1 OSNR step found"} {
		if !strings.Contains(c.Caption, w) {
			t.Errorf("caption lacks %q:\n%s", w, c.Caption)
		}
	}
	a.Ports[0].Criteria[0].Verdict = diagnose.Pass
	if c, _ := a.chartOSNR(s, ChartMarks{}, a.criterionOf("p", "osnr_db")); c != nil {
		t.Errorf("an OSNR chart for a passing port without a step: %s", c.Caption)
	}
}

// A Maxwellian fit is claimed only when the Kolmogorov–Smirnov test does not reject it at 5 %.
func TestMaxwellianFitClaimedOnlyWhenNotRejected(t *testing.T) {
	for _, tc := range []struct {
		p   float64
		fit bool
	}{{0.024, false}, {0.049, false}, {0.05, true}, {0.6, true}} {
		m := MarksFromAnalysis(&diagnose.PortAnalysis{DGDFit: &diagnose.MaxwellFit{N: 600, MeanPs: 1.2, KSPValue: tc.p}})
		claims := strings.Contains(m.DGDFit.Label, "Maxwellian fit")
		if claims != tc.fit || strings.Contains(m.DGDFit.Note, "does not reject") != tc.fit {
			t.Errorf("KS p = %g: label %q, note %q; fit claimed %v, want %v", tc.p, m.DGDFit.Label, m.DGDFit.Note, claims, tc.fit)
		}
	}
}

// Text drawn inside a chart image — title, axis labels, legend — is one line of printable text
// whatever it holds: a line break in it would start a second line in the image, an escape code
// would be drawn as nothing. The legend of a hostile label takes the room of its escaped form.
func TestChartTextIsOneVisibleLine(t *testing.T) {
	const hostile = "och-1\x1b[2J\r\nFORGED: PASS\u202e"
	legendSize := func(label string) vg.Point {
		p := newPlot("t")
		if err := addHLine(p, 0, 1, 1, colLimit, nil, label); err != nil {
			t.Fatal(err)
		}
		c := vgimg.New(chartWidthMM*vg.Millimeter, chartHeightMM*vg.Millimeter)
		r := p.Legend.Rectangle(draw.New(c))
		return r.Size()
	}
	if want, got := legendSize(escape.Visible(hostile)), legendSize(hostile); got != want {
		t.Errorf("legend of %q takes %v, its escaped form %v", hostile, got, want)
	}

	p := newTimePlot(hostile, hostile, 3_600_000)
	p.X.Label.Text = hostile
	if err := addSeries(p, []int64{0, 3_600_000}, []float64{1, 2}, hostile); err != nil {
		t.Fatal(err)
	}
	a := &Report{}
	if _, err := a.renderChart(p, hostile, ""); err != nil {
		t.Fatal(err)
	}
	for name, got := range map[string]string{"title": p.Title.Text, "x label": p.X.Label.Text, "y label": p.Y.Label.Text} {
		if got != escape.Visible(hostile) || strings.ContainsAny(got, "\x1b\r\n\u202e") {
			t.Errorf("%s drawn as %q, want %q", name, got, escape.Visible(hostile))
		}
	}
}

// m4 keeps, per slice of time, the first, smallest, largest and last sample in time order
// (Jugel et al., "M4: A Visualization-Oriented Time Series Data Aggregation", PVLDB 7(10), 2014):
// a one-sample spike and a one-sample dip in a year of one-minute samples both survive, the
// trace's ends are kept, and no slice gives more than four points.
func TestM4KeepsEveryExcursion(t *testing.T) {
	const n = 525_600
	ts, vs := make([]int64, n), make([]float64, n)
	for i := range ts {
		ts[i] = int64(i) * 60_000
		vs[i] = float64(i%7) * 0.01 // a small saw
	}
	vs[123_457], vs[400_001] = 30, -30
	ot, ov := m4(ts, vs, ts[0], ts[n-1]-ts[0], chartBuckets)
	if len(ot) > 4*chartBuckets || len(ot) < 2*chartBuckets {
		t.Fatalf("%d points for %d slices", len(ot), chartBuckets)
	}
	if ot[0] != ts[0] || ot[len(ot)-1] != ts[n-1] || ov[0] != vs[0] || ov[len(ov)-1] != vs[n-1] {
		t.Errorf("ends not kept: %d %v … %d %v", ot[0], ov[0], ot[len(ot)-1], ov[len(ov)-1])
	}
	lo, hi := minMax(ov)
	if lo != -30 || hi != 30 {
		t.Errorf("range drawn %v…%v, want the dip -30 and the spike 30", lo, hi)
	}
	for i := 1; i < len(ot); i++ {
		if ot[i] <= ot[i-1] {
			t.Fatalf("point %d at %d after %d: not in time order", i, ot[i], ot[i-1])
		}
	}
	for i, x := range ot { // every point kept is a sample, with its own value
		if k := x / 60_000; vs[k] != ov[i] {
			t.Fatalf("point %d (%d ms) drawn at %v, the sample is %v", i, x, ov[i], vs[k])
		}
	}
}

// A year of one-minute samples drawn as one chart (the acceptance report of a year-long log).
func BenchmarkChartYearTrace(b *testing.B) {
	const n = 525_600
	ts, vs := make([]int64, n), make([]float64, n)
	for i := range ts {
		ts[i] = int64(i) * 60_000
		vs[i] = float64((i*7919)%1000) / 100 // a noisy trace over the whole height
	}
	for b.Loop() {
		p := newTimePlot("t", "y", ts[n-1])
		if err := addSeries(p, ts, vs, "y"); err != nil {
			b.Fatal(err)
		}
		if _, err := (&Report{}).renderChart(p, "t", ""); err != nil {
			b.Fatal(err)
		}
	}
}
