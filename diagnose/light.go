package diagnose

import (
	"fmt"
	"github.com/beatnote/beatnote/report/words"
	"math"
	"strings"

	"github.com/beatnote/beatnote/parse"
)

// The light family: signal-loss (no light, or nothing decoded with the power dropped),
// rx-power-low and rx-overload (received power against the module's window and the plan).

// signalLoss: samples without light — power at the loss-of-signal floor, or nothing decoded with
// the power dropped or unreported. Telemetry gaps and rows without readings are not evidence of
// it (missed polls leave the same holes); they become notes, or support a loss they border.
func (pc *portCtx) signalLoss(nj *notes) *score {
	s := &score{id: CauseSignalLoss}
	ts := pc.s.TimesMs
	dk := pc.darkKinds()
	nearDark := pc.gapNotes(nj)
	if n := len(dk.noLight); n > 0 {
		var why []string
		if dk.floor > 0 {
			why = append(why, fmt.Sprintf("received power at or below the %.1f dBm loss-of-signal floor in %d", pc.r.SignalLossFloorDBm, dk.floor))
		}
		if dk.dropped > 0 {
			why = append(why, fmt.Sprintf("nothing decoded (pre-FEC BER ≥ %.2g) with the power dropped in %d", noLockBER, dk.dropped))
		}
		if dk.noPower > 0 {
			why = append(why, fmt.Sprintf("nothing decoded (pre-FEC BER ≥ %.2g) and no power reading in %d", noLockBER, dk.noPower))
		}
		if len(why) == 1 { // one kind of evidence: the count above is its count
			why[0] = why[0][:strings.LastIndex(why[0], " in ")]
		}
		low := ""
		if finite(dk.minPw) {
			low = fmt.Sprintf(", power down to %.1f dBm", dk.minPw)
		}
		llr := llrStrong
		if dk.floor > 0 {
			llr = llrDecisive
		}
		s.add(llr, "No light in %d of %d samples (%s of the log%s) between %s and %s: %s.",
			n, pc.n, pct(float64(n)/float64(pc.n)), low, clock(ts[dk.noLight[0]]), clock(ts[dk.noLight[n-1]]), strings.Join(why, "; "))
		if dk.floor > 0 && dk.decoded0 > 0 {
			s.add(llrStrong, "The receiver decoded nothing in those samples (pre-FEC BER ≥ %.2g; 0.5 means random decisions).", noLockBER)
		}
		if nearDark != "" {
			s.add(llrWeak, "%s", nearDark)
		}
	}
	if k := len(dk.lockLost); k > 0 && !pc.lockLossExplained() {
		i := dk.lockLost[0]
		nj.add("loss of lock: the receiver decoded nothing (pre-FEC BER ≥ %.2g) in %s, first at %s, while the received power was normal (%.1f dBm): light was present, so this is not a signal loss, and no measured impairment was out of line at those samples (%s). Check the module's alarm log for that time",
			noLockBER, words.Plural(k, "sample", "samples"), clock(ts[i]), pc.s.Values[parse.RxPowerDBm][i], pc.impairmentFigures())
	}
	return s
}

// lockLossLLR weighs a quantity found beyond the module's limit at a loss of lock with light
// present: strong at the limit, growing by 2 per unit of ratio beyond it up to 6 — the further
// outside its specified tolerance, the less a module is expected to hold lock (common practice),
// so of two quantities beyond their limits the one further out ranks first.
func lockLossLLR(ratio float64) float64 {
	return math.Min(llrLockLossMax, llrStrong+llrLockLossPerRatio*math.Max(0, ratio-1))
}

// lockLossExplained says whether DGD, PDL, SOP rate or LO offset was beyond the module's limit
// at one of the samples where the receiver lost lock with light present.
func (pc *portCtx) lockLossExplained() bool {
	p := pc.prof
	for _, c := range []struct {
		q     parse.Quantity
		limit float64
		abs   bool
	}{{parse.DGDps, p.DGDTolerancePs, false}, {parse.PDLdB, p.PDLTolerancedB, false},
		{parse.SOPRateKradPerS, p.SOPTrackingKradS, false}, {parse.LOOffsetMHz, p.LOOffsetRangeMHz, true}} {
		if n, _ := pc.lockLossOver(c.q, c.limit, c.abs); n > 0 {
			return true
		}
	}
	return false
}

// rxPowerLow: lit power below the window or near it, a step loss, below the plan.
func (pc *portCtx) rxPowerLow(nj *notes) *score {
	s := &score{id: CauseRxPowerLow}
	if !pc.present(nj, CauseRxPowerLow, parse.RxPowerDBm) {
		return nil
	}
	p, r := pc.prof, pc.r
	lp := pc.litPowerSummary()
	if lp.N == 0 {
		return s
	}
	if p.RxPowerMaxDBm > p.RxPowerMinDBm {
		switch {
		case lp.P50 < p.RxPowerMinDBm:
			s.add(llrDecisive, "Median received power %.1f dBm is %.1f dB below the module's %.1f dBm sensitivity limit.", lp.P50, p.RxPowerMinDBm-lp.P50, p.RxPowerMinDBm)
		case lp.Min < p.RxPowerMinDBm:
			s.add(llrStrong, "Received power fell to %.1f dBm, %.1f dB below the module's %.1f dBm sensitivity limit.", lp.Min, p.RxPowerMinDBm-lp.Min, p.RxPowerMinDBm)
		case lp.P50 < p.RxPowerMinDBm+r.RxPowerMarginalBandDB:
			s.add(llrStrong, "Median received power %.1f dBm sits only %.1f dB above the module's %.1f dBm sensitivity limit.", lp.P50, lp.P50-p.RxPowerMinDBm, p.RxPowerMinDBm)
		case lp.Min < p.RxPowerMinDBm+r.RxPowerMarginalBandDB:
			s.add(llrModerate, "Received power went down to %.1f dBm, within %.1f dB of the %.1f dBm sensitivity limit.", lp.Min, lp.Min-p.RxPowerMinDBm, p.RxPowerMinDBm)
		}
	}
	for _, st := range pc.an.PowerSteps {
		if st.Step <= -r.PowerStepDB {
			s.add(llrStrong, "Received power stepped down by %.1f dB at %s (%.1f → %.1f dBm): a sudden loss such as a dirty or disturbed connector or a bend.", -st.Step, clock(st.TimeMs), st.Before, st.After)
			if pc.has(parse.OSNRdB) && !pc.osnrStepNear(st.TimeMs) {
				s.add(llrWeak, "The reported OSNR held through the step (median %.1f dB, no step of %.1f dB or more): the loss is after the last amplifier (receive patching, connectors, demultiplexer), not in the line.", pc.sum[parse.OSNRdB].P50, r.OSNRStepDB)
			}
			break
		}
	}
	if t := pc.an.RxPowerTrend; t != nil && pc.trendSignificant(t) && t.Slope < 0 {
		drop := -t.Slope * float64(t.EndMs-t.StartMs) / 3.6e6
		if drop >= r.PowerStepDB && len(pc.an.PowerSteps) == 0 {
			s.add(llrModerate, "Received power decays steadily by %.2f ± %.2f dB/h (%.1f dB over the log).", -t.Slope, t.SlopeSE, drop)
		}
	}
	if pc.exp != nil && finite(pc.exp.RxPowerDBm) {
		gap := pc.exp.RxPowerDBm - lp.P50
		if gap > r.RxPowerMarginalBandDB+1 {
			s.add(llrFirm, "Median received power %.1f dBm is %.1f dB below the %.1f dBm the link plan predicts: more loss than designed.", lp.P50, gap, pc.exp.RxPowerDBm)
		}
	}
	if rr := pc.routeRatio(); s.supported() && finite(rr) && rr > 1 {
		s.add(llrAgainstSome, "The measured CD says the route is about %.0f %% longer than planned, which by itself adds loss.", 100*(rr-1))
	}
	if s.supported() {
		if c := pc.corr.of(parse.RxPowerDBm); c != nil && c.Rho <= -r.CorrelationMinSpearman && c.P < corrMaxP {
			s.add(llrWeak, "Pre-FEC BER rises as power falls (Spearman ρ = %.2f over %d samples).", c.Rho, c.N)
		}
		if qm := pc.qMarginP50(); finite(qm) && qm < r.QMarginalMarginDB {
			s.add(llrWeak, "The Q margin is only %.1f dB (median) while power is low.", qm)
		}
	}
	return s
}

// rxOverload: power above the window or near it, above the plan.
func (pc *portCtx) rxOverload() *score {
	s := &score{id: CauseRxOverload}
	if !pc.has(parse.RxPowerDBm) {
		return nil
	}
	p, r := pc.prof, pc.r
	lp := pc.litPowerSummary()
	if lp.N == 0 || !(p.RxPowerMaxDBm > p.RxPowerMinDBm) {
		return s
	}
	switch {
	case lp.P50 > p.RxPowerMaxDBm:
		s.add(llrDecisive, "Median received power %+.1f dBm is %.1f dB above the module's %+.1f dBm overload limit.", lp.P50, lp.P50-p.RxPowerMaxDBm, p.RxPowerMaxDBm)
	case lp.Max > p.RxPowerMaxDBm:
		s.add(llrStrong, "Received power reached %+.1f dBm, %.1f dB above the module's %+.1f dBm overload limit.", lp.Max, lp.Max-p.RxPowerMaxDBm, p.RxPowerMaxDBm)
	case lp.P50 > p.RxPowerMaxDBm-r.RxPowerMarginalBandDB:
		s.add(llrStrong, "Median received power %+.1f dBm sits only %.1f dB below the module's %+.1f dBm overload limit.", lp.P50, p.RxPowerMaxDBm-lp.P50, p.RxPowerMaxDBm)
	case lp.Max > p.RxPowerMaxDBm-r.RxPowerMarginalBandDB:
		s.add(llrModerate, "Received power reached %+.1f dBm, within %.1f dB of the %+.1f dBm overload limit.", lp.Max, p.RxPowerMaxDBm-lp.Max, p.RxPowerMaxDBm)
	}
	if pc.exp != nil && finite(pc.exp.RxPowerDBm) {
		if gap := lp.P50 - pc.exp.RxPowerDBm; gap > r.RxPowerMarginalBandDB+1 {
			s.add(llrModerate, "Median received power %+.1f dBm is %.1f dB above the %+.1f dBm the link plan predicts: an attenuator missing or a shorter path.", lp.P50, gap, pc.exp.RxPowerDBm)
		}
	}
	if rr := pc.routeRatio(); s.supported() && finite(rr) && rr < 1 {
		s.add(llrAgainstSome, "The measured CD says the route is about %.0f %% shorter than planned, which by itself leaves less loss.", 100*(1-rr))
	}
	if s.supported() {
		if c := pc.corr.of(parse.RxPowerDBm); c != nil && c.Rho >= r.CorrelationMinSpearman && c.P < corrMaxP {
			s.add(llrWeak, "Pre-FEC BER rises with power (Spearman ρ = %.2f over %d samples), as receiver saturation would make it.", c.Rho, c.N)
		}
	}
	return s
}
