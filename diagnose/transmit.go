package diagnose

import (
	"fmt"
	"math"

	"github.com/beatnote/beatnote/diagnose/optics"
	"github.com/beatnote/beatnote/diagnose/series"
	"github.com/beatnote/beatnote/parse"
)

// The transmitter family: tx-power (the module's output out of range or stepped, the received
// power following it) and frequency-mismatch (the channel tuned away from the plan or off the
// ITU-T G.694.1 grid). Rx = Tx − loss: a received-power change that the transmit power made is
// not a loss in the path.

// txChangeInfo is what the transmit-power column shows.
type txChangeInfo struct {
	changed bool
	text    string
	step    *series.Step // the largest step of at least power_step_db, nil when none
	stepMs  int64
	outside bool
	offPlan float64 // median − plan (dB), NaN without a plan figure
}

// txChange reads the transmit-power column (once): out of the module's range, stepped by
// power_step_db or more, or away from the plan's figure by as much.
func (pc *portCtx) txChange() *txChangeInfo {
	if pc.cache.tx != nil {
		return pc.cache.tx
	}
	t := &txChangeInfo{offPlan: math.NaN()}
	pc.cache.tx = t
	if !pc.has(parse.TxPowerDBm) {
		return t
	}
	s, p, r := pc.sum[parse.TxPowerDBm], pc.prof, pc.r
	v := pc.s.Values[parse.TxPowerDBm]
	// A step of power_step_db needs a range at least that wide: skip the search otherwise.
	if s.Max-s.Min >= r.PowerStepDB && countFinite(v) >= max(r.MinSamplesForTrend, minTrendSamples) {
		for _, st := range series.ChangePoints(v, series.ChangePointOptions{MinStep: r.PowerStepDB}) {
			if t.step == nil || math.Abs(st.Size()) > math.Abs(t.step.Size()) {
				st := st
				t.step, t.stepMs = &st, pc.s.TimesMs[st.Index]
			}
		}
	}
	if pc.plan != nil && pc.plan.TxPowerDBm != 0 {
		t.offPlan = s.P50 - pc.plan.TxPowerDBm
	}
	switch {
	case p.TxPowerMaxDBm > p.TxPowerMinDBm && (s.Min < p.TxPowerMinDBm || s.Max > p.TxPowerMaxDBm):
		t.outside = true
		t.text = fmt.Sprintf("Transmit power ran from %.1f to %.1f dBm, outside the module's %.1f…%.1f dBm range.", s.Min, s.Max, p.TxPowerMinDBm, p.TxPowerMaxDBm)
	case t.step != nil:
		t.text = fmt.Sprintf("Transmit power stepped by %+.1f dB at %s (%.1f → %.1f dBm).", t.step.Size(), clock(t.stepMs), t.step.Before, t.step.After)
	case finite(t.offPlan) && math.Abs(t.offPlan) >= r.PowerStepDB:
		t.text = fmt.Sprintf("Median transmit power %.1f dBm is %+.1f dB from the plan's %.1f dBm.", s.P50, t.offPlan, pc.plan.TxPowerDBm)
	default:
		return t
	}
	t.changed = true
	return t
}

// rxFollowsTx: the received power stepped by about the transmit step (within 1 dB, the
// repeatability of two power monitors: common practice) within two sample intervals of it.
func (pc *portCtx) rxFollowsTx() (ChangePoint, bool) {
	t := pc.txChange()
	if t.step == nil {
		return ChangePoint{}, false
	}
	win := 2 * pc.intervalMs
	for _, st := range pc.an.PowerSteps {
		if d := st.TimeMs - t.stepMs; d >= -win && d <= win && math.Abs(st.Step-t.step.Size()) <= txRxStepAgreementDB {
			return st, true
		}
	}
	return ChangePoint{}, false
}

// txRxStepAgreementDB: two power monitors agree on a step to about 1 dB (common practice).
const txRxStepAgreementDB = 1.0

// txPower: the transmitter's output out of range or stepped, the received power following it.
func (pc *portCtx) txPower(nj *notes) *score {
	s := &score{id: CauseTxPower}
	if !pc.present(nj, CauseTxPower, parse.TxPowerDBm) {
		return nil
	}
	t := pc.txChange()
	switch {
	case t.outside:
		s.add(llrDecisive, "%s", t.text)
	case t.step != nil:
		s.add(llrStrong, "%s", t.text)
	case t.changed:
		s.add(llrStrong, "%s", t.text)
	}
	if st, ok := pc.rxFollowsTx(); ok {
		s.add(llrStrong, "Received power stepped by %+.1f dB at %s, with the transmit power: the loss is not in the path, the light left the transmitter weaker.", st.Step, clock(st.TimeMs))
	}
	return s
}

// frequencyOffPlanGHz is the median channel frequency minus the plan's, GHz; NaN without both.
func (pc *portCtx) frequencyOffPlanGHz() float64 {
	if !pc.has(parse.FrequencyTHz) || pc.exp == nil || !(pc.exp.FrequencyTHz > 0) {
		return math.NaN()
	}
	return (pc.sum[parse.FrequencyTHz].P50 - pc.exp.FrequencyTHz) * 1000
}

// frequencyMismatch: the channel is tuned to another frequency than the plan's (more than one
// 6.25 GHz step of the ITU-T G.694.1 flexible grid away) or sits off the grid.
func (pc *portCtx) frequencyMismatch() *score {
	s := &score{id: CauseFrequencyMismatch}
	if !pc.has(parse.FrequencyTHz) {
		return nil
	}
	f := pc.sum[parse.FrequencyTHz].P50
	if off := pc.frequencyOffPlanGHz(); finite(off) && math.Abs(off) > gridStepGHz {
		s.add(llrDecisive, "The channel is tuned to %.5f THz, %+.2f GHz from the plan's %.5f THz (%.0f steps of the 6.25 GHz grid): another channel than planned.", f, off, pc.exp.FrequencyTHz, math.Abs(off)/gridStepGHz)
	}
	if d := optics.ChannelOffsetGHz(f, gridStepGHz); finite(d) && math.Abs(d) > pc.r.FrequencyAccuracyGHz {
		// Off the grid by a fraction of a step with the signal degraded is filtering's
		// signature (the passband cuts the off-centre channel); without a loss it is a
		// provisioning fact of its own.
		w := llrStrong
		if pc.noisy() {
			w = llrWeak
		}
		s.add(w, "The channel centre %.5f THz is %+.2f GHz from the nearest frequency of the ITU-T G.694.1 6.25 GHz grid, beyond the %.1f GHz laser accuracy: off the grid.", f, d, pc.r.FrequencyAccuracyGHz)
	}
	return s
}

// columnFigure is a short statement of a column's level for the "normal" evidence lines.
func (pc *portCtx) columnFigure(q parse.Quantity) string {
	p := pc.prof
	switch q {
	case parse.DGDps:
		return fmt.Sprintf("DGD p99 %.1f ps of %.0f ps", pc.sum[q].P99, p.DGDTolerancePs)
	case parse.PDLdB:
		return fmt.Sprintf("PDL p99 %.2f dB of %.1f dB", pc.sum[q].P99, p.PDLTolerancedB)
	case parse.SOPRateKradPerS:
		return fmt.Sprintf("SOP rate max %.1f krad/s of %.0f krad/s", pc.sum[q].Max, p.SOPTrackingKradS)
	case parse.LOOffsetMHz:
		return fmt.Sprintf("|LO offset| max %.0f MHz of ±%.0f MHz", pc.absSum[q].Max, p.LOOffsetRangeMHz)
	case parse.CDpsPerNm:
		return fmt.Sprintf("|CD| median %.0f ps/nm of %.0f ps/nm", pc.absSum[q].P50, p.CDTolerancePsNm)
	case parse.FrequencyTHz:
		return fmt.Sprintf("median %.5f THz", pc.sum[q].P50)
	}
	return fmt.Sprintf("median %.3g", pc.sum[q].P50)
}
