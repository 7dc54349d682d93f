package diagnose

import (
	"fmt"

	"github.com/beatnote/beatnote/parse"
)

// Three outputs are kept apart: compliance (the criteria against the limits and the verdict),
// explanation (the causes with their posterior) and risk (what is inside the limits but close
// enough to one that an ordinary event — a dirty connector, a repair splice, a day of drift —
// would cross it, while the signal is still fine). risks writes the last.
func (pc *portCtx) risks() []string {
	var out []string
	p, r := pc.prof, pc.r
	qm := pc.qMarginP50()
	qFine := finite(qm) && qm >= r.QMarginalMarginDB
	if !qFine {
		return nil // the signal is already short: that is compliance and explanation, not risk
	}
	if pc.has(parse.RxPowerDBm) && p.RxPowerMaxDBm > p.RxPowerMinDBm {
		lp := pc.litPowerSummary()
		switch {
		case lp.N == 0:
		case lp.Min >= p.RxPowerMinDBm && lp.Min < p.RxPowerMinDBm+r.RxPowerMarginalBandDB:
			out = append(out, fmt.Sprintf("Received power goes down to %.1f dBm, only %.1f dB above the %.1f dBm sensitivity limit, while the median Q margin is still %.1f dB: no errors yet, but a further %.1f dB of loss (a dirty connector, a repair splice) takes the port below sensitivity.",
				lp.Min, lp.Min-p.RxPowerMinDBm, p.RxPowerMinDBm, qm, lp.Min-p.RxPowerMinDBm))
		case lp.Max <= p.RxPowerMaxDBm && lp.Max > p.RxPowerMaxDBm-r.RxPowerMarginalBandDB:
			out = append(out, fmt.Sprintf("Received power reaches %+.1f dBm, only %.1f dB below the %+.1f dBm overload limit, while the median Q margin is still %.1f dB: a shorter patch or a removed pad would overload the receiver.",
				lp.Max, p.RxPowerMaxDBm-lp.Max, p.RxPowerMaxDBm, qm))
		}
	}
	if pc.has(parse.OSNRdB) && pc.reqOSNRdB > 0 {
		if v := pick(pc.sum[parse.OSNRdB], pc.stat.osnr); v >= pc.reqOSNRdB && v < pc.reqOSNRdB+r.OSNRMarginalMarginDB {
			out = append(out, fmt.Sprintf("Reported OSNR %.1f dB (%s) leaves only %.1f dB over the %.1f dB the module needs, while the median Q margin is still %.1f dB: amplifier ageing or one more span loss would use it up.",
				v, pc.stat.osnr, v-pc.reqOSNRdB, pc.reqOSNRdB, qm))
		}
	}
	if t := pc.an.LOTrend; t != nil && pc.trendSignificant(t) && t.HoursToLimit > r.LODriftHorizonH && t.HoursToLimit <= riskHorizonFactor*r.LODriftHorizonH {
		out = append(out, fmt.Sprintf("The carrier offset drifts %+.1f ± %.1f MHz/h; at that rate it reaches the %+.0f MHz capture limit in about %.0f h (beyond the %.0f h horizon, within %.0f× it).",
			t.Slope, t.SlopeSE, t.Limit, t.HoursToLimit, r.LODriftHorizonH, riskHorizonFactor))
	}
	if f := pc.an.DGDFit; f != nil && finite(f.ExceedProbability) && r.PMDOutageProbability > 0 &&
		f.ExceedProbability > r.PMDOutageProbability/10 && f.ExceedProbability <= r.PMDOutageProbability {
		out = append(out, fmt.Sprintf("Mean DGD %.1f ps gives a Maxwellian probability of %.2g that the DGD exceeds the %.0f ps tolerance: inside the %.2g allowed, within a factor of 10 of it.",
			f.MeanPs, f.ExceedProbability, f.TolerancePs, r.PMDOutageProbability))
	}
	return out
}

// riskHorizonFactor: a drift that reaches its limit within this many horizons is a risk note
// (common practice: a week for a one-day horizon is still worth planning for).
const riskHorizonFactor = 7.0
