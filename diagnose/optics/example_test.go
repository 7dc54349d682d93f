package optics_test

import (
	"fmt"

	"github.com/beatnote/beatnote/diagnose/optics"
	"github.com/beatnote/beatnote/rules"
)

// The 7 % hard-decision FEC limit, pre-FEC BER 3.8e-3, as a Q-factor.
func ExampleQdBFromBER() {
	fmt.Printf("Q = %.3f dB (linear %.3f)\n", optics.QdBFromBER(3.8e-3), optics.QFromBER(3.8e-3))
	// Output: Q = 8.528 dB (linear 2.669)
}

// The SNR per symbol a DP-16QAM signal needs to reach the 400ZR-class FEC threshold, and the
// OSNR that means at 59.84375 GBd.
func ExampleSNRdBFromBER() {
	esnr := optics.SNRdBFromBER(optics.DP16QAM, 1.22e-2)
	osnr := optics.OSNRdBFromSNRdB(esnr, 59.84375, 2)
	fmt.Printf("Es/N0 %.3f dB, OSNR %.2f dB in 0.1 nm\n", esnr, osnr)
	// Output: Es/N0 13.589 dB, OSNR 20.39 dB in 0.1 nm
}

func ExampleBERFromSNRdB() {
	fmt.Printf("%.4g\n", optics.BERFromSNRdB(optics.DP16QAM, 14))
	// Output: 0.009376
}

func ExampleOSNRdBFromSNRdB() {
	// At 32 GBd, dual polarization, OSNR in 0.1 nm is SNR + 10·log10(32/12.5).
	fmt.Printf("%.3f dB\n", optics.OSNRdBFromSNRdB(10, 32, 2))
	// Output: 14.082 dB
}

func ExampleMaxwellExceedProbability() {
	// The PMD design rule: the instantaneous DGD exceeds three times its mean with probability
	// about 4e-5.
	fmt.Printf("%.3g\n", optics.MaxwellExceedProbability(15, 5))
	// Output: 4.2e-05
}

func ExampleMaxwellQuantile() {
	fmt.Printf("%.3f ps\n", optics.MaxwellQuantile(1e-5, 10))
	// Output: 31.893 ps
}

func ExampleWavelengthNmFromTHz() {
	g, n := optics.NearestGridTHz(193.104, 6.25)
	fmt.Printf("%.3f nm; nearest grid %.5f THz (n = %d)\n", optics.WavelengthNmFromTHz(193.1), g, n)
	// Output: 1552.524 nm; nearest grid 193.10625 THz (n = 1)
}

func ExampleImpliedLengthKm() {
	// 1801 ps/nm on fibre at the G.652 dispersion bound (18.01 ps/(nm·km) at 1550 nm).
	fmt.Printf("%.0f km\n", optics.ImpliedLengthKm(1801, optics.FiberG652Bound, 1550))
	// Output: 100 km
}

func ExamplePhotonNoiseDBm() {
	// The "58 dB rule": h·ν·Bref ≈ −58 dBm at 1550 nm in 0.1 nm, so OSNR ≈ 58 + Pin − NF.
	fmt.Printf("%.3f dBm; one amplifier at −20 dBm, NF 5 dB: %.2f dB\n",
		optics.PhotonNoiseDBm(193.1, 12.5), optics.AmplifierOSNRdB(-20, 5, 193.1))
	// Output: -57.961 dBm; one amplifier at −20 dBm, NF 5 dB: 32.96 dB
}

func ExampleExpectLink() {
	plan := rules.Plan{
		FrequencyTHz: 193.1, TxPowerDBm: 0, Channels: 40, ChannelSpacingGHz: 100,
		Spans: []rules.Span{
			{Name: "west", LengthKm: 90, Fiber: "g652"},
			{Name: "east", LengthKm: 70, Fiber: "g652"},
		},
		Amplifiers: []rules.Amplifier{
			{Name: "mid", AfterSpan: 1, GainDB: 18, NoiseFigureDB: 5},
			{Name: "pre", AfterSpan: 2, GainDB: 14, NoiseFigureDB: 5},
		},
	}
	prof := rules.Profile{Modulation: "dp-16qam", Polarizations: 2, BaudGBd: 59.84375}
	e, err := optics.ExpectLink(plan, prof)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("CD %.0f ps/nm, mean DGD %.2f ps, rx %.1f dBm, ASE OSNR %.1f dB\n",
		e.CDPsNm, e.MeanDGDPs, e.RxPowerDBm, e.ASEOSNRdB)
	// Output: CD 2695 ps/nm, mean DGD 1.26 ps, rx 0.0 dBm, ASE OSNR 33.5 dB
}
