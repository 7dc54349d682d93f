package optics

import (
	"fmt"
	"math"
	"strings"
)

// Modulation is a dual-polarization coherent modulation format.
type Modulation int

// The modulation formats beatnote models. The zero value is not a valid format.
const (
	DPQPSK  Modulation = iota + 1 // 4 points per polarization, 2 bits/symbol
	DP8QAM                        // rectangular 4×2, 3 bits/symbol
	DP16QAM                       // square 4×4, 4 bits/symbol
	DP32QAM                       // cross (6×6 less the corners), 5 bits/symbol
	DP64QAM                       // square 8×8, 6 bits/symbol
)

var modulationNames = map[Modulation]string{
	DPQPSK: "dp-qpsk", DP8QAM: "dp-8qam", DP16QAM: "dp-16qam", DP32QAM: "dp-32qam", DP64QAM: "dp-64qam",
}

// Modulations lists every supported format in order of spectral efficiency.
func Modulations() []Modulation { return []Modulation{DPQPSK, DP8QAM, DP16QAM, DP32QAM, DP64QAM} }

// String returns the format's canonical name, e.g. "dp-16qam".
func (m Modulation) String() string {
	if s, ok := modulationNames[m]; ok {
		return s
	}
	return fmt.Sprintf("Modulation(%d)", int(m))
}

// Valid reports whether m is one of the supported formats.
func (m Modulation) Valid() bool { _, ok := modulationNames[m]; return ok }

// BitsPerSymbol is log2 M, the bits carried per symbol in one polarization.
func (m Modulation) BitsPerSymbol() int {
	switch m {
	case DPQPSK:
		return 2
	case DP8QAM:
		return 3
	case DP16QAM:
		return 4
	case DP32QAM:
		return 5
	case DP64QAM:
		return 6
	}
	return 0
}

// Points is M, the constellation size per polarization.
func (m Modulation) Points() int { return 1 << m.BitsPerSymbol() }

// nameSeparators drops the separators ignored in format and fibre names (a Replacer is safe
// for concurrent use; building one per call cost more than the rest of a port's analysis).
var nameSeparators = strings.NewReplacer("-", "", "_", "", " ", "", ".", "")

// ParseModulation reads a format name. Case, spaces, dashes and underscores are ignored and the
// "dp-" prefix is optional: "dp-16qam", "DP-16QAM", "16qam", "dp_qpsk", "qpsk", "4qam" all parse.
func ParseModulation(s string) (Modulation, error) {
	k := strings.ToLower(s)
	k = nameSeparators.Replace(k)
	k = strings.TrimPrefix(k, "dp")
	k = strings.TrimPrefix(k, "pm") // "PM-QPSK" is the same thing under another common name
	switch k {
	case "qpsk", "4qam":
		return DPQPSK, nil
	case "8qam":
		return DP8QAM, nil
	case "16qam":
		return DP16QAM, nil
	case "32qam":
		return DP32QAM, nil
	case "64qam":
		return DP64QAM, nil
	}
	return 0, fmt.Errorf("optics: unknown modulation %q (want one of dp-qpsk, dp-8qam, dp-16qam, dp-32qam, dp-64qam)", s)
}

// QFromBER returns the linear Q-factor equivalent to a bit error ratio under the Gaussian-noise
// assumption: Q = √2·erfc⁻¹(2·BER), the inverse of BER = ½·erfc(Q/√2).
// Domain 0 ≤ BER ≤ 0.5 (Q = 0 at 0.5, +Inf at 0), accurate to 1e-9 relative down to BER
// 1e-300; NaN outside. Source: common practice.
func QFromBER(ber float64) float64 {
	if !(ber >= 0 && ber <= 0.5) {
		return math.NaN()
	}
	if ber == 0 {
		return math.Inf(1)
	}
	var q float64
	if ber > 1e-12 {
		q = math.Sqrt2 * math.Erfcinv(2*ber)
	} else {
		// math.Erfcinv(x) is computed as Erfinv(1−x), which loses relative precision as x
		// shrinks and overflows below about 1e-16. Start instead from the tail asymptote
		// BER ≈ exp(−q²/2)/(q·√(2π)): q² ≈ L − ln L − ln 2π with L = −2·ln BER.
		l := -2 * math.Log(ber)
		q = math.Sqrt(l - math.Log(l) - math.Log(2*math.Pi))
	}
	// Polish with Newton steps on ln BER(q), using math.Erfc, which stays accurate in the tail.
	if ber < 0.1 {
		for range 6 {
			p := 0.5 * math.Erfc(q/math.Sqrt2)
			phi := math.Exp(-q*q/2) / math.Sqrt(2*math.Pi)
			step := (math.Log(p) - math.Log(ber)) * p / phi
			q += step
			if math.Abs(step) < 1e-15*q {
				break
			}
		}
	}
	return q
}

// QdBFromBER returns Q in dB, 20·log10 Q with Q = √2·erfc⁻¹(2·BER). Domain 0 < BER < 0.5
// (−Inf at 0.5); NaN outside. Source: common practice.
func QdBFromBER(ber float64) float64 { return 20 * math.Log10(QFromBER(ber)) }

// BERFromQ returns BER = ½·erfc(Q/√2) for a linear Q ≥ 0; NaN for negative or NaN Q.
// Source: common practice (Gaussian-noise assumption).
func BERFromQ(q float64) float64 {
	if !(q >= 0) {
		return math.NaN()
	}
	return 0.5 * math.Erfc(q/math.Sqrt2)
}

// BERFromQdB returns BER = ½·erfc(Q/√2) with Q = 10^(QdB/20). Any real QdB; NaN for NaN.
func BERFromQdB(qDB float64) float64 { return BERFromQ(math.Pow(10, qDB/20)) }

// DBToLinear converts a power ratio in dB to linear: 10^(dB/10).
func DBToLinear(db float64) float64 { return math.Pow(10, db/10) }

// LinearToDB converts a linear power ratio to dB: 10·log10(x). −Inf at 0, NaN for x < 0.
func LinearToDB(x float64) float64 { return 10 * math.Log10(x) }

// BERFromSNR returns the pre-FEC bit error ratio of Gray-coded format m in additive white
// Gaussian noise at a linear SNR per symbol esn0 = Es/N0 in one polarization (for a
// dual-polarization signal the two tributaries are independent and have the same BER).
//
//   - QPSK, 8QAM (rectangular 4×2), 16QAM (4×4) and 64QAM (8×8) are rectangular I×J QAM: the BER
//     is exact, from the Gray-coded PAM bit error probabilities of K. Cho and D. Yoon, "On the
//     general BER expression of one- and two-dimensional amplitude modulations", IEEE Trans.
//     Commun. 50(7), 2002, eqs. (10)–(16), with d²/N0 = 3·(Es/N0)/(I² + J² − 2). For QPSK this is
//     Pb = ½·erfc(√(Es/(2N0))) = Q(√(Es/N0)).
//   - 32QAM is the cross constellation (a 6×6 square less its four corners, mean energy 20·d²).
//     It cannot be perfectly Gray-coded and has no closed form; beatnote approximates it by the
//     exact BER of Gray-coded rectangular 8×4 QAM with the same minimum distance, which has the
//     same number of adjacent point pairs (52, so the same nearest-neighbour asymptote
//     Pb ≈ (3.25/5)·Q(d/σ)), evaluated at the cross constellation's energy: d²/N0 = (Es/N0)/20.
//     It tends to ½ at zero SNR. A simulation of the true cross constellation (see
//     cross32_test.go) puts SER/5, the BER of an ideal one-bit-per-error labeling, 2 % below the
//     model at BER 1e-2…2e-2; a real quasi-Gray labeling adds a few per cent of two-bit errors,
//     so the model is within a few per cent of it (hundredths of a dB in SNR).
//
// Domain esn0 ≥ 0 (BER → 0.5 as esn0 → 0); NaN for negative or NaN esn0 or an unknown format.
func BERFromSNR(m Modulation, esn0 float64) float64 {
	if !(esn0 >= 0) || !m.Valid() {
		return math.NaN()
	}
	switch m {
	case DPQPSK:
		return rectQAMBER(2, 2, esn0/2)
	case DP8QAM:
		return rectQAMBER(4, 2, 3*esn0/18)
	case DP16QAM:
		return rectQAMBER(4, 4, 3*esn0/30)
	case DP32QAM:
		return rectQAMBER(8, 4, esn0/20)
	case DP64QAM:
		return rectQAMBER(8, 8, 3*esn0/126)
	}
	return math.NaN()
}

// BERFromSNRdB is BERFromSNR with the SNR per symbol in dB.
func BERFromSNRdB(m Modulation, esn0DB float64) float64 {
	return BERFromSNR(m, DBToLinear(esn0DB))
}

// rectQAMBER is the exact Gray-coded BER of rectangular I×J QAM at d²/N0 = dd (half the minimum
// distance is d), after Cho & Yoon 2002: the bit error probability of bit k of Gray-coded I-PAM is
//
//	P_I(k) = (1/I)·Σ_{i=0}^{(1−2^−k)I−1} (−1)^⌊i·2^(k−1)/I⌋ · (2^(k−1) − ⌊i·2^(k−1)/I + ½⌋) · erfc((2i+1)·√dd)
//
// and the BER is (Σ_k P_I(k) + Σ_l P_J(l)) / log2(I·J).
func rectQAMBER(I, J int, dd float64) float64 {
	x := math.Sqrt(dd)
	sum := pamBitErrors(I, x) + pamBitErrors(J, x)
	return sum / math.Log2(float64(I*J))
}

// pamBitErrors returns Σ_k P_I(k) for Gray-coded I-PAM (I a power of two) at x = d/√N0.
func pamBitErrors(I int, x float64) float64 {
	total := 0.0
	for k := 1; 1<<k <= I; k++ {
		p := 1 << (k - 1) // 2^(k−1)
		upper := I - I>>k // (1 − 2^−k)·I
		s := 0.0
		for i := 0; i < upper; i++ {
			f := i * p / I
			w := float64(p - (2*i*p+I)/(2*I)) // 2^(k−1) − ⌊i·2^(k−1)/I + ½⌋
			if f%2 == 1 {
				w = -w
			}
			s += w * math.Erfc(float64(2*i+1)*x)
		}
		total += s / float64(I)
	}
	return total
}

// SNRdBFromBER returns the SNR per symbol Es/N0 in dB at which format m reaches the given BER in
// AWGN: the numerical inverse of BERFromSNR. BERFromSNR falls monotonically with SNR, so the root
// of g(s) = ln BER(s) − ln BER is kept bracketed and found by the Illinois variant of regula falsi
// (superlinear, never leaves the bracket) to 1e-9 dB. Domain 0 < BER ≤ 0.5, robust over the
// working range 1e-15…0.5; −Inf at BER 0.5 (zero SNR); NaN outside the domain or when the BER is
// below what a double can represent at 60 dB.
func SNRdBFromBER(m Modulation, ber float64) float64 {
	if !m.Valid() || !(ber > 0 && ber <= 0.5) {
		return math.NaN()
	}
	if ber == 0.5 {
		return math.Inf(-1)
	}
	target := math.Log(ber)
	g := func(sDB float64) float64 { return math.Log(BERFromSNRdB(m, sDB)) - target }
	lo, hi := -60.0, 60.0
	glo, ghi := g(lo), g(hi)
	for glo < 0 { // BER within ~1e-4 of ½: widen downward
		if lo < -400 {
			return math.Inf(-1)
		}
		lo -= 60
		glo = g(lo)
	}
	if !(ghi < 0) {
		return math.NaN()
	}
	side := 0
	for range 200 {
		s := hi - ghi*(hi-lo)/(ghi-glo)
		if !(s > lo && s < hi) {
			s = 0.5 * (lo + hi)
		}
		gs := g(s)
		if gs > 0 {
			lo, glo = s, gs
			if side == +1 {
				ghi /= 2
			}
			side = +1
		} else {
			hi, ghi = s, gs
			if side == -1 {
				glo /= 2
			}
			side = -1
		}
		if hi-lo < 1e-9 || math.Abs(gs) < 1e-13 {
			return s
		}
	}
	return 0.5 * (lo + hi)
}
