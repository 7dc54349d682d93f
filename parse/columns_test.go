package parse

import (
	"math"
	"strings"
	"testing"
)

// readCSVString reads content as one CSV input named name.
func readCSVString(t *testing.T, name, content string, opt Options) (*Dataset, error) {
	t.Helper()
	return ReadFile(name, strings.NewReader(content), opt)
}

func TestHeaderMatching(t *testing.T) {
	tests := []struct {
		header string
		kind   colKind
		q      Quantity
		conv   unitConv
	}{
		{"rx_power_dbm", colQuantity, RxPowerDBm, convNone},
		{"Rx power [dBm]", colQuantity, RxPowerDBm, convNone},
		{"rx-power-dbm", colQuantity, RxPowerDBm, convNone},
		{"RX.Power.dBm", colQuantity, RxPowerDBm, convNone},
		{"Rx Power (mW)", colQuantity, RxPowerDBm, convMilliwatt},
		{"rx_power_uW", colQuantity, RxPowerDBm, convMicrowatt},
		{"Rx power [µW]", colQuantity, RxPowerDBm, convMicrowatt},
		{"Tx/Power/dBm", colQuantity, TxPowerDBm, convNone},
		{"Pre-FEC BER", colQuantity, PreFECBER, convNone},
		{"post fec ber", colQuantity, PostFECBER, convNone},
		{"Uncorrected Blocks", colQuantity, UncorrectedBlocks, convNone},
		{"Q [dB]", colQuantity, QdB, convNone},
		{"Q", colQuantity, QdB, convLinearQ},
		{"eSNR (dB)", colQuantity, ESNRdB, convNone},
		{"OSNR [dB]", colQuantity, OSNRdB, convNone},
		{"CD [ps/nm]", colQuantity, CDpsPerNm, convNone},
		{"CD (ns/nm)", colQuantity, CDpsPerNm, convTimes1000},
		{"DGD [fs]", colQuantity, DGDps, convDiv1000},
		{"PDL_dB", colQuantity, PDLdB, convNone},
		{"SOP rate [krad/s]", colQuantity, SOPRateKradPerS, convNone},
		{"SOP rate [rad/s]", colQuantity, SOPRateKradPerS, convDiv1000},
		{"SOP rate [Mrad/s]", colQuantity, SOPRateKradPerS, convTimes1000},
		{"LO offset [MHz]", colQuantity, LOOffsetMHz, convNone},
		{"lo_offset_hz", colQuantity, LOOffsetMHz, convDiv1e6},
		{"LO offset {kHz}", colQuantity, LOOffsetMHz, convDiv1000},
		{"lo offset GHz", colQuantity, LOOffsetMHz, convTimes1000},
		{"Frequency [THz]", colQuantity, FrequencyTHz, convNone},
		{"frequency_ghz", colQuantity, FrequencyTHz, convDiv1000},
		{"Wavelength [nm]", colQuantity, FrequencyTHz, convWavelengthNm},
		{"Time", colTime, 0, convNone},
		{"timestamp", colTime, 0, convNone},
		{"PORT", colPort, 0, convNone},
		{"\ufeffport", colPort, 0, convNone},
		{"module_temp_c", colUnknown, 0, convNone},
		{"rx_power_watts", colUnknown, 0, convNone},
	}
	for _, tc := range tests {
		t.Run(tc.header, func(t *testing.T) {
			got := lookupColumn(tc.header)
			if got.kind != tc.kind || got.q != tc.q || got.conv != tc.conv {
				t.Errorf("lookupColumn(%q) = %+v, want kind %d q %v conv %d", tc.header, got, tc.kind, tc.q, tc.conv)
			}
		})
	}
}

// Every conversion is checked through the full read path: a one-row CSV with the column in the
// other unit must store the value in the canonical unit.
func TestUnitConversions(t *testing.T) {
	tests := []struct {
		name   string
		header string
		raw    string
		q      Quantity
		want   float64
		tol    float64
		source string
	}{
		{"1 mW is 0 dBm", "rx_power_mw", "1", RxPowerDBm, 0, 1e-12, "definition of dBm: 10·log10(P/1 mW)"},
		{"0.5 mW is -3.0103 dBm", "Rx power [mW]", "0.5", RxPowerDBm, -3.0103, 1e-4, "definition of dBm; 10·log10(0.5) = -3.0102999566 (Python math.log10)"},
		{"2 mW tx is +3.0103 dBm", "tx_power_mw", "2", TxPowerDBm, 3.0103, 1e-4, "definition of dBm; 10·log10(2) (Python math.log10)"},
		{"1000 uW is 0 dBm", "rx_power_uw", "1000", RxPowerDBm, 0, 1e-12, "definition of dBm, 1 µW = 1e-3 mW"},
		{"1 uW is -30 dBm", "Rx power [µW]", "1", RxPowerDBm, -30, 1e-12, "definition of dBm, 1 µW = 1e-3 mW"},
		{"1.7 ns/nm is 1700 ps/nm", "cd_ns_nm", "1.7", CDpsPerNm, 1700, 1e-9, "SI prefixes"},
		{"1500 fs is 1.5 ps", "DGD [fs]", "1500", DGDps, 1.5, 1e-12, "SI prefixes"},
		{"5e6 Hz is 5 MHz", "lo_offset_hz", "5e6", LOOffsetMHz, 5, 1e-12, "SI prefixes"},
		{"5000 kHz is 5 MHz", "lo_offset_khz", "5000", LOOffsetMHz, 5, 1e-12, "SI prefixes"},
		{"1.2 GHz is 1200 MHz", "lo_offset_ghz", "1.2", LOOffsetMHz, 1200, 1e-9, "SI prefixes"},
		{"50000 rad/s is 50 krad/s", "sop_rate_rad_s", "50000", SOPRateKradPerS, 50, 1e-12, "SI prefixes"},
		{"5.1 Mrad/s is 5100 krad/s", "SOP rate [Mrad/s]", "5.1", SOPRateKradPerS, 5100, 1e-9, "SI prefixes; 5.1 Mrad/s from Charlton et al., Opt. Express 25(9), 2017"},
		{"193100 GHz is 193.1 THz", "frequency_ghz", "193100", FrequencyTHz, 193.1, 1e-12, "SI prefixes"},
		{"193100000 MHz is 193.1 THz", "frequency_mhz", "193100000", FrequencyTHz, 193.1, 1e-12, "SI prefixes (OpenConfig frequency is in MHz)"},
		{"1552.524 nm is 193.1 THz", "wavelength_nm", "1552.524", FrequencyTHz, 193.1, 1e-4, "ITU-T G.694.1 grid, λ = c/f (computed with Python: 193.1 THz → 1552.524 nm)"},
		{"1528.773 nm is 196.1 THz", "wavelength_nm", "1528.773", FrequencyTHz, 196.1, 1e-4, "ITU-T G.694.1 grid, λ = c/f (computed with Python: 196.1 THz → 1528.773 nm)"},
		{"linear Q 3.090 is 9.80 dB", "q", "3.090", QdB, 9.800, 0.01, "computed with Python's math.erfc: BER 1e-3 → Q 3.090 (9.800 dB); 20·log10 Q"},
		{"linear Q 1 is 0 dB", "Q", "1", QdB, 0, 1e-12, "20·log10 1 = 0"},
		{"q_db stays", "q_db", "8.53", QdB, 8.53, 0, "no conversion"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			ds, err := readCSVString(t, "unit.csv", "time,port,"+tc.header+"\n2026-03-14T08:00:00Z,p,"+tc.raw+"\n", Options{})
			if err != nil {
				t.Fatal(err)
			}
			if len(ds.Series) != 1 || ds.Series[0].Decoded().Values[tc.q] == nil {
				t.Fatalf("no %v value read; rejected %v", tc.q, ds.Rejected)
			}
			got := ds.Series[0].Decoded().Values[tc.q][0]
			if math.Abs(got-tc.want) > tc.tol {
				t.Errorf("%s %s = %.10g %s, want %.10g ± %g (%s)", tc.raw, tc.header, got, tc.q.Unit(), tc.want, tc.tol, tc.source)
			}
		})
	}
}

// Values without a stored-unit image are rejected, not clamped.
func TestConversionRejections(t *testing.T) {
	for _, tc := range []struct{ header, raw string }{
		{"rx_power_mw", "0"}, {"rx_power_mw", "-0.1"}, {"rx_power_uw", "0"}, {"q", "0"}, {"q", "-2"}, {"wavelength_nm", "0"},
	} {
		t.Run(tc.header+"="+tc.raw, func(t *testing.T) {
			ds, _ := readCSVString(t, "x.csv", "time,port,"+tc.header+"\n2026-03-14T08:00:00Z,p,"+tc.raw+"\n", Options{})
			if ds.Inputs[0].RowsRejected != 1 || len(ds.Series) != 0 {
				t.Errorf("want the row rejected, got %+v", ds.Inputs[0])
			}
		})
	}
}

func TestPhysicalBounds(t *testing.T) {
	tests := []struct {
		header, raw string
		reject      bool
	}{
		{"pre_fec_ber", "0.5", false},
		{"pre_fec_ber", "0", false},
		{"pre_fec_ber", "0.5000001", true},
		{"pre_fec_ber", "-1e-9", true},
		{"post_fec_ber", "0.6", true},
		{"uncorrected_blocks", "-1", true},
		{"dgd_ps", "-0.01", true},
		{"dgd_ps", "0", false},
		{"pdl_db", "-0.1", true},
		{"sop_rate_krad_s", "-1", true},
		{"cd_ps_nm", "-40000", false}, // negative CD is real (fibre of negative dispersion, overcompensation)
		{"cd_ps_nm", "250000", true},
		{"lo_offset_mhz", "-2500", false},
		{"lo_offset_mhz", "150000", true},
		{"rx_power_dbm", "30", false},
		{"rx_power_dbm", "45", true},
		{"tx_power_dbm", "30.01", true},
		{"rx_power_dbm", "-60", false},
		{"frequency_thz", "193.1", false},
		{"frequency_thz", "1931", true},
		{"osnr_db", "1e400", true}, // overflows float64
	}
	for _, tc := range tests {
		t.Run(tc.header+"="+tc.raw, func(t *testing.T) {
			ds, err := readCSVString(t, "b.csv", "time,port,"+tc.header+"\n2026-03-14T08:00:00Z,p,"+tc.raw+"\n", Options{})
			if err != nil {
				t.Fatal(err)
			}
			got := ds.Inputs[0].RowsRejected == 1
			if got != tc.reject {
				t.Errorf("rejected = %v, want %v (%v)", got, tc.reject, ds.Rejected)
			}
		})
	}
}

// A first block holding thousands of ports one sample time after another sees each port once or
// twice: every such port is sized to the block's mean rows per port, not twice as much for the
// ports seen twice; a block of a file sorted by port (a few ports end to end) hints nothing.
func TestCapacityHintFleetBlock(t *testing.T) {
	// 3 ports seen twice (rows 0-2 and 4-6 of a 7-row block), one port seen once (row 3).
	job := &csvJob{names: []string{"a", "b", "c", "d"}, groupEnd: []int32{2, 4, 6, 7},
		spread: []int32{4, 4, 4, 0}, times: make([]int64, 7)}
	h := newCapacityHint(job, 100, func(int) int { return 1 })
	mean := 7.0 / 4
	want := int(mean*100*1.05) + 16
	for g, n := range h.rows {
		if n != want {
			t.Errorf("port %s: %d rows, want the mean %d", job.names[g], n, want)
		}
	}
	sorted := &csvJob{names: []string{"a", "b"}, groupEnd: []int32{40, 80},
		spread: []int32{39, 39}, times: make([]int64, 80)}
	if h := newCapacityHint(sorted, 100, func(int) int { return 1 }); h != nil {
		t.Errorf("port-sorted block hinted: %v", h.rows)
	}
}
