package synth

import (
	"math"
	"math/rand/v2"
	"time"

	"github.com/beatnote/beatnote/diagnose"
	"github.com/beatnote/beatnote/diagnose/optics"
	"github.com/beatnote/beatnote/parse"
	"github.com/beatnote/beatnote/rules"
)

// Noise and drift of the reported estimates (modelling choices of ours, of the size a coherent
// DSP shows; common practice): standard deviations and correlation times.
const (
	osnrDriftDB      = 0.15 // slow OSNR wander (amplifier and channel-loading changes)
	osnrEstNoiseDB   = 0.2  // OSNR estimator noise
	snrJitterDB      = 0.05 // fast SNR jitter
	esnrEstNoiseDB   = 0.1  // eSNR estimator noise
	cdEstNoisePsNm   = 4.0  // CD estimator noise
	dgdEstNoisePs    = 0.2  // DGD estimator noise
	pdlEstNoiseDB    = 0.05 // PDL estimator noise
	rxDriftDB        = 0.1  // slow received-power wander
	rxNoiseDB        = 0.03 // power monitor noise
	loWanderMHz      = 15.0 // slow carrier-offset wander
	loNoiseMHz       = 5.0  // carrier-offset estimator noise
	dgdCorrMinutes   = 20.0 // DGD correlation time (aerial or bridge-attached cable moves fast)
	slowCorrMinutes  = 60.0
	loCorrMinutes    = 120.0
	lossFloorDBm     = -40.0 // power monitor floor when the light is gone
	silentAfter      = 0.2   // SignalLossAsGap: the fraction of the dark time reported before the port goes silent
	fecBlockBits     = 10000 // nominal FEC block size for counting uncorrected blocks
	pdlPenaltyPerDB  = 0.5   // SNR penalty per dB of PDL
	cdPenaltyPerUnit = 20.0  // dB of SNR lost per unit of |CD|/tolerance beyond 1
)

// ar1 is a unit-variance first-order autoregressive process: x' = ρ·x + √(1−ρ²)·N(0,1), with
// ρ = exp(−Δt/τ) for a correlation time τ. Its stationary distribution is N(0,1).
type ar1 struct{ rho, x float64 }

func newAR1(rng *rand.Rand, stepMinutes, tauMinutes float64) *ar1 {
	return &ar1{rho: math.Exp(-stepMinutes / tauMinutes), x: rng.NormFloat64()}
}

func (a *ar1) next(rng *rand.Rand) float64 {
	a.x = a.rho*a.x + math.Sqrt(1-a.rho*a.rho)*rng.NormFloat64()
	return a.x
}

// penalties are the SNR penalty models of synth (dB); simple, monotone and documented, chosen so
// that each trouble shows in the BER the way it does in the field. They are modelling choices of
// ours, not standard figures, except where a source is named.
type penalties struct{ prof rules.Profile }

// pdl: the weaker polarization tributary loses about half the PDL relative to the mean, and the
// errors come mostly from it: penalty = 0.5·PDL (dB).
func (penalties) pdl(pdlDB float64) float64 { return pdlPenaltyPerDB * pdlDB }

// dgd: module tolerances are usually stated at about 1 dB OSNR penalty (common practice);
// penalty = 1 dB·(τ/τ_tol)², quadratic as for first-order PMD at small DGD.
func (p penalties) dgd(tauPs float64) float64 {
	r := tauPs / p.prof.DGDTolerancePs
	return r * r
}

// cd: inside the tolerance the DSP removes CD at no cost; beyond it, the residual grows and costs
// 20 dB per unit of |CD|/tolerance − 1 (1 dB at 5 % over).
func (p penalties) cd(cdPsNm float64) float64 {
	return cdPenaltyPerUnit * math.Max(0, math.Abs(cdPsNm)/p.prof.CDTolerancePsNm-1)
}

// overload: above the receiver's maximum input the front end compresses; penalty
// 0.5 dB·(P − Pmax + 0.5 dB)² above Pmax − 0.5 dB.
func (p penalties) overload(rxDBm float64) float64 {
	x := rxDBm - p.prof.RxPowerMaxDBm + 0.5
	if x <= 0 {
		return 0
	}
	return 0.5 * x * x
}

// lo: carrier recovery degrades in the last 10 % of the capture range: penalty
// 3 dB·((|f|/range − 0.9)/0.1)²; beyond the range lock is lost (reported as light kept but BER
// 0.5 by render).
func (p penalties) lo(offsetMHz float64) float64 {
	x := math.Abs(offsetMHz)/p.prof.LOOffsetRangeMHz - 0.9
	if x <= 0 {
		return 0
	}
	return 3 * (x / 0.1) * (x / 0.1)
}

// sop: when the SOP rate exceeds the tracking speed the equalizer lags; penalty
// 3 dB + 6 dB·log10(rate/tracking) for the duration of the transient (render averages it over
// the interval with the transient's duty).
func (p penalties) sop(rateKradS float64) float64 {
	if rateKradS <= p.prof.SOPTrackingKradS {
		return 0
	}
	return 3 + 6*math.Log10(rateKradS/p.prof.SOPTrackingKradS)
}

// rxNoiseSNRdB returns the receiver's electrical-noise SNR as a function of received power P
// (dBm): it grows 1 dB per dB of power (the LO-signal beat dominates; common practice), and is
// set so that a typical unit (specBeatDB better than its sensitivity) with no other noise but its
// back-to-back ceiling reaches the FEC threshold at Pmin − specBeatDB:
//
//	1/SNR_rx(Pmin − specBeatDB) = 1/SNR_th − 1/SNR_b2b
func rxNoiseSNRdB(prof rules.Profile, mod optics.Modulation, b2bDB float64) func(rxDBm float64) float64 {
	th := optics.SNRdBFromBER(mod, prof.FECThresholdBER)
	inv := 1/optics.DBToLinear(th) - 1/optics.DBToLinear(b2bDB)
	k := th + 3
	if inv > 0 {
		k = -optics.LinearToDB(inv)
	}
	return func(rxDBm float64) float64 { return k + rxDBm - (prof.RxPowerMinDBm - specBeatDB) }
}

// blocksFailingFraction models the FEC cliff: the fraction of blocks left uncorrected at
// pre-FEC BER b is 1e-12·(b/threshold)^40, at most 1 — negligible below the threshold, about
// 1e-5 at 1.5× and all blocks at 2× (a modelling choice of ours shaped like published FEC
// waterfall curves).
func blocksFailingFraction(ber, threshold float64) float64 {
	return math.Min(1, 1e-12*math.Pow(ber/threshold, 40))
}

// berOf is optics.BERFromSNRdB, 0.5 where the SNR leaves nothing to decide on (NaN at an SNR
// of −Inf dB).
func berOf(mod optics.Modulation, snrDB float64) float64 {
	ber := optics.BERFromSNRdB(mod, snrDB)
	if math.IsNaN(ber) || ber > 0.5 {
		return 0.5
	}
	return ber
}

// poisson draws a Poisson count of mean lambda (Knuth below 30, normal approximation above).
func poisson(rng *rand.Rand, lambda float64) float64 {
	if lambda <= 0 {
		return 0
	}
	if lambda > 30 {
		return math.Max(0, math.Round(lambda+math.Sqrt(lambda)*rng.NormFloat64()))
	}
	l, k, p := math.Exp(-lambda), 0.0, 1.0
	for {
		p *= rng.Float64()
		if p <= l {
			return k
		}
		k++
	}
}

// render makes the telemetry of the link as built, one sample per interval, and judges it
// against the profile's limits (see Case.Verdict).
func render(rng *rand.Rand, spec Spec, prof rules.Profile, mod optics.Modulation, a Link, f *faults, lw []lineWindow) (*parse.Series, diagnose.Verdict) {
	n := spec.Samples
	step := spec.Interval.Minutes()
	pen := penalties{prof}
	s := &parse.Series{Port: spec.Port, TimesMs: make([]int64, 0, n)}
	for q := range parse.NumQuantities {
		s.Values[q] = make([]float64, 0, n)
	}
	lineRate := prof.LineRateGbps
	if lineRate == 0 {
		lineRate = float64(prof.PolarizationCount()*prof.BitsPerSymbol()) * prof.BaudGBd
	}
	blocksPerInterval := lineRate * 1e9 * spec.Interval.Seconds() / fecBlockBits

	dgdAR := [3]*ar1{newAR1(rng, step, dgdCorrMinutes), newAR1(rng, step, dgdCorrMinutes), newAR1(rng, step, dgdCorrMinutes)}
	dgdScale := a.MeanDGDPs / (2 * math.Sqrt(2/math.Pi)) // Maxwellian a from the mean (Karlsson 2001)
	osnrAR, rxAR, pdlAR := newAR1(rng, step, slowCorrMinutes), newAR1(rng, step, slowCorrMinutes), newAR1(rng, step, slowCorrMinutes)
	loAR := newAR1(rng, step, loCorrMinutes)
	cdOffset := 3 * rng.NormFloat64() // the estimator's own bias for this port
	fails := false
	rxNoise := rxNoiseSNRdB(prof, mod, a.B2BSNRdB)

	for i := range n {
		frac := float64(i) / float64(n-1)
		t := spec.Start.Add(spec.Interval * time.Duration(i)).UnixMilli()
		// Draw every noise term every sample, used or not, so the stream stays aligned.
		var v [parse.NumQuantities]float64
		x, y, z := dgdAR[0].next(rng), dgdAR[1].next(rng), dgdAR[2].next(rng)
		dgd := dgdScale * math.Sqrt(x*x+y*y+z*z)
		cur, lineDark := a, false // the link as it stands at this sample, after the line events
		for _, w := range lw {
			if i >= w.from && i <= w.to {
				lineDark = lineDark || w.dark
				if w.link != nil {
					cur = *w.link
				}
			}
		}
		osnr := cur.OSNRdB + osnrDriftDB*osnrAR.next(rng)
		rx := cur.RxPowerDBm + rxDriftDB*rxAR.next(rng)
		if f.stepAt >= 0 && frac < f.stepAt {
			rx += f.stepDB
		}
		pdl := math.Max(0.3*f.pdlDB, f.pdlDB*(1+0.15*pdlAR.next(rng)))
		lo := f.loStartMHz + (f.loEndMHz-f.loStartMHz)*frac + loWanderMHz*loAR.next(rng)
		sop := f.sopBaseKradS * math.Exp(0.5*rng.NormFloat64())
		burst, inBurst := f.sopAt[i]
		if inBurst {
			sop = burst.rateKradS
		}
		noise := [...]float64{rng.NormFloat64(), rng.NormFloat64(), rng.NormFloat64(), rng.NormFloat64(),
			rng.NormFloat64(), rng.NormFloat64(), rng.NormFloat64(), rng.NormFloat64(), rng.NormFloat64()}

		ase := optics.SNRdBFromOSNRdB(osnr, prof.BaudGBd, prof.PolarizationCount())
		snr := optics.CombineSNRdB(ase, cur.NLISNRdB, a.B2BSNRdB-f.trxLossDB, rxNoise(rx)) - f.filterPenaltyDB
		snr -= pen.pdl(pdl) + pen.dgd(dgd) + pen.cd(a.CDPsNm) + pen.overload(rx) + pen.lo(lo)
		snr += snrJitterDB * noise[0]
		ber := berOf(mod, snr)
		blocksMean := blocksFailingFraction(ber, prof.FECThresholdBER) * blocksPerInterval
		if inBurst {
			// The transient lasts a fraction d of the interval: the interval's BER and noise are
			// the time averages, and the blocks that fail are those of the burst.
			d := burst.duty
			snrB := snr - pen.sop(sop)
			berB := berOf(mod, snrB)
			blocksMean = (1-d)*blocksMean + d*blocksFailingFraction(berB, prof.FECThresholdBER)*blocksPerInterval
			ber = (1-d)*ber + d*berB
			snr = -optics.LinearToDB((1-d)/optics.DBToLinear(snr) + d/optics.DBToLinear(snrB))
		}
		dark := lineDark || (f.lossFrom >= 0 && frac >= f.lossFrom && frac <= f.lossTo)
		unlocked := math.Abs(lo) > prof.LOOffsetRangeMHz
		if dark && spec.SignalLossAsGap && frac > f.lossFrom+silentAfter*(f.lossTo-f.lossFrom) {
			// The port reported the light going (power at the floor) and then went silent: the
			// missing samples alone would not say the light went (a collector that misses polls
			// leaves the same hole), the floor samples before them do.
			continue
		}
		for q := range v {
			v[q] = math.NaN()
		}
		v[parse.TxPowerDBm] = round(cur.TxPowerDBm+0.02*noise[1], 2)
		v[parse.FrequencyTHz] = a.FrequencyTHz
		if f.freqOffsetGHz != 0 {
			v[parse.FrequencyTHz] = round(a.FrequencyTHz+f.freqOffsetGHz/1000, 5)
		}
		switch {
		case dark:
			v[parse.RxPowerDBm] = round(lossFloorDBm+0.05*noise[2], 2)
			v[parse.PreFECBER], v[parse.PostFECBER] = 0.5, 0.5
			v[parse.UncorrectedBlocks] = math.Round(blocksPerInterval)
		case unlocked:
			v[parse.RxPowerDBm] = round(rx+rxNoiseDB*noise[2], 2)
			v[parse.PreFECBER], v[parse.PostFECBER] = 0.5, 0.5
			v[parse.UncorrectedBlocks] = math.Round(blocksPerInterval)
			v[parse.LOOffsetMHz] = round(lo, 0)
		default:
			ber = sig3(ber)
			v[parse.PreFECBER] = ber
			v[parse.QdB] = round(optics.QdBFromBER(ber), 2)
			v[parse.ESNRdB] = round(snr+esnrEstNoiseDB*noise[3], 2)
			v[parse.OSNRdB] = round(osnr+osnrEstNoiseDB*noise[4], 1)
			v[parse.CDpsPerNm] = round(a.CDPsNm+cdOffset+cdEstNoisePsNm*noise[5], 0)
			v[parse.DGDps] = round(math.Abs(dgd+dgdEstNoisePs*noise[6]), 1)
			v[parse.PDLdB] = round(math.Abs(pdl+pdlEstNoiseDB*noise[7]), 1)
			v[parse.SOPRateKradPerS] = round(sop, 1)
			v[parse.LOOffsetMHz] = round(lo+loNoiseMHz*noise[8], 0)
			v[parse.RxPowerDBm] = round(rx+rxNoiseDB*noise[2], 2)
			blocks := poisson(rng, blocksMean)
			v[parse.UncorrectedBlocks] = blocks
			v[parse.PostFECBER] = 0
			if blocks > 0 {
				v[parse.PostFECBER] = sig3(math.Min(0.5, ber*blocks/blocksPerInterval))
			}
		}
		if dark || unlocked || limitCrossed(prof, v) {
			fails = true
		}
		s.TimesMs = append(s.TimesMs, t)
		for q := range v {
			s.Values[q] = append(s.Values[q], v[q])
		}
	}
	verdict := diagnose.Marginal
	if fails {
		verdict = diagnose.Fail
	}
	return s, verdict
}

// limitCrossed reports whether one sample crosses a module limit of the profile.
func limitCrossed(prof rules.Profile, v [parse.NumQuantities]float64) bool {
	over := func(q parse.Quantity, lim float64) bool { return lim > 0 && math.Abs(v[q]) > lim }
	return v[parse.PreFECBER] > prof.FECThresholdBER || v[parse.OSNRdB] < requiredOSNRdB(prof) ||
		v[parse.UncorrectedBlocks] > 0 ||
		v[parse.RxPowerDBm] < prof.RxPowerMinDBm || v[parse.RxPowerDBm] > prof.RxPowerMaxDBm ||
		over(parse.CDpsPerNm, prof.CDTolerancePsNm) || over(parse.DGDps, prof.DGDTolerancePs) ||
		over(parse.PDLdB, prof.PDLTolerancedB) || over(parse.SOPRateKradPerS, prof.SOPTrackingKradS) ||
		over(parse.LOOffsetMHz, prof.LOOffsetRangeMHz)
}
