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

// binExtremes is the lowest bin minimum and the highest bin maximum of q (NaN where the bins
// give none).
func (pc *portCtx) binExtremes(q parse.Quantity) (lo, hi float64) {
	b := pc.s.Bins
	if b == nil {
		return math.NaN(), math.NaN()
	}
	return extreme(b.Low[q], false), extreme(b.High[q], true)
}

// applyBins widens the summaries with the bins' extremes and makes the criteria judge the
// extremes on the sides the bins give (pc.r is the port's own copy of the rules). It records
// which quantities were judged so in pc.binJudged.
func (pc *portCtx) applyBins() {
	if pc.s.Bins == nil {
		return
	}
	for q, s := range pc.sum {
		lo, hi := pc.binExtremes(q)
		widen(&s.Min, &s.Max, lo, hi)
		pc.sum[q] = s
		if a, ok := pc.absSum[q]; ok {
			m := math.Max(math.Abs(lo), math.Abs(hi)) // NaN when neither is given
			widen(&a.Min, &a.Max, a.Min, m)
			pc.absSum[q] = a
		}
	}
	r := &pc.r
	judge := func(st *rules.Statistic, q parse.Quantity, high bool) {
		lo, hi := pc.binExtremes(q)
		switch {
		case high && !math.IsNaN(hi):
			*st = rules.StatMax
		case !high && !math.IsNaN(lo):
			*st = rules.StatMin
		default:
			return
		}
		pc.binJudged |= 1 << q
	}
	judge(&r.QStatistic, parse.QdB, false)
	if _, hasQ := pc.sum[parse.QdB]; !hasQ {
		// Q derived from BER: the highest bin BER is the lowest Q (qSummary widens its Min).
		if _, hi := pc.binExtremes(parse.PreFECBER); !math.IsNaN(hi) {
			r.QStatistic = rules.StatMin
			pc.binJudged |= 1 << parse.PreFECBER
		}
	}
	judge(&r.OSNRStatistic, parse.OSNRdB, false)
	judge(&r.RxPowerLowStatistic, parse.RxPowerDBm, false)
	judge(&r.RxPowerHighStatistic, parse.RxPowerDBm, true)
	for _, q := range []parse.Quantity{parse.CDpsPerNm, parse.LOOffsetMHz} {
		st := &r.CDStatistic
		if q == parse.LOOffsetMHz {
			st = &r.LOOffsetStatistic
		}
		if lo, hi := pc.binExtremes(q); !math.IsNaN(lo) || !math.IsNaN(hi) {
			*st = rules.StatMax // of |x|: absSum's Max covers both extremes
			pc.binJudged |= 1 << q
		}
	}
	judge(&r.DGDStatistic, parse.DGDps, true)
	judge(&r.PDLStatistic, parse.PDLdB, true)
	judge(&r.SOPRateStatistic, parse.SOPRateKradPerS, true)
}

// widenDerived widens the summary of a Q derived from BER (q true) or of a BER derived from Q
// with the bin extreme of the measured one, through the same conversion as the samples.
func (pc *portCtx) widenDerived(s *series.Summary, q bool) {
	if q {
		lo, hi := pc.binExtremes(parse.PreFECBER)
		if !math.IsNaN(hi) {
			widen(&s.Min, &s.Max, qdBClamped(hi), s.Max)
		}
		if !math.IsNaN(lo) {
			widen(&s.Min, &s.Max, s.Min, qdBClamped(lo))
		}
		return
	}
	lo, hi := pc.binExtremes(parse.QdB)
	if !math.IsNaN(lo) {
		widen(&s.Min, &s.Max, s.Min, optics.BERFromQdB(lo))
	}
	if !math.IsNaN(hi) {
		widen(&s.Min, &s.Max, optics.BERFromQdB(hi), s.Max)
	}
}

// noteBinCriteria says, in the source of each criterion judged on bin extremes, that it was.
func (pc *portCtx) noteBinCriteria(rows []Criterion) {
	if pc.binJudged == 0 {
		return
	}
	for i := range rows {
		c := &rows[i]
		q, ok := parse.QuantityByColumn(c.Metric)
		if !ok || c.Statistic != string(rules.StatMin) && c.Statistic != string(rules.StatMax) {
			continue
		}
		if pc.binJudged&(1<<q) != 0 || q == parse.QdB && pc.binJudged&(1<<parse.PreFECBER) != 0 {
			c.Source += binNote
		}
	}
}

// binNote is appended to the source of a criterion judged on bin extremes.
const binNote = "; judged on the performance-monitoring bins' extremes (each bin's minimum or maximum), not on their averages"
