package optics

import "math"

// PlanckJs is the Planck constant h in J·s, exact by the 2019 SI definition.
const PlanckJs = 6.62607015e-34

// Default per-item losses for plans that give counts without values. Common practice: 0.5 dB per
// mated connector pair and 0.1 dB per fusion splice are usual planning figures (the IEC 61753
// grade tables give lower typical values; from memory).
const (
	DefaultConnectorLossDB = 0.5
	DefaultSpliceLossDB    = 0.1
)

// DBmToMW converts dBm to mW: P = 10^(dBm/10).
func DBmToMW(dBm float64) float64 { return math.Pow(10, dBm/10) }

// MWToDBm converts mW to dBm: 10·log10(P/1 mW). −Inf at 0; NaN for negative power.
func MWToDBm(mW float64) float64 { return 10 * math.Log10(mW) }

// PhotonNoiseDBm returns h·ν·B in dBm: the power of one photon per second per hertz over the
// bandwidth bwGHz at the optical frequency fTHz. With B = 12.5 GHz (0.1 nm) at 1550 nm it is
// −57.953 dBm, the origin of the "58 dB rule" OSNR ≈ 58 + Pin − NF (amplifier textbooks; ITU-T
// G.680, from memory). Domain f > 0, B > 0; NaN otherwise.
func PhotonNoiseDBm(fTHz, bwGHz float64) float64 {
	if !(fTHz > 0) || !(bwGHz > 0) {
		return math.NaN()
	}
	return MWToDBm(PlanckJs * fTHz * 1e12 * bwGHz * 1e9 * 1e3)
}

// AmplifierOSNRdB returns the OSNR (dB, 12.5 GHz reference) added by one optical amplifier:
//
//	OSNR = Pin − NF − 10·log10(h·ν·Bref)   (all in dB/dBm)
//
// with Pin the per-channel input power (dBm), NF the noise figure (dB) and ν = fTHz. It uses the
// high-gain form P_ASE ≈ NF·h·ν·G·Bref (both polarizations), neglecting the −h·ν·Bref term that
// matters only below about 10 dB gain. Source: amplifier textbooks, e.g. E. Desurvire, Erbium-Doped
// Fiber Amplifiers (from memory); the formula is confirmed common practice.
func AmplifierOSNRdB(pinDBm, nfDB, fTHz float64) float64 {
	return pinDBm - nfDB - PhotonNoiseDBm(fTHz, ReferenceBandwidthGHz)
}

// CascadeOSNRdB combines the OSNRs (dB) of noise sources along a chain by adding their noise:
// 1/OSNR = Σ 1/OSNR_i. Empty input gives +Inf. Source: common practice (noise powers add).
func CascadeOSNRdB(osnrDB ...float64) float64 {
	inv := 0.0
	for _, o := range osnrDB {
		inv += 1 / DBToLinear(o)
	}
	return -LinearToDB(inv)
}

// CombineSNRdB combines independent SNR contributions (dB) in the same bandwidth, e.g. line ASE,
// nonlinear interference and the transceiver's back-to-back SNR: 1/SNR = Σ 1/SNR_i.
func CombineSNRdB(snrDB ...float64) float64 { return CascadeOSNRdB(snrDB...) }

// WDMComb describes the channels sharing a fibre for the nonlinear model: Channels equally spaced
// by SpacingGHz, all at the same symbol rate BaudGBd and launch power, rectangular spectra of
// width BaudGBd (Nyquist shaping).
type WDMComb struct {
	Channels   int
	SpacingGHz float64
	BaudGBd    float64
}

// NLIEta returns the nonlinear-interference coefficient η (1/mW²) of one span for the centre
// channel of comb, so that the NLI power in the channel's bandwidth Rs, referred to the span
// input, is P_NLI = η·P_ch³ (mW). It follows the incoherent GN model closed form of
// P. Poggiolini, "The GN model of non-linear propagation in uncompensated coherent optical
// systems", J. Lightwave Technol. 30(24), 2012, and P. Poggiolini et al., "The GN-model of fiber
// non-linear propagation and its applications", J. Lightwave Technol. 32(4), 2014 (the per-channel
// SCI + XCI sum):
//
//	G_NLI = (16/27)·γ²·L_eff²/(2π·|β2|·L_eff,a) · Σ_n G_n²·G_cut·ψ_n
//	ψ_cut = asinh(π²/2·|β2|·L_eff,a·Rs²)
//	ψ_n   = asinh(π²·|β2|·L_eff,a·Rs·(Δf_n + Rs/2)) − asinh(π²·|β2|·L_eff,a·Rs·(Δf_n − Rs/2))
//
// with G = P/Rs, L_eff = (1 − e^(−αL))/α, L_eff,a = 1/α (α the power attenuation in 1/km),
// γ and β2 of fibre f at lambdaNm, and P_NLI = G_NLI·Rs. Simplifications: flat rectangular
// spectra, the centre (worst) channel, no multi-channel (MCI) terms, a span long enough that
// e^(−αL) ≪ 1 for the asinh form, Gaussian-signal assumption (no modulation-format correction,
// which lowers NLI by roughly 1 dB for QAM; the GN model is thus slightly pessimistic).
// NaN when a parameter is missing or not positive.
func NLIEta(f Fiber, lengthKm, lambdaNm float64, comb WDMComb) float64 {
	n := comb.Channels
	if n < 1 {
		n = 1
	}
	rs := comb.BaudGBd / 1000 // THz
	df := comb.SpacingGHz / 1000
	alpha := f.AttenuationDBPerKm / (10 * math.Log10(math.E)) // 1/km
	gamma := f.GammaPerWKm(lambdaNm)                          // 1/(W·km)
	beta2 := math.Abs(f.Beta2Ps2PerKm(lambdaNm))              // ps²/km
	if !(rs > 0) || !(lengthKm > 0) || !(alpha > 0) || !(gamma > 0) || !(beta2 > 0) || (n > 1 && !(df >= rs)) {
		return math.NaN()
	}
	leff := (1 - math.Exp(-alpha*lengthKm)) / alpha
	leffA := 1 / alpha
	k := math.Pi * math.Pi * beta2 * leffA
	cut := (n - 1) / 2
	// With P = 1 W per channel, G = 1/Rs (W/THz) for every channel.
	g := 1 / rs
	sum := 0.0
	for i := 0; i < n; i++ {
		var psi float64
		if i == cut {
			psi = math.Asinh(k / 2 * rs * rs)
		} else {
			d := math.Abs(float64(i-cut)) * df
			psi = math.Asinh(k*rs*(d+rs/2)) - math.Asinh(k*rs*(d-rs/2))
		}
		sum += g * g * g * psi
	}
	gNLI := 16.0 / 27 * gamma * gamma * leff * leff / (2 * math.Pi * beta2 * leffA) * sum // W/THz at 1 W
	etaPerW2 := gNLI * rs                                                                 // P_NLI(W) = η·P³(W³)
	return etaPerW2 * 1e-6                                                                // 1/mW²
}

// OptimumLaunchPowerDBm returns the per-channel launch power that maximizes
// SNR = P/(P_ASE + η·P³): P_opt = (P_ASE/(2η))^(1/3), where aseMW is the accumulated ASE power in
// the channel bandwidth referred to the span input (mW) and etaPerMW2 the accumulated NLI
// coefficient (1/mW²). At P_opt the NLI is half the ASE and the SNR is 1.76 dB below the
// ASE-only value. Source: Poggiolini 2012 (optimum launch power in the GN model).
func OptimumLaunchPowerDBm(aseMW, etaPerMW2 float64) float64 {
	if !(aseMW > 0) || !(etaPerMW2 > 0) {
		return math.NaN()
	}
	return MWToDBm(math.Cbrt(aseMW / (2 * etaPerMW2)))
}
