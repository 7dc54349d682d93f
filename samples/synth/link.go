package synth

import (
	"fmt"
	"math"
	"math/rand/v2"

	"github.com/beatnote/beatnote/diagnose/optics"
	"github.com/beatnote/beatnote/rules"
)

// Modelling choices of ours (not standards), used to draw plans and to build the transceiver.
const (
	// specBeatDB is how far a typical unit beats its profile's required OSNR: specifications
	// carry end-of-life and temperature margin (common practice). It sets the back-to-back SNR.
	specBeatDB = 3.0
	// designMarginDB is the OSNR margin over the profile's required OSNR a drawn plan keeps.
	designMarginDB = 6.0
	// basePDLdB is the typical mean PDL of a healthy line (a few ROADM/filter passes, < 1 dB;
	// common practice).
	basePDLdB = 0.5
	// dciMaxCDTolerancePsNm: profiles whose CD tolerance is at most this are built as short
	// data-centre-interconnect routes of one or two amplified spans, others as regional routes.
	dciMaxCDTolerancePsNm = 5000
)

// spanModel is one span of the link as modelled.
type spanModel struct {
	fiber    optics.Fiber
	lengthKm float64
	// lossDB is the span loss including connectors and splices.
	lossDB float64
	pmd    float64 // PMD coefficient, ps/√km
}

// ampModel is an amplifier run in constant-output-power mode: whatever its input, it outputs
// outDBm per channel (the design level), so loss before it changes the OSNR, not the power after it.
type ampModel struct {
	name      string
	afterSpan int // 0 = booster before span 1
	nfDB      float64
	outDBm    float64
}

// linkModel is a link ready to evaluate: the plan, and the faults applied to it.
type linkModel struct {
	fTHz, lambdaNm float64
	txDBm          float64
	spans          []spanModel
	amps           []ampModel
	extraLossDB    float64
	comb           optics.WDMComb
	// lineExcessDB raises the output of every amplifier but the last one before the receiver
	// (nonlinear fault: launch set point above the plan).
	lineExcessDB float64
	// rxOffsetDB is added to the received power after the last amplifier (patch-cord loss, or a
	// missing receive attenuator when positive).
	rxOffsetDB float64
	b2bSNRdB   float64
	baudGBd    float64
	pol        int
}

// spanFiber resolves a plan span's fibre with its overrides by optics.SpanFiber; a fibre type
// it does not know takes the G.652 figures when the span gives its dispersion (as "custom" does).
func spanFiber(s rules.Span, lambdaNm float64) (optics.Fiber, error) {
	if f, err := optics.FiberByName(s.Fiber); err != nil {
		if s.DispersionPsNmKm == nil {
			return f, err
		}
		s.Fiber = "custom"
	}
	return optics.SpanFiber(s, lambdaNm)
}

// newLinkModel turns a plan into a model. Amplifier output levels come from walking the plan's
// gains from the transmitter: P = Tx; + gain of each amplifier; − loss of each span; − extra loss
// at the receiver.
func newLinkModel(plan rules.Plan, prof rules.Profile) (linkModel, error) {
	m := linkModel{fTHz: plan.FrequencyTHz, txDBm: plan.TxPowerDBm, extraLossDB: plan.ExtraLossDB,
		baudGBd: prof.BaudGBd, pol: prof.PolarizationCount()}
	if !(plan.FrequencyTHz >= 150 && plan.FrequencyTHz <= 250) {
		return m, fmt.Errorf("%w: plan %s: frequency %g THz", ErrSpec, plan.Circuit, plan.FrequencyTHz)
	}
	if len(plan.Spans) == 0 {
		return m, fmt.Errorf("%w: plan %s has no spans", ErrSpec, plan.Circuit)
	}
	m.lambdaNm = optics.WavelengthNmFromTHz(plan.FrequencyTHz)
	m.comb = optics.WDMComb{Channels: plan.Channels, SpacingGHz: plan.ChannelSpacingGHz, BaudGBd: prof.BaudGBd}
	for i, s := range plan.Spans {
		f, err := spanFiber(s, m.lambdaNm)
		if err != nil {
			return m, fmt.Errorf("%w: plan %s span %d: %v", ErrSpec, plan.Circuit, i+1, err)
		}
		m.spans = append(m.spans, spanModel{fiber: f, lengthKm: s.LengthKm, lossDB: optics.SpanLossDB(s, f), pmd: f.PMDCoefficientPsSqrtKm})
	}
	p := plan.TxPowerDBm
	for k := 0; k <= len(plan.Spans); k++ {
		if k > 0 {
			p -= m.spans[k-1].lossDB
		}
		for _, a := range plan.Amplifiers {
			if a.AfterSpan == k {
				p += a.GainDB
				m.amps = append(m.amps, ampModel{name: a.Name, afterSpan: k, nfDB: a.NoiseFigureDB, outDBm: p})
			}
		}
	}
	m.b2bSNRdB = backToBackSNRdB(prof)
	return m, nil
}

// backToBackSNRdB is the transceiver's SNR ceiling: the profile's figure when it has one,
// otherwise the SNR that, combined with the ASE SNR at the required OSNR less specBeatDB, gives
// the theoretical SNR at the FEC threshold:
//
//	1/SNR_b2b = 1/SNR_th − 1/SNR_ASE(ROSNR − specBeatDB)
//
// (noise powers add; the ceiling carries the whole implementation penalty). When the profile
// gives no required OSNR it is computed from the implementation penalty by optics.RequiredOSNRdB.
func backToBackSNRdB(prof rules.Profile) float64 {
	if prof.BackToBackSNRdB > 0 {
		return prof.BackToBackSNRdB
	}
	mod, _ := optics.ParseModulation(prof.Modulation)
	pol := prof.PolarizationCount()
	th := optics.SNRdBFromBER(mod, prof.FECThresholdBER)
	rosnr := prof.RequiredOSNRdB
	if rosnr == 0 {
		rosnr = optics.RequiredOSNRdB(mod, prof.BaudGBd, pol, prof.FECThresholdBER, prof.ImplementationPenaltyDB)
	}
	ase := optics.SNRdBFromOSNRdB(rosnr-specBeatDB, prof.BaudGBd, pol)
	inv := 1/optics.DBToLinear(th) - 1/optics.DBToLinear(ase)
	if !(inv > 0) {
		// The required OSNR leaves no room for a ceiling: give the unit 10 dB over theory.
		return th + 10
	}
	return -optics.LinearToDB(inv)
}

// evaluate computes the figures of the link: route length, CD (Σ D(λ)·L), mean DGD (quadrature
// sum of PMD·√L), received power, ASE OSNR (optics.CascadeOSNRdB of optics.AmplifierOSNRdB per
// amplifier at its input power), the NLI SNR from the GN model (η of optics.NLIEta summed over
// spans, incoherent accumulation: SNR_NLI = 1/Σ η_i·P_i²), the optimum launch power
// (optics.OptimumLaunchPowerDBm) and the expected eSNR (optics.CombineSNRdB of ASE, NLI and the
// back-to-back ceiling).
func (m linkModel) evaluate(prof rules.Profile) Link {
	l := Link{TxPowerDBm: m.txDBm, FrequencyTHz: m.fTHz, B2BSNRdB: m.b2bSNRdB}
	var dgd2 float64
	for _, s := range m.spans {
		l.RouteKm += s.lengthKm
		l.CDPsNm += s.fiber.DispersionPsNmKm(m.lambdaNm) * s.lengthKm
		d := optics.MeanDGDPs(s.pmd, s.lengthKm)
		dgd2 += d * d
	}
	l.MeanDGDPs = math.Sqrt(dgd2)

	var osnrs []float64
	p := m.txDBm
	etaP2 := 0.0 // Σ η_i·P_i², 1/mW²·mW² = dimensionless
	etaSum := 0.0
	launchOf := make([]float64, len(m.spans))
	last := len(m.amps) - 1
	if last >= 0 && m.amps[last].afterSpan != len(m.spans) {
		last = -1 // no amplifier after the last span
	}
	for k := 0; k <= len(m.spans); k++ {
		if k > 0 {
			p -= m.spans[k-1].lossDB
		}
		for i, a := range m.amps {
			if a.afterSpan != k {
				continue
			}
			osnrs = append(osnrs, optics.AmplifierOSNRdB(p, a.nfDB, m.fTHz))
			p = a.outDBm
			if i != last {
				p += m.lineExcessDB
			}
		}
		if k < len(m.spans) {
			launchOf[k] = p
			eta := optics.NLIEta(m.spans[k].fiber, m.spans[k].lengthKm, m.lambdaNm, m.comb)
			if !math.IsNaN(eta) {
				pm := optics.DBmToMW(p)
				etaP2 += eta * pm * pm
				etaSum += eta
			}
		}
	}
	if last < 0 {
		p += m.lineExcessDB // no amplifier levels the power: the excess reaches the receiver
	}
	l.RxPowerDBm = p - m.extraLossDB + m.rxOffsetDB
	l.LaunchPowerDBm = launchOf[0]
	l.OSNRdB = math.Inf(1)
	if len(osnrs) > 0 {
		l.OSNRdB = optics.CascadeOSNRdB(osnrs...)
	}
	aseSNR := optics.SNRdBFromOSNRdB(l.OSNRdB, m.baudGBd, m.pol)
	l.NLISNRdB = math.Inf(1)
	if etaP2 > 0 {
		l.NLISNRdB = -optics.LinearToDB(etaP2)
	}
	l.OptimumLaunchDBm = math.NaN()
	if etaSum > 0 && !math.IsInf(aseSNR, 1) {
		aseMW := optics.DBmToMW(l.LaunchPowerDBm) / optics.DBToLinear(aseSNR)
		l.OptimumLaunchDBm = optics.OptimumLaunchPowerDBm(aseMW, etaSum)
	}
	l.ESNRdB = optics.CombineSNRdB(aseSNR, l.NLISNRdB, m.b2bSNRdB)
	return l
}

// drawPlan draws a plan for the profile from rng: a short data-centre route (one or two
// amplified spans) for CD-limited profiles, a regional route of two to five spans otherwise, on
// G.652 fibre, with a booster, line amplifiers and a preamplifier, the launch power 1–2 dB below
// the GN-model optimum, and enough OSNR margin (designMarginDB) for a healthy link. With
// cdOver the route is made long enough that its CD exceeds the profile's tolerance by 3–40 %
// (severity), which only a CD-limited profile allows.
func drawPlan(rng *rand.Rand, spec Spec, prof rules.Profile, cdOver bool) (rules.Plan, error) {
	dci := prof.CDTolerancePsNm <= dciMaxCDTolerancePsNm
	if cdOver && !dci {
		return rules.Plan{}, fmt.Errorf("%w: cd-over-limit needs a profile whose CD tolerance a regional route can exceed (≤ %d ps/nm); %s tolerates %g ps/nm",
			ErrSpec, dciMaxCDTolerancePsNm, prof.ID, prof.CDTolerancePsNm)
	}
	spacing := 50.0
	for _, s := range []float64{50, 75, 100, 150} {
		spacing = s
		if s >= 1.15*prof.BaudGBd {
			break
		}
	}
	plan := rules.Plan{
		Circuit: spec.Circuit, EndA: spec.EndA, EndZ: spec.EndZ, Ports: []string{spec.Port},
		Profile: prof.ID, Channels: int(4800 / spacing), ChannelSpacingGHz: spacing,
	}
	// A channel on the 50 GHz grid inside 191.5…195.9 THz (ITU-T G.694.1).
	plan.FrequencyTHz = round(optics.GridAnchorTHz+0.05*float64(rng.IntN(89)-32), 3)
	lambda := optics.WavelengthNmFromTHz(plan.FrequencyTHz)
	g652 := optics.FiberG652
	d := g652.DispersionPsNmKm(lambda)
	tx := prof.TxPowerMinDBm + 0.6*(prof.TxPowerMaxDBm-prof.TxPowerMinDBm)
	if prof.TxPowerMinDBm == 0 && prof.TxPowerMaxDBm == 0 {
		tx = -2
	}
	plan.TxPowerDBm = round(math.Round(tx*2)/2, 1)
	rxTarget := math.Round((prof.RxPowerMinDBm+0.55*(prof.RxPowerMaxDBm-prof.RxPowerMinDBm)+rng.Float64()-0.5)*2) / 2

	var lengths []float64
	for try := 0; ; try++ {
		lengths = lengths[:0]
		switch {
		case cdOver:
			total := prof.CDTolerancePsNm / d * (1.03 + 0.37*spec.Severity)
			n := int(math.Ceil(total / 95))
			for i := 0; i < n; i++ {
				lengths = append(lengths, round(total/float64(n), 1))
			}
		case dci:
			n := 1 + rng.IntN(2)
			maxKm := math.Min(100, 0.8*prof.CDTolerancePsNm/d)
			total := 30 + rng.Float64()*(maxKm-30)
			for i := 0; i < n; i++ {
				lengths = append(lengths, round(total/float64(n)*(0.85+0.3*rng.Float64()), 1))
			}
		default:
			n := 2 + rng.IntN(4) - try/8
			if n < 1 {
				n = 1
			}
			for i := 0; i < n; i++ {
				lengths = append(lengths, round(55+rng.Float64()*(40-float64(try)), 1))
			}
		}
		plan.Spans = plan.Spans[:0]
		plan.Amplifiers = plan.Amplifiers[:0]
		for i, l := range lengths {
			plan.Spans = append(plan.Spans, rules.Span{Name: fmt.Sprintf("span-%d", i+1), LengthKm: l, Fiber: "g652",
				Connectors: 2, Splices: int(math.Ceil(l / 5))})
		}
		// Draft amplifiers at a 0 dBm launch, find the optimum, then set the real launch.
		launch := 0.0
		for pass := 0; pass < 2; pass++ {
			plan.LaunchPowerDBm = launch
			plan.Amplifiers = planAmplifiers(rng, plan, g652, rxTarget, pass == 0)
			m, err := newLinkModel(plan, prof)
			if err != nil {
				return plan, err
			}
			l := m.evaluate(prof)
			if pass == 0 {
				if !math.IsNaN(l.OptimumLaunchDBm) {
					launch = math.Round((l.OptimumLaunchDBm-1-rng.Float64())*2) / 2
				}
				launch = math.Max(-3, math.Min(4, launch))
				continue
			}
			need := prof.RequiredOSNRdB + designMarginDB
			if cdOver || l.OSNRdB >= need || try >= 30 {
				return plan, nil
			}
		}
	}
}

// planAmplifiers places a booster (Tx → launch), line amplifiers restoring the launch power
// after every span but the last, and a preamplifier bringing the last span's output to rxTarget.
// Noise figures of 4.8–5.8 dB are typical of erbium amplifiers (common practice); they are drawn
// only on the first call (draw) and kept on the second.
func planAmplifiers(rng *rand.Rand, plan rules.Plan, f optics.Fiber, rxTarget float64, draw bool) []rules.Amplifier {
	n := len(plan.Spans)
	nf := make([]float64, n+1)
	if draw || len(plan.Amplifiers) != n+1 {
		for i := range nf {
			nf[i] = round(4.8+rng.Float64(), 1)
		}
	} else {
		for i, a := range plan.Amplifiers {
			nf[i] = a.NoiseFigureDB
		}
	}
	amps := []rules.Amplifier{{Name: "booster", AfterSpan: 0, GainDB: round(plan.LaunchPowerDBm-plan.TxPowerDBm, 1), NoiseFigureDB: nf[0]}}
	if amps[0].GainDB == 0 {
		amps[0].GainDB = 0.1
	}
	for i, s := range plan.Spans {
		loss := optics.SpanLossDB(s, f)
		if i < n-1 {
			amps = append(amps, rules.Amplifier{Name: fmt.Sprintf("line-amp-%d", i+1), AfterSpan: i + 1, GainDB: round(loss, 1), NoiseFigureDB: nf[i+1]})
		} else {
			g := round(rxTarget-(plan.LaunchPowerDBm-loss), 1)
			if g == 0 {
				g = 0.1 // a gain of 0 means "restore the launch power" in a plan (optics.ExpectLink)
			}
			amps = append(amps, rules.Amplifier{Name: "preamp", AfterSpan: n, GainDB: g, NoiseFigureDB: nf[n]})
		}
	}
	return amps
}
