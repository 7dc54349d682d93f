package main

import (
	"encoding/json"
	"math"
	"strings"
	"testing"
)

// runCalc runs "beatnote calc ..." as main does and returns stdout, stderr and the exit status.
func runCalc(t *testing.T, args ...string) (string, string, int) {
	t.Helper()
	code, out, errw := runCLI(t, append([]string{"calc"}, args...)...)
	return out, errw, code
}

func TestCalcJSON(t *testing.T) {
	// Expected values computed independently with Python's math library: Q(1e-2) = 7.333 dB,
	// 16QAM Es/N0 at 1e-2 = 13.903 dB, OSNR offset at 60 GBd = 10·log10(60/12.5) = 6.812 dB,
	// Maxwellian P(> 3·mean) = 4.200e-5, 193.1 THz = 1552.524 nm; D of typical G.652 at
	// 1552.524 nm 16.842 ps/(nm·km) (λ0 1310 nm, S0 0.088, typical figures from memory).
	cases := []struct {
		args []string
		key  string
		want float64
		tol  float64
	}{
		{[]string{"q", "--ber", "0.01"}, "q_db", 7.333, 1e-3},
		{[]string{"q", "--ber", "0.01"}, "q_linear", 2.326, 1e-3},
		{[]string{"osnr", "--ber", "0.01", "--modulation", "dp-16qam", "--baud-gbd", "60"}, "esnr_db", 13.903, 1e-3},
		{[]string{"osnr", "--ber", "0.01", "--modulation", "dp-16qam", "--baud-gbd", "60"}, "osnr_db", 13.903 + 6.812, 2e-3},
		{[]string{"osnr", "--ber", "0.01", "--modulation", "dp-16qam", "--baud-gbd", "60", "--penalty-db", "1.5"}, "osnr_db", 13.903 + 6.812 + 1.5, 2e-3},
		{[]string{"length", "--cd-ps-nm", "17000", "--frequency-thz", "193.1", "--fiber", "g652"}, "length_km", 17000 / 16.8417, 0.01},
		{[]string{"length", "--cd-ps-nm", "1801", "--wavelength-nm", "1550", "--fiber", "g652-bound"}, "length_km", 100, 0.01},
		{[]string{"dgd", "--mean-ps", "5", "--limit-ps", "15"}, "exceed_probability", 4.200e-5, 1e-8},
		{[]string{"dgd", "--mean-ps", "10", "--probability", "1e-5"}, "dgd_at_probability_ps", 31.89, 0.01},
		{[]string{"power", "--dbm", "-3"}, "power_mw", 0.50119, 1e-5},
		{[]string{"power", "--mw", "2"}, "power_dbm", 3.0103, 1e-4},
		{[]string{"grid", "--thz", "193.1"}, "wavelength_nm", 1552.524, 1e-3},
		{[]string{"grid", "--nm", "1552.474"}, "grid_frequency_thz", 193.10625, 1e-9},
		{[]string{"ber", "--esnr-db", "14", "--modulation", "dp-16qam"}, "ber", 9.376e-3, 1e-6},
		{[]string{"ase", "--pin-dbm", "-20", "--nf-db", "5.5", "--amplifiers", "10", "--frequency-thz", "193.414"}, "osnr_db", 22.45, 0.005},
		{[]string{"cd", "--length-km", "100", "--wavelength-nm", "1550", "--fiber", "g652-bound"}, "cd_ps_nm", 1801.0, 0.1},
	}
	for _, c := range cases {
		out, stderr, code := runCalc(t, append(c.args, "--format", "json")...)
		if code != 0 {
			t.Errorf("%v: exit %d: %s", c.args, code, stderr)
			continue
		}
		if strings.Count(out, "\n") != 1 {
			t.Errorf("%v: want one line of JSON, got %q", c.args, out)
		}
		var obj map[string]any
		if err := json.Unmarshal([]byte(out), &obj); err != nil {
			t.Errorf("%v: %v in %q", c.args, err, out)
			continue
		}
		for k, v := range obj {
			if _, ok := v.(float64); !ok {
				t.Errorf("%v: key %s is not a flat number: %v", c.args, k, v)
			}
		}
		got, ok := obj[c.key].(float64)
		if !ok || math.Abs(got-c.want) > c.tol {
			t.Errorf("%v: %s = %v, want %g ± %g", c.args, c.key, obj[c.key], c.want, c.tol)
		}
	}
}

func TestCalcText(t *testing.T) {
	out, _, code := runCalc(t, "q", "--ber", "3.8e-3")
	if code != 0 || !strings.Contains(out, "8.528 dB") {
		t.Errorf("exit %d, text %q", code, out)
	}
	out, _, code = runCalc(t, "power", "--dbm", "-3")
	if code != 0 || !strings.Contains(out, "0.5012 mW") || !strings.Contains(out, "-3.000 dBm") {
		t.Errorf("exit %d, text %q", code, out)
	}
}

func TestCalcBadInputExits2(t *testing.T) {
	cases := [][]string{
		{"q"},                                 // no input
		{"q", "--ber", "0.01", "--q-db", "7"}, // two inputs
		{"q", "--ber", "0.7"},                 // outside 0…0.5
		{"q", "--ber", "abc"},
		{"osnr", "--ber", "0.01", "--modulation", "dp-17qam", "--baud-gbd", "60"},
		{"osnr", "--ber", "0.01", "--modulation", "dp-16qam"}, // no baud
		{"osnr", "--ber", "0.01", "--modulation", "dp-16qam", "--baud-gbd", "-60"},
		{"length", "--cd-ps-nm", "100", "--fiber", "g999"},
		{"length", "--cd-ps-nm", "100", "--frequency-thz", "19.31"},
		{"dgd", "--mean-ps", "5"},
		{"dgd", "--mean-ps", "0", "--limit-ps", "15"},
		{"dgd", "--pmd-ps-sqrt-km", "0.1", "--limit-ps", "15"},
		{"power", "--mw", "-1"},
		{"grid", "--thz", "1552"},
		{"ase", "--pin-dbm", "-20", "--amplifiers", "0"},
		{"q", "--ber", "0.01", "--format", "xml"},
	}
	for _, args := range cases {
		_, stderr, code := runCalc(t, args...)
		if code != 2 {
			t.Errorf("%v: exit %d, want 2", args, code)
		}
		if strings.TrimSpace(stderr) == "" {
			t.Errorf("%v: no message", args)
		}
	}
}
