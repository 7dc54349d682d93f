package synth

import (
	"bytes"
	"fmt"
	"math"
	"slices"
	"testing"

	"github.com/beatnote/beatnote/diagnose"
	"github.com/beatnote/beatnote/diagnose/optics"
	"github.com/beatnote/beatnote/parse"
	"github.com/beatnote/beatnote/rules"
)

// seeds is the number of generator seeds every property is checked on (at least 20).
const seeds = 20

var severities = []float64{0, 0.25, 0.5, 0.75, 1}

func mustMake(t *testing.T, spec Spec) Case {
	t.Helper()
	c, err := Make(spec)
	if err != nil {
		t.Fatalf("Make(%+v): %v", spec, err)
	}
	return c
}

func csvBytes(t *testing.T, c Case) []byte {
	t.Helper()
	var b bytes.Buffer
	if err := WriteCSV(&b, []*parse.Series{c.Series}, CSVStyle{}); err != nil {
		t.Fatal(err)
	}
	return b.Bytes()
}

func TestDeterminism(t *testing.T) {
	for _, causes := range [][]diagnose.CauseID{nil, {diagnose.CausePMD}, {diagnose.CauseRxPowerLow, diagnose.CauseSOPTransient}} {
		spec := Spec{Causes: causes, Severity: 0.4, Seed: 7, Samples: 300}
		a, b := csvBytes(t, mustMake(t, spec)), csvBytes(t, mustMake(t, spec))
		if !bytes.Equal(a, b) {
			t.Errorf("%v: same seed gave different output", causes)
		}
		spec.Seed = 8
		if c := csvBytes(t, mustMake(t, spec)); bytes.Equal(a, c) {
			t.Errorf("%v: seeds 7 and 8 gave identical output", causes)
		}
	}
}

func profiles(t *testing.T) []rules.Profile {
	t.Helper()
	all, err := rules.BuiltinProfiles()
	if err != nil {
		t.Fatal(err)
	}
	return all
}

// present returns the finite values of q.
func present(s *parse.Series, q parse.Quantity) []float64 {
	_, v := s.Present(q)
	return v
}

func quantile(v []float64, p float64) float64 {
	if len(v) == 0 {
		return math.NaN()
	}
	v = slices.Clone(v)
	slices.Sort(v)
	return v[int(math.Round(p*float64(len(v)-1)))]
}

func median(v []float64) float64 { return quantile(v, 0.5) }

// TestPhysicalRanges checks every sample of every cause on every profile against the ranges of
// DESIGN.md (BER 0…0.5, power ≤ +30 dBm, DGD/PDL/SOP ≥ 0) and the plausible fleet ranges the
// package documents, and that the reported Q is the one of the reported BER:
// Q = √2·erfc⁻¹(2·BER), Q_dB = 20·log10 Q (common practice; computed here with Go's math.Erfcinv,
// not with the optics package).
func TestPhysicalRanges(t *testing.T) {
	for _, prof := range profiles(t) {
		for _, cause := range append([]diagnose.CauseID{""}, AllCauses...) {
			var causes []diagnose.CauseID
			if cause != "" {
				causes = []diagnose.CauseID{cause}
			}
			for seed := int64(1); seed <= 4; seed++ {
				spec := Spec{Causes: causes, Severity: float64(seed-1) / 3, Seed: seed, ProfileID: prof.ID, Samples: 240}
				c, err := Make(spec)
				if cause == diagnose.CauseCDOverLimit && err != nil && prof.CDTolerancePsNm > dciMaxCDTolerancePsNm {
					continue // documented: only CD-limited profiles can be over the limit on a regional route
				}
				if err != nil {
					t.Fatalf("%s %s: %v", prof.ID, cause, err)
				}
				s := c.Series
				for i := range s.Len() {
					v := func(q parse.Quantity) float64 { return s.Values[q][i] }
					ber := v(parse.PreFECBER)
					if !(ber >= 0 && ber <= 0.5) {
						t.Fatalf("%s %s seed %d: BER %g outside 0…0.5", prof.ID, cause, seed, ber)
					}
					if q := v(parse.QdB); !math.IsNaN(q) {
						want := 20 * math.Log10(math.Sqrt2*math.Erfcinv(2*ber))
						if math.Abs(q-want) > 0.006 {
							t.Fatalf("%s %s: Q %.3f dB for BER %g, want %.3f", prof.ID, cause, q, ber, want)
						}
					}
					if p := v(parse.RxPowerDBm); !(p >= -45 && p <= 30) {
						t.Fatalf("%s %s: rx power %g dBm", prof.ID, cause, p)
					}
					for _, q := range []parse.Quantity{parse.DGDps, parse.PDLdB, parse.SOPRateKradPerS, parse.UncorrectedBlocks} {
						if x := v(q); x < 0 {
							t.Fatalf("%s %s: %s = %g < 0", prof.ID, cause, q, x)
						}
					}
					if lo := v(parse.LOOffsetMHz); math.Abs(lo) > prof.LOOffsetRangeMHz*1.05 {
						t.Fatalf("%s %s: LO offset %g MHz beyond the capture range", prof.ID, cause, lo)
					}
				}
				if cause == "" {
					// Plausible healthy fleet values: PDL < 1 dB, SOP < 10 krad/s, |LO| < 400 MHz.
					for _, x := range []struct {
						q   parse.Quantity
						max float64
					}{{parse.PDLdB, 1}, {parse.SOPRateKradPerS, 10 * 3}, {parse.LOOffsetMHz, 400}} {
						if m := quantile(absAll(present(s, x.q)), 0.99); m > x.max {
							t.Errorf("%s healthy seed %d: p99 |%s| = %g > %g", prof.ID, seed, x.q, m, x.max)
						}
					}
				}
			}
		}
	}
}

func absAll(v []float64) []float64 {
	out := make([]float64, len(v))
	for i, x := range v {
		out[i] = math.Abs(x)
	}
	return out
}

// TestBERFollowsESNR checks the BER against the reported eSNR with the nearest-neighbour 16QAM
// form Pb ≈ (3/8)·erfc(√(Es/N0/10)) (Proakis, square M-QAM with M = 16), an
// expression independent of the exact form synth uses, so a tolerance of a factor 1.5 covers the
// approximation and the 0.1 dB eSNR estimator noise.
func TestBERFollowsESNR(t *testing.T) {
	for seed := int64(1); seed <= seeds; seed++ {
		c := mustMake(t, Spec{Seed: seed, Samples: 200, Causes: []diagnose.CauseID{diagnose.CauseOSNRLow}, Severity: float64(seed%5) / 4})
		s := c.Series
		for i := range s.Len() {
			ber, esnr := s.Values[parse.PreFECBER][i], s.Values[parse.ESNRdB][i]
			if math.IsNaN(esnr) || ber < 1e-6 {
				continue
			}
			nn := 3.0 / 8 * math.Erfc(math.Sqrt(math.Pow(10, esnr/10)/10))
			if r := ber / nn; r < 1/1.5 || r > 1.5 {
				t.Fatalf("seed %d sample %d: BER %g at eSNR %.2f dB, nearest-neighbour %g", seed, i, ber, esnr, nn)
			}
		}
	}
}

// TestHealthy: a healthy link on every profile, ≥ 20 seeds, stays inside every module limit
// with FEC margin, and its plan holds the design OSNR margin.
func TestHealthy(t *testing.T) {
	for _, prof := range profiles(t) {
		for seed := int64(1); seed <= seeds; seed++ {
			c := mustMake(t, Spec{Seed: seed, ProfileID: prof.ID, Samples: 720})
			if c.Verdict != diagnose.Pass {
				t.Errorf("%s seed %d: verdict %s", prof.ID, seed, c.Verdict)
			}
			s := c.Series
			for i := range s.Len() {
				var v [parse.NumQuantities]float64
				for q := range v {
					v[q] = s.Values[q][i]
				}
				if limitCrossed(prof, v) {
					t.Fatalf("%s seed %d sample %d crosses a limit: %v", prof.ID, seed, i, v)
				}
			}
			// At least 1 dB of Q margin at the worst sample (the built-in rules' q_marginal_margin_db
			// and q_statistic min, docs/rules.md; FEC threshold from the profile).
			qth := 20 * math.Log10(math.Sqrt2*math.Erfcinv(2*prof.FECThresholdBER))
			if q := slices.Min(present(s, parse.QdB)); q-qth < 1 {
				t.Errorf("%s seed %d: min Q %.2f dB is within 1 dB of the threshold %.2f dB", prof.ID, seed, q, qth)
			}
			if c.Design.OSNRdB < prof.RequiredOSNRdB+3 {
				t.Errorf("%s seed %d: planned OSNR %.1f dB, required %.1f dB", prof.ID, seed, c.Design.OSNRdB, prof.RequiredOSNRdB)
			}
			if c.Plan.Circuit == "" || len(c.Plan.Spans) == 0 || len(c.Plan.Amplifiers) != len(c.Plan.Spans)+1 {
				t.Errorf("%s seed %d: plan %+v", prof.ID, seed, c.Plan)
			}
		}
	}
}

// TestEachCause: every cause, on ≥ 20 seeds and a spread of severities, changes what it should
// against the healthy port of the same seed (same plan, same noise), and the case is not a pass.
func TestEachCause(t *testing.T) {
	zr, err := rules.ProfileByID(profiles(t), DefaultProfileID)
	if err != nil {
		t.Fatal(err)
	}
	for _, cause := range AllCauses {
		t.Run(string(cause), func(t *testing.T) {
			for seed := int64(1); seed <= seeds; seed++ {
				sev := severities[int(seed)%len(severities)]
				base := Spec{Seed: seed, Samples: 720, Severity: sev}
				h := mustMake(t, base)
				base.Causes = []diagnose.CauseID{cause}
				c := mustMake(t, base)
				if c.Verdict == diagnose.Pass {
					t.Errorf("seed %d sev %.2f: verdict pass", seed, sev)
				}
				if len(c.Notes) == 0 {
					t.Errorf("seed %d: no notes", seed)
				}
				hs, s := h.Series, c.Series
				med := func(s *parse.Series, q parse.Quantity) float64 { return median(present(s, q)) }
				fail := func(format string, a ...any) {
					t.Errorf("seed %d sev %.2f: %s", seed, sev, fmt.Sprintf(format, a...))
				}
				switch cause {
				case diagnose.CauseOSNRLow:
					if d := med(hs, parse.OSNRdB) - med(s, parse.OSNRdB); d < 3 {
						fail("OSNR fell only %.1f dB", d)
					}
					if med(s, parse.OSNRdB) > zr.RequiredOSNRdB+1.5 {
						fail("OSNR %.1f dB not near the required %.1f", med(s, parse.OSNRdB), zr.RequiredOSNRdB)
					}
					if d := math.Abs(med(hs, parse.RxPowerDBm) - med(s, parse.RxPowerDBm)); d > 0.2 {
						fail("power moved %.2f dB", d)
					}
				case diagnose.CauseRxPowerLow:
					if m := quantile(present(s, parse.RxPowerDBm), 0.01); m > zr.RxPowerMinDBm+2 {
						fail("p1 power %.1f dBm", m)
					}
					if d := math.Abs(med(hs, parse.OSNRdB) - med(s, parse.OSNRdB)); d > 0.3 {
						fail("OSNR moved %.1f dB", d)
					}
				case diagnose.CauseRxOverload:
					if m := quantile(present(s, parse.RxPowerDBm), 0.99); m < zr.RxPowerMaxDBm+0.2 {
						fail("p99 power %.1f dBm", m)
					}
				case diagnose.CauseCDMismatch:
					r := med(s, parse.CDpsPerNm) / c.Design.CDPsNm
					if math.Abs(r-1) < 0.17 || math.Abs(r-1) > 0.55 {
						fail("measured/planned CD %.2f", r)
					}
					if math.Abs(med(s, parse.CDpsPerNm)) > zr.CDTolerancePsNm {
						fail("CD over the limit")
					}
				case diagnose.CauseCDOverLimit:
					if m := med(s, parse.CDpsPerNm); math.Abs(m) <= zr.CDTolerancePsNm || math.Abs(c.Design.CDPsNm) <= zr.CDTolerancePsNm {
						fail("CD %.0f (plan %.0f) within %g", m, c.Design.CDPsNm, zr.CDTolerancePsNm)
					}
				case diagnose.CausePMD:
					dgd := present(s, parse.DGDps)
					if m := mean(dgd); m < 0.3*zr.DGDTolerancePs || m > 0.65*zr.DGDTolerancePs {
						fail("mean DGD %.1f ps", m)
					}
					if m := mean(present(hs, parse.DGDps)); m > 3 {
						fail("healthy mean DGD %.1f ps", m)
					}
				case diagnose.CauseSOPTransient:
					sop := s.Values[parse.SOPRateKradPerS]
					blocks := s.Values[parse.UncorrectedBlocks]
					fast := 0
					for i, r := range sop {
						if r > zr.SOPTrackingKradS {
							fast++
							if !(s.Values[parse.PreFECBER][i] > h.Series.Values[parse.PreFECBER][i]) || blocks[i] <= 0 && sev > 0.2 {
								fail("SOP spike %g krad/s at %d without a BER burst (BER %g, blocks %g)", r, i, s.Values[parse.PreFECBER][i], blocks[i])
							}
						} else if r > 30 {
							fail("quiet SOP rate %g krad/s", r)
						}
					}
					if fast < 2 {
						fail("%d fast samples", fast)
					}
				case diagnose.CausePDLHigh:
					if m := med(s, parse.PDLdB); m < 0.75*zr.PDLTolerancedB {
						fail("median PDL %.1f dB", m)
					}
				case diagnose.CauseLOOffset:
					lo := present(s, parse.LOOffsetMHz)
					n := len(lo)
					start, end := math.Abs(median(lo[:n/10])), math.Abs(median(lo[n-n/10:]))
					if end < 0.75*zr.LOOffsetRangeMHz || end-start < 0.45*zr.LOOffsetRangeMHz {
						fail("offset %.0f → %.0f MHz", start, end)
					}
				case diagnose.CauseNonlinear:
					if d := med(s, parse.OSNRdB) - med(hs, parse.OSNRdB); d < 2.5 {
						fail("OSNR rose only %.1f dB", d)
					}
					if d := med(hs, parse.ESNRdB) - med(s, parse.ESNRdB); d < 1.5 {
						fail("eSNR fell only %.1f dB", d)
					}
					if d := math.Abs(med(hs, parse.RxPowerDBm) - med(s, parse.RxPowerDBm)); d > 0.2 {
						fail("power moved %.2f dB", d)
					}
				case diagnose.CauseSignalLoss:
					dark := 0
					for i, p := range s.Values[parse.RxPowerDBm] {
						if p < -39 {
							dark++
							if s.Values[parse.PreFECBER][i] != 0.5 {
								fail("dark sample with BER %g", s.Values[parse.PreFECBER][i])
							}
						}
					}
					if dark < s.Len()/20 {
						fail("%d dark samples", dark)
					}
					base.SignalLossAsGap = true
					g := mustMake(t, base)
					gDark := 0
					for _, p := range g.Series.Values[parse.RxPowerDBm] {
						if p < -39 {
							gDark++
						}
					}
					// The gap variant reports the first fifth of the dark time at the floor, then
					// leaves the rest out: every sample is either kept or one of the silent ones.
					if gDark == 0 || gDark >= dark || g.Series.Len() != s.Len()-dark+gDark {
						fail("gap variant has %d samples (%d dark), want %d minus the silent part of %d dark", g.Series.Len(), gDark, s.Len(), dark)
					}
				}
			}
		})
	}
}

func mean(v []float64) float64 {
	s := 0.0
	for _, x := range v {
		s += x
	}
	return s / float64(len(v))
}

// TestMixed: two causes on one port show both signatures.
func TestMixed(t *testing.T) {
	for seed := int64(1); seed <= seeds; seed++ {
		c := mustMake(t, Spec{Seed: seed, Samples: 720, Severity: 0.5, Causes: []diagnose.CauseID{diagnose.CauseRxPowerLow, diagnose.CauseSOPTransient}})
		if !slices.Equal(c.Causes, []diagnose.CauseID{diagnose.CauseRxPowerLow, diagnose.CauseSOPTransient}) {
			t.Fatalf("causes %v", c.Causes)
		}
		if quantile(present(c.Series, parse.RxPowerDBm), 0.01) > c.Profile.RxPowerMinDBm+2 {
			t.Errorf("seed %d: power not low", seed)
		}
		if slices.Max(present(c.Series, parse.SOPRateKradPerS)) <= c.Profile.SOPTrackingKradS {
			t.Errorf("seed %d: no SOP spike", seed)
		}
	}
}

func TestBadSpec(t *testing.T) {
	for _, spec := range []Spec{
		{Causes: []diagnose.CauseID{"dirty-fibre"}},
		{Severity: 1.5},
		{Severity: math.NaN()},
		{ProfileID: "no-such-profile"},
		{Samples: 3},
		{Causes: []diagnose.CauseID{diagnose.CauseCDOverLimit}, ProfileID: "200g-dp-16qam"},
		{Causes: []diagnose.CauseID{diagnose.CauseOSNRLow}, Plan: &rules.Plan{Circuit: "bare", FrequencyTHz: 193.1,
			Spans: []rules.Span{{Name: "s1", LengthKm: 20, Fiber: "g652"}}}},
		{Plan: &rules.Plan{Circuit: "no-spans", FrequencyTHz: 193.1}},
	} {
		if _, err := Make(spec); err == nil {
			t.Errorf("Make(%+v) succeeded", spec)
		}
	}
}

// TestDesignMatchesExpectLink cross-checks synth's own walk of the plan against the plan model
// of diagnose/optics (optics.ExpectLink), which the engine uses: CD, mean DGD, received power and
// ASE OSNR must agree.
func TestDesignMatchesExpectLink(t *testing.T) {
	for _, prof := range profiles(t) {
		for seed := int64(1); seed <= seeds; seed++ {
			c := mustMake(t, Spec{Seed: seed, ProfileID: prof.ID, Samples: 20})
			e, err := optics.ExpectLink(c.Plan, prof)
			if err != nil {
				t.Fatalf("%s seed %d: %v", prof.ID, seed, err)
			}
			for _, x := range []struct {
				name      string
				got, want float64
				tol       float64
			}{
				{"CD ps/nm", c.Design.CDPsNm, e.CDPsNm, 0.01},
				{"mean DGD ps", c.Design.MeanDGDPs, e.MeanDGDPs, 1e-6},
				{"rx power dBm", c.Design.RxPowerDBm, e.RxPowerDBm, 1e-6},
				{"ASE OSNR dB", c.Design.OSNRdB, e.ASEOSNRdB, 1e-6},
			} {
				if math.Abs(x.got-x.want) > x.tol {
					t.Errorf("%s seed %d: %s synth %.4f, optics %.4f", prof.ID, seed, x.name, x.got, x.want)
				}
			}
		}
	}
}

// BenchmarkMake: one day of one-minute samples of one port (the unit of fleetgen's work).
func BenchmarkMake(b *testing.B) {
	b.ReportAllocs()
	for i := 0; b.Loop(); i++ {
		if _, err := Make(Spec{Seed: int64(i), Samples: 1440}); err != nil {
			b.Fatal(err)
		}
	}
}

// TestGivenPlan: a caller's plan is used as given, unamplified links included.
func TestGivenPlan(t *testing.T) {
	plan := rules.Plan{Circuit: "given", FrequencyTHz: 193.1, TxPowerDBm: -2,
		Spans: []rules.Span{{Name: "s1", LengthKm: 20, Fiber: "g652", Connectors: 2}}}
	c := mustMake(t, Spec{Seed: 1, Plan: &plan, Samples: 60})
	if c.Plan.Circuit != "given" || c.Verdict != diagnose.Pass {
		t.Fatalf("plan %s verdict %s", c.Plan.Circuit, c.Verdict)
	}
	// Unamplified: received power is Tx − 0.20 dB/km × 20 km − 2 × 0.5 dB (optics defaults).
	if want := -2 - 0.2*20 - 1.0; math.Abs(c.Design.RxPowerDBm-want) > 1e-9 {
		t.Errorf("rx power %.3f dBm, want %.3f", c.Design.RxPowerDBm, want)
	}
}

// TestFaultKeepsPlan: a fault changes the link as built, never the plan (except cd-over-limit,
// whose plan is the fault): the same seed with and without a fault has the same plan and design.
func TestFaultKeepsPlan(t *testing.T) {
	for seed := int64(1); seed <= seeds; seed++ {
		h := mustMake(t, Spec{Seed: seed, Samples: 20})
		for _, cause := range AllCauses {
			if cause == diagnose.CauseCDOverLimit {
				continue
			}
			c := mustMake(t, Spec{Seed: seed, Samples: 20, Causes: []diagnose.CauseID{cause}, Severity: 0.5})
			if fmt.Sprint(c.Plan) != fmt.Sprint(h.Plan) || fmt.Sprint(c.Design) != fmt.Sprint(h.Design) {
				t.Errorf("seed %d %s: the plan changed", seed, cause)
			}
		}
	}
}
