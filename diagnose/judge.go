package diagnose

import (
	"fmt"
	"math"
	"slices"

	"github.com/beatnote/beatnote/diagnose/optics"
	"github.com/beatnote/beatnote/diagnose/series"
	"github.com/beatnote/beatnote/parse"
	"github.com/beatnote/beatnote/rules"
)

// postFECLimitBER: post-FEC BER above this is not error-free. 1e-12 is the classic error-free
// reference of FEC specifications such as ITU-T G.975 (common practice).
const postFECLimitBER = 1e-12

func pick(s series.Summary, st rules.Statistic) float64 {
	switch st {
	case rules.StatMin:
		return s.Min
	case rules.StatP50:
		return s.P50
	case rules.StatMax:
		return s.Max
	}
	return s.P99
}

// mirror is the statistic of BER that matches a statistic of Q (low Q ↔ high BER).
func mirror(s series.Summary, st rules.Statistic) float64 {
	switch st {
	case rules.StatMin:
		return s.Max
	case rules.StatP50:
		return s.P50
	case rules.StatMax:
		return s.Min
	}
	return s.P01
}

func finite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }

func ptr(x float64) *float64 {
	if !finite(x) {
		return nil
	}
	return &x
}

// putMetric sets m[key] to the summary s with its limit and margin; nothing when s is empty.
func putMetric(m map[string]Metric, key, unit string, s series.Summary, derived bool, limit, margin float64) {
	if s.N == 0 {
		return
	}
	m[key] = Metric{Min: s.Min, P50: s.P50, P99: s.P99, Max: s.Max,
		Limit: ptr(limit), Margin: ptr(margin), Unit: unit, Derived: derived}
}

// metrics summarises every quantity the port has, measured or derived, with limit and margin
// where a limit applies (margin positive inside the limit).
func (pc *portCtx) metrics() map[string]Metric {
	m, p := map[string]Metric{}, pc.prof
	nan := math.NaN()
	for q := parse.Quantity(0); q < parse.NumQuantities; q++ {
		if !pc.has(q) {
			continue
		}
		s := pc.sum[q]
		limit, margin := nan, nan
		switch q {
		case parse.PreFECBER:
			limit = p.FECThresholdBER
			margin = limit - mirror(s, pc.stat.q)
		case parse.PostFECBER:
			limit, margin = postFECLimitBER, decadesBelow(postFECLimitBER, s.Max)
		case parse.UncorrectedBlocks:
			limit, margin = 0, 0-s.Max // 0 − x, not −x: no negative zero
		case parse.QdB:
			s = pc.qSummary() // samples with signal only
			limit = pc.qLimitDB
			margin = pick(s, pc.stat.q) - limit
		case parse.ESNRdB:
			limit = pc.snrThDB
			margin = pick(s, pc.stat.q) - limit
		case parse.OSNRdB:
			limit = pc.reqOSNRdB
			margin = pick(s, pc.stat.osnr) - limit
		case parse.CDpsPerNm:
			limit = p.CDTolerancePsNm
			margin = limit - pick(pc.absSum[q], pc.stat.cd)
		case parse.DGDps:
			limit = p.DGDTolerancePs
			margin = limit - pick(s, pc.stat.dgd)
		case parse.PDLdB:
			limit = p.PDLTolerancedB
			margin = limit - pick(s, pc.stat.pdl)
		case parse.SOPRateKradPerS:
			limit = p.SOPTrackingKradS
			margin = limit - pick(s, pc.stat.sop)
		case parse.LOOffsetMHz:
			limit = p.LOOffsetRangeMHz
			margin = limit - pick(pc.absSum[q], pc.stat.lo)
		case parse.RxPowerDBm:
			limit, margin = windowMargin(s, p.RxPowerMinDBm, p.RxPowerMaxDBm, pc.stat.rxLow, pc.stat.rxHigh)
		case parse.TxPowerDBm:
			if p.TxPowerMaxDBm > p.TxPowerMinDBm {
				limit, margin = windowMargin(s, p.TxPowerMinDBm, p.TxPowerMaxDBm, rules.StatMin, rules.StatMax)
			}
		}
		if limit == 0 && q != parse.UncorrectedBlocks && q != parse.RxPowerDBm && q != parse.TxPowerDBm {
			limit, margin = nan, nan // the profile does not give this limit (a 0 dBm power edge is a real limit)
		}
		putMetric(m, q.Column(), q.Unit(), s, false, limit, margin)
	}
	if pc.berDerived {
		s := pc.summarize(pc.ber)
		pc.widenDerived(&s, false)
		putMetric(m, parse.PreFECBER.Column(), "", s, true, p.FECThresholdBER, p.FECThresholdBER-mirror(s, pc.stat.q))
	}
	if pc.qDerived {
		s := pc.qSummary()
		putMetric(m, parse.QdB.Column(), "dB", s, true, pc.qLimitDB, pick(s, pc.stat.q)-pc.qLimitDB)
	}
	if pc.esnrDerived {
		s := pc.summarize(pc.esnr)
		putMetric(m, parse.ESNRdB.Column(), "dB", s, true, pc.snrThDB, pick(s, pc.stat.q)-pc.snrThDB)
	}
	return m
}

// qSummary is the summary of the Q series (measured or derived) over the samples with signal,
// computed once: a dark sample's Q (the clamp of a BER of no lock, or whatever the module
// reports without light) says nothing of the signal quality, and the dark samples are judged by
// their own criterion.
func (pc *portCtx) qSummary() series.Summary {
	if pc.cache.q == nil {
		s := pc.summaryOf(pc.lit(pc.qdb), parse.QdB)
		if pc.qDerived {
			pc.widenDerived(&s, true)
		}
		pc.cache.q = &s
	}
	return *pc.cache.q
}

// windowMargin gives the nearer edge of a power window and the margin to it.
func windowMargin(s series.Summary, lo, hi float64, stLo, stHi rules.Statistic) (limit, margin float64) {
	mLo, mHi := pick(s, stLo)-lo, hi-pick(s, stHi)
	if lo == 0 && hi == 0 {
		return math.NaN(), math.NaN()
	}
	if mLo <= mHi {
		return lo, mLo
	}
	return hi, mHi
}

func (pc *portCtx) source(key string) string {
	s := pc.prof.Sources[key]
	k := sourceKey{pc.prof.ID, key, s}
	if v, ok := sourceMemo.load(k); ok {
		return v
	}
	v := "profile " + pc.prof.ID
	if s != "" {
		v += ": " + s
	}
	sourceMemo.store(k, v)
	return v
}

// sourceKey is what source's words depend on: the profile's id, the figure's key and the
// profile's source for it.
type sourceKey struct{ id, key, src string }

// sourceMemo keeps source's words, one string shared by every port of a profile instead of
// one made (and held in the result) per row and port. Bounded: profiles come from files.
var sourceMemo = memo[sourceKey, string]{max: 4096}

// notes are "not judged" notes: what a stage could not judge and why. Each stage that has some
// returns them as part of its value, and analyzePort puts them into the result in stage order.
type notes []string

func (n *notes) add(format string, a ...any) {
	*n = append(*n, fmt.Sprintf(format, a...))
}

// criteriaTable is the value of the criteria stage: the judged rows and, for each, the cause
// that owns its physics ("" for the noise-family rows — Q, uncorrected blocks, post-FEC BER —
// that several causes share), and the quantities it could not judge.
type criteriaTable struct {
	rows   []Criterion
	owners []CauseID
	notes  notes
}

// add appends a row judged "higher is better" (margin = measured − limit) or
// "lower is better" (margin = limit − measured); marginal when the margin is below band.
func (t *criteriaTable) add(c Criterion, band float64, owner CauseID) {
	if !finite(c.Measured) || !finite(c.Limit) {
		return
	}
	switch {
	case c.Margin < 0:
		c.Verdict = Fail
	case c.Margin < band:
		c.Verdict = Marginal
	default:
		c.Verdict = Pass
	}
	t.append(c, owner)
}

// append adds a judged row with the cause that owns it.
func (t *criteriaTable) append(c Criterion, owner CauseID) {
	t.rows = append(t.rows, c)
	t.owners = append(t.owners, owner)
}

// criteria builds the criteria table from the module limits and the rules' marginal bands,
// with the bin note in the source of each row judged on bin extremes.
func (pc *portCtx) criteria() criteriaTable {
	t := criteriaTable{rows: make([]Criterion, 0, maxCriteria), owners: make([]CauseID, 0, maxCriteria)}
	p, r := pc.prof, pc.r
	has := pc.has

	if pc.qdb != nil && p.FECThresholdBER > 0 {
		s := pc.qSummary()
		m := pick(s, pc.stat.q)
		t.add(Criterion{Name: "Q-factor margin to the FEC threshold", Metric: parse.QdB.Column(), Statistic: string(pc.stat.q),
			Measured: m, Limit: pc.qLimitDB, Margin: m - pc.qLimitDB, Unit: "dB",
			Source: pc.source("fec_threshold_ber") + fmt.Sprintf("; limit = Q of BER %.3g", p.FECThresholdBER)}, r.QMarginalMarginDB, "")
	} else {
		t.notes.add("Q-factor: the log has neither pre_fec_ber nor q_db")
	}
	if has(parse.OSNRdB) && pc.reqOSNRdB > 0 {
		m := pick(pc.sum[parse.OSNRdB], pc.stat.osnr)
		t.add(Criterion{Name: "OSNR margin to the required OSNR", Metric: parse.OSNRdB.Column(), Statistic: string(pc.stat.osnr),
			Measured: m, Limit: pc.reqOSNRdB, Margin: m - pc.reqOSNRdB, Unit: "dB", Source: pc.source("required_osnr_db")}, r.OSNRMarginalMarginDB, CauseOSNRLow)
	}
	if has(parse.RxPowerDBm) && p.RxPowerMaxDBm > p.RxPowerMinDBm {
		s := pc.sum[parse.RxPowerDBm]
		lo, hi := pick(s, pc.stat.rxLow), pick(s, pc.stat.rxHigh)
		t.add(Criterion{Name: "Received power above the sensitivity limit", Metric: parse.RxPowerDBm.Column(), Statistic: string(pc.stat.rxLow),
			Measured: lo, Limit: p.RxPowerMinDBm, Margin: lo - p.RxPowerMinDBm, Unit: "dBm", Source: pc.source("rx_power_min_dbm")}, r.RxPowerMarginalBandDB, pc.powerEdgeOwner(CauseRxPowerLow))
		t.add(Criterion{Name: "Received power below the overload limit", Metric: parse.RxPowerDBm.Column(), Statistic: string(pc.stat.rxHigh),
			Measured: hi, Limit: p.RxPowerMaxDBm, Margin: p.RxPowerMaxDBm - hi, Unit: "dBm", Source: pc.source("rx_power_max_dbm")}, r.RxPowerMarginalBandDB, pc.powerEdgeOwner(CauseRxOverload))
	} else if !has(parse.RxPowerDBm) {
		t.notes.add("received power: the log has no rx_power_dbm")
	}
	if has(parse.TxPowerDBm) && p.TxPowerMaxDBm > p.TxPowerMinDBm {
		s := pc.sum[parse.TxPowerDBm]
		t.add(Criterion{Name: "Transmit power inside the module's range", Metric: parse.TxPowerDBm.Column(), Statistic: "min",
			Measured: s.Min, Limit: p.TxPowerMinDBm, Margin: s.Min - p.TxPowerMinDBm, Unit: "dBm", Source: pc.source("tx_power_min_dbm")}, 0, "")
		t.add(Criterion{Name: "Transmit power inside the module's range", Metric: parse.TxPowerDBm.Column(), Statistic: "max",
			Measured: s.Max, Limit: p.TxPowerMaxDBm, Margin: p.TxPowerMaxDBm - s.Max, Unit: "dBm", Source: pc.source("tx_power_max_dbm")}, 0, "")
	}
	upper := func(name string, q parse.Quantity, sum series.Summary, st rules.Statistic, limit, frac float64, unit, key string, owner CauseID) {
		if limit <= 0 {
			t.notes.add("%s: the profile gives no limit", name)
			return
		}
		m := pick(sum, st)
		t.add(Criterion{Name: name, Metric: q.Column(), Statistic: string(st), Measured: m, Limit: limit,
			Margin: limit - m, Unit: unit, Source: pc.source(key)}, (1-frac)*limit, owner)
	}
	if has(parse.CDpsPerNm) {
		upper("|CD| inside the compensation range", parse.CDpsPerNm, pc.absSum[parse.CDpsPerNm], pc.stat.cd, p.CDTolerancePsNm, r.CDMarginalFraction, "ps/nm", "cd_tolerance_ps_nm", CauseCDOverLimit)
	}
	if has(parse.DGDps) {
		upper("DGD inside the instantaneous tolerance", parse.DGDps, pc.sum[parse.DGDps], pc.stat.dgd, p.DGDTolerancePs, r.DGDMarginalFraction, "ps", "dgd_tolerance_ps", CausePMD)
		if f := pc.an.DGDFit; f != nil && p.DGDTolerancePs > 0 && r.PMDOutageProbability > 0 {
			md := meanDGDCriterionOf(p.DGDTolerancePs, p.MeanDGDTolerancePs, r.PMDOutageProbability)
			t.add(Criterion{Name: md.name, Metric: parse.DGDps.Column(), Statistic: "mean",
				Measured: f.MeanPs, Limit: md.allowed, Margin: md.allowed - f.MeanPs, Unit: "ps",
				Source: pc.source("dgd_tolerance_ps") + "; " + md.src},
				(1-r.DGDMarginalFraction)*md.allowed, CausePMD)
		}
	}
	if has(parse.PDLdB) {
		upper("PDL inside the tolerance", parse.PDLdB, pc.sum[parse.PDLdB], pc.stat.pdl, p.PDLTolerancedB, r.PDLMarginalFraction, "dB", "pdl_tolerance_db", CausePDLHigh)
	}
	if has(parse.SOPRateKradPerS) {
		upper("SOP rate inside the tracking speed", parse.SOPRateKradPerS, pc.sum[parse.SOPRateKradPerS], pc.stat.sop, p.SOPTrackingKradS, r.SOPRateMarginalFraction, "krad/s", "sop_tracking_krad_s", CauseSOPTransient)
	}
	if has(parse.LOOffsetMHz) {
		upper("|LO offset| inside the capture range", parse.LOOffsetMHz, pc.absSum[parse.LOOffsetMHz], pc.stat.lo, p.LOOffsetRangeMHz, r.LOOffsetMarginalFraction, "MHz", "lo_offset_range_mhz", CauseLOOffset)
		if lt := pc.an.LOTrend; lt != nil && pc.trendSignificant(lt) && finite(lt.HoursToLimit) && lt.HoursToLimit > 0 {
			c := Criterion{Name: "LO offset drift: hours until the capture limit", Metric: parse.LOOffsetMHz.Column(), Statistic: "trend",
				Measured: lt.HoursToLimit, Limit: r.LODriftHorizonH, Margin: lt.HoursToLimit - r.LODriftHorizonH, Unit: "h",
				Source: "rules lo_drift_horizon_h: " + r.Sources["lo_drift_horizon_h"]}
			c.Verdict = Pass
			if c.Margin < 0 {
				c.Verdict = Marginal
			}
			t.append(c, CauseLOOffset)
		}
	}
	if has(parse.UncorrectedBlocks) {
		total := 0.0
		for _, v := range pc.s.Values[parse.UncorrectedBlocks] {
			if !math.IsNaN(v) {
				total += v
			}
		}
		t.add(Criterion{Name: "Uncorrected FEC blocks (total)", Metric: parse.UncorrectedBlocks.Column(), Statistic: "sum",
			Measured: total, Limit: 0, Margin: 0 - total, Unit: "blocks", Source: "common practice: error-free after FEC"}, 0, "")
	}
	if has(parse.PostFECBER) {
		m := pc.sum[parse.PostFECBER].Max
		t.add(Criterion{Name: "Post-FEC BER (margin in decades)", Metric: parse.PostFECBER.Column(), Statistic: "max",
			Measured: m, Limit: postFECLimitBER, Margin: decadesBelow(postFECLimitBER, m), Unit: "", MarginUnit: "decades",
			Source: "common practice: 1e-12, the error-free reference of FEC specifications such as ITU-T G.975; margin = log10(limit / measured), a measured 0 taken as 1e-15"}, 0, "")
	}
	if pc.darkCount > 0 {
		t.add(Criterion{Name: "Samples without signal", Metric: parse.RxPowerDBm.Column(), Statistic: "count",
			Measured: float64(pc.darkCount), Limit: 0, Margin: -float64(pc.darkCount), Unit: "samples",
			Source: fmt.Sprintf("rules signal_loss_floor_dbm %.1f dBm, or pre-FEC BER ≥ %.2g: %s", r.SignalLossFloorDBm, noLockBER, r.Sources["signal_loss_floor_dbm"])}, 0, pc.darkOwner())
	}
	if pc.exp != nil && has(parse.CDpsPerNm) {
		exp := math.Abs(pc.exp.CDPsNm)
		meas := pc.absSum[parse.CDpsPerNm].P50
		tol := math.Max(r.CDMismatchRelativeTolerance*exp, r.CDMismatchFloorPsNm)
		c := Criterion{Name: fmt.Sprintf("|CD| within ±%.0f ps/nm of the plan's", tol), Metric: parse.CDpsPerNm.Column(), Statistic: "p50",
			Measured: meas, Limit: exp, Margin: tol - math.Abs(meas-exp), Unit: "ps/nm",
			Source: fmt.Sprintf("plan %s via the fibre model; tolerance ±%.0f ps/nm (rules cd_mismatch_*)", pc.plan.Circuit, tol)}
		c.Verdict = Pass
		if c.Margin < 0 {
			c.Verdict = Marginal
		}
		if finite(c.Measured) && finite(c.Limit) {
			t.append(c, CauseCDMismatch)
		}
	}
	noteBinCriteria(t.rows, pc.stat.binJudged)
	if len(t.rows) == 0 {
		t.rows, t.owners = nil, nil // as before the rows were made room for
	} else {
		t.rows = slices.Clone(t.rows) // the result holds the rows: no spare room
	}
	return t
}

// maxCriteria is the most rows criteria adds (each limit of the profile and rules, the plan's
// CD), the room made for them at once while they are judged.
const maxCriteria = 17

// meanDGDCriterion is the limit and the words of the mean-DGD criterion, which depend only on
// the profile's DGD tolerances and the rules' outage probability.
type meanDGDCriterion struct {
	allowed   float64
	name, src string
}

func computeMeanDGDCriterion(tol, meanTol, outage float64) meanDGDCriterion {
	ratio := optics.MaxwellQuantile(outage, 1)
	allowed := tol / ratio
	src := fmt.Sprintf("limit %.1f ps = the module's %.0f ps instantaneous DGD tolerance / %.2f, the Maxwellian ratio of the DGD exceeded with probability %.2g to the mean DGD (M. Karlsson, J. Lightwave Technol. 19(3), 2001; rules pmd_outage_probability)",
		allowed, tol, ratio, outage)
	if meanTol > 0 {
		src += fmt.Sprintf("; the profile's own mean-DGD figure is %.3g ps, which allows a slightly higher outage probability", meanTol)
	}
	return meanDGDCriterion{allowed: allowed, src: src,
		name: fmt.Sprintf("Mean DGD for outage ≤ %.2g (from the %.0f ps tolerance)", outage, tol)}
}

// meanDGDMemo keeps computeMeanDGDCriterion per (tolerance, mean tolerance, outage
// probability), by the bits of each: the Maxwellian quantile is a root search. Bounded.
var meanDGDMemo = memo[[3]uint64, meanDGDCriterion]{max: 256}

func meanDGDCriterionOf(tol, meanTol, outage float64) meanDGDCriterion {
	k := [3]uint64{math.Float64bits(tol), math.Float64bits(meanTol), math.Float64bits(outage)}
	if c, ok := meanDGDMemo.load(k); ok {
		return c
	}
	c := computeMeanDGDCriterion(tol, meanTol, outage)
	meanDGDMemo.store(k, c)
	return c
}

func (pc *portCtx) trendSignificant(t *Trend) bool {
	return t.SlopeSE >= 0 && math.Abs(t.Slope) > pc.r.TrendSignificanceSigma*t.SlopeSE
}

// planVsMeasured compares the plan's expectations with the measurements.
// The PlanComparison quantities that are not telemetry columns (those are named by
// parse.Quantity.Column).
const (
	PlanRouteLengthKm = "route_length_km" // route length implied by the measured |CD|
	PlanMeanDGDPs     = "mean_dgd_ps"     // mean of the DGD samples
	PlanImpliedOSNRdB = "osnr_implied_db" // OSNR implied by the median eSNR
)

func (pc *portCtx) planVsMeasured() (rows []PlanComparison) {
	if pc.plan == nil || pc.exp == nil {
		return nil
	}
	e := pc.exp
	add := func(q string, exp, meas float64, unit, note string) {
		if !finite(exp) || !finite(meas) {
			return
		}
		rows = append(rows, PlanComparison{Quantity: q, Expected: exp, Measured: meas, Unit: unit, Note: note})
	}
	if s := pc.sum[parse.CDpsPerNm]; pc.has(parse.CDpsPerNm) {
		note := "median of the DSP estimate"
		if s.P50*e.CDPsNm < 0 {
			note += "; reported with the opposite sign to the plan (compared by magnitude)"
		}
		add(parse.CDpsPerNm.Column(), e.CDPsNm, s.P50, "ps/nm", note)
		if d := math.Abs(e.CDPsNm) / e.RouteLengthKm; finite(d) && d != 0 {
			add(PlanRouteLengthKm, e.RouteLengthKm, pc.absSum[parse.CDpsPerNm].P50/d, "km", fmt.Sprintf("implied by the measured |CD| at the plan's average %.2f ps/(nm·km)", d))
		}
	}
	if f := pc.an.DGDFit; f != nil {
		add(PlanMeanDGDPs, e.MeanDGDPs, f.MeanPs, "ps", "mean of the DGD samples")
	}
	if countFinite(pc.litPower) > 0 {
		add(parse.RxPowerDBm.Column(), e.RxPowerDBm, pc.litPowerSummary().P50, "dBm", "median while the signal was present")
	}
	if s := pc.sum[parse.OSNRdB]; pc.has(parse.OSNRdB) {
		add(parse.OSNRdB.Column(), e.ASEOSNRdB, s.P50, "dB", "median reported OSNR vs the ASE OSNR of the amplifier chain")
	}
	if v := pc.impliedOSNRp50(); finite(v) {
		ref := e.GOSNRdB
		if !finite(ref) {
			ref = e.ASEOSNRdB
		}
		add(PlanImpliedOSNRdB, ref, v, "dB", "OSNR implied by the median eSNR (after the transceiver ceiling) vs the plan's generalized OSNR")
	}
	if s := pc.sum[parse.FrequencyTHz]; pc.has(parse.FrequencyTHz) {
		note := ""
		// A DWDM channel is placed on the ITU-T G.694.1 flexible grid, whose centre frequencies
		// step by 6.25 GHz: a transceiver tuned further than one step from the plan's frequency
		// sits on another channel than planned.
		if d := math.Abs(s.P50-e.FrequencyTHz) * 1000; finite(d) && e.FrequencyTHz > 0 && d > gridStepGHz {
			note = fmt.Sprintf("tuned to another channel than planned: %.2f GHz off (%.0f steps of the 6.25 GHz grid, %.1f of a 50 GHz grid)", d, d/gridStepGHz, d/50)
		}
		add(parse.FrequencyTHz.Column(), e.FrequencyTHz, s.P50, "THz", note)
	}
	if s := pc.sum[parse.TxPowerDBm]; pc.has(parse.TxPowerDBm) && pc.plan.TxPowerDBm != 0 {
		add(parse.TxPowerDBm.Column(), pc.plan.TxPowerDBm, s.P50, "dBm", "")
	}
	return rows
}

// esnrP50 is the median eSNR of lit samples (measured or BER-implied); NaN when unknown.
func (pc *portCtx) esnrP50() float64 {
	if pc.cache.esnrSet {
		return pc.cache.esnr
	}
	pc.cache.esnr, pc.cache.esnrSet = math.NaN(), true
	if pc.esnr == nil {
		return pc.cache.esnr
	}
	pc.cache.esnr = pc.summaryOf(pc.lit(pc.esnr), parse.ESNRdB).P50
	return pc.cache.esnr
}

func (pc *portCtx) impliedOSNRp50() float64 {
	e := pc.esnrP50()
	if !finite(e) || !(pc.prof.BaudGBd > 0) {
		return math.NaN()
	}
	return pc.impliedOSNRdB(e)
}

// verdictOf is the port's verdict: the worst criterion; a listed cause makes the port at least
// marginal; nothing judged is no-data.
func verdictOf(criteria []Criterion, causes []Cause) Verdict {
	v := Pass
	judged := false
	for _, c := range criteria {
		judged = true
		if c.Verdict.Severity() > v.Severity() {
			v = c.Verdict
		}
	}
	if len(causes) > 0 && v == Pass {
		v = Marginal
	}
	if !judged && len(causes) == 0 {
		v = NoData
	}
	return v
}
