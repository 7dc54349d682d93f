package diagnose

import (
	"math"
	"math/rand/v2"
	"slices"
	"strings"
	"testing"

	"github.com/beatnote/beatnote/diagnose/optics"
	"github.com/beatnote/beatnote/parse"
	"github.com/beatnote/beatnote/rules"
)

func causeIDs(p PortResult) []CauseID {
	var ids []CauseID
	for _, c := range p.Causes {
		ids = append(ids, c.ID)
	}
	return ids
}

func hasCause(p PortResult, id CauseID) bool {
	for _, c := range p.Causes {
		if c.ID == id {
			return true
		}
	}
	return false
}

// A marginal or failing verdict always names a cause when a criterion says which physics is at
// fault. Mean DGD 7.5 ps on the 400ZR class: the Maxwellian ratio of the DGD
// exceeded with probability 4.2e-5 to the mean is 3.000 (bisection on the Maxwellian tail
// P(τ > x) = erfc(x/(a√2)) + √(2/π)(x/a)e^(−x²/2a²), a = mean·√(π/8), M. Karlsson, JLT 19(3),
// 2001; computed with Python's math library), so the mean-DGD limit is 28/3.000 = 9.333 ps and
// 7.5 ps is above 0.7 of it (marginal), while the p99 (about 2.1 × mean = 16 ps) stays below
// 0.7 × 28 ps: none of the instantaneous tests fires.
func TestMarginalCriterionNamesItsCause(t *testing.T) {
	p, r := testSetup(t, "400g-dp-16qam-cfec")
	for seed := uint64(1); seed <= 5; seed++ {
		res := AnalyzePort(styleLog(t, seed, func(i int, rng *rand.Rand, v *styleSample) { v.dgd = optics.MaxwellSample(rng, 7.5) }), p, nil, nil, r)
		var mean *Criterion
		for i := range res.Criteria {
			if res.Criteria[i].Statistic == "mean" {
				mean = &res.Criteria[i]
			}
		}
		if mean == nil || math.Abs(mean.Limit-9.333) > 0.01 {
			t.Fatalf("seed %d: mean-DGD criterion %+v, want limit 9.333 ps", seed, mean)
		}
		if !strings.Contains(mean.Source, "28 ps instantaneous") || !strings.Contains(mean.Source, "mean-DGD figure is 10 ps") {
			t.Errorf("seed %d: mean-DGD source does not explain the limit next to the profile's 10 ps: %q", seed, mean.Source)
		}
		if mean.Verdict != Marginal || res.Verdict == Pass {
			t.Errorf("seed %d: mean DGD %.2f ps: criterion %s, port %s; want marginal", seed, mean.Measured, mean.Verdict, res.Verdict)
			continue
		}
		if !hasCause(res, CausePMD) {
			t.Errorf("seed %d: verdict %s with causes %v, want pmd listed", seed, res.Verdict, causeIDs(res))
		}
	}
	// SOP rate at 80 % of the 50 krad/s tracking speed (wind on an aerial cable), BER unaffected:
	// the SOP criterion is marginal above 0.7 of the tracking speed, so sop-transient is named.
	res := AnalyzePort(styleLog(t, 3, func(i int, rng *rand.Rand, v *styleSample) {
		if i%50 == 7 {
			v.sop = 40
		}
	}), p, nil, nil, r)
	if res.Verdict != Pass && !hasCause(res, CauseSOPTransient) {
		t.Errorf("SOP at 80 %% of tracking: verdict %s, causes %v, want sop-transient", res.Verdict, causeIDs(res))
	}
}

// Q short of the FEC threshold with the OSNR far above the requirement, normal power and every
// impairment in range: the noise is not amplifier noise. Without a link plan nonlinear
// interference, a transceiver fault and filtering leave the same signature, so the port gets
// the noise-family differential with nonlinear in it, and the evidence says they cannot be told
// apart here. A 6 dB SNR penalty on the 19 dB-ceiling style
// log takes the Q within 1 dB of the threshold while the OSNR stays at 32 dB (26 dB required).
func TestQShortWithGoodOSNRNamesNonlinear(t *testing.T) {
	p, r := testSetup(t, "400g-dp-16qam-cfec")
	for seed := uint64(1); seed <= 5; seed++ {
		pen := 4.5 + 0.5*float64(seed%3) // 4.5, 5 and 5.5 dB: below and above the eSNR-gap test
		res := AnalyzePort(styleLog(t, seed, func(i int, rng *rand.Rand, v *styleSample) { v.penalty = pen }), p, nil, nil, r)
		if res.Verdict == Pass {
			t.Fatalf("seed %d: a 6 dB penalty should leave the Q marginal; got pass", seed)
		}
		if len(res.Causes) == 0 {
			t.Errorf("seed %d: verdict %s with no cause", seed, res.Verdict)
			continue
		}
		if got := topCause(res); got != CauseNonlinear && got != CauseTransceiver && got != CauseFiltering {
			t.Errorf("seed %d: top cause %q, want one of nonlinear, transceiver, filtering", seed, got)
		}
		if !slices.Contains(causeIDs(res), CauseNonlinear) {
			t.Errorf("seed %d: nonlinear not in the differential %v", seed, causeIDs(res))
		}
		if ev := strings.Join(res.Causes[0].Evidence, " "); !strings.Contains(ev, "transceiver") || !strings.Contains(ev, "nonlinearity") {
			t.Errorf("seed %d: evidence does not name the alternatives: %q", seed, ev)
		}
	}
}

// One sample where the receiver lost lock (BER 0.4) with the received power normal and the DGD
// at 2.2× the 28 ps instantaneous tolerance: a loss of lock, not a signal loss, and pmd is named
// (common practice: loss of signal is raised from the optical power, loss of lock from the
// decoded signal).
func TestLockLossWithLightIsNotSignalLoss(t *testing.T) {
	p, r := testSetup(t, "400g-dp-16qam-cfec")
	for seed := uint64(1); seed <= 5; seed++ {
		s := styleLog(t, seed, nil)
		s.Values[parse.PreFECBER][300] = 0.4
		s.Values[parse.DGDps][300] = 2.2 * p.DGDTolerancePs
		res := AnalyzePort(s, p, nil, nil, r)
		if hasCause(res, CauseSignalLoss) {
			t.Errorf("seed %d: signal-loss named for a loss of lock at %.1f dBm", seed, s.Values[parse.RxPowerDBm][300])
		}
		if got := topCause(res); got != CausePMD || res.Verdict != Fail {
			t.Errorf("seed %d: verdict %s, top %q, want fail with pmd", seed, res.Verdict, got)
		}
		// Without the DGD excursion nothing explains it: no cause is invented, a note says so.
		s2 := styleLog(t, seed, nil)
		s2.Values[parse.PreFECBER][300] = 0.4
		res = AnalyzePort(s2, p, nil, nil, r)
		if hasCause(res, CauseSignalLoss) || !hasNote(res, "loss of lock") {
			t.Errorf("seed %d: unexplained lock loss: causes %v, notes %q", seed, causeIDs(res), res.NotJudged)
		}
	}
}

// metrics.<m>.limit and margin are filled for every metric a criterion judges; for the received
// power the binding edge is given — the 0 dBm overload edge of the 400ZR class included (OIF
// 400ZR IA: −12…0 dBm window, as in the built-in profile).
func TestMetricsCarryTheCriterionLimits(t *testing.T) {
	p, r := testSetup(t, "400g-dp-16qam-cfec")
	for _, rx := range []float64{-11, -5, -1.5, +1} {
		res := AnalyzePort(styleLog(t, 2, func(i int, rng *rand.Rand, v *styleSample) { v.rx = rx + 0.1*rng.NormFloat64() }), p, nil, nil, r)
		for _, c := range res.Criteria {
			m, ok := res.Metrics[c.Metric]
			if !ok || m.Limit == nil || m.Margin == nil {
				t.Errorf("rx %+.1f dBm: criterion %q judges %s but the metric has no limit/margin", rx, c.Name, c.Metric)
			}
		}
		m := res.Metrics["rx_power_dbm"]
		wantLimit, wantMargin := p.RxPowerMinDBm, m.Min-p.RxPowerMinDBm
		if p.RxPowerMaxDBm-m.Max < m.Min-p.RxPowerMinDBm {
			wantLimit, wantMargin = p.RxPowerMaxDBm, p.RxPowerMaxDBm-m.Max
		}
		if m.Limit == nil || *m.Limit != wantLimit || math.Abs(*m.Margin-wantMargin) > 1e-9 {
			t.Errorf("rx %+.1f dBm: rx_power_dbm limit/margin %v/%v, want %v/%v", rx, m.Limit, m.Margin, wantLimit, wantMargin)
		}
	}
}

// Post-FEC BER margin on the log scale: log10(1e-12/1e-14) = 2 decades, log10(1e-12/3.13e-2) =
// −10.4955 (Python math.log10), a counted 0 taken as 1e-15 → 3.
func TestDecadesAndPValues(t *testing.T) {
	for _, c := range []struct{ limit, meas, want float64 }{{1e-12, 1e-14, 2}, {1e-12, 3.13e-2, -10.4955}, {1e-12, 0, 3}} {
		if got := decadesBelow(c.limit, c.meas); math.Abs(got-c.want) > 1e-4 {
			t.Errorf("decadesBelow(%g, %g) = %g, want %g", c.limit, c.meas, got, c.want)
		}
	}
	for _, c := range []struct {
		p    float64
		want string
	}{{1e-321, "p < 0.001"}, {0.0009, "p < 0.001"}, {0.0042, "p = 0.0042"}, {0.31, "p = 0.31"}} {
		if got := pval(c.p); got != c.want {
			t.Errorf("pval(%g) = %q, want %q", c.p, got, c.want)
		}
	}
}

// A transceiver tuned more than one 6.25 GHz step of the ITU-T G.694.1 flexible grid away from
// the plan's frequency is flagged: 192.2 vs 193.1 THz is 900 GHz, 144 grid steps, 18 × 50 GHz.
func TestPlanFlagsAnotherChannel(t *testing.T) {
	p, r := testSetup(t, "400g-dp-16qam-cfec")
	for _, c := range []struct {
		thz  float64
		flag bool
	}{{192.2, true}, {193.1, false}, {193.105, false}, {193.1125, true}} {
		s := styleLog(t, 1, nil)
		s.Values[parse.FrequencyTHz] = make([]float64, s.Len())
		for i := range s.Values[parse.FrequencyTHz] {
			s.Values[parse.FrequencyTHz][i] = c.thz
		}
		exp := &optics.LinkExpectation{FrequencyTHz: 193.1, RxPowerDBm: math.NaN(), ASEOSNRdB: math.NaN(), GOSNRdB: math.NaN(), MeanDGDPs: math.NaN()}
		res := AnalyzePort(s, p, &rules.Plan{Circuit: "T-1"}, exp, r)
		note := ""
		for _, pm := range res.PlanVsMeasured {
			if pm.Quantity == "frequency_thz" {
				note = pm.Note
			}
		}
		if got := strings.Contains(note, "another channel than planned"); got != c.flag {
			t.Errorf("%.4f THz vs 193.1 planned: note %q, flagged %v, want %v", c.thz, note, got, c.flag)
		}
		if c.thz == 192.2 && !strings.Contains(note, "144 steps") {
			t.Errorf("192.2 THz: note %q should count 144 grid steps", note)
		}
	}
}

// Compliance, explanation and risk are kept apart: received power 1 dB above the sensitivity
// limit with the Q margin fine is a marginal criterion (compliance) and a risk note that says
// how much more loss the port can take; the signal itself is not yet short.
func TestNearSensitivityWithQFineIsARisk(t *testing.T) {
	p, r := testSetup(t, "400g-dp-16qam-cfec")
	for seed := uint64(1); seed <= 3; seed++ {
		res := AnalyzePort(styleLog(t, seed, func(i int, rng *rand.Rand, v *styleSample) { v.rx = p.RxPowerMinDBm + 1 }), p, nil, nil, r)
		if qm := *res.Metrics["q_db"].Margin; qm < r.QMarginalMarginDB {
			t.Fatalf("seed %d: Q margin %.2f dB: the fixture should keep the Q fine", seed, qm)
		}
		if res.Verdict != Marginal {
			t.Errorf("seed %d: verdict %s, want marginal (power inside the band of the sensitivity limit)", seed, res.Verdict)
		}
		if len(res.Risks) == 0 || !strings.Contains(res.Risks[0], "sensitivity limit") {
			t.Errorf("seed %d: risks %q, want the near-sensitivity note", seed, res.Risks)
		}
	}
	// A healthy port carries no risk note.
	if res := AnalyzePort(styleLog(t, 1, nil), p, nil, nil, r); len(res.Risks) != 0 {
		t.Errorf("healthy port: risks %q", res.Risks)
	}
}

// A carrier offset that steps by 2.95 GHz half-way through the log (a laser retuned or
// relocked) is a step, not a drift: the evidence names the step with its time and size, the
// drift trend is fitted after it, and no drift toward the capture limit is projected.
func TestLOStepIsNotADrift(t *testing.T) {
	p, r := testSetup(t, "400g-dp-16qam-cfec")
	for seed := uint64(1); seed <= 3; seed++ {
		res := AnalyzePort(styleLog(t, seed, func(i int, rng *rand.Rand, v *styleSample) {
			if i >= 336 {
				v.lo += 2950
			}
		}), p, nil, nil, r)
		if len(res.Analysis.LOSteps) != 1 || math.Abs(res.Analysis.LOSteps[0].Step-2950) > 50 {
			t.Fatalf("seed %d: LO steps %+v, want one of about +2950 MHz", seed, res.Analysis.LOSteps)
		}
		var ev string
		for _, c := range res.Causes {
			if c.ID == CauseLOOffset {
				ev = strings.Join(c.Evidence, " ")
			}
		}
		if !strings.Contains(ev, "stepped by +29") || !strings.Contains(ev, "not a drift") {
			t.Errorf("seed %d: lo-offset evidence %q does not name the step", seed, ev)
		}
		if strings.Contains(ev, "moved by about") || strings.Contains(ev, "drifts") {
			t.Errorf("seed %d: the step is read as a drift: %q", seed, ev)
		}
		for _, c := range res.Criteria {
			if c.Statistic == "trend" && c.Verdict != Pass {
				t.Errorf("seed %d: drift criterion %s (%.1f h to the limit) from a step", seed, c.Verdict, c.Measured)
			}
		}
	}
}
