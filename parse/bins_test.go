package parse

import (
	"errors"
	"fmt"
	"math"
	"path/filepath"
	"strings"
	"testing"
)

func TestBinHeaderCells(t *testing.T) {
	for _, tc := range []struct {
		name  string
		kind  colKind
		q     Quantity
		st    binStat
		unitS float64
	}{
		{"pre_fec_ber_max", colQuantity, PreFECBER, statHigh, 0},
		{"Pre-FEC BER min", colQuantity, PreFECBER, statLow, 0},
		{"Q min (dB)", colQuantity, QdB, statLow, 0},
		{"q_db_mean", colQuantity, QdB, statAvg, 0},
		{"Rx power avg [dBm]", colQuantity, RxPowerDBm, statAvg, 0},
		{"max DGD (ps)", colQuantity, DGDps, statHigh, 0},
		{"rx_power_low_mw", colQuantity, RxPowerDBm, statLow, 0},
		{"OSNR highest", colQuantity, OSNRdB, statHigh, 0},
		{"Granularity", colBinLength, 0, statAvg, 1},
		{"bin length (min)", colBinLength, 0, statAvg, 60},
		{"interval_h", colBinLength, 0, statAvg, 3600},
		{"Interval Start", colTime, 0, statAvg, 0},
		{"rx_power_high_alarm", colUnknown, 0, statAvg, 0},
	} {
		c, st, unitS := lookupHeaderCell(tc.name)
		if c.kind != tc.kind || c.kind == colQuantity && c.q != tc.q || st != tc.st || unitS != tc.unitS {
			t.Errorf("%q: kind %d q %v stat %d unit %g; want %d %v %d %g", tc.name, c.kind, c.q, st, unitS, tc.kind, tc.q, tc.st, tc.unitS)
		}
	}
}

func TestParseBinLength(t *testing.T) {
	for _, tc := range []struct {
		in    string
		unitS float64
		want  int64 // 0: refused
	}{
		{"15min", 1, 900000}, {"15-MIN", 1, 900000}, {"15 m", 1, 900000}, {"24h", 1, 86400000},
		{"24-HOUR", 1, 86400000}, {"1day", 1, 86400000}, {"1 d", 1, 86400000}, {"900", 1, 900000},
		{"900s", 60, 900000}, {"15", 60, 900000}, {"0.25", 3600, 900000}, {"00:15:00", 1, 900000},
		{"24:00:00", 1, 86400000}, {"fifteen", 1, 0}, {"0", 1, 0}, {"-15min", 1, 0}, {"8d", 1, 0},
		{"15 fortnights", 1, 0}, {"00:61:00", 1, 0},
	} {
		got, ok := parseBinLength([]byte(tc.in), tc.unitS)
		if tc.want == 0 && ok || tc.want != 0 && (!ok || got != tc.want) {
			t.Errorf("parseBinLength(%q, %g) = %d, %v; want %d", tc.in, tc.unitS, got, ok, tc.want)
		}
	}
}

// A 15-minute PM export: averages are the values, minimum and maximum the companions, the bin
// length from its column; a bad bin length rejects the row (and its companions) only.
func TestPMBins15Min(t *testing.T) {
	ds, err := ReadPaths([]string{filepath.Join("testdata", "messy", "pm_15min.csv")}, Options{})
	if err != nil {
		t.Fatal(err)
	}
	checkAccounting(t, ds)
	if in := ds.Inputs[0]; in.RowsUsed != 3 || in.RowsRejected != 1 || !strings.Contains(ds.Rejected[0].Reason, "bin length") {
		t.Fatalf("inputs %+v rejected %+v", in, ds.Rejected)
	}
	s := ds.Series[0].Decoded()
	b := s.Bins
	if b == nil {
		t.Fatal("no bins")
	}
	eq := func(name string, got, want []float64) {
		t.Helper()
		if len(got) != len(want) {
			t.Errorf("%s = %v, want %v", name, got, want)
			return
		}
		for i := range got {
			if !(got[i] == want[i] || math.IsNaN(got[i]) && math.IsNaN(want[i])) {
				t.Errorf("%s = %v, want %v", name, got, want)
				return
			}
		}
	}
	eq("BER value (avg)", s.Values[PreFECBER], []float64{9.0e-4, 9.1e-4, 9.2e-4})
	eq("BER low", b.Low[PreFECBER], []float64{8.0e-4, 8.1e-4, 8.2e-4})
	eq("BER high", b.High[PreFECBER], []float64{2.1e-3, 1.0e-3, 1.1e-3})
	eq("Q low", b.Low[QdB], []float64{9.2, 9.6, 9.5})
	eq("Rx high", b.High[RxPowerDBm], []float64{-7.9, -8.0, -8.0})
	eq("DGD value (max: no average)", s.Values[DGDps], []float64{4.1, 3.9, 12.5})
	eq("DGD high", b.High[DGDps], []float64{4.1, 3.9, 12.5})
	if b.Low[DGDps] != nil || b.High[OSNRdB] != nil {
		t.Errorf("companions that no column gives: %v %v", b.Low[DGDps], b.High[OSNRdB])
	}
	for _, l := range b.LengthMs {
		if l != 900000 {
			t.Errorf("bin lengths %v, want 15 min", b.LengthMs)
		}
	}
	if notes := strings.Join(ds.Inputs[0].Notes, "\n"); !strings.Contains(notes, `dgd_ps has no average column: each bin's maximum (column 14 "DGD max (ps)")`) {
		t.Errorf("notes %q", notes)
	}
}

// Without a bin-length column the bin length is the sample spacing; bins of several files and
// plain samples merge by time, the last row of a time winning.
func TestPMBinsInferredAndMerged(t *testing.T) {
	ds, err := ReadPaths([]string{filepath.Join("testdata", "messy", "pm_24h_inferred.csv")}, Options{})
	if err != nil {
		t.Fatal(err)
	}
	s := ds.Series[0].Decoded()
	for _, l := range s.Bins.LengthMs {
		if l != 86400000 {
			t.Fatalf("bin lengths %v, want 24 h from the spacing", s.Bins.LengthMs)
		}
	}
	// Q's value is the mean; BER has only a maximum, which is its value.
	if s.Values[QdB][1] != 11.1 || s.Bins.High[QdB][1] != 11.5 || s.Values[PreFECBER][1] != 1.5e-4 {
		t.Errorf("values %v %v %v", s.Values[QdB], s.Bins.High[QdB], s.Values[PreFECBER])
	}

	a := "time,port,q_db_min,q_db_avg\n2026-03-14T00:00:00Z,p,9,10\n2026-03-14T00:15:00Z,p,9.5,10\n"
	b := "time,port,q_db\n2026-03-14T00:07:00Z,p,10.2\n"
	c := "time,port,q_db_min,q_db_avg\n2026-03-14T00:15:00Z,p,8.5,9.9\n"
	var in []*fileResult
	for i, txt := range []string{a, b, c} {
		in = append(in, readInput(string(rune('a'+i))+".csv", strings.NewReader(txt), Options{}, int64(len(txt))))
	}
	ds, err = assemble(in, 1)
	if err != nil {
		t.Fatal(err)
	}
	s = ds.Series[0].Decoded()
	if s.Len() != 3 || s.Values[QdB][2] != 9.9 || s.Bins.Low[QdB][2] != 8.5 || !math.IsNaN(s.Bins.Low[QdB][1]) || s.Bins.LengthMs[1] != 0 {
		t.Errorf("times %v values %v low %v lengths %v", s.TimesMs, s.Values[QdB], s.Bins.Low[QdB], s.Bins.LengthMs)
	}
}

// "q_db" and "q_db_avg" are the same column; a bad minimum rejects its row.
func TestPMBinErrors(t *testing.T) {
	_, err := ReadFile("d.csv", strings.NewReader("time,port,q_db,q_db_avg\n"), Options{})
	if !errors.Is(err, ErrDuplicateColumn) {
		t.Errorf("err = %v, want ErrDuplicateColumn", err)
	}
	ds, err := ReadFile("r.csv", strings.NewReader("time,port,pre_fec_ber_min,pre_fec_ber_avg\n2026-03-14T00:00:00Z,p,0.7,1e-3\n2026-03-14T00:15:00Z,p,1e-4,1e-3\n"), Options{})
	if err != nil {
		t.Fatal(err)
	}
	if len(ds.Rejected) != 1 || ds.Rejected[0].Line != 2 || !strings.Contains(ds.Rejected[0].Reason, "outside 0…0.5") {
		t.Errorf("rejected %+v", ds.Rejected)
	}
	if s := ds.Series[0].Decoded(); s.Len() != 1 || s.Bins.Low[PreFECBER][0] != 1e-4 {
		t.Errorf("series %+v bins %+v", s, s.Bins)
	}
}

// The export writes the bin companions and reads back to the same bins; a port without bins
// in the same export stays without.
func TestPMBinsExportRoundTrip(t *testing.T) {
	ds, err := ReadPaths([]string{filepath.Join("testdata", "messy", "pm_15min.csv"), filepath.Join("testdata", "out_of_order.csv")}, Options{})
	if err != nil {
		t.Fatal(err)
	}
	var buf strings.Builder
	if err := WriteCanonicalCSV(&buf, ds); err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(buf.String(), ",q_db_min,") || !strings.Contains(buf.String(), ",bin_length_s\n") {
		t.Fatalf("export header lacks the bin columns:\n%s", buf.String())
	}
	back, err := ReadFile("export.csv", strings.NewReader(buf.String()), Options{})
	if err != nil || len(back.Series) != len(ds.Series) {
		t.Fatalf("%v: %d series, want %d", err, len(back.Series), len(ds.Series))
	}
	same := func(a, b []float64) bool {
		if len(a) != len(b) {
			return false
		}
		for i := range a {
			if a[i] != b[i] && !(math.IsNaN(a[i]) && math.IsNaN(b[i])) {
				return false
			}
		}
		return true
	}
	for i, s := range ds.Series {
		b := back.Series[i].Decoded()
		if (s.Bins == nil) != (b.Bins == nil) {
			t.Fatalf("port %s: bins %v, read back %v", s.Port, s.Bins, b.Bins)
		}
		if s.Bins == nil {
			continue
		}
		for q := range NumQuantities {
			if !same(s.Bins.Low[q], b.Bins.Low[q]) || !same(s.Bins.High[q], b.Bins.High[q]) {
				t.Errorf("port %s %v: low %v/%v high %v/%v", s.Port, q, s.Bins.Low[q], b.Bins.Low[q], s.Bins.High[q], b.Bins.High[q])
			}
		}
		if fmt.Sprint(s.Bins.LengthMs) != fmt.Sprint(b.Bins.LengthMs) {
			t.Errorf("lengths %v, read back %v", s.Bins.LengthMs, b.Bins.LengthMs)
		}
	}
}
