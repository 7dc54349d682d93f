package diagnose

import (
	"math"

	"github.com/beatnote/beatnote/parse"
)

// The carrier family: lo-offset (carrier offset near the capture range, drifting, or
// stepping).

// loOffset: carrier offset near the capture range, or drifting to reach it within the horizon.
func (pc *portCtx) loOffset(nj *notes) *score {
	s := &score{id: CauseLOOffset}
	if !pc.present(nj, CauseLOOffset, parse.LOOffsetMHz) {
		return nil
	}
	rng, r := pc.prof.LOOffsetRangeMHz, pc.r
	if !(rng > 0) {
		return nil
	}
	a := pc.absSum[parse.LOOffsetMHz]
	switch {
	case a.Max >= rng:
		s.add(llrDecisive, "|LO offset| reached %.0f MHz, at or beyond the module's ±%.0f MHz capture range.", a.Max, rng)
	case a.Max >= r.LOOffsetMarginalFraction*rng:
		s.add(llrStrong, "|LO offset| reached %.0f MHz, %s of the module's ±%.0f MHz capture range.", a.Max, pct(a.Max/rng), rng)
	case a.Max >= (r.LOOffsetMarginalFraction-loModerateBelowMarginal)*rng:
		s.add(llrModerate, "|LO offset| reached %.0f MHz, %s of the module's ±%.0f MHz capture range.", a.Max, pct(a.Max/rng), rng)
	}
	if n, i := pc.lockLossOver(parse.LOOffsetMHz, rng, true); n > 0 {
		s.add(llrStrong, "%s, while the carrier offset was %+.0f MHz, beyond the module's ±%.0f MHz capture range.", pc.lockLossText(i, n), pc.s.Values[parse.LOOffsetMHz][i], rng)
	}
	for _, st := range pc.an.LOSteps {
		s.add(llrModerate, "The carrier offset stepped by %+.0f MHz at %s (%+.0f → %+.0f MHz), %s of the capture range at once: a retune or relock of a laser, not a drift.",
			st.Step, clock(st.TimeMs), st.Before, st.After, pct(math.Abs(st.Step)/rng))
	}
	if t := pc.an.LOTrend; t != nil && pc.trendSignificant(t) {
		switch {
		case t.HoursToLimit > 0 && t.HoursToLimit <= r.LODriftHorizonH:
			s.add(llrStrong, "The offset drifts %+.1f ± %.1f MHz/h (now about %+.0f MHz); at that rate it reaches the %+.0f MHz capture limit in about %.1f h, within the %.0f h horizon.",
				t.Slope, t.SlopeSE, t.AtEnd, t.Limit, t.HoursToLimit, r.LODriftHorizonH)
		case t.HoursToLimit > 0 && t.HoursToLimit <= driftHorizonFactor*r.LODriftHorizonH:
			s.add(llrModerate, "The offset drifts %+.1f ± %.1f MHz/h toward the %+.0f MHz capture limit (about %.0f h away at that rate, within 4× the %.0f h horizon).",
				t.Slope, t.SlopeSE, t.Limit, t.HoursToLimit, r.LODriftHorizonH)
		}
		from := t.StartMs
		if k := len(pc.an.LOSteps); k > 0 {
			from = pc.an.LOSteps[k-1].TimeMs // the trend is fitted after the last step
		}
		if drift := math.Abs(t.Slope) * float64(t.EndMs-from) / 3.6e6; drift >= loDriftShareOfRange*rng {
			s.add(llrModerate, "Over the log the offset moved by about %.0f MHz (%s of the capture range).", drift, pct(drift/rng))
		}
	}
	return s
}
