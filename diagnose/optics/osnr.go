package optics

import "math"

// ReferenceBandwidthGHz is the OSNR reference (noise) bandwidth, 12.5 GHz ≈ 0.1 nm at 1550 nm.
// Source: common practice, used by ITU-T G.680 and G.697 (from memory).
const ReferenceBandwidthGHz = 12.5

// OSNRdBFromSNRdB converts an SNR per symbol (Es/N0 of one polarization tributary, dB) to the
// OSNR in the 12.5 GHz reference bandwidth (dB) of a signal with symbol rate baudGBd (GBd) and
// polarizations p (1 or 2):
//
//	OSNR = p·Rs/(2·Bref)·SNR, so OSNR_dB = SNR_dB + 10·log10(p·Rs/(2·Bref)).
//
// Source: R.-J. Essiambre et al., "Capacity limits of optical fiber networks", J. Lightwave
// Technol. 28(4), 2010 (relation between OSNR and SNR, ideal Nyquist receiver filter). Domain
// baudGBd > 0, p ∈ {1, 2}; NaN otherwise.
func OSNRdBFromSNRdB(snrDB, baudGBd float64, polarizations int) float64 {
	off := osnrOffsetDB(baudGBd, polarizations)
	return snrDB + off
}

// SNRdBFromOSNRdB is the inverse of OSNRdBFromSNRdB: SNR_dB = OSNR_dB − 10·log10(p·Rs/(2·Bref)).
func SNRdBFromOSNRdB(osnrDB, baudGBd float64, polarizations int) float64 {
	return osnrDB - osnrOffsetDB(baudGBd, polarizations)
}

func osnrOffsetDB(baudGBd float64, p int) float64 {
	if !(baudGBd > 0) || (p != 1 && p != 2) {
		return math.NaN()
	}
	return 10 * math.Log10(float64(p)*baudGBd/(2*ReferenceBandwidthGHz))
}

// RequiredOSNRdB returns the OSNR (dB, 0.1 nm) at which format m at baudGBd reaches fecBER:
// the theoretical Es/N0 from SNRdBFromBER plus the module's implementation penalty penaltyDB
// (the extra SNR a real transceiver needs over AWGN theory), converted by OSNRdBFromSNRdB.
// NaN when any input is outside its domain.
func RequiredOSNRdB(m Modulation, baudGBd float64, polarizations int, fecBER, penaltyDB float64) float64 {
	return OSNRdBFromSNRdB(SNRdBFromBER(m, fecBER)+penaltyDB, baudGBd, polarizations)
}

// QMarginDB returns the Q-margin in dB: Q_dB(measured BER) − Q_dB(FEC threshold BER), with
// Q_dB = 20·log10(√2·erfc⁻¹(2·BER)). Positive means the link runs better than the threshold.
// Source: common practice.
func QMarginDB(measuredBER, thresholdBER float64) float64 {
	return QdBFromBER(measuredBER) - QdBFromBER(thresholdBER)
}

// QMarginFromQdB is QMarginDB when the module reports Q (dB) directly.
func QMarginFromQdB(measuredQdB, thresholdBER float64) float64 {
	return measuredQdB - QdBFromBER(thresholdBER)
}

// OSNRMarginDB returns measured minus required OSNR (dB, same reference bandwidth).
func OSNRMarginDB(measuredOSNRdB, requiredOSNRdB float64) float64 {
	return measuredOSNRdB - requiredOSNRdB
}
