package main

import (
	"bytes"
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

func runProfiles(t *testing.T, c ProfilesCmd) (string, error) {
	t.Helper()
	var out, errw bytes.Buffer
	err := c.Run(&Globals{}, newPrinter(&out, &errw, false))
	return out.String(), err
}

// The JSON holds at least the keys docs/DESIGN.md lists for `profiles --format json`.
func TestProfilesJSONKeys(t *testing.T) {
	out, err := runProfiles(t, ProfilesCmd{Format: "json"})
	if err != nil {
		t.Fatal(err)
	}
	var got []map[string]any
	if err := json.Unmarshal([]byte(out), &got); err != nil {
		t.Fatalf("not a JSON array: %v", err)
	}
	if len(got) < 5 {
		t.Fatalf("%d profiles, want at least 5", len(got))
	}
	for _, p := range got {
		for _, k := range []string{"id", "modulation", "baud_gbd", "fec_threshold_ber", "required_osnr_db",
			"cd_tolerance_ps_nm", "dgd_tolerance_ps", "pdl_tolerance_db", "sop_tracking_krad_s",
			"lo_offset_range_mhz", "rx_power_min_dbm", "rx_power_max_dbm", "sources"} {
			if _, ok := p[k]; !ok {
				t.Errorf("profile %v lacks key %q", p["id"], k)
			}
		}
	}
}

func TestProfilesTextShowsUnitsAndSources(t *testing.T) {
	out, err := runProfiles(t, ProfilesCmd{Format: "text"})
	if err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{"400g-dp-16qam-cfec", "±2400 ps/nm", "28 ps", "OIF-400ZR-01.0", "krad/s", "dBm"} {
		if !strings.Contains(out, want) {
			t.Errorf("text output lacks %q", want)
		}
	}
}

func TestProfilesBadFileExits2(t *testing.T) {
	path := filepath.Join(t.TempDir(), "p.yaml")
	if err := os.WriteFile(path, []byte("profiles:\n  - id: 100g-dp-qpsk\n    pdl_tolerance_db: -1\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	_, err := runProfiles(t, ProfilesCmd{Profiles: path, Format: "text"})
	ee, ok := err.(*exitError)
	if !ok || ee.code != 2 || !strings.Contains(err.Error(), path+":3: profiles[0].pdl_tolerance_db") {
		t.Errorf("err = %v, want exit 2 naming %s:3 and the field", err, path)
	}
}
