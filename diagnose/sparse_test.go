package diagnose_test

import (
	"math"
	"slices"
	"testing"

	"github.com/beatnote/beatnote/diagnose"
	"github.com/beatnote/beatnote/parse"
	"github.com/beatnote/beatnote/samples/synth"
)

// keepOnly removes every column of s but those given (a performance-monitoring export).
func keepOnly(s *parse.Series, keep ...parse.Quantity) {
	for q := parse.Quantity(0); q < parse.NumQuantities; q++ {
		if !slices.Contains(keep, q) {
			s.Values[q] = nil
		}
	}
}

// berPowerOnly are the columns of the common performance-monitoring export.
var berPowerOnly = []parse.Quantity{parse.PreFECBER, parse.UncorrectedBlocks, parse.RxPowerDBm, parse.TxPowerDBm}

func top3(p diagnose.PortResult) []diagnose.CauseID {
	got := ids(p)
	if len(got) > 3 {
		got = got[:3]
	}
	return got
}

// On logs with only pre-FEC BER, uncorrected blocks and Rx/Tx power, a port whose BER or blocks
// show trouble always gets a ranked differential; BER degraded on normal, steady power puts
// osnr-low in the top three; bursts on steady power put sop-transient there; power out of the
// window and loss of light stay first; healthy ports pass with no cause. Ports are made by
// samples/synth from the physics with the fault injected, over its whole severity range.
func TestBERAndPowerOnlyLogs(t *testing.T) {
	r := mustRules(t)
	first := map[diagnose.CauseID]bool{diagnose.CauseRxPowerLow: true, diagnose.CauseRxOverload: true, diagnose.CauseSignalLoss: true}
	inTop3 := map[diagnose.CauseID]bool{diagnose.CauseOSNRLow: true, diagnose.CauseSOPTransient: true}
	checked := map[diagnose.CauseID]int{}
	for _, profile := range []string{"400g-dp-16qam-cfec", "100g-dp-qpsk", "800g-dp-16qam"} {
		for _, cause := range append([]diagnose.CauseID{""}, synth.AllCauses...) {
			if !canInject(cause, profile) {
				continue
			}
			for seed := int64(1); seed <= seeds; seed += 2 {
				spec := synth.Spec{Seed: seed, Severity: severity(seed), ProfileID: profile, Samples: 720}
				if cause != "" {
					spec.Causes = []diagnose.CauseID{cause}
				}
				c, err := synth.Make(spec)
				if err != nil {
					t.Fatal(err)
				}
				keepOnly(c.Series, berPowerOnly...)
				p := judge(t, c, r, false)
				switch {
				case cause == "":
					if p.Verdict != diagnose.Pass || len(p.Causes) != 0 {
						t.Errorf("%s healthy seed %d: verdict %s causes %s, want pass and none", profile, seed, p.Verdict, causeList(p))
					}
					continue
				case first[cause]:
					checked[cause]++
					if len(p.Causes) == 0 || p.Causes[0].ID != cause {
						t.Errorf("%s %s seed %d: causes %s, want %s first", profile, cause, seed, causeList(p), cause)
					}
				case inTop3[cause] && troubled(p):
					checked[cause]++
					if !slices.Contains(top3(p), cause) {
						t.Errorf("%s %s seed %d: causes %s, want %s in the top three", profile, cause, seed, causeList(p), cause)
					}
				}
				if troubled(p) {
					checked["differential"]++
				}
				if troubled(p) && len(p.Causes) == 0 {
					t.Errorf("%s %s seed %d: BER or blocks show trouble (verdict %s) but no cause is listed", profile, cause, seed, p.Verdict)
				}
			}
		}
	}
	t.Logf("ports checked: %v", checked)
	for _, k := range []diagnose.CauseID{diagnose.CauseOSNRLow, diagnose.CauseSOPTransient, diagnose.CauseRxPowerLow, diagnose.CauseSignalLoss, "differential"} {
		if checked[k] < 10 {
			t.Errorf("only %d troubled ports checked for %s: the test no longer exercises it", checked[k], k)
		}
	}
}

// troubled: the Q criterion (from the BER) or the uncorrected-block criterion is marginal or
// failing.
func troubled(p diagnose.PortResult) bool {
	for _, c := range p.Criteria {
		if (c.Metric == "q_db" || c.Metric == "uncorrected_blocks") && c.Verdict != diagnose.Pass {
			return true
		}
	}
	return false
}

// The Q metric (and the triage column "Q margin (lit)" that shows it) covers the samples with
// signal only. On a loss of light logged with BER and power alone, Q is derived from the BER,
// and a dark sample's BER of no lock would otherwise pull the minimum Q to the clamp (about
// −26 dB of margin). Reference: Q = √2·erfc⁻¹(2·BER), in dB 20·log10 Q (Gaussian-noise
// relation, common practice), with erfc⁻¹ from Go's math package rather than diagnose/optics,
// over the samples above the loss-of-signal floor and below the BER of no lock (0.25, common
// practice, docs/diagnosis.md).
func TestQMarginOfSignalLossIsLit(t *testing.T) {
	r := mustRules(t)
	for seed := int64(1); seed <= 4; seed++ {
		c, err := synth.Make(synth.Spec{Seed: seed, Severity: severity(seed), Causes: []diagnose.CauseID{diagnose.CauseSignalLoss}, Samples: 720})
		if err != nil {
			t.Fatal(err)
		}
		keepOnly(c.Series, berPowerOnly...)
		p := judge(t, c, r, false)
		if len(p.Causes) == 0 || p.Causes[0].ID != diagnose.CauseSignalLoss {
			t.Fatalf("seed %d: causes %s, want signal-loss first", seed, causeList(p))
		}
		ber, pw := c.Series.Values[parse.PreFECBER], c.Series.Values[parse.RxPowerDBm]
		minQ, dark := math.Inf(1), 0
		for i, b := range ber {
			if math.IsNaN(b) || pw[i] <= r.SignalLossFloorDBm || b >= 0.25 {
				dark++
				continue
			}
			minQ = math.Min(minQ, 20*math.Log10(math.Sqrt2*math.Erfcinv(2*math.Max(b, 1e-15))))
		}
		if dark == 0 {
			t.Fatalf("seed %d: the generated loss of light has no dark sample", seed)
		}
		m, ok := p.Metrics[parse.QdB.Column()]
		if !ok || m.Margin == nil || m.Limit == nil {
			t.Fatalf("seed %d: no derived Q metric with a margin: %+v", seed, m)
		}
		if math.Abs(m.Min-minQ) > 1e-9 {
			t.Errorf("seed %d: Q metric min %.4f dB, want %.4f dB, the minimum over the %d lit samples", seed, m.Min, minQ, len(ber)-dark)
		}
		if want := minQ - *m.Limit; math.Abs(*m.Margin-want) > 1e-9 {
			t.Errorf("seed %d: Q margin %.4f dB, want %.4f dB", seed, *m.Margin, want)
		}
	}
}
