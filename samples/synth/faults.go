package synth

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"

	"github.com/beatnote/beatnote/diagnose"
	"github.com/beatnote/beatnote/diagnose/optics"
	"github.com/beatnote/beatnote/rules"
)

// sopSample is one sample touched by a burst of fast polarization change: the interval's peak
// SOP rate and the fraction of the interval the transient lasts.
type sopSample struct {
	rateKradS, duty float64
}

// faults holds the time-varying parts of the injected trouble, for render. Fractions are of the
// log's duration.
type faults struct {
	sev float64
	rng *rand.Rand

	pdlDB                float64           // mean PDL of the line
	sopBaseKradS         float64           // median quiet SOP rate
	sopAt                map[int]sopSample // by sample index
	loStartMHz, loEndMHz float64
	// stepAt ≥ 0: before this fraction the received power is stepDB higher than Actual's.
	stepAt, stepDB float64
	// lossFrom ≥ 0: light is gone from lossFrom to lossTo.
	lossFrom, lossTo float64
	// txStepAt ≥ 0: from this fraction on the transmitter's output is txStepDB lower (Make
	// evaluates the link as it stands then).
	txStepAt, txStepDB float64
	// trxLossDB lowers the transceiver's back-to-back SNR ceiling; filterPenaltyDB is an SNR
	// penalty from passband narrowing.
	trxLossDB, filterPenaltyDB float64
	// freqOffsetGHz moves the reported (and actual) channel frequency away from the plan's.
	freqOffsetGHz float64
}

// requiredOSNRdB is the profile's required OSNR, or the one its implementation penalty implies.
func requiredOSNRdB(prof rules.Profile) float64 {
	if prof.RequiredOSNRdB > 0 {
		return prof.RequiredOSNRdB
	}
	mod, _ := optics.ParseModulation(prof.Modulation)
	return optics.RequiredOSNRdB(mod, prof.BaudGBd, prof.PolarizationCount(), prof.FECThresholdBER, prof.ImplementationPenaltyDB)
}

// apply draws the healthy time-varying figures, then changes the link model for each cause of
// c.Causes and records what it did in c.Notes. Severity s ∈ [0, 1] scales every fault from mild
// but detectable to severe.
func (f *faults) apply(m *linkModel, c *Case, prof rules.Profile) error {
	rng, s := f.rng, f.sev
	design := c.Design
	// Healthy figures (common practice for a buried/aerial regional fleet): PDL about 0.5 dB,
	// quiet SOP rate 0.1–1 krad/s median, carrier offset within ±300 MHz (laser frequency accuracy),
	// no step, no loss.
	f.pdlDB = basePDLdB * (0.8 + 0.4*rng.Float64())
	f.sopBaseKradS = 0.1 * math.Pow(10, rng.Float64())
	f.loStartMHz = 600 * (rng.Float64() - 0.5)
	f.loEndMHz = f.loStartMHz + 40*(rng.Float64()-0.5)
	f.stepAt, f.lossFrom, f.txStepAt = -1, -1, -1
	rosnr := requiredOSNRdB(prof)
	note := func(format string, a ...any) { c.Notes = append(c.Notes, fmt.Sprintf(format, a...)) }

	for _, cause := range c.Causes {
		switch cause {
		case diagnose.CauseOSNRLow:
			// A failing amplifier: its noise figure rises until the OSNR reaches the target, from
			// 1 dB above the required OSNR (mild) to 3 dB below it (severe); power is unchanged
			// because the amplifier holds its output.
			if len(m.amps) == 0 {
				return fmt.Errorf("%w: osnr-low needs a plan with amplifiers", ErrSpec)
			}
			target := rosnr + 1 - 4*s
			k := len(m.amps) / 2
			if len(m.amps) > 1 && m.amps[k].afterSpan == 0 {
				k++
			}
			nf0 := m.amps[k].nfDB
			lo, hi := nf0, nf0+60.0
			for range 60 {
				mid := (lo + hi) / 2
				m.amps[k].nfDB = mid
				if m.evaluate(prof).OSNRdB > target {
					lo = mid
				} else {
					hi = mid
				}
			}
			m.amps[k].nfDB = math.Max(hi, nf0+3)
			note("amplifier %s noise figure %.1f → %.1f dB (extra ASE, e.g. a failing pump): OSNR %.1f → %.1f dB, power unchanged",
				m.amps[k].name, nf0, m.amps[k].nfDB, design.OSNRdB, m.evaluate(prof).OSNRdB)

		case diagnose.CauseRxPowerLow:
			// Loss after the last amplifier (a dirty connector or a tight bend in the receive patch
			// cord): the received power falls to 1.5 dB above the receiver's minimum (mild) … 4 dB
			// below it (severe). Half the seeds see it appear as a step part-way through the log.
			target := prof.RxPowerMinDBm + 1.5 - 5.5*s
			loss := design.RxPowerDBm - target
			m.rxOffsetDB -= loss
			if rng.IntN(2) == 0 {
				f.stepAt, f.stepDB = 0.3+0.4*rng.Float64(), loss
				note("step loss of %.1f dB in the receive patch at %.0f %% of the log: received power %.1f → %.1f dBm", loss, 100*f.stepAt, design.RxPowerDBm, target)
			} else {
				note("extra loss of %.1f dB in the receive patch: received power %.1f → %.1f dBm (window %g…%g dBm)", loss, design.RxPowerDBm, target, prof.RxPowerMinDBm, prof.RxPowerMaxDBm)
			}

		case diagnose.CauseRxOverload:
			// Too little attenuation before the receiver (a missing pad, a preamplifier set too
			// high): the received power is 0.5 dB (mild) … 4.5 dB (severe) above the maximum.
			target := prof.RxPowerMaxDBm + 0.5 + 4*s
			m.rxOffsetDB += target - design.RxPowerDBm
			note("receive attenuation %.1f dB short: received power %.1f → %.1f dBm (maximum %g dBm)", target-design.RxPowerDBm, design.RxPowerDBm, target, prof.RxPowerMaxDBm)

		case diagnose.CauseCDMismatch:
			// The circuit is patched onto another route 20 % (mild) … 50 % (severe) longer or
			// shorter than planned; longer when the CD stays well inside the tolerance.
			frac := 0.2 + 0.3*s
			ratio := 1 + frac
			if math.Abs(design.CDPsNm)*ratio > 0.75*prof.CDTolerancePsNm || rng.IntN(3) == 0 {
				ratio = 1 - frac
			}
			saved := slices.Clone(m.spans)
			scaleRoute(m, design.RouteKm*(ratio-1))
			if a := m.evaluate(prof); ratio > 1 && design.OSNRdB-a.OSNRdB > 2 {
				// The longer route's loss would make this an OSNR fault too: take the shorter one.
				copy(m.spans, saved)
				ratio = 1 - frac
				scaleRoute(m, design.RouteKm*(ratio-1))
			}
			a := m.evaluate(prof)
			note("route patched %+.0f %% (%.1f → %.1f km): CD %.0f → %.0f ps/nm", 100*(ratio-1), design.RouteKm, a.RouteKm, design.CDPsNm, a.CDPsNm)

		case diagnose.CauseCDOverLimit:
			// The plan itself is too long for the module (drawPlan made it so); the receiver's CD
			// compensator runs out of range. The penalty model is in render.
			note("route of %.1f km has %.0f ps/nm of CD, %.0f %% over the %g ps/nm tolerance", design.RouteKm, design.CDPsNm,
				100*(math.Abs(design.CDPsNm)/prof.CDTolerancePsNm-1), prof.CDTolerancePsNm)

		case diagnose.CausePMD:
			// A legacy fibre section with a high PMD coefficient: mean DGD 36 % (mild) … 60 %
			// (severe) of the module's instantaneous DGD tolerance.
			target := prof.DGDTolerancePs * (0.36 + 0.24*s)
			k, other := 0, 0.0
			for i, sp := range m.spans {
				if sp.lengthKm > m.spans[k].lengthKm {
					k = i
				}
			}
			for i, sp := range m.spans {
				if i != k {
					d := optics.MeanDGDPs(sp.pmd, sp.lengthKm)
					other += d * d
				}
			}
			old := m.spans[k].pmd
			m.spans[k].pmd = math.Sqrt(math.Max(target*target-other, 0) / m.spans[k].lengthKm)
			note("span %d has a PMD coefficient of %.2f ps/√km instead of %.2f: mean DGD %.1f → %.1f ps (tolerance %g ps instantaneous)",
				k+1, m.spans[k].pmd, old, design.MeanDGDPs, target, prof.DGDTolerancePs)

		case diagnose.CauseSOPTransient:
			// Fast polarization changes (e.g. lightning or vibration on aerial cable): 2–7 bursts
			// whose peak SOP rate is 2× (mild) … 60× (severe) the module's tracking speed,
			// hundreds of krad/s to a few Mrad/s for a 50 krad/s module (Charlton et al.,
			// Opt. Express 25(9), 2017 measured up to 5.1 Mrad/s).
			n := 2 + int(math.Round(4*s)) + rng.IntN(2)
			if f.sopAt == nil {
				f.sopAt = map[int]sopSample{}
			}
			peak := prof.SOPTrackingKradS * math.Pow(10, 0.3+1.48*s)
			for range n {
				// Each transient lasts 1–10 % of a sample interval, over one or two samples.
				p := peak * math.Pow(10, 0.2*(rng.Float64()-0.5))
				at, length := int((0.05+0.9*rng.Float64())*float64(c.Spec.Samples)), 1+rng.IntN(2)
				for k := at; k < at+length && k < c.Spec.Samples; k++ {
					f.sopAt[k] = sopSample{rateKradS: p * (0.8 + 0.2*rng.Float64()), duty: 0.01 + 0.09*rng.Float64()}
				}
			}
			note("%d bursts of fast SOP change peaking near %.0f krad/s (tracking %g krad/s), each a BER burst with uncorrected blocks", n, peak, prof.SOPTrackingKradS)

		case diagnose.CausePDLHigh:
			// PDL 0.9× (mild) … 2× (severe) the module's tolerance (e.g. a faulty isolator or a
			// stressed component in the line).
			f.pdlDB = prof.PDLTolerancedB * (0.9 + 1.1*s)
			note("mean PDL %.1f dB (tolerance %g dB)", f.pdlDB, prof.PDLTolerancedB)

		case diagnose.CauseLOOffset:
			// The transmit laser (or the local oscillator) drifts: the carrier offset moves from
			// 15–25 % of the capture range to 84 % (mild) … 98 % (severe) of it over the log.
			sign := 1.0
			if rng.IntN(2) == 0 {
				sign = -1
			}
			r := prof.LOOffsetRangeMHz
			f.loStartMHz = sign * r * (0.15 + 0.1*rng.Float64())
			f.loEndMHz = sign * r * (0.84 + 0.14*s)
			note("carrier offset drifts from %.0f to %.0f MHz (capture range ±%g MHz)", f.loStartMHz, f.loEndMHz, r)

		case diagnose.CauseNonlinear:
			// Launch power set at least 3 dB above the GN-model optimum on every span, and as far
			// as it takes the NLI SNR down to 2 dB above (mild) … 3 dB below (severe) the planned
			// eSNR (at most 12 dB above the plan: short routes, whose NLI is small, need the most);
			// NLI grows as P³ against the signal's P, so its SNR falls 2 dB per dB of excess. The
			// receive end still levels the channel, so received power is normal.
			if math.IsNaN(design.OptimumLaunchDBm) || math.IsInf(design.NLISNRdB, 1) {
				return fmt.Errorf("%w: nonlinear needs a plan with channels and fibre for the GN model", ErrSpec)
			}
			target := design.ESNRdB + 2 - 5*s
			excess := math.Max(design.OptimumLaunchDBm+3-design.LaunchPowerDBm, (design.NLISNRdB-target)/2)
			m.lineExcessDB = math.Min(excess, 12)
			a := m.evaluate(prof)
			note("launch power %.1f dBm per channel instead of %.1f (optimum %.1f): OSNR %.1f → %.1f dB but NLI SNR %.1f dB",
				a.LaunchPowerDBm, design.LaunchPowerDBm, design.OptimumLaunchDBm, design.OSNRdB, a.OSNRdB, a.NLISNRdB)

		case diagnose.CauseTxPower:
			// The transmit laser's output steps down by 3 dB (mild) … 8 dB (severe) at 30–70 % of
			// the log (a laser bias fault, a changed set-point). The booster holds its output, so
			// the received power holds and the booster's input — and the OSNR with it — falls;
			// without a booster the received power follows the transmitter.
			f.txStepAt, f.txStepDB = 0.3+0.4*rng.Float64(), 3+5*s
			note("transmit power steps down by %.1f dB at %.0f %% of the log (%.1f → %.1f dBm)", f.txStepDB, 100*f.txStepAt, design.TxPowerDBm, design.TxPowerDBm-f.txStepDB)

		case diagnose.CauseTransceiver:
			// The module's own noise rises (ageing, a degraded DSP or modulator): its back-to-back
			// SNR ceiling falls by 1.5 dB (mild) … 4.5 dB (severe); the line is untouched.
			f.trxLossDB = 1.5 + 3*s
			note("transceiver back-to-back SNR %.1f → %.1f dB", design.B2BSNRdB, design.B2BSNRdB-f.trxLossDB)

		case diagnose.CauseFiltering:
			// Both ends provisioned 2.5 (mild) … 5 GHz (severe) off the channel centre (inside one
			// 6.25 GHz grid step, beyond the laser accuracy): the filters of the path cut the
			// signal's edge, an SNR penalty of 1 + 3·s dB (a modelling choice of ours). The local
			// oscillator sits on the same frequency, so the carrier offset stays normal.
			sign := 1.0
			if rng.IntN(2) == 0 {
				sign = -1
			}
			f.freqOffsetGHz, f.filterPenaltyDB = sign*(2.5+2.5*s), 1+3*s
			note("channel provisioned %+.1f GHz off its centre: filtering penalty %.1f dB", f.freqOffsetGHz, f.filterPenaltyDB)

		case diagnose.CauseFrequencyMismatch:
			// The module is provisioned 1 (mild) … 4 (severe) 50 GHz channels away from the plan;
			// the path passes it (no filter model), so only the frequency differs.
			k := 1 + math.Round(3*s)
			if rng.IntN(2) == 0 {
				k = -k
			}
			f.freqOffsetGHz = 50 * k
			note("channel provisioned %+.0f GHz from the plan's %.5f THz", f.freqOffsetGHz, design.FrequencyTHz)

		case diagnose.CauseSignalLoss:
			// The light goes (a fibre cut or a pulled patch cord) for 10 % (mild) … 50 % (severe)
			// of the log, from 35–60 % of the way through.
			f.lossFrom = 0.35 + 0.25*rng.Float64()
			f.lossTo = math.Min(1, f.lossFrom+0.1+0.4*s)
			if c.Spec.SignalLossAsGap {
				note("light lost from %.0f %% to %.0f %% of the log: power at the %g dBm floor, BER 0.5 for the first fifth of that time, then the port reports nothing", 100*f.lossFrom, 100*f.lossTo, lossFloorDBm)
			} else {
				note("light lost from %.0f %% to %.0f %% of the log: power at the %g dBm floor, BER 0.5", 100*f.lossFrom, 100*f.lossTo, lossFloorDBm)
			}
		}
	}
	return nil
}

// scaleRoute lengthens (or shortens, deltaKm < 0) the route: the last span takes the change if
// it stays at least 5 km long, otherwise every span is scaled. Span loss follows the length at
// the fibre's attenuation.
func scaleRoute(m *linkModel, deltaKm float64) {
	last := &m.spans[len(m.spans)-1]
	if last.lengthKm+deltaKm >= 5 {
		last.lossDB += last.fiber.AttenuationDBPerKm * deltaKm
		last.lengthKm += deltaKm
		return
	}
	total := 0.0
	for _, s := range m.spans {
		total += s.lengthKm
	}
	r := (total + deltaKm) / total
	for i := range m.spans {
		d := m.spans[i].lengthKm * (r - 1)
		m.spans[i].lossDB += m.spans[i].fiber.AttenuationDBPerKm * d
		m.spans[i].lengthKm += d
	}
}
