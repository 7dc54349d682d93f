package synth

import (
	"math"
	"testing"
	"time"

	"github.com/beatnote/beatnote/parse"
)

// Line events change the link as the physics says, over their window only: loss before a
// constant-output amplifier lowers the OSNR and holds the power; the preamplifier's output drop
// lowers the power and holds the OSNR; a cut leaves the floor; SOP bursts land on their minute.
func TestLineEvents(t *testing.T) {
	at := func(m int) time.Time { return DefaultStart.Add(time.Duration(m) * time.Minute) }
	base := Spec{Seed: 41, ProfileID: "400g-dp-16qam-ofec", Samples: 240}
	healthy := mustMake(t, base)
	mean := func(s *parse.Series, q parse.Quantity, from, to int) float64 {
		sum, n := 0.0, 0
		for _, v := range s.Values[q][from:to] {
			if !math.IsNaN(v) {
				sum += v
				n++
			}
		}
		return sum / float64(n)
	}
	for _, c := range []struct {
		ev           LineEvent
		dOSNR, dRx   [2]float64 // allowed range of the change after − before, dB
		darkFrom     int
		burstMinutes []int
	}{
		{ev: LineEvent{Kind: LineSpanLoss, From: at(120), Span: 1, LossDB: 7}, dOSNR: [2]float64{-7, -1}, dRx: [2]float64{-0.3, 0.3}},
		{ev: LineEvent{Kind: LineAmpOutputDrop, From: at(120), LossDB: 6}, dOSNR: [2]float64{-0.3, 0.3}, dRx: [2]float64{-6.3, -5.7}},
		{ev: LineEvent{Kind: LineCut, From: at(120), To: at(150)}, darkFrom: 120},
		{ev: LineEvent{Kind: LineSOPBursts, Bursts: []time.Time{at(30), at(200)}, RateKradS: 2000, Duty: 0.3}, burstMinutes: []int{30, 200}},
	} {
		t.Run(string(c.ev.Kind), func(t *testing.T) {
			sp := base
			sp.Plan = &healthy.Plan
			sp.LineEvents = []LineEvent{c.ev}
			got := mustMake(t, sp).Series
			switch {
			case c.darkFrom > 0:
				for i := c.darkFrom; i <= c.darkFrom+30; i++ {
					if got.Values[parse.RxPowerDBm][i] > lossFloorDBm+1 {
						t.Fatalf("sample %d: %.1f dBm in the cut", i, got.Values[parse.RxPowerDBm][i])
					}
				}
				if got.Values[parse.RxPowerDBm][c.darkFrom+31] < -20 {
					t.Errorf("still dark after the cut")
				}
			case c.burstMinutes != nil:
				for _, m := range c.burstMinutes {
					if got.Values[parse.SOPRateKradPerS][m] != 2000 {
						t.Errorf("minute %d: SOP %.1f krad/s, want the burst", m, got.Values[parse.SOPRateKradPerS][m])
					}
				}
			default:
				// Same seed and plan: the change is the event's alone (the noise is shared).
				dO := mean(got, parse.OSNRdB, 120, 240) - mean(healthy.Series, parse.OSNRdB, 120, 240)
				dR := mean(got, parse.RxPowerDBm, 120, 240) - mean(healthy.Series, parse.RxPowerDBm, 120, 240)
				if !(dO >= c.dOSNR[0] && dO <= c.dOSNR[1]) || !(dR >= c.dRx[0] && dR <= c.dRx[1]) {
					t.Errorf("OSNR %+.2f dB, power %+.2f dB; want OSNR in %v, power in %v", dO, dR, c.dOSNR, c.dRx)
				}
				if before := mean(got, parse.OSNRdB, 0, 119) - mean(healthy.Series, parse.OSNRdB, 0, 119); math.Abs(before) > 0.05 {
					t.Errorf("OSNR changed %+.2f dB before the event", before)
				}
			}
		})
	}
	if _, err := Make(Spec{Samples: 20, LineEvents: []LineEvent{{Kind: LineSpanLoss, From: at(1), Span: 9, LossDB: 3}}}); err == nil {
		t.Error("a span the plan lacks was accepted")
	}
}
