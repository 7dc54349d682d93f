package diagnose

import (
	"encoding/json"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"github.com/beatnote/beatnote/diagnose/optics"
	"github.com/beatnote/beatnote/parse"
	"github.com/beatnote/beatnote/rules"
)

// These tests build series by hand, from simple closed forms, independently of samples/synth.

const t0 = int64(1_773_446_400_000) // 2026-03-14T00:00:00Z

func testSetup(t *testing.T, id string) (rules.Profile, rules.Rules) {
	t.Helper()
	ps, err := rules.BuiltinProfiles()
	if err != nil {
		t.Fatal(err)
	}
	p, err := rules.ProfileByID(ps, id)
	if err != nil {
		t.Fatal(err)
	}
	r, err := rules.DefaultRules()
	if err != nil {
		t.Fatal(err)
	}
	return p, r
}

// newSeries makes n samples every step ms with the given per-sample functions.
func newSeries(n int, stepMs int64, cols map[parse.Quantity]func(i int) float64) *parse.Series {
	s := &parse.Series{Port: "test-1"}
	for i := 0; i < n; i++ {
		s.TimesMs = append(s.TimesMs, t0+int64(i)*stepMs)
	}
	for q, f := range cols {
		v := make([]float64, n)
		for i := range v {
			v[i] = f(i)
		}
		s.Values[q] = v
	}
	return s
}

func near(t *testing.T, name string, got, want, tol float64) {
	t.Helper()
	if !(math.Abs(got-want) <= tol) {
		t.Errorf("%s = %.6g, want %.6g (±%g)", name, got, want, tol)
	}
}

func topCause(p PortResult) CauseID {
	if len(p.Causes) == 0 {
		return ""
	}
	return p.Causes[0].ID
}

// noise is a small deterministic jitter.
func noise(rng *rand.Rand, sd float64) float64 { return sd * rng.NormFloat64() }

// Transceiver ceiling and implied OSNR: values computed with scipy 1.10 (brentq on the exact
// Gray 16QAM BER of Cho & Yoon 2002 gives Es/N0 13.589 dB at BER 1.22e-2; then
// SNR_trx = SNR_th/(1 − 10^(−5.61/10)) = 14.984 dB; an eSNR of 12 dB leaves a line SNR of
// 15.036 dB, i.e. OSNR 21.837 dB at 59.84375 GBd).
func TestTransceiverCeilingAndImpliedOSNR(t *testing.T) {
	p, r := testSetup(t, "400g-dp-16qam-cfec")
	s := newSeries(10, 60_000, map[parse.Quantity]func(int) float64{parse.PreFECBER: func(int) float64 { return 1e-3 }})
	pc := newPortCtx(s, p, nil, nil, r, false)
	near(t, "SNR at threshold", pc.snrThDB, 13.589023773307291, 1e-3)
	near(t, "transceiver ceiling", pc.snrTrxDB, 14.984382431885475, 1e-3)
	near(t, "implied OSNR", pc.impliedOSNRdB(12), 21.837460948997403, 1e-3)
	near(t, "round trip", pc.expectedESNRdB(pc.impliedOSNRdB(12)), 12, 1e-9)
}

// A log with pre-FEC BER only: Q and eSNR are derived (marked derived). Q of BER 1e-3 is
// 9.800 dB and the 16QAM Es/N0 at BER 1.791e-3 is 16.000 dB (computed independently with Python's math library).
func TestDerivedMetricsFromBER(t *testing.T) {
	p, r := testSetup(t, "400g-dp-16qam-cfec")
	s := newSeries(100, 60_000, map[parse.Quantity]func(int) float64{
		parse.PreFECBER:  func(i int) float64 { return []float64{1e-3, 1.791e-3}[i%2] },
		parse.RxPowerDBm: func(int) float64 { return -6 },
	})
	res := AnalyzePort(s, p, nil, nil, r)
	q, ok := res.Metrics["q_db"]
	if !ok || !q.Derived {
		t.Fatalf("q_db missing or not marked derived: %+v", q)
	}
	near(t, "q_db max (BER 1e-3)", q.Max, 9.800, 2e-3)
	e := res.Metrics["esnr_db"]
	if !e.Derived {
		t.Error("esnr_db not marked derived")
	}
	near(t, "esnr_db min (BER 1.791e-3)", e.Min, 16.000, 2e-3)
	// Q limit is the Q of the FEC threshold 1.22e-2: 7.047 dB (computed with Python's math.erfc; OIF-400ZR-01.0 threshold, from memory).
	near(t, "q_db limit", *q.Limit, 7.047, 2e-3)
	near(t, "q_db margin (min statistic)", *q.Margin, q.Min-*q.Limit, 1e-12)
	for _, want := range []CauseID{CausePMD, CausePDLHigh, CauseSOPTransient, CauseLOOffset, CauseCDOverLimit, CauseCDMismatch} {
		found := false
		for _, n := range res.NotJudged {
			found = found || strings.HasPrefix(n, string(want)+":")
		}
		if !found {
			t.Errorf("NotJudged lacks %s: %v", want, res.NotJudged)
		}
	}
	if res.Verdict != Pass || len(res.Causes) != 0 {
		t.Errorf("verdict %s causes %v, want pass and none", res.Verdict, res.Causes)
	}
}

// The LO offset drifts 200 MHz/h from 1000 MHz over 12 h of 1-min samples: at the end it is at
// 3400 MHz, so the ±3600 MHz capture limit is (3600 − 3400)/200 = 1 h away (arithmetic).
func TestLODriftProjection(t *testing.T) {
	p, r := testSetup(t, "400g-dp-16qam-cfec")
	n := 721
	s := newSeries(n, 60_000, map[parse.Quantity]func(int) float64{
		parse.LOOffsetMHz: func(i int) float64 { return 1000 + 200*float64(i)/60 },
		parse.PreFECBER:   func(int) float64 { return 1e-3 },
		parse.RxPowerDBm:  func(int) float64 { return -6 },
	})
	res := AnalyzePort(s, p, nil, nil, r)
	tr := res.Analysis.LOTrend
	if tr == nil {
		t.Fatal("no LO trend")
	}
	near(t, "slope MHz/h", tr.Slope, 200, 1e-6)
	near(t, "hours to limit", tr.HoursToLimit, 1, 1e-6)
	if topCause(res) != CauseLOOffset {
		t.Errorf("top cause %q, want lo-offset: %+v", topCause(res), res.Causes)
	}
	if res.Verdict != Marginal {
		t.Errorf("verdict %s, want marginal (3400 MHz is inside the range but past 80 %% of it)", res.Verdict)
	}
}

// A 4 dB step loss in received power (−6 → −10 dBm at sample 400 of 600) is found at the
// planted time with the planted size, and named rx-power-low.
func TestStepLossIsRxPowerLow(t *testing.T) {
	p, r := testSetup(t, "400g-dp-16qam-cfec")
	rng := rand.New(rand.NewPCG(1, 2))
	s := newSeries(600, 60_000, map[parse.Quantity]func(int) float64{
		parse.RxPowerDBm: func(i int) float64 {
			if i >= 400 {
				return -10 + noise(rng, 0.05)
			}
			return -6 + noise(rng, 0.05)
		},
		parse.PreFECBER: func(int) float64 { return 1e-3 },
	})
	res := AnalyzePort(s, p, nil, nil, r)
	st := res.Analysis.PowerSteps
	if len(st) != 1 {
		t.Fatalf("power steps %+v, want 1", st)
	}
	if st[0].TimeMs != t0+400*60_000 {
		t.Errorf("step at %s, want sample 400", clock(st[0].TimeMs))
	}
	near(t, "step dB", st[0].Step, -4, 0.05)
	if topCause(res) != CauseRxPowerLow {
		t.Errorf("top cause %q, want rx-power-low: %+v", topCause(res), res.Causes)
	}
}

// Light lost for 30 of 300 samples (power −45 dBm, BER 0.5): signal-loss, a failing "samples
// without signal" criterion, and no rx-power-low (the lit samples are at −6 dBm).
func TestSignalLoss(t *testing.T) {
	p, r := testSetup(t, "400g-dp-16qam-cfec")
	dark := func(i int) bool { return i >= 100 && i < 130 }
	s := newSeries(300, 60_000, map[parse.Quantity]func(int) float64{
		parse.RxPowerDBm: func(i int) float64 {
			if dark(i) {
				return -45
			}
			return -6
		},
		parse.PreFECBER: func(i int) float64 {
			if dark(i) {
				return 0.5
			}
			return 1e-3
		},
	})
	res := AnalyzePort(s, p, nil, nil, r)
	if topCause(res) != CauseSignalLoss || res.Verdict != Fail {
		t.Fatalf("verdict %s causes %+v, want fail with signal-loss", res.Verdict, res.Causes)
	}
	for _, c := range res.Causes {
		if c.ID == CauseRxPowerLow {
			t.Errorf("rx-power-low listed for a dark period: %+v", c)
		}
	}
}

// SOP-rate spikes of 400 krad/s at five known times with BER bursts one sample later:
// sop-transient, with five coincidences at a lag (spike − burst) of −60 s.
func TestSOPCoincidence(t *testing.T) {
	p, r := testSetup(t, "400g-dp-16qam-cfec")
	spikes := map[int]bool{50: true, 150: true, 260: true, 330: true, 420: true}
	s := newSeries(500, 60_000, map[parse.Quantity]func(int) float64{
		parse.SOPRateKradPerS: func(i int) float64 {
			if spikes[i] {
				return 400
			}
			return 2
		},
		parse.PreFECBER: func(i int) float64 {
			if spikes[i-1] {
				return 2e-2
			}
			return 1e-3
		},
		parse.RxPowerDBm: func(int) float64 { return -6 },
	})
	res := AnalyzePort(s, p, nil, nil, r)
	if topCause(res) != CauseSOPTransient {
		t.Fatalf("causes %+v, want sop-transient on top", res.Causes)
	}
	co := res.Analysis.Coincidences
	if len(co) != 5 {
		t.Fatalf("%d coincidences, want 5", len(co))
	}
	for _, c := range co {
		if c.LagS != -60 {
			t.Errorf("lag %g s, want −60 s (spike one sample before the burst)", c.LagS)
		}
	}
}

// Maxwellian DGD with a mean of 12 ps against the 28 ps tolerance of the 400ZR class, BER
// rising with DGD: pmd. The outage probability reported is the Maxwellian tail at the fitted
// mean (Karlsson 2001 Maxwellian tail, computed with Python's math.erfc: P(τ > 2.5·mean) = 1.180e-3 — checked here at mean 11.2 ps exactly).
func TestPMD(t *testing.T) {
	p, r := testSetup(t, "400g-dp-16qam-cfec")
	rng := rand.New(rand.NewPCG(7, 7))
	dgd := make([]float64, 1440)
	for i := range dgd {
		dgd[i] = optics.MaxwellSample(rng, 12)
	}
	s := newSeries(1440, 60_000, map[parse.Quantity]func(int) float64{
		parse.DGDps:      func(i int) float64 { return dgd[i] },
		parse.PreFECBER:  func(i int) float64 { return 1e-3 * math.Pow(10, dgd[i]/20) },
		parse.RxPowerDBm: func(int) float64 { return -6 },
	})
	res := AnalyzePort(s, p, nil, nil, r)
	if topCause(res) != CausePMD {
		t.Fatalf("causes %+v, want pmd on top", res.Causes)
	}
	f := res.Analysis.DGDFit
	near(t, "fitted mean", f.MeanPs, 12, 0.5)
	near(t, "tail at 2.5×mean", optics.MaxwellExceedProbability(28, 28/2.5), 1.180e-3, 1e-6)
	if f.KSPValue < 0.01 {
		t.Errorf("Maxwellian samples rejected by the KS test: p = %g", f.KSPValue)
	}
}

// Degenerate inputs: one sample, a quantity that is all missing, BER 0. No panic, and the JSON
// encodes (no NaN or Inf leaks into it).
func TestDegenerateInputsEncode(t *testing.T) {
	p, r := testSetup(t, "100g-dp-qpsk")
	for _, s := range []*parse.Series{
		newSeries(0, 60_000, map[parse.Quantity]func(int) float64{parse.PreFECBER: func(int) float64 { return 0 }}),
		newSeries(1, 60_000, map[parse.Quantity]func(int) float64{parse.PreFECBER: func(int) float64 { return 0 }}),
		newSeries(5, 60_000, map[parse.Quantity]func(int) float64{parse.DGDps: func(int) float64 { return math.NaN() }, parse.QdB: func(int) float64 { return 12 }}),
		newSeries(3, 1000, map[parse.Quantity]func(int) float64{parse.LOOffsetMHz: func(int) float64 { return 0 }}),
	} {
		res := AnalyzePort(s, p, nil, nil, r)
		if _, err := json.Marshal(Result{Ports: []PortResult{res}}); err != nil {
			t.Errorf("%+v: JSON: %v", res, err)
		}
	}
}

// Random ports — any subset of columns, random lengths and gaps, NaNs, extreme but legal values —
// never panic and always encode as JSON.
func TestRandomPortsNeverPanic(t *testing.T) {
	p, r := testSetup(t, "400g-dp-16qam-cfec")
	rng := rand.New(rand.NewPCG(3, 4))
	ranges := map[parse.Quantity][2]float64{
		parse.PreFECBER: {0, 0.5}, parse.PostFECBER: {0, 1e-3}, parse.UncorrectedBlocks: {0, 1e6},
		parse.QdB: {-5, 20}, parse.ESNRdB: {-5, 30}, parse.OSNRdB: {0, 45}, parse.CDpsPerNm: {-60000, 60000},
		parse.DGDps: {0, 200}, parse.PDLdB: {0, 10}, parse.SOPRateKradPerS: {0, 5000}, parse.LOOffsetMHz: {-5000, 5000},
		parse.RxPowerDBm: {-50, 30}, parse.TxPowerDBm: {-20, 10}, parse.FrequencyTHz: {191, 197},
	}
	for k := 0; k < 200; k++ {
		n := rng.IntN(300)
		s := &parse.Series{Port: "rand"}
		tm := t0
		for i := 0; i < n; i++ {
			tm += 1000 * int64(1+rng.IntN(3)*rng.IntN(100))
			s.TimesMs = append(s.TimesMs, tm)
		}
		for q, lim := range ranges {
			if rng.IntN(2) == 0 {
				continue
			}
			v := make([]float64, n)
			c := lim[0] + rng.Float64()*(lim[1]-lim[0])
			for i := range v {
				switch rng.IntN(10) {
				case 0:
					v[i] = math.NaN()
				case 1:
					v[i] = lim[rng.IntN(2)]
				default:
					v[i] = math.Min(lim[1], math.Max(lim[0], c+0.05*(lim[1]-lim[0])*rng.NormFloat64()))
				}
			}
			s.Values[q] = v
		}
		var plan *rules.Plan
		var exp *optics.LinkExpectation
		if k%2 == 1 {
			plan = &rules.Plan{Circuit: "rand", FrequencyTHz: 193.1, TxPowerDBm: -2,
				Spans:      []rules.Span{{Name: "s1", LengthKm: 40 + float64(k), Fiber: "g652"}},
				Amplifiers: []rules.Amplifier{{Name: "pre", AfterSpan: 1, GainDB: 15, NoiseFigureDB: 5}}}
			e, err := optics.ExpectLink(*plan, p)
			if err != nil {
				t.Fatal(err)
			}
			exp = &e
		}
		res := AnalyzePort(s, p, plan, exp, r)
		if _, err := json.Marshal(Result{Ports: []PortResult{res}}); err != nil {
			t.Fatalf("port %d (%d samples): JSON: %v", k, n, err)
		}
	}
}

// The eSNR derived per sample from the BER is, bit for bit, optics.SNRdBFromBER of that sample's
// BER, whether the value was met before in the port, in another port, or not at all (the
// inversion is memoised per value and format). BER values of 3 significant digits, as exports
// write them (common practice), with repeats inside and across ports.
func TestDerivedESNRIsTheInversionOfEachSample(t *testing.T) {
	for _, id := range []string{"400g-dp-16qam-cfec", "100g-dp-qpsk"} {
		p, r := testSetup(t, id)
		for port := range 3 {
			s := newSeries(300, 60_000, map[parse.Quantity]func(int) float64{
				parse.PreFECBER:  func(i int) float64 { return float64(100+(i*7+port*13)%250) * 1e-5 },
				parse.RxPowerDBm: func(int) float64 { return -6 },
			})
			d := derive(s, figuresOf(p).mod, r.SignalLossFloorDBm)
			for i, b := range s.Values[parse.PreFECBER] {
				if want := optics.SNRdBFromBER(figuresOf(p).mod, b); math.Float64bits(d.esnr[i]) != math.Float64bits(want) {
					t.Fatalf("%s port %d sample %d: eSNR %v from BER %v, want %v", id, port, i, d.esnr[i], b, want)
				}
			}
		}
	}
}
