package diagnose

import (
	"math"

	"github.com/beatnote/beatnote/diagnose/optics"
	"github.com/beatnote/beatnote/diagnose/series"
	"github.com/beatnote/beatnote/parse"
	"github.com/beatnote/beatnote/rules"
)

// Performance-monitoring bins (parse.Bins): each sample of such a port is a bin's average, with
// the bin's minimum and maximum kept beside it. What can break a link within a bin is its worst
// moment, so on a binned port the summaries' Min and Max take in every bin's minimum and
// maximum, and each criterion whose worse side the bins give judges that extreme — the lowest Q,
// OSNR and received power, the highest BER, DGD, PDL and SOP rate, the largest |CD| and
// |LO offset| — instead of a percentile of the averages (a percentile of averages hides the
// excursions inside each bin). Percentiles (p50, p99) stay those of the averages.

// extreme is the lowest (high false) or highest finite value of v; NaN when none.
func extreme(v []float64, high bool) float64 {
	out := math.NaN()
	for _, x := range v {
		if math.IsNaN(x) {
			continue
		}
		if math.IsNaN(out) || high && x > out || !high && x < out {
			out = x
		}
	}
	return out
}

// widen lowers *lo to a and raises *hi to b, ignoring NaN.
func widen(lo, hi *float64, a, b float64) {
	if a < *lo || math.IsNaN(*lo) {
		*lo = a
	}
	if b > *hi || math.IsNaN(*hi) {
		*hi = b
	}
}

// binExtremes is the lowest bin minimum and the highest bin maximum of q in b (NaN where b is
// nil or gives none).
func binExtremes(b *parse.Bins, q parse.Quantity) (lo, hi float64) {
	if b == nil {
		return math.NaN(), math.NaN()
	}
	return extreme(b.Low[q], false), extreme(b.High[q], true)
}

// widenWithBins widens the column summaries sum (and absSum, of |x|) with the bins' extremes.
// cols has bit q set for each column summarised; absSum holds CD and LO offset when present.
func widenWithBins(b *parse.Bins, sum, absSum *[parse.NumQuantities]series.Summary, cols uint32) {
	if b == nil {
		return
	}
	for q := parse.Quantity(0); q < parse.NumQuantities; q++ {
		if cols&(1<<q) == 0 {
			continue
		}
		lo, hi := binExtremes(b, q)
		s := &sum[q]
		widen(&s.Min, &s.Max, lo, hi)
		if q == parse.CDpsPerNm || q == parse.LOOffsetMHz {
			a := &absSum[q]
			m := math.Max(math.Abs(lo), math.Abs(hi)) // NaN when neither is given
			widen(&a.Min, &a.Max, a.Min, m)
		}
	}
}

// statChoice is which statistic each criterion judges on one port: the rules' choice, or the
// bin extreme on the sides a binned port's bins give (chooseStatistics). The rules themselves
// are never changed.
type statChoice struct {
	q, osnr, rxLow, rxHigh, cd, dgd, pdl, sop, lo rules.Statistic
	binJudged                                     uint32 // bit q: criteria on q judge bin extremes
}

// chooseStatistics is the statistics of r, with each one whose worse side the bins of s give
// replaced by that extreme (min or max; for CD and LO offset the max of |x|), and the
// quantities so judged marked in binJudged. A Q derived from BER (no q_db column) is judged on
// its minimum when the bins give the highest BER.
func chooseStatistics(s *parse.Series, r rules.Rules) statChoice {
	c := statChoice{q: r.QStatistic, osnr: r.OSNRStatistic, rxLow: r.RxPowerLowStatistic, rxHigh: r.RxPowerHighStatistic,
		cd: r.CDStatistic, dgd: r.DGDStatistic, pdl: r.PDLStatistic, sop: r.SOPRateStatistic, lo: r.LOOffsetStatistic}
	b := s.Bins
	if b == nil {
		return c
	}
	judge := func(st *rules.Statistic, q parse.Quantity, high bool) {
		lo, hi := binExtremes(b, q)
		switch {
		case high && !math.IsNaN(hi):
			*st = rules.StatMax
		case !high && !math.IsNaN(lo):
			*st = rules.StatMin
		default:
			return
		}
		c.binJudged |= 1 << q
	}
	judge(&c.q, parse.QdB, false)
	if !s.Has(parse.QdB) {
		// Q derived from BER: the highest bin BER is the lowest Q (qSummary widens its Min).
		if _, hi := binExtremes(b, parse.PreFECBER); !math.IsNaN(hi) {
			c.q = rules.StatMin
			c.binJudged |= 1 << parse.PreFECBER
		}
	}
	judge(&c.osnr, parse.OSNRdB, false)
	judge(&c.rxLow, parse.RxPowerDBm, false)
	judge(&c.rxHigh, parse.RxPowerDBm, true)
	for _, q := range []parse.Quantity{parse.CDpsPerNm, parse.LOOffsetMHz} {
		st := &c.cd
		if q == parse.LOOffsetMHz {
			st = &c.lo
		}
		if lo, hi := binExtremes(b, q); !math.IsNaN(lo) || !math.IsNaN(hi) {
			*st = rules.StatMax // of |x|: absSum's Max covers both extremes
			c.binJudged |= 1 << q
		}
	}
	judge(&c.dgd, parse.DGDps, true)
	judge(&c.pdl, parse.PDLdB, true)
	judge(&c.sop, parse.SOPRateKradPerS, true)
	return c
}

// widenDerived widens the summary of a Q derived from BER (q true) or of a BER derived from Q
// with the bin extreme of the measured one, through the same conversion as the samples.
func (pc *portCtx) widenDerived(s *series.Summary, q bool) {
	if q {
		lo, hi := binExtremes(pc.s.Bins, parse.PreFECBER)
		if !math.IsNaN(hi) {
			widen(&s.Min, &s.Max, qdBClamped(hi), s.Max)
		}
		if !math.IsNaN(lo) {
			widen(&s.Min, &s.Max, s.Min, qdBClamped(lo))
		}
		return
	}
	lo, hi := binExtremes(pc.s.Bins, parse.QdB)
	if !math.IsNaN(lo) {
		widen(&s.Min, &s.Max, s.Min, optics.BERFromQdB(lo))
	}
	if !math.IsNaN(hi) {
		widen(&s.Min, &s.Max, optics.BERFromQdB(hi), s.Max)
	}
}

// noteBinCriteria says, in the source of each criterion judged on bin extremes (binJudged, of
// statChoice), that it was.
func noteBinCriteria(rows []Criterion, binJudged uint32) {
	if binJudged == 0 {
		return
	}
	for i := range rows {
		c := &rows[i]
		q, ok := parse.QuantityByColumn(c.Metric)
		if !ok || c.Statistic != string(rules.StatMin) && c.Statistic != string(rules.StatMax) {
			continue
		}
		if binJudged&(1<<q) != 0 || q == parse.QdB && binJudged&(1<<parse.PreFECBER) != 0 {
			c.Source += binNote
		}
	}
}

// binNote is appended to the source of a criterion judged on bin extremes.
const binNote = "; judged on the performance-monitoring bins' extremes (each bin's minimum or maximum), not on their averages"
