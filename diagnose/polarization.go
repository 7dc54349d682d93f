package diagnose

import (
	"fmt"
	"github.com/beatnote/beatnote/report/words"
	"math"
	"strings"

	"github.com/beatnote/beatnote/diagnose/series"
	"github.com/beatnote/beatnote/parse"
)

// The polarization family: pmd (DGD and its Maxwellian statistics), sop-transient (SOP-rate
// spikes with BER bursts) and pdl-high.

// pmd: DGD near the tolerance, Maxwellian outage, Maxwellian-shaped spread, BER following DGD.
func (pc *portCtx) pmd(nj *notes) *score {
	s := &score{id: CausePMD}
	if !pc.present(nj, CausePMD, parse.DGDps) {
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
	if c := pc.corr.of(parse.DGDps); c != nil && c.Rho >= r.CorrelationMinSpearman && c.P < corrMaxP {
		s.add(llrModerate, "Pre-FEC BER follows the DGD (Spearman ρ = %.2f over %d samples, %s).", c.Rho, c.N, pval(c.P))
	}
	if pc.exp != nil && f != nil && pc.exp.MeanDGDPs > 0 && f.MeanPs > planDGDFactor*pc.exp.MeanDGDPs {
		s.add(llrWeak, "Mean DGD %.1f ps is %.1f× the %.1f ps the plan's fibre PMD coefficients predict.", f.MeanPs, f.MeanPs/pc.exp.MeanDGDPs, pc.exp.MeanDGDPs)
	}
	return s
}

// sopTransient: SOP-rate spikes near or above the tracking speed that coincide with BER bursts
// or uncorrected blocks.
func (pc *portCtx) sopTransient(nj *notes) *score {
	s := &score{id: CauseSOPTransient}
	an, p, r := pc.an, pc.prof, pc.r
	if !pc.present(nj, CauseSOPTransient, parse.SOPRateKradPerS) {
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
		s.add(llrStrong, "SOP rate peaked at %.0f krad/s, %.1f× the module's %.0f krad/s tracking speed, in %s above %.0f krad/s.",
			ss.Max, ss.Max/p.SOPTrackingKradS, p.SOPTrackingKradS, words.Plural(len(an.SOPSpikes), "spike", "spikes"), an.SOPSpikeThresholdKradS)
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
		which := fmt.Sprintf("%d of %d %s fall", matched, bursts, kind)
		if bursts == 1 {
			which = "The one " + strings.TrimSuffix(kind, "s") + " falls"
		}
		msg := fmt.Sprintf("%s within %.0f s of an SOP-rate spike (lag %+.0f…%+.0f s); chance alone would give about %s.",
			which, an.CoincidenceWindowS, lagMin, lagMax, pct(chance))
		switch {
		case matched >= 2 && frac >= coincidentShare && frac > chanceFactorStrong*chance:
			s.add(llrStrong, "%s", msg)
		case frac >= coincidentShare && frac > chanceFactor*chance:
			s.add(llrModerate, "%s", msg)
		}
	}
	if blocks > 0 && kind == "BER bursts" {
		s.add(llrWeak, "%s of uncorrected FEC blocks %s with SOP-rate spikes.", words.Plural(blocks, "burst", "bursts"), map[bool]string{true: "coincides", false: "coincide"}[blocks == 1])
	}
	return s
}

// pdlHigh: PDL near or above the tolerance; BER following PDL.
func (pc *portCtx) pdlHigh(nj *notes) *score {
	s := &score{id: CausePDLHigh}
	if !pc.present(nj, CausePDLHigh, parse.PDLdB) {
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
	if c := pc.corr.of(parse.PDLdB); c != nil && c.Rho >= r.CorrelationMinSpearman && c.P < corrMaxP {
		s.add(llrModerate, "Pre-FEC BER follows the PDL (Spearman ρ = %.2f over %d samples, %s).", c.Rho, c.N, pval(c.P))
	}
	return s
}
