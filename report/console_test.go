package report

import (
	"bytes"
	"encoding/csv"
	"math"
	"strings"
	"testing"

	"github.com/beatnote/beatnote/diagnose"
)

func TestConsoleFormatValueCarriesUnits(t *testing.T) {
	for _, c := range []struct {
		v    float64
		unit string
		want string
	}{
		{-8.4237, "dBm", "-8.42 dBm"},
		{2400, "ps/nm", "2400 ps/nm"},
		{27.96, "ps", "28.0 ps"},
		{3.8e-3, "", "3.80e-03"},
		{193.1, "THz", "193.10000 THz"},
		{193.10625, "THz", "193.10625 THz"}, // a 6.25 GHz grid point (ITU-T G.694.1)
		{math.NaN(), "dB", "n/a"},
		{math.Inf(1), "h", "∞"},
	} {
		if got := FormatValue(c.v, c.unit); got != c.want {
			t.Errorf("FormatValue(%g, %q) = %q, want %q", c.v, c.unit, got, c.want)
		}
	}
	if got := FormatMargin(1.5, "dB"); got != "+1.50 dB" {
		t.Errorf("FormatMargin = %q", got)
	}
}

func consolePorts() []diagnose.PortResult {
	m := 0.4
	return []diagnose.PortResult{
		{Port: "a|1", Verdict: diagnose.Fail, Samples: 10, Causes: []diagnose.Cause{
			{ID: diagnose.CauseRxPowerLow, Confidence: 0.97, Evidence: []string{"Power fell to -14.0 dBm."}},
			{ID: diagnose.CauseSOPTransient, Confidence: 0.8}},
			Metrics: map[string]diagnose.Metric{"q_db": {Margin: &m}}},
		{Port: "b", Verdict: diagnose.Marginal, Samples: 10, Causes: []diagnose.Cause{{ID: diagnose.CauseSOPTransient, Confidence: 0.7}}},
		{Port: "c", Verdict: diagnose.Pass, Samples: 10},
	}
}

func TestConsoleCountCauses(t *testing.T) {
	got := CountCauses(TriageRows(consolePorts()))
	if len(got) != 2 || got[0].ID != string(diagnose.CauseSOPTransient) || got[0].Top != 1 || got[0].Ports != 2 ||
		got[1].ID != string(diagnose.CauseRxPowerLow) || got[1].Top != 1 || got[1].Ports != 1 {
		t.Errorf("CountCauses = %+v", got)
	}
}

func TestConsoleTriageCSVAndMarkdown(t *testing.T) {
	var b bytes.Buffer
	if err := WriteTriageCSV(&b, TriageRows(consolePorts())); err != nil {
		t.Fatal(err)
	}
	rows, err := csv.NewReader(&b).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	if len(rows) != 4 || rows[1][1] != "a|1" || rows[1][6] != "limit-crossed" || rows[1][7] != "rx-power-low" || rows[1][9] != "sop-transient" || rows[1][10] != "0.40" {
		t.Errorf("CSV rows = %q", rows)
	}
	b.Reset()
	WriteTriageMarkdown(&b, nil, TriageRows(consolePorts()[:1]), TriageRows(consolePorts()))
	md := b.String()
	if !strings.Contains(md, `a\|1`) || !strings.Contains(md, "3 ports — 1 fail, 1 marginal, 1 pass") {
		t.Errorf("markdown:\n%s", md)
	}
}

func TestConsoleWrapKeepsEveryWord(t *testing.T) {
	text := "Received power stepped down by 8.2 dB at 2026-03-14 04:55:00 UTC (-5.5 → -13.7 dBm): a sudden loss such as a dirty or disturbed connector or a bend."
	lines := wrap(text, 30)
	if strings.Join(lines, " ") != text {
		t.Errorf("wrap lost text: %q", lines)
	}
	for _, l := range lines {
		if len([]rune(l)) > 30 && !strings.Contains(l, " ") {
			continue // a single long word may overflow
		}
		if len([]rune(l)) > 30 {
			t.Errorf("line longer than 30: %q", l)
		}
	}
}

// A signal-loss port must not read like a healthy one in triage: the Q figure is marked as from
// lit samples and the dark samples are shown. A marginal port without a cause gets plain words
// and a next step, a post-FEC margin prints in decades.
func TestConsoleDarkSamplesAndNoCause(t *testing.T) {
	m := 3.38
	ports := []diagnose.PortResult{{Port: "sl", Verdict: diagnose.Fail, Samples: 1018,
		Causes:   []diagnose.Cause{{ID: diagnose.CauseSignalLoss, Confidence: 0.88}},
		Metrics:  map[string]diagnose.Metric{"q_db": {Margin: &m}},
		Criteria: []diagnose.Criterion{{Name: "Samples without signal", Metric: "rx_power_dbm", Statistic: "count", Measured: 164, Unit: "samples", Verdict: diagnose.Fail}}}}
	var b bytes.Buffer
	res := &diagnose.Result{Ports: ports}
	if err := WriteTriageText(&b, res, TriageRows(ports), TriageRows(ports)); err != nil {
		t.Fatal(err)
	}
	if out := b.String(); !strings.Contains(out, "+3.38 dB (lit)") || !strings.Contains(out, "1018, 164 dark") {
		t.Errorf("triage text hides the dark samples:\n%s", out)
	}
	b.Reset()
	p := diagnose.PortResult{Port: "x", Verdict: diagnose.Marginal, Criteria: []diagnose.Criterion{{Name: "Post-FEC BER (margin in decades)",
		Metric: "post_fec_ber", Statistic: "max", Measured: 1e-14, Limit: 1e-12, Margin: 2, MarginUnit: "decades", Verdict: diagnose.Pass}}}
	writeCheckPort(&b, &p)
	out := b.String()
	if strings.Contains(out, "confidence floor") || !strings.Contains(out, "Next step") {
		t.Errorf("no-cause text:\n%s", out)
	}
	if !strings.Contains(out, "+2.0 decades") {
		t.Errorf("post-FEC margin not in decades:\n%s", out)
	}
}
