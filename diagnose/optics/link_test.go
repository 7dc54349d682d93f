package optics

import (
	"encoding/json"
	"errors"
	"math"
	"strings"
	"testing"

	"github.com/beatnote/beatnote/rules"
)

func ptr(v float64) *float64 { return &v }

func twoSpanPlan() rules.Plan {
	return rules.Plan{
		Circuit: "test", FrequencyTHz: 193.1, TxPowerDBm: 0,
		Spans: []rules.Span{
			{Name: "A-B", LengthKm: 80, Fiber: "g652", Connectors: 2, Splices: 4},
			{Name: "B-C", LengthKm: 60, Fiber: "g652", MeasuredLossDB: ptr(14)},
		},
		Amplifiers: []rules.Amplifier{
			{Name: "line-B", AfterSpan: 1, NoiseFigureDB: 5},
			{Name: "pre-C", AfterSpan: 2, GainDB: 14, NoiseFigureDB: 6},
		},
		ExtraLossDB: 2,
	}
}

func TestExpectLinkBudget(t *testing.T) {
	// Hand calculation (Python): span 1 loss 0.2·80 + 2·0.5 + 4·0.1 = 17.4 dB (connector and
	// splice defaults, common practice); amplifier 1 restores 0 dBm: OSNR = −17.4 − 5 + 57.961 =
	// 35.561 dB; span 2 measured 14 dB, amplifier 2 OSNR = −14 − 6 + 57.961 = 37.961 dB; cascade
	// 33.586 dB (1/OSNR summed); received −2 dBm after the 2 dB extra loss. CD = D(1552.524 nm)·140
	// with D = 16.842 ps/(nm·km); mean DGD = 0.1·√140 = 1.183 ps.
	prof := rules.Profile{Modulation: "dp-qpsk", Polarizations: 2, BaudGBd: 32}
	e, err := ExpectLink(twoSpanPlan(), prof)
	if err != nil {
		t.Fatal(err)
	}
	checks := []struct {
		name      string
		got, want float64
		tol       float64
	}{
		{"route length", e.RouteLengthKm, 140, 1e-12},
		{"CD", e.CDPsNm, 16.84173 * 140, 0.01},
		{"mean DGD", e.MeanDGDPs, 0.1 * math.Sqrt(140), 1e-9},
		{"span 1 loss", e.Spans[0].LossDB, 17.4, 1e-9},
		{"amp 1 gain", e.Amplifiers[0].GainDB, 17.4, 1e-9},
		{"amp 1 OSNR", e.Amplifiers[0].OSNRdB, 35.5605, 1e-3},
		{"amp 2 OSNR", e.Amplifiers[1].OSNRdB, 37.9605, 1e-3},
		{"ASE OSNR", e.ASEOSNRdB, 33.5865, 1e-3},
		{"rx power", e.RxPowerDBm, -2, 1e-9},
		{"total loss", e.TotalLossDB, 33.4, 1e-9},
	}
	for _, c := range checks {
		if !near(c.got, c.want, c.tol) {
			t.Errorf("%s = %.5f, want %.5f", c.name, c.got, c.want)
		}
	}
	// GSNR below the ASE-only SNR, GOSNR consistent with it, transceiver SNR lowers the total.
	aseSNR := SNRdBFromOSNRdB(e.ASEOSNRdB, 32, 2)
	if !(e.GSNRdB < aseSNR) || !near(e.GOSNRdB, OSNRdBFromSNRdB(e.GSNRdB, 32, 2), 1e-9) {
		t.Errorf("GSNR %g vs ASE SNR %g, GOSNR %g", e.GSNRdB, aseSNR, e.GOSNRdB)
	}
	if e.TotalSNRdB != e.GSNRdB {
		t.Errorf("no back-to-back SNR given, yet total %g ≠ GSNR %g", e.TotalSNRdB, e.GSNRdB)
	}
	prof.BackToBackSNRdB = 20
	e2, _ := ExpectLink(twoSpanPlan(), prof)
	if !near(e2.TotalSNRdB, CombineSNRdB(e2.GSNRdB, 20), 1e-9) {
		t.Errorf("total SNR %g", e2.TotalSNRdB)
	}
	if math.IsNaN(e.OptimumLaunchPowerDBm) {
		t.Error("no optimum launch power")
	}
	joined := strings.Join(e.Assumptions, "; ")
	for _, want := range []string{"per connector", "per splice", "line-B", "1 channel"} {
		if !strings.Contains(joined, want) {
			t.Errorf("assumption %q not listed in %q", want, joined)
		}
	}
}

func TestExpectLinkOverridesAndErrors(t *testing.T) {
	p := twoSpanPlan()
	p.Spans[0].Fiber = "custom"
	p.Spans[0].DispersionPsNmKm = ptr(4)
	e, err := ExpectLink(p, rules.Profile{BaudGBd: 60})
	if err != nil {
		t.Fatal(err)
	}
	if !near(e.Spans[0].CDPsNm, 320, 1e-9) {
		t.Errorf("custom D: span CD %g, want 320", e.Spans[0].CDPsNm)
	}

	bad := []struct {
		mutate func(*rules.Plan)
		field  string
	}{
		{func(p *rules.Plan) { p.Spans[1].Fiber = "g999" }, "fiber"},
		{func(p *rules.Plan) { p.Spans[0].Fiber = "custom" }, "fiber"},
		{func(p *rules.Plan) { p.Spans[0].LengthKm = 0 }, "length_km"},
		{func(p *rules.Plan) { p.Amplifiers[0].AfterSpan = 5 }, "after_span"},
		{func(p *rules.Plan) { p.Spans = nil }, "spans"},
		{func(p *rules.Plan) { p.FrequencyTHz = 1552 }, "frequency_thz"},
		{func(p *rules.Plan) { p.Channels, p.ChannelSpacingGHz = 40, 25 }, "channel_spacing_ghz"},
	}
	for i, b := range bad {
		p := twoSpanPlan()
		b.mutate(&p)
		_, err := ExpectLink(p, rules.Profile{BaudGBd: 32})
		var pe *PlanError
		if !errors.As(err, &pe) || pe.Field != b.field {
			t.Errorf("case %d: error %v, want a PlanError on %s", i, err, b.field)
		}
	}
}

func TestExpectLinkNoAmplifiers(t *testing.T) {
	// An unamplified 40 km link: no ASE (OSNR +Inf), rx = tx − loss.
	p := rules.Plan{TxPowerDBm: -2, Spans: []rules.Span{{LengthKm: 40, Fiber: "g652"}}}
	e, err := ExpectLink(p, rules.Profile{})
	if err != nil {
		t.Fatal(err)
	}
	if !math.IsInf(e.ASEOSNRdB, 1) || !near(e.RxPowerDBm, -10, 1e-9) || e.FrequencyTHz != 193.1 {
		t.Errorf("%+v", e)
	}
	if !math.IsNaN(e.GSNRdB) {
		t.Errorf("GSNR without a symbol rate: %g", e.GSNRdB)
	}
}

func TestExpectLinkOptimumLaunch(t *testing.T) {
	// Three 90 km spans, amplifiers restoring the launch power (gain 0 in the plan), 80 channels
	// at 50 GHz, 32 GBd. At the reported optimum the GSNR must be at its maximum, and there the
	// NLI is half the ASE, so GSNR = ASE-only SNR − 10·log10(1.5) = −1.761 dB (GN model,
	// Poggiolini 2012).
	plan := func(launch float64) rules.Plan {
		p := rules.Plan{FrequencyTHz: 193.1, TxPowerDBm: launch, Channels: 80, ChannelSpacingGHz: 50}
		for i := 1; i <= 3; i++ {
			p.Spans = append(p.Spans, rules.Span{LengthKm: 90, Fiber: "g652"})
			p.Amplifiers = append(p.Amplifiers, rules.Amplifier{AfterSpan: i, NoiseFigureDB: 5})
		}
		return p
	}
	prof := rules.Profile{Polarizations: 2, BaudGBd: 32}
	e0, err := ExpectLink(plan(0), prof)
	if err != nil {
		t.Fatal(err)
	}
	popt := e0.OptimumLaunchPowerDBm
	if !(popt > -10 && popt < 10) {
		t.Fatalf("optimum launch %g dBm", popt)
	}
	at, _ := ExpectLink(plan(popt), prof)
	for _, d := range []float64{-1, -0.2, 0.2, 1} {
		e, _ := ExpectLink(plan(popt+d), prof)
		if !(e.GSNRdB < at.GSNRdB) {
			t.Errorf("GSNR at optimum%+g dB = %g, not below %g", d, e.GSNRdB, at.GSNRdB)
		}
	}
	aseSNR := SNRdBFromOSNRdB(at.ASEOSNRdB, 32, 2)
	if !near(at.GSNRdB, aseSNR-10*math.Log10(1.5), 1e-6) {
		t.Errorf("GSNR at optimum %g, ASE SNR %g: want a 1.761 dB gap", at.GSNRdB, aseSNR)
	}
}

func TestLinkExpectationJSON(t *testing.T) {
	// An unamplified link has an infinite ASE OSNR and, without a symbol rate, no GSNR: JSON
	// has no numbers for those, so they must come out as null rather than fail the encoder.
	p := rules.Plan{TxPowerDBm: -2, Spans: []rules.Span{{Name: "only", LengthKm: 40, Fiber: "g652"}}}
	e, err := ExpectLink(p, rules.Profile{})
	if err != nil {
		t.Fatal(err)
	}
	b, err := json.Marshal(e)
	if err != nil {
		t.Fatal(err)
	}
	var back map[string]any
	if err := json.Unmarshal(b, &back); err != nil {
		t.Fatalf("%v in %s", err, b)
	}
	if back["ase_osnr_db"] != nil || back["gsnr_db"] != nil {
		t.Errorf("non-finite figures not null: %s", b)
	}
	if got, _ := back["rx_power_dbm"].(float64); !near(got, -10, 1e-9) {
		t.Errorf("rx_power_dbm = %v", back["rx_power_dbm"])
	}
	spans, _ := back["spans"].([]any)
	if len(spans) != 1 || spans[0].(map[string]any)["nli_snr_db"] != nil {
		t.Errorf("spans: %v", back["spans"])
	}
	if !strings.HasPrefix(string(b), `{"frequency_thz":193.1,`) {
		t.Errorf("field order not kept: %.60s", b)
	}
}
