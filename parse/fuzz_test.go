package parse

import (
	"bytes"
	"os"
	"path/filepath"
	"testing"
)

// fuzzRead reads data and checks what must hold for any input: no panic, the accounting adds
// up, every series strictly time-ordered with aligned columns, and — when the input read cleanly
// — export → read → export is byte-identical.
func fuzzRead(t *testing.T, name string, data []byte) {
	ds, err := ReadFile(name, bytes.NewReader(data), Options{Workers: 2})
	if ds == nil {
		t.Fatalf("nil dataset (err %v)", err)
	}
	for _, in := range ds.Inputs {
		if in.RowsRead != in.RowsUsed+in.RowsRejected {
			t.Fatalf("accounting: %+v", in)
		}
	}
	for _, s := range ds.Series {
		s := s.Decoded()
		for i := 1; i < len(s.TimesMs); i++ {
			if s.TimesMs[i] <= s.TimesMs[i-1] {
				t.Fatalf("port %q: times not ascending", s.Port)
			}
		}
		for q, col := range s.Values {
			if col != nil && len(col) != len(s.TimesMs) {
				t.Fatalf("port %q: %v has %d values for %d times", s.Port, Quantity(q), len(col), len(s.TimesMs))
			}
		}
		if b := s.Bins; b != nil {
			for q := range NumQuantities {
				for _, col := range [][]float64{b.Low[q], b.High[q]} {
					if col != nil && len(col) != len(s.TimesMs) {
						t.Fatalf("port %q: %v bin companion has %d values for %d times", s.Port, q, len(col), len(s.TimesMs))
					}
				}
			}
			if len(b.LengthMs) != len(s.TimesMs) {
				t.Fatalf("port %q: %d bin lengths for %d times", s.Port, len(b.LengthMs), len(s.TimesMs))
			}
		}
	}
	var out1, out2 bytes.Buffer
	if err := WriteCanonicalCSV(&out1, ds); err != nil {
		t.Fatal(err)
	}
	if len(ds.Series) == 0 {
		return
	}
	ds2, err := ReadFile("export.csv", bytes.NewReader(out1.Bytes()), Options{})
	if err != nil || ds2.Inputs[0].RowsRejected != 0 {
		t.Fatalf("export does not read back: %v %v\n%s", err, ds2.Rejected, out1.Bytes())
	}
	if err := WriteCanonicalCSV(&out2, ds2); err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(out1.Bytes(), out2.Bytes()) {
		t.Fatalf("round trip differs:\n%s\n---\n%s", out1.Bytes(), out2.Bytes())
	}
}

func addCorpus(f *testing.F, pattern string) {
	files, _ := filepath.Glob(filepath.Join("testdata", pattern))
	for _, name := range files {
		if b, err := os.ReadFile(name); err == nil {
			f.Add(b)
		}
	}
}

func FuzzCSV(f *testing.F) {
	addCorpus(f, "*.csv")
	addCorpus(f, "*.tsv")
	addCorpus(f, "*.gz")
	addCorpus(f, "messy/*.csv")
	f.Add([]byte("time,port,q\n1,\"a\"\"b\",3\n"))
	f.Add([]byte("time,port,profile,q_db\n1,a,p1,9\n2,a,p2,9\n1,b,\"x;y\",8\n2,b,NA,8\n"))
	f.Fuzz(func(t *testing.T, data []byte) { fuzzRead(t, "fuzz.csv", data) })
}

func FuzzJSONL(f *testing.F) {
	f.Add([]byte("{\"time\":\"2026-03-14T08:30:00Z\",\"port\":\"a\",\"pre_fec_ber\":1.2e-3,\"rx_power_mw\":0.5}\n{\"time\":1773477060,\"port\":\"a\",\"osnr_db\":\"NA\"}\n"))
	f.Add([]byte("{\"time\":1,\"port\":\"a\",\"q\":3}\n{bad\n"))
	f.Add([]byte("{\"time\":1,\"port\":\"a\",\"profile\":\"p1\",\"q_db\":9}\n{\"time\":2,\"port\":\"a\",\"profile\":[1],\"q_db\":9}\n"))
	f.Fuzz(func(t *testing.T, data []byte) { fuzzRead(t, "fuzz.jsonl", data) })
}

func FuzzOpenConfig(f *testing.F) {
	f.Add([]byte(ocSample))
	f.Add([]byte(`[{"timestamp": 1773477000000000000, "components": {"component": {"o": {"optical-channel": {"state": {"osnr": {"instant": "20"}, "logical-channel-assignment": 2}}}}},
 "terminal-device": {"logical-channels": {"channel": {"2": {"otn": {"state": {"q-value": {"instant": 7}}}}}}}}]`))
	f.Fuzz(func(t *testing.T, data []byte) { fuzzRead(t, "fuzz.json", data) })
}
