package optics

import (
	"math"
	"testing"
)

func TestPhotonNoise58Rule(t *testing.T) {
	// h·ν·Bref with h = 6.62607015e-34 J·s (SI, exact), Bref = 12.5 GHz: −57.953 dBm at 1550 nm and
	// −57.961 dBm at 193.1 THz (computed with Python: h·ν·12.5 GHz) — the "58 dB rule" of amplifier
	// textbooks. Tolerance 1e-3 dB.
	if p := PhotonNoiseDBm(THzFromWavelengthNm(1550), 12.5); !near(p, -57.953, 1e-3) {
		t.Errorf("h·ν·B at 1550 nm = %.4f dBm", p)
	}
	if p := PhotonNoiseDBm(193.1, 12.5); !near(p, -57.961, 1e-3) {
		t.Errorf("h·ν·B at 193.1 THz = %.4f dBm", p)
	}
	// Worked example computed with Python: Pin −20 dBm, NF 5.5 dB, 10 amplifiers: 22.45 dB with the exact
	// constant at 1550 nm (22.50 dB by the 58 rule).
	one := AmplifierOSNRdB(-20, 5.5, THzFromWavelengthNm(1550))
	osnr := CascadeOSNRdB(one, one, one, one, one, one, one, one, one, one)
	if !near(osnr, 22.45, 0.005) {
		t.Errorf("10-amplifier OSNR = %.4f dB, want 22.45", osnr)
	}
	if r58 := 58 - 20 - 5.5 - 10; !near(osnr, r58, 0.06) {
		t.Errorf("rule of thumb %g vs %g", r58, osnr)
	}
}

func TestPowerConversions(t *testing.T) {
	// Definition of dBm: 10·log10(P / 1 mW).
	cases := []struct{ dbm, mw float64 }{{0, 1}, {10, 10}, {-30, 0.001}, {3, 1.9952623149688795}}
	for _, c := range cases {
		if got := DBmToMW(c.dbm); !relNear(got, c.mw, 1e-12) {
			t.Errorf("DBmToMW(%g) = %g", c.dbm, got)
		}
		if got := MWToDBm(c.mw); !near(got, c.dbm, 1e-12) {
			t.Errorf("MWToDBm(%g) = %g", c.mw, got)
		}
	}
	if !math.IsNaN(MWToDBm(-1)) {
		t.Error("negative power not NaN")
	}
}

func TestCombineSNR(t *testing.T) {
	// Noise powers add: two equal contributions halve the SNR (−3.0103 dB); common practice.
	if s := CombineSNRdB(20, 20); !near(s, 20-10*math.Log10(2), 1e-12) {
		t.Errorf("CombineSNRdB(20, 20) = %g", s)
	}
	if s := CombineSNRdB(20, math.Inf(1)); !near(s, 20, 1e-12) {
		t.Errorf("an infinite term changed the sum: %g", s)
	}
	if s := CascadeOSNRdB(); !math.IsInf(s, 1) {
		t.Errorf("empty cascade = %g", s)
	}
}

func TestNLIEta(t *testing.T) {
	// GN model (Poggiolini, J. Lightwave Technol. 30(24), 2012 and 32(4), 2014). Reference values
	// computed with Python from the same closed form, for 80 km of the package's typical G.652
	// (0.2 dB/km, Aeff 80 µm², D at 193.1 THz) and 32 GBd channels: one channel 2.4350e-4 /mW²,
	// 80 channels at 50 GHz 1.08263e-3 /mW².
	lambda := WavelengthNmFromTHz(193.1)
	one := NLIEta(FiberG652, 80, lambda, WDMComb{Channels: 1, BaudGBd: 32})
	if !relNear(one, 2.4350e-4, 1e-4) {
		t.Errorf("single-channel η = %.6g", one)
	}
	wdm := NLIEta(FiberG652, 80, lambda, WDMComb{Channels: 80, SpacingGHz: 50, BaudGBd: 32})
	if !relNear(wdm, 1.08263e-3, 1e-4) {
		t.Errorf("80-channel η = %.6g", wdm)
	}
	// Independent check of the per-channel sum: for a Nyquist comb (spacing = Rs) it must agree
	// with the paper's whole-band closed form
	// G_NLI = (8/27)·γ²·G³·L_eff²·asinh(π²/2·|β2|·L_eff,a·B_WDM²)/(π·|β2|·L_eff,a)
	// (Poggiolini 2012, Nyquist-WDM case), written out here. Agreement within 2 %.
	n, rs := 81, 0.032
	alpha := FiberG652.AttenuationDBPerKm / (10 * math.Log10(math.E))
	leff := (1 - math.Exp(-alpha*80)) / alpha
	b2 := math.Abs(FiberG652.Beta2Ps2PerKm(lambda))
	g := FiberG652.GammaPerWKm(lambda)
	bw := float64(n) * rs
	G := 1 / rs
	closed := 8.0 / 27 * g * g * G * G * G * leff * leff * math.Asinh(math.Pi*math.Pi/2*b2/alpha*bw*bw) / (math.Pi * b2 / alpha) * rs * 1e-6
	sum := NLIEta(FiberG652, 80, lambda, WDMComb{Channels: n, SpacingGHz: 32, BaudGBd: 32})
	if !relNear(sum, closed, 0.02) {
		t.Errorf("Nyquist sum %g vs closed form %g", sum, closed)
	}
	// More channels, more interference; NLI grows with span length only through L_eff.
	if !(wdm > one) {
		t.Error("WDM η not above single channel")
	}
	if !math.IsNaN(NLIEta(FiberG652, 80, lambda, WDMComb{Channels: 2, SpacingGHz: 20, BaudGBd: 32})) {
		t.Error("overlapping channels accepted")
	}
}

func TestOptimumLaunch(t *testing.T) {
	// At P_opt = (P_ASE/2η)^(1/3) the NLI power is half the ASE power, and the SNR is at its
	// maximum (Poggiolini 2012). Checked by evaluating SNR(P) = P/(A + ηP³) around P_opt.
	A, eta := 2e-5, 1.1e-3
	p := DBmToMW(OptimumLaunchPowerDBm(A, eta))
	if !relNear(eta*p*p*p, A/2, 1e-9) {
		t.Errorf("NLI at optimum %g, want ASE/2 = %g", eta*p*p*p, A/2)
	}
	snr := func(p float64) float64 { return p / (A + eta*p*p*p) }
	for _, f := range []float64{0.9, 1.1} {
		if !(snr(p*f) < snr(p)) {
			t.Errorf("SNR at %g×P_opt not below the optimum", f)
		}
	}
}
