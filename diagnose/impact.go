package diagnose

import (
	"math"
	"sort"

	"github.com/beatnote/beatnote/parse"
)

// ImpactTier is a rung of the service-impact ranking, most urgent first. A port sits on the
// first rung whose test it meets.
type ImpactTier int

// The rungs of the service-impact ranking.
const (
	// TierDark: samples without signal (no light, or no lock: loss of frame). Traffic is down.
	TierDark ImpactTier = iota
	// TierBlocks: uncorrected FEC blocks. Traffic is being corrupted.
	TierBlocks
	// TierQBelow: the Q-factor went below the FEC threshold (negative Q margin).
	TierQBelow
	// TierForecast: a trend reaches a module limit within the rules' forecast horizon.
	TierForecast
	// TierFail: some other limit is crossed, but traffic is still error-free after FEC.
	TierFail
	// TierMarginal: inside every limit with too little margin.
	TierMarginal
	// TierNoData: nothing could be judged.
	TierNoData
	// TierPass: every limit met.
	TierPass
)

var tierNames = [...]string{"dark", "uncorrected-blocks", "q-below-threshold", "forecast", "limit-crossed", "marginal", "no-data", "pass"}

// String is the tier's short name.
func (t ImpactTier) String() string { return tierNames[t] }

// Impact is a port's place in the service-impact ranking and the figures that order ports on
// the same rung.
type Impact struct {
	Tier ImpactTier
	// DarkSamples are the samples without signal.
	DarkSamples int
	// UncorrectedBlocks is the total of uncorrected FEC blocks over the log.
	UncorrectedBlocks float64
	// QMarginDB is the smallest Q margin to the FEC threshold, dB (+Inf when unknown).
	QMarginDB float64
	// HoursToLimit is the soonest time a significant trend reaches its limit, hours (+Inf when
	// no trend heads to a limit within the forecast horizon).
	HoursToLimit float64
}

// ImpactOf reads a port's impact from its judgement: the "samples without signal" and
// "uncorrected FEC blocks" criteria, the Q margin, and the trend criteria (unit "h") whose
// projected time to the limit is inside the rules' horizon (margin below zero).
func ImpactOf(p *PortResult) Impact {
	im := Impact{QMarginDB: math.Inf(1), HoursToLimit: math.Inf(1)}
	if m, ok := p.Metrics[parse.QdB.Column()]; ok && m.Margin != nil && !math.IsNaN(*m.Margin) {
		im.QMarginDB = *m.Margin
	}
	for _, c := range p.Criteria {
		switch {
		case c.Metric == parse.RxPowerDBm.Column() && c.Statistic == "count" && c.Unit == "samples":
			im.DarkSamples = int(c.Measured)
		case c.Metric == parse.UncorrectedBlocks.Column() && c.Statistic == "sum":
			im.UncorrectedBlocks = c.Measured
		case c.Statistic == "trend" && c.Unit == "h" && c.Margin < 0:
			im.HoursToLimit = math.Min(im.HoursToLimit, c.Measured)
		}
	}
	switch {
	case im.DarkSamples > 0:
		im.Tier = TierDark
	case im.UncorrectedBlocks > 0:
		im.Tier = TierBlocks
	case im.QMarginDB < 0:
		im.Tier = TierQBelow
	case !math.IsInf(im.HoursToLimit, 1):
		im.Tier = TierForecast
	case p.Verdict == Fail:
		im.Tier = TierFail
	case p.Verdict == Marginal:
		im.Tier = TierMarginal
	case p.Verdict == Pass:
		im.Tier = TierPass
	default:
		im.Tier = TierNoData
	}
	return im
}

// less orders two impacts on the same rung: most dark samples, most blocks, lowest Q margin,
// soonest limit — the rung's own figure first, then the others.
func (a Impact) less(b Impact) (less, decided bool) {
	if a.Tier != b.Tier {
		return a.Tier < b.Tier, true
	}
	cmp := []struct{ x, y float64 }{
		{-float64(a.DarkSamples), -float64(b.DarkSamples)},
		{-a.UncorrectedBlocks, -b.UncorrectedBlocks},
		{a.QMarginDB, b.QMarginDB},
		{a.HoursToLimit, b.HoursToLimit},
	}
	// On the forecast rung the time comes before the Q margin.
	if a.Tier == TierForecast {
		cmp[2], cmp[3] = cmp[3], cmp[2]
	}
	for _, c := range cmp {
		if c.x != c.y {
			return c.x < c.y, true
		}
	}
	return false, false
}

// RankKey is what places a port in the orders of SortByImpact and SortByMargin, read from its
// judgement: a port can be ranked from its key alone, without its result.
type RankKey struct {
	Port          string
	Impact        Impact
	TopConfidence float64 // the top cause's confidence, 0 without causes
	QMargin       float64 // the Q margin to the FEC threshold, 1e9 when unknown
}

// RankKeyOf reads p's rank key.
func RankKeyOf(p *PortResult) RankKey {
	return RankKey{Port: p.Port, Impact: ImpactOf(p), TopConfidence: topConfidence(p), QMargin: qMargin(p)}
}

// ImpactBefore reports whether a comes before b in the service-impact order (SortByImpact).
func ImpactBefore(a, b *RankKey) bool {
	if l, ok := a.Impact.less(b.Impact); ok {
		return l
	}
	if a.TopConfidence != b.TopConfidence {
		return a.TopConfidence > b.TopConfidence
	}
	return a.Port < b.Port
}

// MarginBefore reports whether a comes before b in the Q-margin order (SortByMargin).
func MarginBefore(a, b *RankKey) bool {
	if a.QMargin != b.QMargin {
		return a.QMargin < b.QMargin
	}
	return a.Port < b.Port
}

// SortByImpact orders ports by service impact: dark (loss of signal or of frame) first, most
// dark samples first; then uncorrected FEC blocks, most first; then Q below the FEC threshold,
// most negative margin first; then trends forecast to reach a limit within the horizon,
// soonest first; then the other failing ports, the marginal ones, those with no data and the
// passing ones. Ties go to the confidence of the top cause, then the port id.
func SortByImpact(ports []PortResult) {
	keys := make([]RankKey, len(ports))
	for i := range ports {
		keys[i] = RankKeyOf(&ports[i])
	}
	idx := make([]int, len(ports))
	for i := range idx {
		idx[i] = i
	}
	sort.SliceStable(idx, func(i, j int) bool { return ImpactBefore(&keys[idx[i]], &keys[idx[j]]) })
	permute(ports, idx)
}

// SortByMargin orders ports by Q margin to the FEC threshold, smallest first; ports without a
// Q figure last; ties by port id.
func SortByMargin(ports []PortResult) {
	sort.SliceStable(ports, func(i, j int) bool {
		a, b := RankKey{Port: ports[i].Port, QMargin: qMargin(&ports[i])}, RankKey{Port: ports[j].Port, QMargin: qMargin(&ports[j])}
		return MarginBefore(&a, &b)
	})
}

// SortByPort orders ports by port id.
func SortByPort(ports []PortResult) {
	sort.SliceStable(ports, func(i, j int) bool { return ports[i].Port < ports[j].Port })
}

// permute reorders ports so that the new i-th is the old idx[i].
func permute(ports []PortResult, idx []int) {
	out := make([]PortResult, len(ports))
	for i, k := range idx {
		out[i] = ports[k]
	}
	copy(ports, out)
}
