package acceptance

import (
	"strings"
	"testing"
	"time"

	"github.com/beatnote/beatnote/diagnose"
	"github.com/beatnote/beatnote/parse"
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
		{"a loss of signal", powerSeries(-6, -40), []string{"fall to -40.0 dBm is loss of signal"}, []string{"no step"}},
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
