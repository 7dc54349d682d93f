package optics

import (
	"math"
	"testing"
)

func TestOSNRFromSNR(t *testing.T) {
	// OSNR = p·Rs/(2·Bref)·SNR, Bref = 12.5 GHz (Essiambre et al., J. Lightwave Technol. 28(4),
	// 2010; exact form from memory). Offsets for p = 2 computed with Python 10*log10(Rs/12.5):
	// computed with Python's math library. Tolerance 1e-3 dB.
	cases := []struct{ baud, off float64 }{
		{32, 4.082}, {59.84375, 6.801}, {63.139, 7.034}, {118.2, 9.757},
	}
	for _, c := range cases {
		if got := OSNRdBFromSNRdB(10, c.baud, 2) - 10; !near(got, c.off, 1e-3) {
			t.Errorf("offset at %g GBd = %.4f dB, want %.3f", c.baud, got, c.off)
		}
		if got := SNRdBFromOSNRdB(OSNRdBFromSNRdB(12.3, c.baud, 2), c.baud, 2); !near(got, 12.3, 1e-12) {
			t.Errorf("round trip at %g GBd: %g", c.baud, got)
		}
		// One polarization: half the signal power per noise bandwidth, 3.010 dB less offset.
		if got := OSNRdBFromSNRdB(10, c.baud, 2) - OSNRdBFromSNRdB(10, c.baud, 1); !near(got, 3.0103, 1e-4) {
			t.Errorf("p=2 vs p=1 at %g GBd: %g dB", c.baud, got)
		}
	}
	if v := OSNRdBFromSNRdB(10, 0, 2); !math.IsNaN(v) {
		t.Errorf("zero baud gave %g", v)
	}
	if v := OSNRdBFromSNRdB(10, 32, 3); !math.IsNaN(v) {
		t.Errorf("3 polarizations gave %g", v)
	}
}

func TestRequiredOSNR400ZRExample(t *testing.T) {
	// Worked example computed with Python: a 400ZR-class link (59.84375 GBd DP-16QAM, from memory) at BER 1.22e-2 needs
	// 13.589 + 6.801 = 20.39 dB OSNR in theory; against the 26 dB specification (secondary source)
	// that leaves about 5.6 dB.
	got := RequiredOSNRdB(DP16QAM, 59.84375, 2, 1.22e-2, 0)
	if !near(got, 20.390, 2e-3) {
		t.Errorf("required OSNR = %.4f dB, want 20.390", got)
	}
	if m := OSNRMarginDB(26, got); !near(m, 5.61, 0.01) {
		t.Errorf("margin to 26 dB = %.3f, want about 5.6", m)
	}
	if p := RequiredOSNRdB(DP16QAM, 59.84375, 2, 1.22e-2, 1.5) - got; !near(p, 1.5, 1e-9) {
		t.Errorf("penalty not added: %g", p)
	}
}

func TestQMargin(t *testing.T) {
	// Computed with Python's math.erfc: Q_dB(1e-3) = 9.800, Q_dB(3.8e-3) = 8.528 → margin 1.272 dB.
	if m := QMarginDB(1e-3, 3.8e-3); !near(m, 9.800-8.528, 2e-3) {
		t.Errorf("QMarginDB = %.4f, want 1.272", m)
	}
	if m := QMarginFromQdB(9.0, 1e-2); !near(m, 9.0-7.333, 1e-3) {
		t.Errorf("QMarginFromQdB = %.4f, want 1.667", m)
	}
}
