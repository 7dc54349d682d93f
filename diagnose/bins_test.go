package diagnose

import (
	"math"
	"strings"
	"testing"

	"github.com/beatnote/beatnote/parse"
)

// criterion finds the criterion on metric judged with statistic st.
func criterion(t *testing.T, res PortResult, metric, st string) Criterion {
	t.Helper()
	for _, c := range res.Criteria {
		if c.Metric == metric && c.Statistic == st {
			return c
		}
	}
	t.Fatalf("no %s criterion on %s in %+v", st, metric, res.Criteria)
	return Criterion{}
}

// binned gives s performance-monitoring companions: low[q](i) and high[q](i) per bin.
func binned(s *parse.Series, lengthMs int64, low, high map[parse.Quantity]func(i int) float64) {
	n := s.Len()
	s.Bins = &parse.Bins{LengthMs: make([]int64, n)}
	for i := range s.Bins.LengthMs {
		s.Bins.LengthMs[i] = lengthMs
	}
	fill := func(dst *[parse.NumQuantities][]float64, src map[parse.Quantity]func(int) float64) {
		for q, f := range src {
			dst[q] = make([]float64, n)
			for i := range dst[q] {
				dst[q][i] = f(i)
			}
		}
	}
	fill(&s.Bins.Low, low)
	fill(&s.Bins.High, high)
}

// A day of 15-minute bins whose averages are healthy but one of whose bins dipped: the
// criteria judge the bins' extremes (lowest Q, highest DGD, lowest and highest power), so the
// port fails where the averages alone would pass.
func TestBinsJudgeTheExtremes(t *testing.T) {
	p, r := testSetup(t, "400g-dp-16qam-cfec")
	const bin = 15 * 60 * 1000
	avg := func(v float64) func(int) float64 { return func(int) float64 { return v } }
	cols := map[parse.Quantity]func(int) float64{
		parse.QdB: avg(11), parse.DGDps: avg(3), parse.RxPowerDBm: avg(-8),
	}
	plain := AnalyzePort(newSeries(96, bin, cols), p, nil, nil, r)
	if q := criterion(t, plain, "q_db", "min"); q.Measured != 11 || q.Verdict != Pass {
		t.Fatalf("averages alone: Q %+v", q)
	}
	if d := criterion(t, plain, "dgd_ps", string(r.DGDStatistic)); d.Measured != 3 {
		t.Fatalf("averages alone: DGD %+v", d)
	}

	s := newSeries(96, bin, cols)
	dip := func(v, at float64) func(int) float64 {
		return func(i int) float64 {
			if i == 40 {
				return at
			}
			return v
		}
	}
	binned(s, bin,
		map[parse.Quantity]func(int) float64{parse.QdB: dip(10.5, 6.5), parse.RxPowerDBm: dip(-8.5, -13)},
		map[parse.Quantity]func(int) float64{parse.DGDps: dip(5, 30), parse.RxPowerDBm: avg(-7.5)})
	res := AnalyzePort(s, p, nil, nil, r)
	// Expected values are the extremes written into the bins above; the limits are the
	// profile's (FEC-threshold Q, 28 ps instantaneous DGD, −12 dBm sensitivity).
	for _, tc := range []struct {
		metric, st string
		measured   float64
		verdict    Verdict
	}{
		{"q_db", "min", 6.5, Fail},
		{"dgd_ps", "max", 30, Fail},
		{"rx_power_dbm", "min", -13, Fail},
		{"rx_power_dbm", "max", -7.5, Pass},
	} {
		c := criterion(t, res, tc.metric, tc.st)
		if c.Measured != tc.measured || c.Verdict != tc.verdict || !strings.Contains(c.Source, "performance-monitoring bins") {
			t.Errorf("%s %s: %+v; want %g %s, source naming the bins", tc.metric, tc.st, c, tc.measured, tc.verdict)
		}
	}
	if m := res.Metrics["dgd_ps"]; m.Max != 30 || m.P50 != 3 {
		t.Errorf("DGD metric %+v: max must cover the bins, p50 stays the averages'", m)
	}
	if res.Verdict != Fail {
		t.Errorf("verdict %s, want fail", res.Verdict)
	}
}

// A BER-only export giving each bin's maximum: the Q criterion judges the Q of the highest
// bin BER. Expected Q from Q = √2·erfc⁻¹(2·BER) computed independently (Python math.erfc
// inverted by bisection): BER 2.0e-4 → 10.98027 dB.
func TestBinsDerivedQ(t *testing.T) {
	p, r := testSetup(t, "400g-dp-16qam-cfec")
	const bin = 15 * 60 * 1000
	s := newSeries(96, bin, map[parse.Quantity]func(int) float64{parse.PreFECBER: func(int) float64 { return 1e-5 }})
	binned(s, bin, nil, map[parse.Quantity]func(int) float64{parse.PreFECBER: func(i int) float64 {
		if i == 7 {
			return 2.0e-4
		}
		return 2e-5
	}})
	res := AnalyzePort(s, p, nil, nil, r)
	c := criterion(t, res, "q_db", "min")
	if math.Abs(c.Measured-10.98027) > 1e-4 || !strings.Contains(c.Source, "bins") {
		t.Errorf("Q from the highest bin BER: %+v, want 10.98027 dB", c)
	}
	if m := res.Metrics["pre_fec_ber"]; m.Max != 2.0e-4 {
		t.Errorf("BER metric max %g, want the highest bin maximum 2e-4", m.Max)
	}
}
