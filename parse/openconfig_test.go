package parse

import (
	"encoding/json"
	"fmt"
	"math"
	"strconv"
	"strings"
	"testing"
)

// ocSample is the document shown in docs/formats.md (all values invented).
const ocSample = `{
  "timestamp": "2026-03-14T08:30:00Z",
  "openconfig-terminal-device:terminal-device": {
    "logical-channels": {
      "channel": [
        {
          "index": 10101,
          "state": {"index": 10101, "description": "line 1", "logical-channel-type": "openconfig-transport-types:PROT_OTN"},
          "otn": {
            "state": {
              "pre-fec-ber":  {"instant": "0.000910", "avg": "0.000880", "min": "0.000830", "max": "0.000930"},
              "post-fec-ber": {"instant": "0"},
              "q-value":      {"instant": 9.85, "avg": 9.9, "min": 9.8, "max": 9.95},
              "esnr":         {"instant": 16.6},
              "fec-uncorrectable-blocks": "0"
            }
          },
          "logical-channel-assignments": {
            "assignment": [
              {"index": 1, "state": {"index": 1, "assignment-type": "OPTICAL_CHANNEL", "optical-channel": "och-1/1/1"}}
            ]
          }
        }
      ]
    }
  },
  "openconfig-platform:components": {
    "component": [
      {
        "name": "och-1/1/1",
        "state": {"name": "och-1/1/1", "type": "openconfig-platform-types:OPTICAL_CHANNEL"},
        "optical-channel": {
          "state": {
            "frequency": "193100000",
            "input-power":  {"instant": -8.15, "avg": -8.15, "min": -8.18, "max": -8.13},
            "output-power": {"instant": -1.04},
            "chromatic-dispersion":         {"instant": 1702.5},
            "polarization-mode-dispersion": {"instant": 3.2},
            "polarization-dependent-loss":  {"instant": 0.6},
            "osnr":                     {"instant": 27.4},
            "carrier-frequency-offset": {"instant": 512.0},
            "sop-roc":                  {"instant": 12.5}
          }
        }
      }
    ]
  }
}`

func TestOpenConfigDocument(t *testing.T) {
	ds, err := ReadFile("oc.json", strings.NewReader(ocSample), Options{})
	if err != nil {
		t.Fatal(err)
	}
	checkAccounting(t, ds)
	if len(ds.Series) != 1 || ds.Series[0].Port != "och-1/1/1" {
		t.Fatalf("ports %v", ds.Series)
	}
	s := ds.Series[0].Decoded()
	want := map[Quantity]float64{
		PreFECBER: 0.00091, PostFECBER: 0, UncorrectedBlocks: 0, QdB: 9.85, ESNRdB: 16.6, OSNRdB: 27.4,
		CDpsPerNm: 1702.5, DGDps: 3.2, PDLdB: 0.6, SOPRateKradPerS: 12.5, LOOffsetMHz: 512,
		RxPowerDBm: -8.15, TxPowerDBm: -1.04, FrequencyTHz: 193.1, // 193 100 000 MHz
	}
	for q, w := range want {
		if s.Values[q] == nil || math.Abs(s.Values[q][0]-w) > 1e-12 {
			t.Errorf("%v = %v, want %v", q, s.Values[q], w)
		}
	}
	if ds.Inputs[0].Format != "openconfig-json" {
		t.Errorf("format %q", ds.Inputs[0].Format)
	}
}

func TestOpenConfigStatistic(t *testing.T) {
	ds, err := ReadFile("oc.json", strings.NewReader(ocSample), Options{Statistic: "avg"})
	if err != nil {
		t.Fatal(err)
	}
	s := ds.Series[0].Decoded()
	if s.Values[PreFECBER][0] != 0.00088 || s.Values[QdB][0] != 9.9 {
		t.Errorf("avg: BER %v Q %v, want 0.00088 and 9.9", s.Values[PreFECBER], s.Values[QdB])
	}
	if s.Values[OSNRdB][0] != 27.4 { // no avg given: falls back to instant
		t.Errorf("avg fallback: OSNR %v", s.Values[OSNRdB])
	}
	if _, err := ReadFile("oc.json", strings.NewReader(ocSample), Options{Statistic: "median"}); err == nil {
		t.Errorf("unknown statistic accepted")
	}
}

// Keyed lists (gNMI dump style), module prefixes absent, the reverse assignment from the optical
// channel, a 400ZR-style optical channel carrying its own FEC leaves, and an array of documents
// with gNMI nanosecond timestamps.
func TestOpenConfigVariants(t *testing.T) {
	doc := func(ts string, ber string) string {
		return `{"timestamp": ` + ts + `,
 "terminal-device": {"logical-channels": {"channel": {
   "200": {"otn": {"state": {"pre-fec-ber": {"instant": 0.02}, "q-value": {"instant": 6.1}}}},
   "300": {"otn": {"state": {"esnr": {"instant": 12.0}}}}}}},
 "components": {"component": {
   "Ethernet4/1-Optical0": {"optical-channel": {"state": {"logical-channel-assignment": 200,
       "pre-fec-ber": {"instant": ` + ber + `}, "input-power": {"instant": "-10.5"}}},
     "fec-uncorrectable-blocks": "3"},
   "Ethernet4/1": {"state": {"type": "TRANSCEIVER"}}}}}`
	}
	content := "[" + doc("1773477000000000000", "0.0012") + ",\n" + doc("1773477010000000000", "0.7") + "]"
	ds, err := ReadFile("keyed.json", strings.NewReader(content), Options{})
	if err != nil {
		t.Fatal(err)
	}
	checkAccounting(t, ds)
	in := ds.Inputs[0]
	// per document: the optical channel and logical channel 300 (no assignment) → 2 records
	if in.RowsRead != 4 || in.RowsUsed != 3 || in.RowsRejected != 1 {
		t.Fatalf("accounting %+v %v", in, ds.Rejected)
	}
	if ds.Rejected[0].Line != 10 || !strings.Contains(ds.Rejected[0].Reason, "BER 0.7") { // the second document starts on line 10
		t.Errorf("rejection %+v, want line 10 BER 0.7", ds.Rejected[0])
	}
	var och *Series
	for _, s := range ds.Series {
		if s.Port == "Ethernet4/1-Optical0" {
			och = s.Decoded()
		}
	}
	if och == nil || len(ds.Series) != 2 {
		t.Fatalf("ports %d", len(ds.Series))
	}
	// The optical channel's own pre-FEC BER wins over the logical channel's; Q comes from the
	// logical channel through the reverse assignment.
	if och.Values[PreFECBER][0] != 0.0012 || och.Values[QdB][0] != 6.1 || och.Values[UncorrectedBlocks][0] != 3 || och.Values[RxPowerDBm][0] != -10.5 {
		t.Errorf("values BER %v Q %v blocks %v rx %v", och.Values[PreFECBER], och.Values[QdB], och.Values[UncorrectedBlocks], och.Values[RxPowerDBm])
	}
	if och.TimesMs[0] != 1773477000000 {
		t.Errorf("time %d, want 1773477000000 (ns stamp ÷ 1e6)", och.TimesMs[0])
	}
	if len(in.Notes) != 1 || !strings.Contains(in.Notes[0], "logical-channel-300") {
		t.Errorf("notes %v", in.Notes)
	}
}

func TestOpenConfigBadDocuments(t *testing.T) {
	tests := []struct {
		name, content  string
		read, rejected int
		fileErr        bool
	}{
		{"no timestamp", `{"components": {"component": [{"name": "och1", "optical-channel": {"state": {"osnr": {"instant": 20}}}}]}}`, 1, 1, false},
		{"no data", `{"timestamp": 0, "components": {"component": [{"name": "fan1"}]}}`, 1, 1, false},
		{"bad leaf", `{"timestamp": 0, "components": {"component": [{"name": "och1", "optical-channel": {"state": {"osnr": {"instant": "x"}}}}]}}`, 1, 1, false},
		{"broken document", "{\"timestamp\": 0,\n \"components\": {", 0, 0, true},
		{"jsonl bad line", "{\"timestamp\": 0, \"components\": {\"component\": [{\"name\": \"o\", \"optical-channel\": {\"state\": {\"osnr\": 20}}}]}}\nnot json\n", 2, 1, false},
		{"not an object", `[1, 2]`, 2, 2, false},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			ds, err := ReadFile("b.json", strings.NewReader(tc.content), Options{})
			checkAccounting(t, ds)
			in := ds.Inputs[0]
			if in.RowsRead != tc.read || in.RowsRejected != tc.rejected || (err != nil) != tc.fileErr {
				t.Errorf("read %d rejected %d err %v; want %d %d fileErr %v", in.RowsRead, in.RowsRejected, err, tc.read, tc.rejected, tc.fileErr)
			}
		})
	}
}

func TestJSONLinesCanonical(t *testing.T) {
	content := `{"time": "2026-03-14T08:30:00Z", "port": "1/1/C1", "pre_fec_ber": 1.2e-3, "rx_power_mw": 0.5, "vendor": "x"}
{"time": 1773477060, "port": "1/1/C1", "pre_fec_ber": "NA", "rx_power_mw": null}
{"time": 1773477120, "port": "1/1/C1", "rx_power_dbm": -3, "rx_power_mw": 0.5}
{"time": 1773477180, "port": 7, "osnr_db": "21.5"}
`
	ds, err := ReadFile("c.jsonl", strings.NewReader(content), Options{})
	if err != nil {
		t.Fatal(err)
	}
	checkAccounting(t, ds)
	in := ds.Inputs[0]
	if in.RowsRead != 4 || in.RowsUsed != 3 || in.RowsRejected != 1 || in.Format != "jsonl" {
		t.Fatalf("%+v %v", in, ds.Rejected)
	}
	if ds.Rejected[0].Line != 3 || !strings.Contains(ds.Rejected[0].Reason, ErrDuplicateColumn.Error()) {
		t.Errorf("rejection %+v", ds.Rejected[0])
	}
	if len(in.Notes) != 1 || !strings.Contains(in.Notes[0], "vendor") {
		t.Errorf("notes %v", in.Notes)
	}
	s := ds.Series[0].Decoded()
	if math.Abs(s.Values[RxPowerDBm][0]-(-3.0103)) > 1e-4 || !math.IsNaN(s.Values[RxPowerDBm][1]) || !math.IsNaN(s.Values[PreFECBER][1]) {
		t.Errorf("rx %v ber %v", s.Values[RxPowerDBm], s.Values[PreFECBER])
	}
	if ds.Series[1].Port != "7" || ds.Series[1].Decoded().Values[OSNRdB][0] != 21.5 {
		t.Errorf("numeric port / string value: %+v", ds.Series[1])
	}
	// the OpenConfig sample is valid JSON: sanity check of the test input itself
	if !json.Valid([]byte(ocSample)) {
		t.Fatal("ocSample is not valid JSON")
	}
}

// Port names are kept from document to document within bounds (maxOCNameBytes): documents that
// name ports longer than the port-name limit, more bytes of them than the bound, reject those
// rows and still read the other port of every document, before and after the names are dropped.
func TestOpenConfigManyLongNames(t *testing.T) {
	var b strings.Builder
	docs := maxOCNameBytes/(1<<20) + 2
	for i := range docs {
		long := strings.Repeat("x", 1<<20) + strconv.Itoa(i)
		fmt.Fprintf(&b, `{"timestamp": %d, "components": {"component": [`+
			`{"name": %q, "optical-channel": {"state": {"osnr": {"instant": 20}}}},`+
			`{"name": "och1", "optical-channel": {"state": {"osnr": {"instant": %d}}}},`+
			`{"name": %q, "optical-channel": {"state": {"input-power": {"instant": -3}}}}]}}`+"\n",
			1773477000+60*i, long, 20+i, long)
	}
	ds, err := ReadFile("long.json", strings.NewReader(b.String()), Options{Workers: 1}) // one worker meets every name
	if err != nil {
		t.Fatal(err)
	}
	checkAccounting(t, ds)
	in := ds.Inputs[0]
	// per document: the long name once (its two mentions are one record), and och1
	if in.RowsRead != 2*docs || in.RowsUsed != docs || in.RowsRejected != docs {
		t.Fatalf("accounting %+v", in)
	}
	if len(ds.Series) != 1 || ds.Series[0].Port != "och1" {
		t.Fatalf("series %d", len(ds.Series))
	}
	s := ds.Series[0].Decoded()
	if len(s.TimesMs) != docs {
		t.Fatalf("%d samples, want %d", len(s.TimesMs), docs)
	}
	for i, v := range s.Values[OSNRdB] {
		if v != float64(20+i) {
			t.Fatalf("OSNR sample %d = %v, want %d", i, v, 20+i)
		}
	}
}
