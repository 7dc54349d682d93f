package diagnose

import (
	"strings"
	"testing"
)

func portOrder(ports []PortResult) string {
	var got []string
	for _, p := range ports {
		got = append(got, p.Port)
	}
	return strings.Join(got, " ")
}

// The service-impact key: dark, then uncorrected blocks, then Q below the threshold by its
// size, then a forecast limit by time, then the other verdicts (common practice in fault
// triage: restore traffic that is down, then traffic that is errored, then what is about to be).
func TestSortByImpact(t *testing.T) {
	q := func(m float64) map[string]Metric { return map[string]Metric{"q_db": {Margin: &m}} }
	dark := func(n float64) Criterion {
		return Criterion{Metric: "rx_power_dbm", Statistic: "count", Unit: "samples", Measured: n}
	}
	blocks := func(n float64) Criterion {
		return Criterion{Metric: "uncorrected_blocks", Statistic: "sum", Unit: "blocks", Measured: n}
	}
	hours := func(h, horizon float64) Criterion {
		return Criterion{Metric: "lo_offset_mhz", Statistic: "trend", Unit: "h", Measured: h, Margin: h - horizon}
	}
	ports := []PortResult{
		{Port: "pass", Verdict: Pass, Metrics: q(3)},
		{Port: "marginal-pdl", Verdict: Marginal, Metrics: q(0.5), Causes: []Cause{{ID: CausePDLHigh, Confidence: 0.6}}},
		{Port: "fail-pmd", Verdict: Fail, Metrics: q(4)},
		{Port: "nodata", Verdict: NoData},
		{Port: "forecast-5h", Verdict: Marginal, Metrics: q(2), Criteria: []Criterion{hours(5, 24)}},
		{Port: "forecast-1h", Verdict: Marginal, Metrics: q(2), Criteria: []Criterion{hours(1.1, 24)}},
		{Port: "far-trend", Verdict: Marginal, Metrics: q(1), Criteria: []Criterion{hours(900, 24)}},
		{Port: "q-0.1", Verdict: Fail, Metrics: q(-0.1), Criteria: []Criterion{blocks(0)}},
		{Port: "q-3", Verdict: Fail, Metrics: q(-3)},
		{Port: "blocks-10", Verdict: Fail, Metrics: q(-5), Criteria: []Criterion{blocks(10)}},
		{Port: "blocks-1e6", Verdict: Fail, Metrics: q(1), Criteria: []Criterion{blocks(1e6)}},
		{Port: "dark-40", Verdict: Fail, Metrics: q(6), Criteria: []Criterion{dark(40), blocks(1e9)}},
		{Port: "dark-200", Verdict: Fail, Metrics: q(6), Criteria: []Criterion{dark(200)}},
	}
	SortByImpact(ports)
	want := "dark-200 dark-40 blocks-1e6 blocks-10 q-3 q-0.1 forecast-1h forecast-5h fail-pmd marginal-pdl far-trend nodata pass"
	if got := portOrder(ports); got != want {
		t.Errorf("order\n %s\nwant\n %s", got, want)
	}
	if im := ImpactOf(&ports[0]); im.Tier != TierDark || im.Tier.String() != "dark" {
		t.Errorf("top impact %+v, want the dark tier", im)
	}

	SortByMargin(ports)
	if got := portOrder(ports)[:len("blocks-10 q-3 q-0.1")]; got != "blocks-10 q-3 q-0.1" {
		t.Errorf("by margin: %s", portOrder(ports))
	}
	if last := ports[len(ports)-1].Port; last != "nodata" {
		t.Errorf("by margin: %s last, want the port without Q", last)
	}
	SortByPort(ports)
	if got := portOrder(ports); !strings.HasPrefix(got, "blocks-10 blocks-1e6 dark-200") {
		t.Errorf("by port: %s", got)
	}
}
