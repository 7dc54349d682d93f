package optics

import (
	"math"
	"testing"
)

func TestGridConversions(t *testing.T) {
	// ITU-T G.694.1 grid anchored at 193.1 THz; λ = c/f with c = 299 792 458 m/s. Wavelengths
	// computed with Python (299792458/f); tolerance 1e-3 nm.
	cases := []struct{ thz, nm float64 }{
		{196.1, 1528.773}, {193.1, 1552.524}, {193.10625, 1552.474}, {191.3, 1567.133},
	}
	for _, c := range cases {
		if got := WavelengthNmFromTHz(c.thz); !near(got, c.nm, 1e-3) {
			t.Errorf("WavelengthNmFromTHz(%g) = %.4f, want %.3f", c.thz, got, c.nm)
		}
		if got := THzFromWavelengthNm(WavelengthNmFromTHz(c.thz)); !near(got, c.thz, 1e-9) {
			t.Errorf("round trip %g THz → %g", c.thz, got)
		}
	}
	if !math.IsNaN(WavelengthNmFromTHz(0)) || !math.IsNaN(THzFromWavelengthNm(-1)) {
		t.Error("non-positive input not NaN")
	}
}

func TestNearestGrid(t *testing.T) {
	// G.694.1 clause 7: f = 193.1 THz + n × 6.25 GHz; clause 6 Table 1: 50 and 100 GHz fixed grids.
	cases := []struct {
		thz, gran float64
		grid      float64
		n         int
		offGHz    float64
	}{
		{193.1, 6.25, 193.1, 0, 0},
		{193.10625, 6.25, 193.10625, 1, 0},
		{193.102, 6.25, 193.1, 0, 2},
		{193.104, 6.25, 193.10625, 1, -2.25},
		{196.1, 50, 196.1, 60, 0},
		{191.3, 100, 191.3, -18, 0},
		{193.1018, 50, 193.1, 0, 1.8}, // the 400ZR ±1.8 GHz Tx accuracy (from memory) at its edge
	}
	for _, c := range cases {
		g, n := NearestGridTHz(c.thz, c.gran)
		if !near(g, c.grid, 1e-9) || n != c.n {
			t.Errorf("NearestGridTHz(%g, %g) = %g, %d; want %g, %d", c.thz, c.gran, g, n, c.grid, c.n)
		}
		if off := ChannelOffsetGHz(c.thz, c.gran); !near(off, c.offGHz, 1e-6) {
			t.Errorf("ChannelOffsetGHz(%g, %g) = %g, want %g", c.thz, c.gran, off, c.offGHz)
		}
	}
}
