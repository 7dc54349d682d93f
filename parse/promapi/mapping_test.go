package promapi

import (
	"encoding/json"
	"strings"
	"testing"

	"github.com/beatnote/beatnote/parse"
)

func TestDefaultMappingCoversEveryQuantity(t *testing.T) {
	m := DefaultMapping()
	seen := map[parse.Quantity]bool{}
	for _, mm := range m.Metrics {
		seen[mm.spec.Quantity()] = true
	}
	if len(seen) != int(parse.NumQuantities) {
		t.Fatalf("the built-in mapping gives %d of %d quantities", len(seen), parse.NumQuantities)
	}
	// OpenConfig gives the channel frequency in MHz (openconfig-terminal-device.yang,
	// optical-channel/state/frequency, units MHz): 193.1 THz arrives as 193100000.
	for _, mm := range m.Metrics {
		if mm.spec.Quantity() == parse.FrequencyTHz {
			if v, err := mm.spec.Value(193100000); err != nil || v != 193.1 {
				t.Fatalf("frequency 193100000 MHz read as %v THz (%v)", v, err)
			}
		}
	}
}

func TestParseMappingErrors(t *testing.T) {
	cases := []struct{ name, yaml, want string }{
		{"unknown column", "metrics:\n  - {column: rx_pwr, metric: m, port_label: p}\n", "m.yaml:2: metrics[0]: column \"rx_pwr\" is not a measured quantity"},
		{"bad metric", "metrics:\n  - {column: rx_power_dbm, metric: 'a-b', port_label: p}\n", "m.yaml:2: metrics[0]: metric \"a-b\" is not a Prometheus metric name"},
		{"bad label", "metrics:\n  - column: rx_power_dbm\n    metric: m\n    port_label: '1x'\n", "m.yaml:2: metrics[0]: port_label \"1x\""},
		{"unknown key", "metrics:\n  - {column: rx_power_dbm, metric: m, port_label: p, unit: mW}\n", "field unit not found"},
		{"empty", "", "empty mapping"},
		{"no metrics", "metrics: []\n", "no metrics"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			_, err := ParseMapping("m.yaml", []byte(c.yaml))
			if err == nil || !strings.Contains(err.Error(), c.want) {
				t.Fatalf("error %v, want %q", err, c.want)
			}
		})
	}
}

// Port names are hostile text: the selector quotes them as PromQL strings and escapes them as
// regular expressions (RE2, which Prometheus uses), so no name widens or breaks the query.
func TestSelectorEscapesPorts(t *testing.T) {
	m, err := ParseMapping("m.yaml", []byte("metrics:\n  - {column: rx_power_dbm, metric: m, port_label: port, labels: {site: \"a\\\"b\"}}\n"))
	if err != nil {
		t.Fatal(err)
	}
	got := m.Metrics[0].selector([]string{"1/1.C1", `x"|.*`})
	want := `m{site="a\"b",port=~"1/1\\.C1|x\"\\|\\.\\*"}`
	if got != want {
		t.Fatalf("selector %s, want %s", got, want)
	}
}

func TestParsePoint(t *testing.T) {
	cases := []struct {
		in      string
		tMs     int64
		v       float64
		wantErr string
	}{
		{`[1773446400, "0.0014"]`, 1773446400000, 0.0014, ""},
		{`[1773446400.25, "-8.15"]`, 1773446400250, -8.15, ""},
		{`[1773446400, "NaN"]`, 1773446400000, 0, ""},
		{`[1773446400, 5]`, 0, 0, "not a JSON string"},
		{`[1773446400, "abc"]`, 0, 0, "not a number"},
		{`["x", "1"]`, 0, 0, "unparsable time"},
		{`[1]`, 0, 0, "not a [time, value] pair"},
	}
	for _, c := range cases {
		var pt []json.RawMessage
		if err := json.Unmarshal([]byte(c.in), &pt); err != nil {
			t.Fatal(err)
		}
		_, _, tMs, v, err := parsePoint(pt)
		if c.wantErr != "" {
			if err == nil || !strings.Contains(err.Error(), c.wantErr) {
				t.Errorf("%s: error %v, want %q", c.in, err, c.wantErr)
			}
			continue
		}
		if err != nil || tMs != c.tMs || (v != c.v && !(v != v && c.in[len(c.in)-5:] == `NaN"]`)) {
			t.Errorf("%s: %d %g %v", c.in, tMs, v, err)
		}
	}
}
