package optics

import (
	"fmt"
	"math"

	"github.com/beatnote/beatnote/rules"
)

// DefaultNoiseFigureDB is assumed for an amplifier whose noise figure the plan leaves at 0:
// 5.5 dB, a usual C-band EDFA figure (common practice).
const DefaultNoiseFigureDB = 5.5

// SpanExpectation is the model's view of one span of a plan.
type SpanExpectation struct {
	Name     string  `json:"name"`
	Fiber    string  `json:"fiber"`
	LengthKm float64 `json:"length_km"`
	// DispersionPsNmKm is D at the channel wavelength; CDPsNm = D·L.
	DispersionPsNmKm float64 `json:"dispersion_ps_nm_km"`
	CDPsNm           float64 `json:"cd_ps_nm"`
	MeanDGDPs        float64 `json:"mean_dgd_ps"`
	// LossDB is the span loss used: MeasuredLossDB when given, else α·L + connectors + splices.
	LossDB       float64 `json:"loss_db"`
	LossMeasured bool    `json:"loss_measured"`
	// LaunchPowerDBm is the per-channel power entering the span.
	LaunchPowerDBm float64 `json:"launch_power_dbm"`
	// NLISNRdB is the SNR (channel bandwidth) this span's nonlinear interference alone would
	// leave; +Inf when the nonlinear model could not run.
	NLISNRdB float64 `json:"nli_snr_db"`
}

// AmplifierExpectation is the model's view of one amplifier of a plan.
type AmplifierExpectation struct {
	Name           string  `json:"name"`
	AfterSpan      int     `json:"after_span"`
	InputPowerDBm  float64 `json:"input_power_dbm"`
	GainDB         float64 `json:"gain_db"`
	OutputPowerDBm float64 `json:"output_power_dbm"`
	NoiseFigureDB  float64 `json:"noise_figure_db"`
	// OSNRdB is this amplifier's own ASE OSNR (0.1 nm): Pin − NF − 10·log10(h·ν·Bref).
	OSNRdB float64 `json:"osnr_db"`
}

// LinkExpectation is what the physics models expect a plan to show at the receiver. Powers are
// per channel. OSNR figures use the 12.5 GHz reference bandwidth; SNR figures the symbol-rate
// bandwidth (Es/N0 per polarization). A figure with no contribution is +Inf (e.g. ASE OSNR of an
// unamplified link); a figure the inputs do not allow is NaN.
type LinkExpectation struct {
	FrequencyTHz  float64 `json:"frequency_thz"`
	WavelengthNm  float64 `json:"wavelength_nm"`
	RouteLengthKm float64 `json:"route_length_km"`
	CDPsNm        float64 `json:"cd_ps_nm"`
	MeanDGDPs     float64 `json:"mean_dgd_ps"`
	// TotalLossDB sums span losses and the plan's extra loss.
	TotalLossDB float64 `json:"total_loss_db"`
	RxPowerDBm  float64 `json:"rx_power_dbm"`
	// ASEOSNRdB is the amplifier chain's OSNR from ASE alone.
	ASEOSNRdB float64 `json:"ase_osnr_db"`
	// NLISNRdB is the SNR left by nonlinear interference alone (GN model, spans added
	// incoherently).
	NLISNRdB float64 `json:"nli_snr_db"`
	// GSNRdB is the generalized line SNR: ASE and NLI combined.
	GSNRdB float64 `json:"gsnr_db"`
	// GOSNRdB is GSNRdB expressed as an OSNR in 0.1 nm.
	GOSNRdB float64 `json:"gosnr_db"`
	// TotalSNRdB adds the transceiver's back-to-back SNR (profile) to the GSNR; equal to GSNRdB
	// when the profile gives none.
	TotalSNRdB float64 `json:"total_snr_db"`
	// OptimumLaunchPowerDBm is the per-channel launch power that would maximize the GSNR if every
	// span were launched at the same power and amplifiers restored it; NaN when not computable.
	OptimumLaunchPowerDBm float64                `json:"optimum_launch_power_dbm"`
	Spans                 []SpanExpectation      `json:"spans"`
	Amplifiers            []AmplifierExpectation `json:"amplifiers"`
	// Assumptions lists every default the model had to take, in words.
	Assumptions []string `json:"assumptions"`
}

// PlanError is a plan the models cannot use, naming the element at fault.
type PlanError struct {
	Element string // e.g. `span 2 "B-C"`, `amplifier 1 "pre-C"`, "plan"
	Field   string // YAML field name
	Err     error
}

func (e *PlanError) Error() string {
	return fmt.Sprintf("link plan: %s: %s: %v", e.Element, e.Field, e.Err)
}
func (e *PlanError) Unwrap() error { return e.Err }

// SpanFiber resolves a plan span's fibre at lambdaNm, applying the span's overrides of
// dispersion, slope, attenuation and PMD coefficient. Fiber "custom" needs dispersion_ps_nm_km.
func SpanFiber(s rules.Span, lambdaNm float64) (Fiber, error) {
	var f Fiber
	if s.Fiber == "custom" {
		if s.DispersionPsNmKm == nil {
			return Fiber{}, fmt.Errorf("fibre \"custom\" needs dispersion_ps_nm_km")
		}
		f = FiberG652
	} else {
		var err error
		if f, err = FiberByName(s.Fiber); err != nil {
			return Fiber{}, err
		}
	}
	if s.DispersionPsNmKm != nil {
		slope := f.SlopePsNm2Km(lambdaNm)
		if s.SlopePsNm2Km != nil {
			slope = *s.SlopePsNm2Km
		}
		name := f.Name
		f = CustomFiber(f, lambdaNm, *s.DispersionPsNmKm, slope)
		if s.Fiber != "custom" {
			f.Name = name + " (D given)"
		}
	}
	if s.AttenuationDBPerKm != nil {
		f.AttenuationDBPerKm = *s.AttenuationDBPerKm
	}
	if s.PMDCoefficientPsSqrtKm != nil {
		f.PMDCoefficientPsSqrtKm = *s.PMDCoefficientPsSqrtKm
	}
	return f, nil
}

// SpanLossDB is the planned loss of span s (dB): its measured_loss_db when given, otherwise the
// link-budget sum
//
//	L = α·ℓ + n_c·a_c + n_s·a_s
//
// with α the fibre's attenuation (dB/km), ℓ the length (km), n_c connectors of a_c dB and n_s
// splices of a_s dB each (DefaultConnectorLossDB and DefaultSpliceLossDB when the span gives no
// value). Common practice. Domain: ℓ ≥ 0 km, counts ≥ 0.
func SpanLossDB(s rules.Span, f Fiber) float64 {
	if s.MeasuredLossDB != nil {
		return *s.MeasuredLossDB
	}
	cl, sl := DefaultConnectorLossDB, DefaultSpliceLossDB
	if s.ConnectorLossDB != nil {
		cl = *s.ConnectorLossDB
	}
	if s.SpliceLossDB != nil {
		sl = *s.SpliceLossDB
	}
	return f.AttenuationDBPerKm*s.LengthKm + float64(s.Connectors)*cl + float64(s.Splices)*sl
}

// ExpectLink runs the models over a link plan for a module profile: accumulated CD (Σ D·L),
// mean DGD (quadrature sum), per-channel power along the chain and at the receiver, amplifier ASE
// OSNR (1/OSNR summed), GN-model NLI per span (incoherent sum), their combination with the
// transceiver's back-to-back SNR, and the optimum launch power. Each default it takes is listed in
// Assumptions:
//   - frequency 193.1 THz when the plan gives none; 2 polarizations when the profile gives none;
//   - connector and splice losses DefaultConnectorLossDB / DefaultSpliceLossDB when not given;
//   - an amplifier with gain 0 restores the launch power (launch_power_dbm, else tx_power_dbm);
//   - noise figure DefaultNoiseFigureDB when 0;
//   - extra_loss_db is taken just before the receiver, after the last amplifier;
//   - 1 channel when channels is 0; spacing max(50 GHz, 1.15·Rs rounded up to 12.5 GHz) when 0.
func ExpectLink(plan rules.Plan, prof rules.Profile) (LinkExpectation, error) {
	var e LinkExpectation
	note := func(format string, a ...any) { e.Assumptions = append(e.Assumptions, fmt.Sprintf(format, a...)) }

	e.FrequencyTHz = plan.FrequencyTHz
	if e.FrequencyTHz == 0 {
		e.FrequencyTHz = GridAnchorTHz
		note("channel frequency %.4g THz (the plan gives none)", GridAnchorTHz)
	}
	if !(e.FrequencyTHz >= 150 && e.FrequencyTHz <= 250) {
		return e, &PlanError{"plan", "frequency_thz", fmt.Errorf("%g THz is outside 150…250 THz", plan.FrequencyTHz)}
	}
	lambda := WavelengthNmFromTHz(e.FrequencyTHz)
	e.WavelengthNm = lambda
	if len(plan.Spans) == 0 {
		return e, &PlanError{"plan", "spans", fmt.Errorf("no spans")}
	}
	pol := prof.PolarizationCount()
	if prof.Polarizations == 0 {
		note("2 polarizations (the profile gives none)")
	}
	baud := prof.BaudGBd

	target := plan.TxPowerDBm
	if plan.LaunchPowerDBm != 0 {
		target = plan.LaunchPowerDBm
	}

	comb := WDMComb{Channels: plan.Channels, SpacingGHz: plan.ChannelSpacingGHz, BaudGBd: baud}
	if comb.Channels <= 0 {
		comb.Channels = 1
		note("1 channel on the line for the nonlinear model (the plan gives no channel count)")
	}
	if comb.Channels > 1 && comb.SpacingGHz == 0 && baud > 0 {
		comb.SpacingGHz = math.Max(50, math.Ceil(1.15*baud/12.5)*12.5)
		note("channel spacing %.4g GHz (the plan gives none)", comb.SpacingGHz)
	}
	if comb.Channels > 1 && baud > 0 && comb.SpacingGHz < baud {
		return e, &PlanError{"plan", "channel_spacing_ghz", fmt.Errorf("%g GHz is narrower than the %g GBd symbol rate", comb.SpacingGHz, baud)}
	}
	if !(baud > 0) {
		note("no nonlinear interference or SNR figures: the profile gives no symbol rate")
	}

	// Amplifiers by position, in plan order.
	ampsAfter := make(map[int][]int)
	for i, a := range plan.Amplifiers {
		if a.AfterSpan < 0 || a.AfterSpan > len(plan.Spans) {
			return e, &PlanError{fmt.Sprintf("amplifier %d %q", i+1, a.Name), "after_span",
				fmt.Errorf("%d is outside 0…%d", a.AfterSpan, len(plan.Spans))}
		}
		ampsAfter[a.AfterSpan] = append(ampsAfter[a.AfterSpan], i)
	}

	hvB := DBmToMW(PhotonNoiseDBm(e.FrequencyTHz, ReferenceBandwidthGHz)) // mW in 0.1 nm
	p := plan.TxPowerDBm
	aseInv := 0.0      // Σ 1/OSNR_i, 0.1 nm
	nliInv := 0.0      // Σ η_i·P_i², channel bandwidth
	etaSum := 0.0      // Σ η_i, 1/mW²
	aseAtLaunch := 0.0 // Σ NF·h·ν·Bref·(P_launch/P_in), mW, for the optimum launch power
	nliOK := baud > 0
	prevLaunch := p

	runAmps := func(pos int) {
		for _, i := range ampsAfter[pos] {
			a := plan.Amplifiers[i]
			nf := a.NoiseFigureDB
			if nf == 0 {
				nf = DefaultNoiseFigureDB
				note("amplifier %q noise figure %.3g dB (common practice)", a.Name, nf)
			}
			gain := a.GainDB
			if gain == 0 {
				gain = target - p
				note("amplifier %q gain %.3g dB to restore %.3g dBm per channel", a.Name, gain, target)
			}
			ax := AmplifierExpectation{Name: a.Name, AfterSpan: a.AfterSpan, InputPowerDBm: p, GainDB: gain,
				OutputPowerDBm: p + gain, NoiseFigureDB: nf, OSNRdB: AmplifierOSNRdB(p, nf, e.FrequencyTHz)}
			aseInv += 1 / DBToLinear(ax.OSNRdB)
			if pos > 0 {
				aseAtLaunch += DBToLinear(nf) * hvB * DBmToMW(prevLaunch) / DBmToMW(p)
			}
			e.Amplifiers = append(e.Amplifiers, ax)
			p += gain
		}
	}

	runAmps(0)
	if plan.LaunchPowerDBm != 0 && len(ampsAfter[0]) == 0 && plan.LaunchPowerDBm != plan.TxPowerDBm {
		note("span 1 is launched at the transmitter's %.3g dBm (no booster in the plan); launch_power_dbm %.3g dBm applies after amplifiers given no gain",
			plan.TxPowerDBm, plan.LaunchPowerDBm)
	}
	var fs []FiberSpan
	for i, s := range plan.Spans {
		elem := fmt.Sprintf("span %d %q", i+1, s.Name)
		if !(s.LengthKm > 0) {
			return e, &PlanError{elem, "length_km", fmt.Errorf("%g km: a span needs a positive length", s.LengthKm)}
		}
		if s.Fiber == "" && s.DispersionPsNmKm == nil {
			note("%s: fibre type g652 (the plan gives none)", elem)
		}
		f, err := SpanFiber(s, lambda)
		if err != nil {
			return e, &PlanError{elem, "fiber", err}
		}
		se := SpanExpectation{Name: s.Name, Fiber: f.Name, LengthKm: s.LengthKm, LaunchPowerDBm: p,
			DispersionPsNmKm: f.DispersionPsNmKm(lambda), MeanDGDPs: MeanDGDPs(f.PMDCoefficientPsSqrtKm, s.LengthKm),
			NLISNRdB: math.Inf(1)}
		se.CDPsNm = se.DispersionPsNmKm * s.LengthKm
		se.LossDB, se.LossMeasured = SpanLossDB(s, f), s.MeasuredLossDB != nil
		if !se.LossMeasured {
			if s.ConnectorLossDB == nil && s.Connectors > 0 {
				note("%s: %.2g dB per connector (common practice)", elem, DefaultConnectorLossDB)
			}
			if s.SpliceLossDB == nil && s.Splices > 0 {
				note("%s: %.2g dB per splice (common practice)", elem, DefaultSpliceLossDB)
			}
		}
		if nliOK {
			eta := NLIEta(f, s.LengthKm, lambda, comb)
			if math.IsNaN(eta) {
				nliOK = false
				note("%s: nonlinear model skipped (fibre parameters incomplete)", elem)
			} else {
				pl := DBmToMW(p)
				nliInv += eta * pl * pl
				etaSum += eta
				se.NLISNRdB = -LinearToDB(eta * pl * pl)
			}
		}
		fs = append(fs, FiberSpan{Fiber: f, LengthKm: s.LengthKm})
		e.RouteLengthKm += s.LengthKm
		e.CDPsNm += se.CDPsNm
		e.TotalLossDB += se.LossDB
		e.Spans = append(e.Spans, se)
		prevLaunch = p
		p -= se.LossDB
		runAmps(i + 1)
	}
	e.MeanDGDPs = RouteMeanDGDPs(fs)
	if plan.ExtraLossDB != 0 {
		p -= plan.ExtraLossDB
		e.TotalLossDB += plan.ExtraLossDB
	}
	e.RxPowerDBm = p

	e.ASEOSNRdB = -LinearToDB(aseInv)
	e.NLISNRdB, e.GSNRdB, e.GOSNRdB, e.TotalSNRdB, e.OptimumLaunchPowerDBm = math.NaN(), math.NaN(), math.NaN(), math.NaN(), math.NaN()
	if baud > 0 {
		aseSNR := SNRdBFromOSNRdB(e.ASEOSNRdB, baud, pol)
		if nliOK {
			e.NLISNRdB = -LinearToDB(nliInv)
			e.GSNRdB = CombineSNRdB(aseSNR, e.NLISNRdB)
			// ASE referred to the launch, in the channel bandwidth: Bref → Rs·p/2.
			aseRs := aseAtLaunch * baud * float64(pol) / (2 * ReferenceBandwidthGHz)
			e.OptimumLaunchPowerDBm = OptimumLaunchPowerDBm(aseRs, etaSum)
		} else {
			e.GSNRdB = aseSNR
		}
		e.GOSNRdB = OSNRdBFromSNRdB(e.GSNRdB, baud, pol)
		e.TotalSNRdB = e.GSNRdB
		if prof.BackToBackSNRdB > 0 {
			e.TotalSNRdB = CombineSNRdB(e.GSNRdB, prof.BackToBackSNRdB)
		}
	}
	return e, nil
}
