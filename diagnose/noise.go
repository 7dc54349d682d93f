package diagnose

import (
	"fmt"
	"github.com/beatnote/beatnote/report/words"
	"math"

	"github.com/beatnote/beatnote/diagnose/optics"
	"github.com/beatnote/beatnote/parse"
)

// The noise family: causes that lower the eSNR with the received power normal — osnr-low
// (amplifier noise), nonlinear (fibre nonlinear interference), transceiver (the module's own
// noise), filtering (passband narrowing or an off-centre laser). They are told apart by the
// forward model of the port's SNR:
//
//	1/SNR_eff = 1/SNR_ASE(OSNR) + 1/SNR_NLI(launch, plan) + 1/SNR_TRX,  then − penalties (dB)
//
// (noise powers add: common practice; R.-J. Essiambre et al., J. Lightwave Technol. 28(4), 2010
// for OSNR ↔ SNR; the GN model of P. Poggiolini, J. Lightwave Technol. 30(24), 2012 for NLI via
// optics.ExpectLink).

// Penalty models of the forward model (common practice approximations, stated so the budget
// can be checked by hand).
const (
	// pdlPenaltyPerDB: PDL costs the weaker polarization tributary about half its value in
	// SNR (common practice approximation).
	pdlPenaltyPerDB = 0.5
	// dgdPenaltyAtToleranceDB: a module's DGD tolerance is usually specified at about 1 dB
	// of OSNR penalty (common practice); the penalty grows as (τ/τ_tol)², as first-order PMD
	// does at small DGD.
	dgdPenaltyAtToleranceDB = 1.0
	// nliSlope: the GN-model NLI power grows as P³ against the signal's P, so the NLI SNR
	// falls 2 dB per dB of launch power (Poggiolini 2012).
	nliSlope = 2.0
	// launchOverOptimumDB: a launch this far above the GN-model optimum is a nonlinear set-up
	// (at +2 dB the GSNR is already about 0.9 dB below its peak: common practice reading of the
	// GN model's 2:1 slopes).
	launchOverOptimumDB = 2.0
	// hotterMinDB: a median reported OSNR this far above the plan's ASE OSNR says the channel
	// runs hotter than planned: the median of a log is good to well under the ±1 dB of one
	// in-band OSNR estimate (common practice).
	hotterMinDB = 1.0
	// nliRelevantDB: NLI whose SNR is within 10 dB of the eSNR carries at least a tenth of the
	// noise power and can explain a shortfall; further above, it cannot (common practice).
	nliRelevantDB = 10.0
)

// forward is the per-port forward model: what the line, the plan and the module say the eSNR
// should be, and how far the measured eSNR falls short.
type forward struct {
	ok bool
	// MeasuredDB is the median eSNR of lit samples (measured, or implied by the BER).
	measuredDB float64
	// aseSNRdB is the SNR set by amplifier noise: from the reported OSNR (median) when the log
	// has it, else from the plan's ASE OSNR; aseFrom says which.
	aseSNRdB, aseOSNRdB float64
	aseFrom             string
	// nliSNRdB is the plan's GN-model NLI SNR at the launch the port runs at (the plan's, or
	// higher when the reported OSNR says the channel runs hotter); NaN without a plan.
	nliSNRdB         float64
	launchDBm        float64 // per-channel launch the NLI SNR is taken at
	hotterDB         float64 // reported OSNR above the plan's ASE OSNR (dB), 0 when not
	trxSNRdB         float64 // transceiver ceiling
	pdlDB, dgdDB     float64 // penalties (dB)
	modelDB          float64 // eSNR the model expects: ASE, NLI, TRX combined, less penalties
	modelNoNLIdB     float64 // the same without NLI
	shortfallDB      float64 // modelDB − measuredDB (positive: worse than the model)
	shortfallNoNLIdB float64
}

// forwardModel computes (once) the port's forward model. ok is false without an eSNR or an
// ASE reference (a reported OSNR or a plan).
func (pc *portCtx) forwardModel() *forward {
	if pc.cache.fwd != nil {
		return pc.cache.fwd
	}
	f := &forward{nliSNRdB: math.NaN(), aseSNRdB: math.NaN(), aseOSNRdB: math.NaN(), launchDBm: math.NaN(), trxSNRdB: pc.snrTrxDB}
	pc.cache.fwd = f
	f.measuredDB = pc.esnrP50()
	p := pc.prof
	if !(p.BaudGBd > 0) {
		return f
	}
	switch {
	case pc.has(parse.OSNRdB):
		f.aseOSNRdB, f.aseFrom = pc.sum[parse.OSNRdB].P50, "reported OSNR"
	case pc.exp != nil && finite(pc.exp.ASEOSNRdB):
		f.aseOSNRdB, f.aseFrom = pc.exp.ASEOSNRdB, "plan's ASE OSNR"
	}
	if finite(f.aseOSNRdB) {
		f.aseSNRdB = optics.SNRdBFromOSNRdB(f.aseOSNRdB, p.BaudGBd, p.PolarizationCount())
	}
	if pc.exp != nil && finite(pc.exp.NLISNRdB) {
		f.launchDBm = pc.launchDBm()
		f.nliSNRdB = pc.exp.NLISNRdB
		if pc.has(parse.OSNRdB) && finite(pc.exp.ASEOSNRdB) {
			if ex := pc.sum[parse.OSNRdB].P50 - pc.exp.ASEOSNRdB; ex >= hotterMinDB {
				// The channel runs hotter than planned: find the launch excess x that raises
				// the plan's ASE OSNR to the reported one, and take the NLI there.
				f.hotterDB = ex
				x := launchExcessDB(pc.exp, pc.sum[parse.OSNRdB].P50)
				f.launchDBm += x
				f.nliSNRdB -= nliSlope * x
			}
		}
	}
	if pc.has(parse.PDLdB) {
		f.pdlDB = pdlPenaltyPerDB * pc.sum[parse.PDLdB].P50
	}
	if pc.has(parse.DGDps) && p.DGDTolerancePs > 0 {
		r := pc.sum[parse.DGDps].P50 / p.DGDTolerancePs
		f.dgdDB = dgdPenaltyAtToleranceDB * r * r
	}
	if !finite(f.measuredDB) || !finite(f.aseSNRdB) {
		return f
	}
	f.ok = true
	terms := []float64{f.aseSNRdB}
	if finite(f.trxSNRdB) {
		terms = append(terms, f.trxSNRdB)
	}
	f.modelNoNLIdB = optics.CombineSNRdB(terms...) - f.pdlDB - f.dgdDB
	f.modelDB = f.modelNoNLIdB
	if finite(f.nliSNRdB) {
		f.modelDB = optics.CombineSNRdB(append(terms, f.nliSNRdB)...) - f.pdlDB - f.dgdDB
	}
	f.shortfallDB = f.modelDB - f.measuredDB
	f.shortfallNoNLIdB = f.modelNoNLIdB - f.measuredDB
	return f
}

// maxLaunchExcessDB bounds the launch excess launchExcessDB searches (an amplifier's output
// range; common practice).
const maxLaunchExcessDB = 15.0

// launchExcessDB is the launch excess x (dB, every span launched x dB above the plan) at which
// the plan's amplifier chain gives the ASE OSNR osnrDB: the line amplifiers' inputs (and OSNRs)
// rise with x, the booster's does not (optics.CascadeOSNRdB of the amplifiers' own OSNRs).
// Solved by bisection; maxLaunchExcessDB when even that excess gives less.
func launchExcessDB(e *optics.LinkExpectation, osnrDB float64) float64 {
	at := func(x float64) float64 {
		v := make([]float64, 0, len(e.Amplifiers))
		for _, a := range e.Amplifiers {
			o := a.OSNRdB
			if a.AfterSpan > 0 {
				o += x
			}
			v = append(v, o)
		}
		return optics.CascadeOSNRdB(v...)
	}
	lo, hi := 0.0, maxLaunchExcessDB
	if len(e.Amplifiers) == 0 || at(hi) < osnrDB {
		return hi
	}
	for range 50 {
		mid := (lo + hi) / 2
		if at(mid) < osnrDB {
			lo = mid
		} else {
			hi = mid
		}
	}
	return hi
}

// unmodelledImpairment names a measured impairment whose SNR penalty the forward model does
// not hold — |CD| beyond the compensation range, a carrier offset in the last part of the
// capture range, BER bursts at SOP transients — and which can by itself explain an eSNR
// shortfall; "" when none.
func (pc *portCtx) unmodelledImpairment() string {
	p, r := pc.prof, pc.r
	switch {
	case pc.has(parse.CDpsPerNm) && p.CDTolerancePsNm > 0 && pc.absSum[parse.CDpsPerNm].P50 > p.CDTolerancePsNm:
		return fmt.Sprintf("|CD| of %.0f ps/nm beyond the module's %.0f ps/nm compensation range", pc.absSum[parse.CDpsPerNm].P50, p.CDTolerancePsNm)
	case pc.has(parse.LOOffsetMHz) && p.LOOffsetRangeMHz > 0 && pc.absSum[parse.LOOffsetMHz].Max >= r.LOOffsetMarginalFraction*p.LOOffsetRangeMHz:
		return fmt.Sprintf("a carrier offset of up to %.0f MHz, near the ±%.0f MHz capture range", pc.absSum[parse.LOOffsetMHz].Max, p.LOOffsetRangeMHz)
	case len(pc.an.Coincidences) > 0:
		return words.Plural(len(pc.an.Coincidences), "BER or block burst", "BER or block bursts") + " at SOP-rate spikes"
	}
	return ""
}

// eSNRShortfall: the OSNR is comfortably above the requirement, yet the eSNR falls at least
// nonlinear_snr_gap_db short of what the line's ASE, the transceiver ceiling and the penalties
// give (without NLI): noise that is not amplifier noise. The weight is llrStrong for the full
// gap, llrModerate for half of it with the Q margin inside the marginal band, 0 otherwise — and
// 0 when a measured impairment the model does not hold explains the shortfall by itself.
func (pc *portCtx) eSNRShortfall() (*forward, float64) {
	f := pc.forwardModel()
	if !f.ok {
		return f, 0
	}
	if pc.reqOSNRdB > 0 && f.aseOSNRdB < pc.reqOSNRdB+pc.r.OSNRMarginalMarginDB {
		return f, 0
	}
	if pc.unmodelledImpairment() != "" {
		return f, 0 // a measured impairment explains it (the cause that owns it is weighed)
	}
	switch gap := pc.r.NonlinearSNRGapDB; {
	case f.shortfallNoNLIdB >= gap:
		return f, llrStrong
	case f.shortfallNoNLIdB >= nonlinearHalfGapShare*gap && pc.noisy():
		return f, llrModerate
	}
	return f, 0
}

// nliExplains: with a plan, the NLI SNR at the port's launch is within nliRelevantDB of the
// measured eSNR, i.e. NLI is at least a tenth of the port's noise and can account for a
// shortfall; ok false without a plan's NLI. The launch is inferred from the OSNR rise, which is
// a lower bound (the booster's ASE does not rise with the line launch), so the NLI SNR is an
// upper bound: the test leans toward "can explain".
func (f *forward) nliExplains() (explains, ok bool) {
	if !finite(f.nliSNRdB) {
		return false, false
	}
	return f.nliSNRdB-f.measuredDB <= nliRelevantDB, true
}

func (pc *portCtx) esnrSource() string {
	if pc.esnrDerived {
		return "implied by the BER"
	}
	return "measured"
}

// osnrLow: amplifier noise. The reported OSNR against the requirement is an observable of the
// posterior; the column tests here compare with the plan: reported OSNR (or the OSNR the BER
// implies) well below what the plan's amplifier chain gives, with the power held, is loss
// before the last amplifier or a noisy amplifier.
func (pc *portCtx) osnrLow() *score {
	s := &score{id: CauseOSNRLow}
	r := pc.r
	if pc.has(parse.OSNRdB) && pc.reqOSNRdB > 0 {
		if v := pick(pc.sum[parse.OSNRdB], pc.stat.osnr); v < pc.reqOSNRdB {
			s.add(llrModerate, "Reported OSNR %.1f dB (%s) is %.1f dB below the %.1f dB the module needs at the FEC threshold.", v, pc.stat.osnr, pc.reqOSNRdB-v, pc.reqOSNRdB)
		}
	}
	if pc.exp != nil && finite(pc.exp.ASEOSNRdB) {
		if pc.has(parse.OSNRdB) {
			med := pc.sum[parse.OSNRdB].P50
			if gap := pc.exp.ASEOSNRdB - med; gap > r.OSNRGapVsPlanDB {
				s.add(llrStrong, "Median reported OSNR %.1f dB is %.1f dB below the %.1f dB the plan's amplifier chain should give.", med, gap, pc.exp.ASEOSNRdB)
			}
		} else if impl := pc.impliedOSNRp50(); finite(impl) {
			ref := pc.exp.GOSNRdB
			if !finite(ref) {
				ref = pc.exp.ASEOSNRdB
			}
			if gap := ref - impl; gap > r.OSNRGapVsPlanDB {
				s.add(llrStrong, "The BER implies an OSNR of about %.1f dB, %.1f dB below the %.1f dB the plan predicts.", impl, gap, ref)
			}
		}
	}
	for _, st := range pc.an.OSNRSteps {
		if st.Step <= -r.OSNRStepDB && !pc.powerStepNear(st.TimeMs) {
			s.add(llrStrong, "The reported OSNR stepped down by %.1f dB at %s (%.1f → %.1f dB) while the received power held: loss before an amplifier that holds its output, or an amplifier adding noise.", -st.Step, clock(st.TimeMs), st.Before, st.After)
			break
		}
	}
	if rr := pc.routeRatio(); s.supported() && finite(rr) && rr > 1 {
		s.add(llrAgainst, "The measured CD says the light takes a route about %.0f %% longer than planned, which by itself costs OSNR: the patching is the first suspect.", 100*(rr-1))
	}
	if psd, lim, what := pc.planLaunchPSD(); s.supported() && finite(psd) && psd > lim {
		s.add(llrAgainstBit, "The plan launches %.1f dBm/GHz (%+.1f dBm per channel), above %s: fibre nonlinearity may be the noise source.", psd, pc.launchDBm(), what)
	}
	return s
}

// powerStepNear: the received power stepped by power_step_db or more within two sample
// intervals of t.
func (pc *portCtx) powerStepNear(t int64) bool {
	for _, st := range pc.an.PowerSteps {
		if d := st.TimeMs - t; d >= -stepNearIntervals*pc.intervalMs && d <= stepNearIntervals*pc.intervalMs && math.Abs(st.Step) >= pc.r.PowerStepDB {
			return true
		}
	}
	return false
}

// osnrStepNear: the reported OSNR stepped by osnr_step_db or more within two sample intervals
// of t.
func (pc *portCtx) osnrStepNear(t int64) bool {
	for _, st := range pc.an.OSNRSteps {
		if d := st.TimeMs - t; d >= -stepNearIntervals*pc.intervalMs && d <= stepNearIntervals*pc.intervalMs {
			return true
		}
	}
	return false
}

// psd is a per-channel power in dBm as a spectral density in dBm per GHz of symbol rate.
func (pc *portCtx) psd(dBm float64) float64 { return dBm - 10*math.Log10(pc.prof.BaudGBd) }

// planLaunchPSD is the plan's launch as a power spectral density and the limit it is judged
// against: the GN-model optimum plus launchOverOptimumDB, else the rules' PSD figure; NaN
// without a plan or a symbol rate.
func (pc *portCtx) planLaunchPSD() (psd, limit float64, what string) {
	if pc.plan == nil || !(pc.prof.BaudGBd > 0) {
		return math.NaN(), math.NaN(), ""
	}
	psd = pc.psd(pc.launchDBm())
	if pc.exp != nil && finite(pc.exp.OptimumLaunchPowerDBm) {
		opt := pc.psd(pc.exp.OptimumLaunchPowerDBm)
		return psd, opt + launchOverOptimumDB, fmt.Sprintf("the GN-model optimum of %.1f dBm/GHz by more than %.0f dB", opt, launchOverOptimumDB)
	}
	return psd, pc.r.NonlinearLaunchPSDdBmPerGHz, fmt.Sprintf("the %.1f dBm/GHz where fibre nonlinearity sets in", pc.r.NonlinearLaunchPSDdBmPerGHz)
}

// nonlinear: an eSNR shortfall the plan's NLI can explain, a channel running hotter than the
// GN-model optimum, or a plan that launches too much power density.
func (pc *portCtx) nonlinear(nj *notes) *score {
	s := &score{id: CauseNonlinear}
	f, w := pc.eSNRShortfall()
	if !f.ok {
		nj.add("%s: needs the eSNR (or BER) and an OSNR, reported or from a link plan", CauseNonlinear)
	}
	if w > 0 {
		switch explains, withPlan := f.nliExplains(); {
		case !withPlan:
			s.add(w, "The %s of %.1f dB should give an eSNR of about %.1f dB with this module (%s); the eSNR %s is %.1f dB, %.1f dB lower: noise that is not amplifier noise — fibre nonlinearity, the transceiver or filtering. Without a link plan they cannot be told apart here.",
				f.aseFrom, f.aseOSNRdB, f.modelNoNLIdB, pc.trxAssumption, pc.esnrSource(), f.measuredDB, f.shortfallNoNLIdB)
		case explains:
			s.add(w, "The eSNR %s is %.1f dB, %.1f dB below what the %s of %.1f dB gives with this module; the plan's GN model at %+.1f dBm per channel puts the NLI SNR at %.1f dB, which accounts for the shortfall (model with NLI %.1f dB).",
				pc.esnrSource(), f.measuredDB, f.shortfallNoNLIdB, f.aseFrom, f.aseOSNRdB, f.launchDBm, f.nliSNRdB, f.modelDB)
		default:
			s.add(llrAgainst, "The eSNR is %.1f dB short of what the %s gives, but the plan's GN model at %+.1f dBm per channel puts the NLI SNR at %.1f dB, far too high to explain it (model with NLI %.1f dB against %.1f dB measured).",
				f.shortfallNoNLIdB, f.aseFrom, f.launchDBm, f.nliSNRdB, f.modelDB, f.measuredDB)
		}
	}
	if pc.exp != nil && f.hotterDB > 0 && pc.prof.BaudGBd > 0 {
		implied := pc.psd(f.launchDBm)
		// The limit is a density, the same whatever the launch.
		if _, lim, what := pc.planLaunchPSD(); implied > lim {
			s.add(llrDecisive, "Reported OSNR %.1f dB is %.1f dB above the %.1f dB the plan's amplifier chain gives: the channel runs at about %+.1f dBm (%.1f dBm/GHz) per span, above %s.",
				pc.sum[parse.OSNRdB].P50, f.hotterDB, pc.exp.ASEOSNRdB, f.launchDBm, implied, what)
			if f.ok && f.measuredDB-pc.expectedESNRdB(pc.exp.ASEOSNRdB) < noESNRGainDB {
				s.add(llrWeak, "Yet the eSNR (%.1f dB) is no better than the plan's OSNR would give (%.1f dB): the extra power buys no signal quality.", f.measuredDB, pc.expectedESNRdB(pc.exp.ASEOSNRdB))
			}
		}
	}
	if psd, lim, what := pc.planLaunchPSD(); finite(psd) && psd > lim {
		if qm := pc.qMarginP50(); finite(qm) && qm < pc.r.QMarginalMarginDB {
			s.add(llrModerate, "The plan launches %.1f dBm/GHz (%+.1f dBm per channel at %.1f GBd), above %s.", psd, pc.launchDBm(), pc.prof.BaudGBd, what)
		}
	}
	if rr := pc.routeRatio(); s.supported() && finite(rr) && rr < 1 {
		s.add(llrAgainst, "The measured CD says the route is about %.0f %% shorter than planned, which by itself raises the OSNR above the plan's.", 100*(1-rr))
	}
	return s
}

// transceiver: an eSNR shortfall the line cannot explain — the ASE from the OSNR, the plan's
// NLI and the measured penalties all leave the eSNR short: the module's own noise (laser,
// modulator, receiver, DSP) or its ageing. The next test is a loopback.
func (pc *portCtx) transceiver() *score {
	s := &score{id: CauseTransceiver}
	f, w := pc.eSNRShortfall()
	if w == 0 {
		return s
	}
	switch explains, withPlan := f.nliExplains(); {
	case !withPlan:
		s.add(w, "The eSNR %s (%.1f dB) is %.1f dB below what the %s of %.1f dB gives through the transceiver ceiling (%.1f dB): the line's amplifier noise does not explain it; the module's own noise, nonlinearity or filtering may.",
			pc.esnrSource(), f.measuredDB, f.shortfallNoNLIdB, f.aseFrom, f.aseOSNRdB, f.modelNoNLIdB)
	case !explains:
		s.add(w, "The eSNR %s (%.1f dB) is %.1f dB below the %.1f dB the line model gives (ASE from the %s, NLI SNR %.1f dB from the plan's GN model, penalties %.1f dB): the line's noise cannot explain it.",
			pc.esnrSource(), f.measuredDB, f.shortfallDB, f.modelDB, f.aseFrom, f.nliSNRdB, f.pdlDB+f.dgdDB)
		if off, _ := pc.offCentreGHz(); !finite(off) {
			s.add(llrFirm, "The NLI the plan predicts at %+.1f dBm per channel is too weak to be the cause, so the module itself is the first suspect.", f.launchDBm)
		}
	}
	if off, what := pc.offCentreGHz(); finite(off) {
		s.add(llrAgainstSome, "The channel sits %+.2f GHz from %s: filtering of the off-centre channel can explain the shortfall.", off, what)
	}
	return s
}

// filtering: an eSNR shortfall with the laser off the passband centre (channel frequency away
// from the plan's by more than the laser's accuracy, but less than a grid step) or a carrier
// offset beyond that accuracy.
func (pc *portCtx) filtering() *score {
	s := &score{id: CauseFiltering}
	if f, w := pc.eSNRShortfall(); w > 0 {
		s.add(w-llrSupporting, "The eSNR %s (%.1f dB) is %.1f dB below what the %s gives through the transceiver ceiling: passband narrowing is one of the causes that do this.",
			pc.esnrSource(), f.measuredDB, f.shortfallNoNLIdB, f.aseFrom)
	}
	if off, what := pc.offCentreGHz(); finite(off) {
		w := llrWeak
		if pc.noisy() {
			w = llrStrong
		}
		s.add(w, "The channel sits %+.2f GHz from %s, beyond the %.1f GHz laser accuracy but inside one grid step: the signal is off the centre of the filters' passband.", off, what, pc.r.FrequencyAccuracyGHz)
	}
	if acc := pc.r.FrequencyAccuracyGHz; pc.has(parse.LOOffsetMHz) && pc.noisy() {
		if m := pc.absSum[parse.LOOffsetMHz].P50; m > 1000*acc {
			s.add(llrModerate, "The carrier offset is %.0f MHz (median |offset|), beyond the %.1f GHz laser accuracy: one of the lasers sits off its channel centre, where the filters cut the signal's edge.", m, acc)
		}
	}
	return s
}

// offCentreGHz is how far the channel sits from the centre it should have — the plan's
// frequency, else the nearest 6.25 GHz grid frequency — when that is beyond the laser accuracy
// (frequency_accuracy_ghz) but inside one grid step; NaN otherwise.
func (pc *portCtx) offCentreGHz() (float64, string) {
	off, what := pc.frequencyOffPlanGHz(), "the plan's centre frequency"
	if !finite(off) && pc.has(parse.FrequencyTHz) {
		off, what = optics.ChannelOffsetGHz(pc.sum[parse.FrequencyTHz].P50, gridStepGHz), "the nearest 6.25 GHz grid frequency"
	}
	if a := math.Abs(off); !(a > pc.r.FrequencyAccuracyGHz && a <= gridStepGHz) {
		return math.NaN(), ""
	}
	return off, what
}

// noisy: the median Q margin is inside the marginal band or below.
func (pc *portCtx) noisy() bool {
	qm := pc.qMarginP50()
	return finite(qm) && qm < pc.r.QMarginalMarginDB
}
