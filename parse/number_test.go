package parse

import (
	"math"
	"strconv"
	"strings"
	"testing"
	"time"
)

// Expected times come from the standard library's time.Date, independent of parseTime.
func TestTimeFormats(t *testing.T) {
	base := time.Date(2026, 3, 14, 8, 30, 0, 0, time.UTC).UnixMilli()
	tests := []struct {
		in   string
		want int64
	}{
		{"2026-03-14T08:30:00Z", base},
		{"2026-03-14t08:30:00z", base},
		{"2026-03-14T08:30:00.250Z", base + 250},
		{"2026-03-14T08:30:00.123456789Z", base + 123},
		{"2026-03-14T09:30:00+01:00", base},
		{"2026-03-14T03:00:00-05:30", base},
		{"2026-03-14 08:30:00", base},
		{"2026-03-14 08:30:00.5", base + 500},
		{"2026-03-14 08:30:00 UTC", base},
		{"2026-03-14 08:30:00Z", base},
		{strconv.FormatInt(base/1000, 10), base},               // Unix seconds
		{strconv.FormatInt(base, 10), base},                    // Unix milliseconds
		{strconv.FormatInt(base/1000, 10) + ".25", base + 250}, // fractional seconds
		{strconv.FormatInt(base*1000, 10), base},               // microseconds
		{strconv.FormatInt(base*1000000+999, 10), base},        // nanoseconds (gNMI)
		{"2024-02-29T00:00:00Z", time.Date(2024, 2, 29, 0, 0, 0, 0, time.UTC).UnixMilli()},
		{"1969-12-31T23:59:59.500Z", -500},
		{"0", 0},
		{"1900-01-01T00:00:00Z", time.Date(1900, 1, 1, 0, 0, 0, 0, time.UTC).UnixMilli()},
		{"2199-12-31T23:59:59.999Z", time.Date(2200, 1, 1, 0, 0, 0, 0, time.UTC).UnixMilli() - 1},
	}
	for _, tc := range tests {
		t.Run(tc.in, func(t *testing.T) {
			got, ok := parseTime([]byte(tc.in))
			if !ok || got != tc.want {
				t.Errorf("parseTime(%q) = %d, %v; want %d", tc.in, got, ok, tc.want)
			}
		})
	}
}

func TestTimeRejected(t *testing.T) {
	for _, in := range []string{
		"", "yesterday", "14/03/2026 08:30", "2026-03-14T08:30:00", // RFC 3339 needs a zone
		"2026-13-14T08:30:00Z", "2026-02-30T08:30:00Z", "2025-02-29T00:00:00Z", "2026-03-14T24:00:00Z",
		"2026-03-14T08:60:00Z", "2026-03-14T08:30:60Z", "2026-03-14T08:30:00+25:00", "2026-03-14X08:30:00Z",
		"2026-03-14T08:30:00.Z", "12:30", "1e400", "0x10",
		"1899-12-31T23:59:59Z", "2200-01-01T00:00:00Z", "0000-01-01 00:00:00Z", "-99999999999", "9999999999999999999",
	} {
		t.Run(in, func(t *testing.T) {
			if ms, ok := parseTime([]byte(in)); ok {
				t.Errorf("parseTime(%q) = %d, want rejection", in, ms)
			}
		})
	}
}

func TestMissingSpellings(t *testing.T) {
	for _, in := range []string{"", "NA", "na", "NaN", "nan", "NAN", "n/a", "N/A", "-", "  ", " NA "} {
		t.Run("'"+in+"'", func(t *testing.T) {
			ds, err := readCSVString(t, "m.csv", "time,port,osnr_db,pdl_db\n2026-03-14T08:00:00Z,p,"+in+",0.5\n", Options{})
			if err != nil {
				t.Fatal(err)
			}
			in0 := ds.Inputs[0]
			if in0.RowsUsed != 1 || len(ds.Series) != 1 {
				t.Fatalf("row not used: %+v %v", in0, ds.Rejected)
			}
			if v := ds.Series[0].Decoded().Values[OSNRdB][0]; !math.IsNaN(v) {
				t.Errorf("%q read as %g, want missing (NaN)", in, v)
			}
		})
	}
	for _, in := range []string{"N", "NAA", "--", "null", "0"} {
		if isMissing([]byte(in)) {
			t.Errorf("isMissing(%q) = true", in)
		}
	}
}

// parseFloat must agree with strconv.ParseFloat bit for bit wherever it accepts input.
func TestParseFloat(t *testing.T) {
	for _, in := range []string{
		"0", "-0", "1", "+1", "1e-3", "0.001", "1.0E-03", ".5", "5.", "-9.5", "193.1", "1552.524",
		"3.8e-3", "1.22e-2", "123456789012345678", "1234567890123456789012", "9007199254740993",
		"1e22", "1e23", "1e-22", "1e-23", "2.2250738585072014e-308", "4.9e-324", "1.7976931348623157e308",
		"0.1", "0.30000000000000004", "-1702.5", "000123.4500", "1e+05",
	} {
		got, ok := parseFloat([]byte(in))
		want, err := strconv.ParseFloat(in, 64)
		if !ok || err != nil || math.Float64bits(got) != math.Float64bits(want) {
			t.Errorf("parseFloat(%q) = %v, %v; strconv gives %v, %v", in, got, ok, want, err)
		}
	}
	for _, in := range []string{"", "-", "+", ".", "e5", "1e", "1e+", "1..2", "1.2.3", "Inf", "NaN", "0x1p-2", "1_000", "1,5", "1e400", "12a"} {
		if v, ok := parseFloat([]byte(in)); ok {
			t.Errorf("parseFloat(%q) = %v, want rejection", in, v)
		}
	}
}

func TestBERSpellingsEqual(t *testing.T) {
	ds, err := ReadPaths([]string{"testdata/ber_spellings.csv"}, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if len(ds.Series) != 3 {
		t.Fatalf("want 3 ports, got %d", len(ds.Series))
	}
	for _, s := range ds.Series {
		s := s.Decoded()
		if v := s.Values[PreFECBER][0]; v != 0.001 {
			t.Errorf("port %s: BER %v, want exactly 0.001", s.Port, v)
		}
	}
}

// FuzzParseFloat checks parseFloat against strconv.ParseFloat both ways on its alphabet (every
// number strconv reads finite is read alike, nothing else is read), and scanFloat, which reads a
// number at the start of a field, on every prefix it takes, with '.' and with a decimal comma,
// as well as the value code scanDecimal's digits give (see decimal.code).
func FuzzParseFloat(f *testing.F) {
	for _, s := range []string{"1e-3", "0.001", "-9.5", "1234567890123456789012", "1e23", "+.5e-7", "0,00125;x", "00000000000000000001.5", "1e5e"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		got, ok := parseFloat([]byte(s))
		want, err := strconv.ParseFloat(s, 64)
		if ok && (err != nil || math.Float64bits(got) != math.Float64bits(want)) {
			t.Fatalf("parseFloat(%q) = %v; strconv.ParseFloat gives %v, %v", s, got, want, err)
		}
		if !ok && err == nil && !math.IsInf(want, 0) && strings.Trim(s, "0123456789.eE+-") == "" {
			t.Fatalf("parseFloat(%q) refused; strconv.ParseFloat gives %v", s, want)
		}
		for _, mark := range []byte{'.', ','} {
			v, n, ok := scanFloat([]byte(s), 0, mark)
			if !ok {
				continue
			}
			num := s[:n]
			if mark == ',' {
				if strings.Count(num, ",")+strings.Count(num, ".") > 1 {
					t.Fatalf("scanFloat(%q, ',') took %q, two decimal marks", s, num)
				}
				num = strings.Replace(num, ",", ".", 1)
			}
			want, err := strconv.ParseFloat(num, 64)
			if err != nil || math.Float64bits(v) != math.Float64bits(want) {
				t.Fatalf("scanFloat(%q, %q) = %v after %d bytes; strconv.ParseFloat(%q) gives %v, %v", s, mark, v, n, num, want, err)
			}
			// The code taken from the digits, when they give one, is the same float64.
			d, _, _ := scanDecimal([]byte(s), 0, mark)
			if c, ok := d.code(); ok && math.Float64bits(unpackValue(c)) != math.Float64bits(want) {
				t.Fatalf("scanDecimal(%q, %q).code() decodes to %v; strconv.ParseFloat(%q) gives %v", s, mark, unpackValue(c), num, want)
			}
		}
	})
}
