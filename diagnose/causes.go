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
)

type item struct {
	llr  float64
	text string
}

type score struct {
	id    string
	items []item
}

func (s *score) add(llr float64, format string, a ...any) {
	s.items = append(s.items, item{llr, fmt.Sprintf(format, a...)})
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

// causes runs every column test, weighs the hypotheses (posterior.go) and lists the causes.
func (pc *portCtx) causes() {
	scores := map[string]*score{}
	for _, s := range []*score{
		pc.signalLoss(),
		pc.rxPowerLow(),
		pc.rxOverload(),
		pc.cdMismatch(),
		pc.cdOverLimit(),
		pc.pmd(),
		pc.sopTransient(),
		pc.pdlHigh(),
		pc.loOffset(),
		pc.osnrLow(),
		pc.nonlinear(),
		pc.txPower(),
		pc.frequencyMismatch(),
		pc.filtering(),
		pc.transceiver(),
	} {
		if s != nil {
			scores[s.id] = s
		}
	}
	forced := pc.ownedBreaches(scores)
	pc.exonerate(scores)
	o := pc.observe()
	post, healthy, unexplained := pc.posterior(o, scores)
	pc.an.Posterior = post
	pc.res.Posterior = &Posterior{Healthy: round3(healthy), Unexplained: round3(unexplained)}
	pc.list(o, scores, post, forced)
	pc.res.NextTest = pc.nextTest()
}

func round3(x float64) float64 { return math.Round(x*1000) / 1000 }

// ownedBreaches makes a marginal or failing criterion evidence for the cause that owns its
// physics (mean DGD and DGD → pmd, SOP rate → sop-transient, PDL → pdl-high, and so on): when
// that cause's own tests found nothing, the breach is added as weak evidence, and the cause is
// listed whatever its posterior, so a port is never marginal or failing "for no reason". It
// returns the ids listed by this rule.
func (pc *portCtx) ownedBreaches(scores map[string]*score) map[string]bool {
	forced := map[string]bool{}
	for i, c := range pc.res.Criteria {
		if c.Verdict != Marginal && c.Verdict != Fail {
			continue
		}
		owner := pc.critOwner[i]
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

func (pc *portCtx) has(q parse.Quantity) bool { _, ok := pc.sum[q]; return ok }

// present reports whether the log has q for the cause's test; when it has not, it notes that the
// cause is not judged for want of q.
func (pc *portCtx) present(cause string, q parse.Quantity) bool {
	if pc.has(q) {
		return true
	}
	pc.notJudged("%s: no %s in the log", cause, q.Column())
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

// signalLoss: samples without light — power at the loss-of-signal floor, or nothing decoded with
// the power dropped or unreported. Telemetry gaps and rows without readings are not evidence of
// it (missed polls leave the same holes); they become notes, or support a loss they border.
func (pc *portCtx) signalLoss() *score {
	s := &score{id: CauseSignalLoss}
	ts := pc.s.TimesMs
	dk := pc.darkKinds()
	nearDark := pc.gapNotes()
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
		pc.notJudged("loss of lock: the receiver decoded nothing (pre-FEC BER ≥ %.2g) in %d sample(s), first at %s, while the received power was normal (%.1f dBm): light was present, so this is not a signal loss, and no measured impairment was out of line at those samples (%s). Check the module's alarm log for that time",
			noLockBER, k, clock(ts[i]), pc.s.Values[parse.RxPowerDBm][i], pc.impairmentFigures())
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

// rxPowerLow: lit power below the window or near it, a step loss, below the plan.
func (pc *portCtx) rxPowerLow() *score {
	s := &score{id: CauseRxPowerLow}
	if !pc.present(CauseRxPowerLow, parse.RxPowerDBm) {
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
		if c := pc.correlation(parse.RxPowerDBm); c != nil && c.Rho <= -r.CorrelationMinSpearman && c.P < corrMaxP {
			s.add(llrWeak, "Pre-FEC BER rises as power falls (Spearman ρ = %.2f over %d samples).", c.Rho, c.N)
		}
		if qm := pc.qMarginP50(); finite(qm) && qm < r.QMarginalMarginDB {
			s.add(llrWeak, "The Q margin is only %.1f dB (median) while power is low.", qm)
		}
	}
	return s
}

func (pc *portCtx) correlation(q parse.Quantity) *Correlation {
	pc.computeCorrelation(q) // no-op when already computed
	for i := range pc.an.Correlations {
		if pc.an.Correlations[i].B == q.Column() {
			return &pc.an.Correlations[i]
		}
	}
	return nil
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
		if c := pc.correlation(parse.RxPowerDBm); c != nil && c.Rho >= r.CorrelationMinSpearman && c.P < corrMaxP {
			s.add(llrWeak, "Pre-FEC BER rises with power (Spearman ρ = %.2f over %d samples), as receiver saturation would make it.", c.Rho, c.N)
		}
	}
	return s
}

// cdMismatch: measured CD disagrees with the plan; the implied route length says by how much.
func (pc *portCtx) cdMismatch() *score {
	s := &score{id: CauseCDMismatch}
	if pc.exp == nil {
		pc.notJudged("%s: no link plan, so there is no expected CD to compare with", CauseCDMismatch)
		return nil
	}
	if !pc.present(CauseCDMismatch, parse.CDpsPerNm) {
		return nil
	}
	// Magnitudes are compared: DSPs differ in the sign they report CD with.
	r := pc.r
	exp := math.Abs(pc.exp.CDPsNm)
	cs := pc.absSum[parse.CDpsPerNm]
	meas := cs.P50
	diff := meas - exp
	tol := math.Max(r.CDMismatchRelativeTolerance*math.Abs(exp), r.CDMismatchFloorPsNm)
	if math.Abs(diff) <= tol {
		return s
	}
	rel := math.Abs(diff) / math.Max(math.Abs(exp), 1)
	d := exp / pc.exp.RouteLengthKm // route-average |D|
	implied := ""
	if finite(d) && d != 0 {
		implied = fmt.Sprintf(" At the plan's average %.2f ps/(nm·km) it implies a route of about %.0f km against %.0f km planned (%+.0f %%).",
			d, meas/d, pc.exp.RouteLengthKm, 100*(meas/d-pc.exp.RouteLengthKm)/pc.exp.RouteLengthKm)
	}
	switch {
	case rel >= 2*r.CDMismatchRelativeTolerance:
		s.add(llrCDMismatch2, "Measured CD %.0f ps/nm differs from the planned %.0f ps/nm by %+.0f ps/nm (%s, tolerance ±%.0f ps/nm).%s", meas, exp, diff, pct(rel), tol, implied)
	default:
		s.add(llrCDMismatch, "Measured CD %.0f ps/nm differs from the planned %.0f ps/nm by %+.0f ps/nm (%s, tolerance ±%.0f ps/nm).%s", meas, exp, diff, pct(rel), tol, implied)
	}
	spread := (cs.P99 - cs.Min) / 2
	if spread < math.Abs(diff)/3 {
		s.add(llrWeak, "The CD estimate is steady (half-range %.0f ps/nm against a %.0f ps/nm difference), so estimator noise does not explain it.", spread, math.Abs(diff))
	}
	return s
}

// cdOverLimit: |CD| beyond the module's compensation range.
func (pc *portCtx) cdOverLimit() *score {
	s := &score{id: CauseCDOverLimit}
	if !pc.present(CauseCDOverLimit, parse.CDpsPerNm) {
		return nil
	}
	tol := pc.prof.CDTolerancePsNm
	if !(tol > 0) {
		return nil
	}
	a := pc.absSum[parse.CDpsPerNm]
	switch {
	case a.P50 > tol:
		s.add(llrDecisive, "Measured |CD| %.0f ps/nm (median) exceeds the module's %.0f ps/nm compensation range by %.0f ps/nm (%s).", a.P50, tol, a.P50-tol, pct((a.P50-tol)/tol))
	case a.P99 > tol:
		s.add(llrStrong, "Measured |CD| reaches %.0f ps/nm (p99), beyond the module's %.0f ps/nm compensation range.", a.P99, tol)
	case a.P50 > pc.r.CDMarginalFraction*tol:
		s.add(llrModerate, "Measured |CD| %.0f ps/nm (median) uses %s of the module's %.0f ps/nm compensation range.", a.P50, pct(a.P50/tol), tol)
	}
	if s.supported() {
		if pc.exp != nil && math.Abs(pc.exp.CDPsNm) > tol {
			s.add(llrFirm, "The link plan itself expects %.0f ps/nm: the route is longer than this module can compensate.", pc.exp.CDPsNm)
		}
		if qm := pc.qMarginP50(); finite(qm) && qm < pc.r.QMarginalMarginDB {
			s.add(llrWeak, "The Q margin is %.1f dB (median) with CD at the edge of the range.", qm)
		}
	}
	return s
}

// pmd: DGD near the tolerance, Maxwellian outage, Maxwellian-shaped spread, BER following DGD.
func (pc *portCtx) pmd() *score {
	s := &score{id: CausePMD}
	if !pc.present(CausePMD, parse.DGDps) {
		return nil
	}
	p, r := pc.prof, pc.r
	tol := p.DGDTolerancePs
	if !(tol > 0) {
		return nil
	}
	ds := pc.sum[parse.DGDps]
	switch {
	case ds.P99 >= tol:
		s.add(llrStrong, "DGD reached %.1f ps (p99; max %.1f ps), at or beyond the module's %.0f ps instantaneous tolerance.", ds.P99, ds.Max, tol)
	case ds.P99 >= r.DGDMarginalFraction*tol:
		s.add(llrModerate, "DGD p99 %.1f ps is %s of the module's %.0f ps instantaneous tolerance.", ds.P99, pct(ds.P99/tol), tol)
	}
	if n, i := pc.lockLossOver(parse.DGDps, tol, false); n > 0 {
		v := pc.s.Values[parse.DGDps][i]
		s.add(lockLossLLR(v/tol), "%s, while the DGD was %.1f ps, %.1f× the module's %.0f ps instantaneous tolerance: a PMD excursion the equaliser could not follow.",
			pc.lockLossText(i, n), v, v/tol, tol)
	}
	f := pc.an.DGDFit
	if f != nil && f.MeanPs > 0 {
		pe := f.ExceedProbability
		switch {
		case pe > r.PMDOutageProbability:
			s.add(llrFirm, "Mean DGD %.1f ps gives a Maxwellian probability of %.2g that the DGD exceeds the %.0f ps tolerance (allowed %.2g).", f.MeanPs, pe, tol, r.PMDOutageProbability)
		case pe > r.PMDOutageProbability/10:
			s.add(llrWeak, "Mean DGD %.1f ps gives a Maxwellian outage probability of %.2g, within a factor of 10 of the %.2g allowed.", f.MeanPs, pe, r.PMDOutageProbability)
		}
		if p.MeanDGDTolerancePs > 0 && f.MeanPs > p.MeanDGDTolerancePs {
			s.add(llrModerate, "Mean DGD %.1f ps is above the %.0f ps mean DGD (PMD) the module class is specified for.", f.MeanPs, p.MeanDGDTolerancePs)
		}
	}
	if !s.supported() {
		return s
	}
	if f != nil && f.N >= ksMinSamples && finite(f.KSPValue) {
		if f.KSPValue >= ksFitP { // the fit is claimed only where the test does not reject it at 5 % (common practice)
			s.add(llrWeak, "The DGD spread fits a Maxwellian of that mean (Kolmogorov–Smirnov D = %.3f, %s over %d samples), as fibre PMD does.", f.KS, pval(f.KSPValue), f.N)
		} else if f.KSPValue < ksRejectP {
			s.add(llrAgainstTiny, "The DGD spread is not Maxwellian-shaped (Kolmogorov–Smirnov D = %.3f, %s), which fibre PMD alone would give.", f.KS, pval(f.KSPValue))
		}
	}
	if c := pc.correlation(parse.DGDps); c != nil && c.Rho >= r.CorrelationMinSpearman && c.P < corrMaxP {
		s.add(llrModerate, "Pre-FEC BER follows the DGD (Spearman ρ = %.2f over %d samples, %s).", c.Rho, c.N, pval(c.P))
	}
	if pc.exp != nil && f != nil && pc.exp.MeanDGDPs > 0 && f.MeanPs > planDGDFactor*pc.exp.MeanDGDPs {
		s.add(llrWeak, "Mean DGD %.1f ps is %.1f× the %.1f ps the plan's fibre PMD coefficients predict.", f.MeanPs, f.MeanPs/pc.exp.MeanDGDPs, pc.exp.MeanDGDPs)
	}
	return s
}

// sopTransient: SOP-rate spikes near or above the tracking speed that coincide with BER bursts
// or uncorrected blocks.
func (pc *portCtx) sopTransient() *score {
	s := &score{id: CauseSOPTransient}
	an, p, r := pc.an, pc.prof, pc.r
	if !pc.present(CauseSOPTransient, parse.SOPRateKradPerS) {
		if n := len(an.BERBursts) + len(an.BlockBursts); n > 0 {
			s.add(llrWeak, "The log shows %d BER or uncorrected-block bursts on an otherwise steady link, the pattern of polarization transients, but has no SOP rate to confirm it.", n)
		}
		return s
	}
	if !(p.SOPTrackingKradS > 0) {
		return nil
	}
	ss := pc.sum[parse.SOPRateKradPerS]
	switch {
	case ss.Max >= p.SOPTrackingKradS:
		s.add(llrStrong, "SOP rate peaked at %.0f krad/s, %.1f× the module's %.0f krad/s tracking speed, in %d spike(s) above %.0f krad/s.",
			ss.Max, ss.Max/p.SOPTrackingKradS, p.SOPTrackingKradS, len(an.SOPSpikes), an.SOPSpikeThresholdKradS)
	case ss.Max >= r.SOPRateMarginalFraction*p.SOPTrackingKradS:
		s.add(llrModerate, "SOP rate peaked at %.0f krad/s, %s of the module's %.0f krad/s tracking speed.", ss.Max, pct(ss.Max/p.SOPTrackingKradS), p.SOPTrackingKradS)
	}
	if n, i := pc.lockLossOver(parse.SOPRateKradPerS, p.SOPTrackingKradS, false); n > 0 {
		v := pc.s.Values[parse.SOPRateKradPerS][i]
		s.add(lockLossLLR(v/p.SOPTrackingKradS), "%s, while the SOP rate was %.0f krad/s, %.1f× the module's %.0f krad/s tracking speed.", pc.lockLossText(i, n), v, v/p.SOPTrackingKradS, p.SOPTrackingKradS)
	}
	bursts := len(an.BERBursts)
	kind := "BER bursts"
	if bursts == 0 {
		bursts, kind = len(an.BlockBursts), "uncorrected-block bursts"
	}
	matched, blocks := 0, 0
	lagMin, lagMax := math.Inf(1), math.Inf(-1)
	for _, c := range an.Coincidences {
		if (kind == "BER bursts") == (c.Kind == parse.PreFECBER.Column()) {
			matched++
			lagMin, lagMax = math.Min(lagMin, c.LagS), math.Max(lagMax, c.LagS)
		}
		if c.Kind == parse.UncorrectedBlocks.Column() {
			blocks++
		}
	}
	if bursts > 0 && matched > 0 {
		frac := float64(matched) / float64(bursts)
		chance := series.ChanceCoincidence(toRuns(an.SOPSpikes), int64(an.CoincidenceWindowS*1000), pc.s.TimesMs[0], pc.s.TimesMs[pc.n-1])
		msg := fmt.Sprintf("%d of %d %s fall within %.0f s of an SOP-rate spike (lag %+.0f…%+.0f s); chance alone would give about %s.",
			matched, bursts, kind, an.CoincidenceWindowS, lagMin, lagMax, pct(chance))
		switch {
		case matched >= 2 && frac >= coincidentShare && frac > chanceFactorStrong*chance:
			s.add(llrStrong, "%s", msg)
		case frac >= coincidentShare && frac > chanceFactor*chance:
			s.add(llrModerate, "%s", msg)
		}
	}
	if blocks > 0 && kind == "BER bursts" {
		s.add(llrWeak, "%d burst(s) of uncorrected FEC blocks coincide with SOP-rate spikes.", blocks)
	}
	return s
}

// pdlHigh: PDL near or above the tolerance; BER following PDL.
func (pc *portCtx) pdlHigh() *score {
	s := &score{id: CausePDLHigh}
	if !pc.present(CausePDLHigh, parse.PDLdB) {
		return nil
	}
	tol, r := pc.prof.PDLTolerancedB, pc.r
	if !(tol > 0) {
		return nil
	}
	ps := pc.sum[parse.PDLdB]
	switch {
	case ps.P99 >= tol:
		s.add(llrStrong, "PDL reached %.2f dB (p99), at or beyond the module's %.1f dB tolerance.", ps.P99, tol)
	case ps.P99 >= r.PDLMarginalFraction*tol:
		s.add(llrModerate, "PDL p99 %.2f dB is %s of the module's %.1f dB tolerance.", ps.P99, pct(ps.P99/tol), tol)
	}
	if n, i := pc.lockLossOver(parse.PDLdB, tol, false); n > 0 {
		v := pc.s.Values[parse.PDLdB][i]
		s.add(lockLossLLR(v/tol), "%s, while the PDL was %.1f dB, %.1f× the module's %.1f dB tolerance.", pc.lockLossText(i, n), v, v/tol, tol)
	}
	if !s.supported() {
		return s
	}
	if ps.P50 >= r.PDLMarginalFraction*tol {
		s.add(llrWeak, "PDL stays high: its median is %.2f dB.", ps.P50)
	}
	if c := pc.correlation(parse.PDLdB); c != nil && c.Rho >= r.CorrelationMinSpearman && c.P < corrMaxP {
		s.add(llrModerate, "Pre-FEC BER follows the PDL (Spearman ρ = %.2f over %d samples, %s).", c.Rho, c.N, pval(c.P))
	}
	return s
}

// loOffset: carrier offset near the capture range, or drifting to reach it within the horizon.
func (pc *portCtx) loOffset() *score {
	s := &score{id: CauseLOOffset}
	if !pc.present(CauseLOOffset, parse.LOOffsetMHz) {
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
	case a.Max >= (r.LOOffsetMarginalFraction-0.2)*rng:
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

// routeRatio is the route length the measured CD implies over the planned length (CD scales
// with length for a given fibre), by magnitude; NaN without a plan or CD. Only a ratio outside
// the cd-mismatch tolerance is returned; 1 otherwise.
func (pc *portCtx) routeRatio() float64 {
	if pc.exp == nil || !pc.has(parse.CDpsPerNm) || pc.exp.CDPsNm == 0 {
		return math.NaN()
	}
	meas, exp := pc.absSum[parse.CDpsPerNm].P50, math.Abs(pc.exp.CDPsNm)
	tol := math.Max(pc.r.CDMismatchRelativeTolerance*exp, pc.r.CDMismatchFloorPsNm)
	if math.Abs(meas-exp) <= tol {
		return 1
	}
	return meas / exp
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
