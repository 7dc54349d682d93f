package diagnose

import (
	"fmt"
	"math"
	"strings"

	"github.com/beatnote/beatnote/diagnose/series"
	"github.com/beatnote/beatnote/parse"
)

// Evidence weights. Each column test adds a log-likelihood ratio: the natural log of how much
// more likely the observation is with the cause than on a healthy port (I. J. Good, Probability
// and the Weighing of Evidence, 1950). The levels follow the scale of R. E. Kass and
// A. E. Raftery, "Bayes factors", J. Amer. Statist. Assoc. 90(430), 1995 (ln B of 1, 3, 5:
// positive, strong, very strong); the level given to each observation is engineering judgement
// (common practice), documented per test in docs/diagnosis.md. The posterior stage
// (posterior.go) turns them into probabilities.
const (
	llrWeak     = 1.0
	llrModerate = 2.0
	llrStrong   = 3.5
	llrDecisive = 5.0
	// Named in-between levels.
	llrFirm        = 3.0  // between moderate and strong
	llrSupporting  = 1.5  // between weak and moderate
	llrCDMismatch  = 2.5  // CD off the plan by the tolerance
	llrCDMismatch2 = 4.0  // CD off the plan by twice the tolerance
	llrAgainst     = -3.0 // a measured fact that by itself explains the symptom
	llrAgainstSome = -2.0
	llrAgainstBit  = -1.5
	llrAgainstTiny = -0.5
	// At a loss of lock: strong at the limit, +2 per unit of ratio beyond it, at most 6.
	llrLockLossPerRatio = 2.0
	llrLockLossMax      = 6.0
)

// Statistical and physical thresholds of the column tests (common practice unless named).
const (
	corrMaxP           = 0.01  // a rank correlation counts at p below this (with |ρ| ≥ correlation_min_spearman)
	ksMinSamples       = 30    // a Maxwellian fit is judged on at least this many DGD samples
	ksFitP             = 0.05  // the fit is claimed where the KS test does not reject it at 5 %
	ksRejectP          = 0.001 // and called not Maxwellian-shaped below this
	coincidentShare    = 0.5   // at least half the bursts at an SOP spike …
	chanceFactorStrong = 3.0   // … and more than 3× (strong) or 2× (moderate) the chance rate
	chanceFactor       = 2.0
	driftHorizonFactor = 4.0 // an LO drift reaching the limit within 4 horizons is moderate evidence
	planDGDFactor      = 2.0 // mean DGD more than twice the plan's fibre PMD is weak evidence
	// loDriftShareOfRange: a laser's carrier normally moves by far less than a quarter of the
	// capture range over a log; a drift that large is a frequency-control fault in itself.
	loDriftShareOfRange = 0.25
	// loModerateBelowMarginal: an |LO offset| within this share of the capture range below the
	// marginal fraction is moderate evidence.
	loModerateBelowMarginal = 0.2
	// cdSteadyShare: the CD estimate counts as steady when its half-range is below this share
	// of the difference from the plan (estimator noise then cannot explain the difference).
	cdSteadyShare = 1.0 / 3
	// nonlinearHalfGapShare: a shortfall of this share of nonlinear_snr_gap_db on a noisy port
	// is moderate evidence of nonlinearity.
	nonlinearHalfGapShare = 0.5
	// stepNearIntervals: a power or OSNR step within this many sample intervals of an event is
	// taken as coincident with it.
	stepNearIntervals = 2
	// noESNRGainDB: an eSNR within this of what the plan's OSNR gives is "no better".
	noESNRGainDB = 0.5
	// minEvidenceLLR: a symptom observable is told in the evidence when its |LLR| is at least
	// this (smaller ones move the posterior but say little).
	minEvidenceLLR = 0.5
	// unknownPrior is the prior of a hypothesis the rules file does not name.
	unknownPrior = 1e-6
	// minTrendSamples: a trend, a change-point search or a rank correlation needs at least
	// this many samples whatever min_samples_for_trend says.
	minTrendSamples = 3
	// coincidenceIntervals: the coincidence window is at least this many sample intervals, so
	// that a burst and a spike in neighbouring samples coincide.
	coincidenceIntervals = 1.5
)

// item is one piece of evidence: its log-likelihood ratio and its words, either given (text)
// or, for a column test, the format and arguments they are printed from when the cause is
// listed (words): most causes of most ports are weighed but never listed.
type item struct {
	llr    float64
	text   string
	format string
	args   []any
	normal *portCtx       // set: the "own estimate is normal" words of column q (exonerate)
	q      parse.Quantity // with normal
}

// words is the item's text.
func (it *item) words() string {
	switch {
	case it.normal != nil:
		return fmt.Sprintf("The module's own %s estimate is in the log and normal (%s).", it.q.Column(), strings.TrimSpace(it.normal.columnFigure(it.q)))
	case it.format == "":
		return it.text
	}
	return fmt.Sprintf(it.format, it.args...)
}

type score struct {
	id    CauseID
	items []item
}

// add is a column test's evidence, worded as fmt.Sprintf(format, a...) if it is ever shown.
// The arguments are values.
func (s *score) add(llr float64, format string, a ...any) {
	s.items = append(s.items, item{llr: llr, format: format, args: a})
}

// sum is Σ LLR of the cause's column tests.
func (s *score) sum() float64 {
	t := 0.0
	for _, it := range s.items {
		t += it.llr
	}
	return t
}

func (s *score) supported() bool {
	for _, it := range s.items {
		if it.llr > 0 {
			return true
		}
	}
	return false
}

// evidence runs every column test (the stage between the criteria and the posterior): the
// scores of the causes that can be judged on this port, with the breached criteria made
// evidence for the causes that own them (forced: those causes are listed whatever their
// posterior) and the measured facts that exonerate a cause; nj is what the tests could not
// judge (a missing column, no plan, telemetry gaps, a loss of lock), in the order of the tests.
func (pc *portCtx) evidence(criteria []Criterion, owners []CauseID) (scores map[CauseID]*score, forced map[CauseID]bool, nj notes) {
	scores = map[CauseID]*score{}
	for _, s := range []*score{
		pc.signalLoss(&nj),
		pc.rxPowerLow(&nj),
		pc.rxOverload(),
		pc.cdMismatch(&nj),
		pc.cdOverLimit(&nj),
		pc.pmd(&nj),
		pc.sopTransient(&nj),
		pc.pdlHigh(&nj),
		pc.loOffset(&nj),
		pc.osnrLow(),
		pc.nonlinear(&nj),
		pc.txPower(&nj),
		pc.frequencyMismatch(),
		pc.filtering(),
		pc.transceiver(),
	} {
		if s != nil {
			scores[s.id] = s
		}
	}
	forced = ownedBreaches(criteria, owners, scores)
	pc.exonerate(scores)
	return scores, forced, nj
}

func round3(x float64) float64 { return math.Round(x*1000) / 1000 }

// ownedBreaches makes a marginal or failing criterion evidence for the cause that owns its
// physics (mean DGD and DGD → pmd, SOP rate → sop-transient, PDL → pdl-high, and so on): when
// that cause's own tests found nothing, the breach is added as weak evidence, and the cause is
// listed whatever its posterior, so a port is never marginal or failing "for no reason". It
// returns the ids listed by this rule.
func ownedBreaches(criteria []Criterion, owners []CauseID, scores map[CauseID]*score) map[CauseID]bool {
	forced := map[CauseID]bool{}
	for i, c := range criteria {
		if c.Verdict != Marginal && c.Verdict != Fail {
			continue
		}
		owner := owners[i]
		if owner == "" || forced[owner] {
			continue
		}
		s := scores[owner]
		if s == nil {
			continue // the cause cannot be judged here (e.g. no plan)
		}
		if !s.supported() {
			s.add(llrWeak, "%s", criterionText(c))
		}
		forced[owner] = true
	}
	return forced
}

func (pc *portCtx) has(q parse.Quantity) bool { return pc.cols&(1<<q) != 0 }

// present reports whether the log has q for the cause's test; when it has not, it adds to nj
// that the cause is not judged for want of q.
func (pc *portCtx) present(nj *notes, cause CauseID, q parse.Quantity) bool {
	if pc.has(q) {
		return true
	}
	nj.add("%s: no %s in the log", cause, q.Column())
	return false
}

// qMarginP50 is the median Q margin of lit samples to the FEC-threshold Q (dB); NaN when unknown.
func (pc *portCtx) qMarginP50() float64 {
	if pc.cache.qMarginSet {
		return pc.cache.qMargin
	}
	pc.cache.qMargin, pc.cache.qMarginSet = math.NaN(), true
	if pc.qdb == nil || !(pc.prof.FECThresholdBER > 0) {
		return pc.cache.qMargin
	}
	pc.cache.qMargin = pc.summaryOf(pc.lit(pc.qdb), parse.QdB).P50 - pc.qLimitDB
	return pc.cache.qMargin
}

func (pc *portCtx) litPowerSummary() series.Summary {
	if pc.cache.litPower == nil {
		var s series.Summary
		if pw := pc.s.Values[parse.RxPowerDBm]; pc.darkCount == 0 && pw != nil {
			s = pc.summaryOf(pw, parse.RxPowerDBm) // litPower is then a copy of pw
		} else {
			s = pc.summarize(pc.litPower)
		}
		pc.cache.litPower = &s
	}
	return *pc.cache.litPower
}

// impairmentFigures lists the port's CD, DGD, PDL, SOP rate and LO offset against their limits,
// e.g. "|CD| 1359 of 2400 ps/nm, DGD p99 1.9 of 28 ps".
func (pc *portCtx) impairmentFigures() string {
	p := pc.prof
	var parts []string
	if pc.has(parse.CDpsPerNm) && p.CDTolerancePsNm > 0 {
		parts = append(parts, fmt.Sprintf("|CD| %.0f of %.0f ps/nm", pc.absSum[parse.CDpsPerNm].P50, p.CDTolerancePsNm))
	}
	if pc.has(parse.DGDps) && p.DGDTolerancePs > 0 {
		parts = append(parts, fmt.Sprintf("DGD p99 %.1f of %.0f ps", pc.sum[parse.DGDps].P99, p.DGDTolerancePs))
	}
	if pc.has(parse.PDLdB) && p.PDLTolerancedB > 0 {
		parts = append(parts, fmt.Sprintf("PDL p99 %.2f of %.1f dB", pc.sum[parse.PDLdB].P99, p.PDLTolerancedB))
	}
	if pc.has(parse.SOPRateKradPerS) && p.SOPTrackingKradS > 0 {
		parts = append(parts, fmt.Sprintf("SOP rate max %.1f of %.0f krad/s", pc.sum[parse.SOPRateKradPerS].Max, p.SOPTrackingKradS))
	}
	if pc.has(parse.LOOffsetMHz) && p.LOOffsetRangeMHz > 0 {
		parts = append(parts, fmt.Sprintf("|LO offset| max %.0f of %.0f MHz", pc.absSum[parse.LOOffsetMHz].Max, p.LOOffsetRangeMHz))
	}
	return strings.Join(parts, ", ")
}

func pct(x float64) string { return fmt.Sprintf("%.0f %%", 100*x) }

func nanAt(v []float64, i int) bool { return v == nil || math.IsNaN(v[i]) }

func dur(ms int64) string {
	sec := float64(ms) / 1000
	switch {
	case sec < 120:
		return fmt.Sprintf("%.0f s", sec)
	case sec < 7200:
		return fmt.Sprintf("%.1f min", sec/60)
	}
	return fmt.Sprintf("%.1f h", sec/3600)
}

// launchDBm is the plan's per-channel launch power into the spans: the highest span launch
// power the link model computes (amplifiers included), else the plan's launch or tx power.
func (pc *portCtx) launchDBm() float64 {
	if pc.plan == nil {
		return math.NaN()
	}
	if pc.exp != nil && len(pc.exp.Spans) > 0 {
		l := math.Inf(-1)
		for _, sp := range pc.exp.Spans {
			l = math.Max(l, sp.LaunchPowerDBm)
		}
		if finite(l) {
			return l
		}
	}
	if pc.plan.LaunchPowerDBm != 0 {
		return pc.plan.LaunchPowerDBm
	}
	return pc.plan.TxPowerDBm
}
