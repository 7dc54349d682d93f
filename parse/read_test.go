package parse

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"slices"
	"strings"
	"testing"
	"testing/iotest"
)

// checkAccounting asserts rows_read = rows_used + rows_rejected for every input.
func checkAccounting(t *testing.T, ds *Dataset) {
	t.Helper()
	for _, in := range ds.Inputs {
		if in.RowsRead != in.RowsUsed+in.RowsRejected {
			t.Errorf("%s: rows_read %d != used %d + rejected %d", in.File, in.RowsRead, in.RowsUsed, in.RowsRejected)
		}
	}
}

// The damaged-input corpus: each file with the accounting, the rejections (line and sentinel)
// and the file error it must give.
func TestCorpus(t *testing.T) {
	type rej struct {
		line int
		err  error
	}
	tests := []struct {
		file                 string
		read, used, rejected int
		rejects              []rej
		fileErr              error
		ports                int
		dups                 int
	}{
		{file: "damaged_truncated.csv.gz", fileErr: ErrTruncated, ports: 1},
		{file: "damaged_ragged.csv", read: 4, used: 2, rejected: 2, rejects: []rej{{3, ErrFieldCount}, {4, ErrFieldCount}}, ports: 1},
		{file: "quoted_delimiters.csv", read: 3, used: 2, rejected: 1, rejects: []rej{{4, ErrQuote}}, ports: 2},
		{file: "damaged_non_utf8.csv", read: 3, used: 1, rejected: 2, rejects: []rej{{3, ErrEncoding}, {4, ErrNotNumber}}, ports: 1},
		{file: "damaged_empty.csv", fileErr: ErrEmpty},
		{file: "header_only.csv"},
		{file: "damaged_duplicate_columns.csv", fileErr: ErrDuplicateColumn},
		{file: "unknown_columns.csv", read: 1, used: 1, ports: 1},
		{file: "ber_spellings.csv", read: 3, used: 3, ports: 3},
		{file: "damaged_negative_dgd.csv", read: 2, used: 1, rejected: 1, rejects: []rej{{2, ErrImpossible}}, ports: 1},
		{file: "damaged_power_45dbm.csv", read: 2, used: 1, rejected: 1, rejects: []rej{{2, ErrImpossible}}, ports: 1},
		{file: "out_of_order.csv", read: 4, used: 4, ports: 1, dups: 1},
		{file: "semicolon_decimal_comma.csv", read: 2, used: 2, ports: 1},
		{file: "tab_unix_ms.tsv", read: 2, used: 2, ports: 1},
		{file: "damaged_bad_time.csv", read: 4, used: 1, rejected: 3, rejects: []rej{{3, ErrBadTime}, {4, ErrMissingValue}, {5, ErrMissingValue}}, ports: 1},
		{file: "damaged_missing_port_column.csv", fileErr: ErrMissingColumn},
		{file: "damaged_ber_out_of_range.csv", read: 4, rejected: 4, rejects: []rej{{2, ErrImpossible}, {3, ErrImpossible}, {4, ErrNotNumber}, {5, ErrNotNumber}}},
	}
	for _, tc := range tests {
		t.Run(tc.file, func(t *testing.T) {
			ds, err := ReadPaths([]string{filepath.Join("testdata", tc.file)}, Options{})
			checkAccounting(t, ds)
			if tc.fileErr != nil {
				if !errors.Is(err, tc.fileErr) {
					t.Fatalf("error %v, want %v", err, tc.fileErr)
				}
				var pe *ParseError
				if !errors.As(err, &pe) || pe.File == "" {
					t.Errorf("error %v is not a *ParseError naming the file", err)
				}
				if ds.Inputs[0].Error == "" {
					t.Errorf("InputStats.Error not set")
				}
			} else if err != nil {
				t.Fatalf("unexpected error %v", err)
			}
			in := ds.Inputs[0]
			if tc.fileErr == nil || tc.read > 0 {
				if in.RowsRead != tc.read || in.RowsUsed != tc.used || in.RowsRejected != tc.rejected {
					t.Errorf("read/used/rejected = %d/%d/%d, want %d/%d/%d", in.RowsRead, in.RowsUsed, in.RowsRejected, tc.read, tc.used, tc.rejected)
				}
			}
			if len(tc.rejects) > 0 {
				if len(ds.Rejected) != len(tc.rejects) {
					t.Fatalf("rejections %v, want %d", ds.Rejected, len(tc.rejects))
				}
				for i, want := range tc.rejects {
					got := ds.Rejected[i]
					if got.Line != want.line || !strings.Contains(got.Reason, want.err.Error()) {
						t.Errorf("rejection %d = line %d %q, want line %d %q", i, got.Line, got.Reason, want.line, want.err)
					}
				}
			}
			if len(ds.Series) != tc.ports {
				t.Errorf("ports %d, want %d", len(ds.Series), tc.ports)
			}
			if in.Duplicates != tc.dups {
				t.Errorf("duplicates %d, want %d", in.Duplicates, tc.dups)
			}
		})
	}
}

func TestTruncatedGzipKeepsRowsBefore(t *testing.T) {
	ds, err := ReadPaths([]string{"testdata/damaged_truncated.csv.gz"}, Options{})
	if !errors.Is(err, ErrTruncated) {
		t.Fatalf("err %v, want ErrTruncated", err)
	}
	in := ds.Inputs[0]
	if in.RowsUsed == 0 || in.RowsRead != in.RowsUsed+in.RowsRejected {
		t.Errorf("accounting %+v", in)
	}
	// The stream breaks off mid-line: that cut line is the one rejected.
	if in.RowsRejected != 1 || !strings.Contains(ds.Rejected[0].Reason, ErrTruncated.Error()) {
		t.Errorf("want the cut last line rejected as truncated, got %v", ds.Rejected)
	}
	// Rows that were used are whole rows of the original file, in order, 1 min apart.
	s := ds.Series[0].Decoded()
	for i := 1; i < s.Len(); i++ {
		if s.TimesMs[i]-s.TimesMs[i-1] != 60000 {
			t.Fatalf("times not 1 min apart at %d", i)
		}
	}
}

func TestOutOfOrderSortedLastWins(t *testing.T) {
	ds, err := ReadPaths([]string{"testdata/out_of_order.csv"}, Options{})
	if err != nil {
		t.Fatal(err)
	}
	s := ds.Series[0].Decoded()
	want := []float64{4e-3, 2e-3, 3e-3} // 08:00 twice: the later row (4e-3) wins
	if !reflect.DeepEqual(s.Values[PreFECBER], want) {
		t.Errorf("BER %v, want %v", s.Values[PreFECBER], want)
	}
	for i := 1; i < s.Len(); i++ {
		if s.TimesMs[i] <= s.TimesMs[i-1] {
			t.Errorf("times not strictly ascending: %v", s.TimesMs)
		}
	}
}

func TestDuplicatesAcrossFilesLaterFileWins(t *testing.T) {
	dir := t.TempDir()
	a := filepath.Join(dir, "a.csv")
	b := filepath.Join(dir, "b.csv")
	os.WriteFile(a, []byte("time,port,osnr_db\n2026-03-14T08:00:00Z,p,20\n2026-03-14T08:01:00Z,p,21\n"), 0o644)
	os.WriteFile(b, []byte("time,port,osnr_db,pdl_db\n2026-03-14T08:01:00Z,p,25,0.5\n"), 0o644)
	ds, err := ReadPaths([]string{a, b}, Options{})
	if err != nil {
		t.Fatal(err)
	}
	s := ds.Series[0].Decoded()
	if !reflect.DeepEqual(s.Values[OSNRdB], []float64{20, 25}) {
		t.Errorf("OSNR %v, want [20 25]", s.Values[OSNRdB])
	}
	if !math.IsNaN(s.Values[PDLdB][0]) || s.Values[PDLdB][1] != 0.5 {
		t.Errorf("PDL %v, want [NaN 0.5]", s.Values[PDLdB])
	}
	if ds.Inputs[0].Duplicates != 0 || ds.Inputs[1].Duplicates != 1 {
		t.Errorf("duplicates %d/%d, want 0/1", ds.Inputs[0].Duplicates, ds.Inputs[1].Duplicates)
	}
}

// Each series names the inputs its rows came from (indices into Dataset.Inputs, ascending):
// a port in one file, a port in two (one of them JSON Lines, its row replaced by the later
// file's), and none for an input whose every row was rejected.
func TestSeriesInputs(t *testing.T) {
	dir := t.TempDir()
	a := filepath.Join(dir, "a.csv")
	b := filepath.Join(dir, "b.jsonl")
	c := filepath.Join(dir, "c.csv")
	os.WriteFile(a, []byte("time,port,osnr_db\n2026-03-14T08:00:00Z,p,20\n2026-03-14T08:00:00Z,q,21\n"), 0o644)
	os.WriteFile(b, []byte(`{"time":"2026-03-14T08:00:00Z","port":"q","osnr_db":22}`+"\n"+`{"time":"2026-03-14T08:01:00Z","port":"r","osnr_db":23}`+"\n"), 0o644)
	os.WriteFile(c, []byte("time,port,pre_fec_ber\n2026-03-14T08:00:00Z,s,0.7\n"), 0o644)
	ds, err := ReadPaths([]string{a, b, c}, Options{})
	if err != nil {
		t.Fatal(err)
	}
	got := map[string][]int{}
	for _, s := range ds.Series {
		got[s.Port] = s.Inputs
	}
	want := map[string][]int{"p": {0}, "q": {0, 1}, "r": {1}}
	if !reflect.DeepEqual(got, want) {
		t.Errorf("inputs per port %v, want %v", got, want)
	}
	if ds.Inputs[2].RowsRejected != 1 {
		t.Errorf("c.csv: %d rows rejected, want 1", ds.Inputs[2].RowsRejected)
	}
}

// chunkReader returns at most n bytes per Read.
type chunkReader struct {
	r io.Reader
	n int
}

func (c *chunkReader) Read(p []byte) (int, error) {
	if len(p) > c.n {
		p = p[:c.n]
	}
	return c.r.Read(p)
}

// bigCSV makes a canonical CSV of rows rows over ports ports with a bad row every badEvery rows
// (0: none). It returns the content and the line numbers of the bad rows.
func bigCSV(rows, ports, badEvery int) (string, []int) {
	var b strings.Builder
	b.WriteString("time,port,pre_fec_ber,post_fec_ber,uncorrected_blocks,q_db,esnr_db,osnr_db,cd_ps_nm,dgd_ps,pdl_db,sop_rate_krad_s,lo_offset_mhz,rx_power_dbm,tx_power_dbm,frequency_thz\n")
	var bad []int
	t0 := int64(1773477000)
	for i := 0; i < rows; i++ {
		line := i + 2
		if badEvery > 0 && i%badEvery == badEvery-1 {
			fmt.Fprintf(&b, "%d,port-%03d,0.7,0,0,9.1,16.5,22.25,1702.5,3.25,0.5,12.5,-120.5,-9.75,-1.5,193.1\n", t0+int64(i/ports)*10, i%ports)
			bad = append(bad, line)
			continue
		}
		fmt.Fprintf(&b, "%d,port-%03d,%.4e,0,%d,%.2f,16.5,%.2f,1702.5,3.25,0.5,12.5,-120.5,-9.75,-1.5,193.1\n",
			t0+int64(i/ports)*10, i%ports, 1e-3+float64(i%97)*1e-5, i%3, 9+float64(i%13)/10, 20+float64(i%11)/4)
	}
	return b.String(), bad
}

// Whole, byte by byte and in odd-sized chunks, with one worker or several, the result is the same.
func TestReadersFeedIndependent(t *testing.T) {
	big, _ := bigCSV(30000, 17, 1001) // > 2 blocks of chunkSize
	lines := strings.SplitAfter(big, "\n")
	body := slices.Clone(lines[1 : len(lines)-1])
	slices.SortStableFunc(body, func(a, b string) int { return strings.Compare(strings.Split(a, ",")[1], strings.Split(b, ",")[1]) })
	inputs := map[string]string{
		"canonical.csv":      big,
		"sorted_by_port.csv": lines[0] + strings.Join(body, ""),
		"semicolon.csv":      "\ufeffTime;Port;Pre-FEC BER;Rx power [mW]\r\n2026-03-14 08:00:00;a;1,2E-03;0,5\r\n2026-03-14 08:01:00;a;x;0,5\r\n",
		"lines.jsonl":        "{\"time\":\"2026-03-14T08:00:00Z\",\"port\":\"a\",\"osnr_db\":21}\n{bad\n{\"time\":1773477060,\"port\":\"a\",\"osnr_db\":\"22,5\"}\n",
		"oc.json":            ocSample,
	}
	for name, content := range inputs {
		t.Run(name, func(t *testing.T) {
			ref, refErr := ReadFile(name, strings.NewReader(content), Options{})
			checkAccounting(t, ref)
			feeds := map[string]func() io.Reader{
				"one byte":   func() io.Reader { return iotest.OneByteReader(strings.NewReader(content)) },
				"half":       func() io.Reader { return iotest.HalfReader(strings.NewReader(content)) },
				"7 bytes":    func() io.Reader { return &chunkReader{strings.NewReader(content), 7} },
				"4093 bytes": func() io.Reader { return &chunkReader{strings.NewReader(content), 4093} },
				"data+EOF":   func() io.Reader { return iotest.DataErrReader(strings.NewReader(content)) },
			}
			for fname, feed := range feeds {
				for _, workers := range []int{1, 3} {
					if fname == "one byte" && len(content) > 1<<20 && workers == 3 {
						continue // one pass byte by byte is enough for the big input
					}
					got, err := ReadFile(name, feed(), Options{Workers: workers})
					if fmt.Sprint(err) != fmt.Sprint(refErr) {
						t.Errorf("%s/%d workers: err %v, want %v", fname, workers, err, refErr)
					}
					if !sameDataset(got, ref) {
						t.Errorf("%s/%d workers: dataset differs from whole read", fname, workers)
					}
				}
			}
		})
	}
}

// sameDataset compares two datasets, NaN equal to NaN.
func sameDataset(a, b *Dataset) bool {
	if !reflect.DeepEqual(a.Inputs, b.Inputs) || !reflect.DeepEqual(a.Rejected, b.Rejected) || len(a.Series) != len(b.Series) {
		return false
	}
	for i := range a.Series {
		x, y := a.Series[i].Decoded(), b.Series[i].Decoded()
		if x.Port != y.Port || !reflect.DeepEqual(x.TimesMs, y.TimesMs) || x.Profile() != y.Profile() {
			return false
		}
		for q := range x.Values {
			if (x.Values[q] == nil) != (y.Values[q] == nil) || len(x.Values[q]) != len(y.Values[q]) {
				return false
			}
			for k := range x.Values[q] {
				if math.Float64bits(x.Values[q][k]) != math.Float64bits(y.Values[q][k]) &&
					!(math.IsNaN(x.Values[q][k]) && math.IsNaN(y.Values[q][k])) {
					return false
				}
			}
		}
	}
	return true
}

// Line numbers stay right across block boundaries and parallel workers.
func TestLineNumbersAcrossChunks(t *testing.T) {
	content, bad := bigCSV(40000, 9, 997)
	if len(content) < 2*chunkSize {
		t.Fatalf("test input too small to span blocks: %d bytes", len(content))
	}
	ds, err := ReadFile("big.csv", strings.NewReader(content), Options{Workers: 4})
	if err != nil {
		t.Fatal(err)
	}
	checkAccounting(t, ds)
	if len(ds.Rejected) != len(bad) {
		t.Fatalf("%d rejections, want %d", len(ds.Rejected), len(bad))
	}
	lines := strings.Split(content, "\n")
	for i, r := range ds.Rejected {
		if r.Line != bad[i] || r.Column != 3 || !strings.Contains(lines[r.Line-1], ",0.7,") {
			t.Fatalf("rejection %d at line %d column %d, want line %d column 3", i, r.Line, r.Column, bad[i])
		}
	}
	if ds.Inputs[0].RowsUsed != 40000-len(bad) {
		t.Errorf("used %d", ds.Inputs[0].RowsUsed)
	}
}

func TestRoundTrip(t *testing.T) {
	big, _ := bigCSV(5000, 7, 0)
	sources := map[string]string{
		"generated.csv": big,
		"semicolon.csv": "Time;Port;Pre-FEC BER;Rx power [mW];CD [ns/nm];Wavelength [nm]\n2026-03-14 08:00:00.125;\"a;b\";1,2E-03;0,5;1,7;1552,524\n2026-03-14 08:00:01;NA;1e-3;1;1;1550\n2026-03-14 08:00:01;\" sp \";NA;0,3;-;1550\n",
		"oc.json":       ocSample,
		"profile.csv":   "time,port,Module profile,q_db\n2026-03-14T08:00:00Z,a,400g-dp-16qam-cfec,9\n2026-03-14T08:00:00Z,b,x;y,8\n2026-03-14T08:01:00Z,a,,9.5\n2026-03-14T08:01:00Z,c,p1,7\n2026-03-14T08:02:00Z,c,p2,7\n",
	}
	for name, content := range sources {
		t.Run(name, func(t *testing.T) {
			ds1, err := ReadFile(name, strings.NewReader(content), Options{})
			if err != nil {
				t.Fatal(err)
			}
			var out1, out2 bytes.Buffer
			if err := WriteCanonicalCSV(&out1, ds1); err != nil {
				t.Fatal(err)
			}
			ds2, err := ReadFile("export.csv", bytes.NewReader(out1.Bytes()), Options{})
			if err != nil {
				t.Fatal(err)
			}
			if ds2.Inputs[0].RowsRejected != 0 {
				t.Fatalf("export rejected on read back: %v", ds2.Rejected)
			}
			if err := WriteCanonicalCSV(&out2, ds2); err != nil {
				t.Fatal(err)
			}
			if !bytes.Equal(out1.Bytes(), out2.Bytes()) {
				t.Errorf("export → read → export not byte-identical")
			}
			a, b := *ds1, *ds2
			a.Inputs, b.Inputs, a.Rejected, b.Rejected = nil, nil, nil, nil
			if !sameDataset(&a, &b) {
				t.Errorf("series differ after round trip")
			}
		})
	}
}

func TestStrict(t *testing.T) {
	content := "time,port,osnr_db\n2026-03-14T08:00:00Z,p,20\n2026-03-14T08:01:00Z,p,abc\n2026-03-14T08:02:00Z,p,-\n"
	_, err := ReadFile("s.csv", strings.NewReader(content), Options{Strict: true})
	var pe *ParseError
	if !errors.As(err, &pe) || !errors.Is(err, ErrNotNumber) {
		t.Fatalf("err %v, want *ParseError wrapping ErrNotNumber", err)
	}
	if pe.File != "s.csv" || pe.Line != 3 || pe.Column != 3 || pe.Field != "osnr_db" {
		t.Errorf("error at %+v, want s.csv line 3 column 3 osnr_db", pe)
	}
	if got := pe.Error(); got != `s.csv:3:3: osnr_db: not a number: "abc"` {
		t.Errorf("Error() = %q", got)
	}
	ds, err := ReadFile("s.csv", strings.NewReader(content), Options{})
	if err != nil || ds.Inputs[0].RowsUsed != 2 || ds.Inputs[0].RowsRejected != 1 {
		t.Errorf("lenient read: %v %+v", err, ds.Inputs)
	}
	_, err = ReadFile("s.jsonl", strings.NewReader("{\"time\":1,\"port\":\"p\",\"osnr_db\":20}\n{\"time\":2,\"port\":\"p\",\"pdl_db\":-1}\n"), Options{Strict: true})
	if !errors.Is(err, ErrImpossible) {
		t.Errorf("JSON Lines strict: err %v, want ErrImpossible", err)
	}
}

func TestFolderWalk(t *testing.T) {
	dir := t.TempDir()
	must := func(err error) {
		if err != nil {
			t.Fatal(err)
		}
	}
	must(os.MkdirAll(filepath.Join(dir, "site", ".hidden"), 0o755))
	row := "time,port,osnr_db\n2026-03-14T08:00:00Z,p,20\n"
	must(os.WriteFile(filepath.Join(dir, "site", "a.csv"), []byte(row), 0o644))
	must(os.WriteFile(filepath.Join(dir, "site", "b.TXT"), []byte(row), 0o644))
	must(os.WriteFile(filepath.Join(dir, "site", "notes.pdf"), []byte("%PDF"), 0o644))
	must(os.WriteFile(filepath.Join(dir, "site", ".hidden", "c.csv"), []byte(row), 0o644))
	must(os.WriteFile(filepath.Join(dir, ".d.csv"), []byte(row), 0o644))
	ds, err := ReadPaths([]string{dir}, Options{})
	must(err)
	var files []string
	for _, in := range ds.Inputs {
		files = append(files, filepath.Base(in.File))
	}
	if !reflect.DeepEqual(files, []string{"a.csv", "b.TXT"}) {
		t.Errorf("read %v, want [a.csv b.TXT]", files)
	}
	if len(ds.Skipped) != 2 { // notes.pdf and .d.csv; the hidden folder is not entered
		t.Errorf("skipped %v", ds.Skipped)
	}
	if _, err := ReadPaths([]string{filepath.Join(dir, "nope")}, Options{}); err == nil {
		t.Errorf("missing path: no error")
	}
}

func TestSHA256(t *testing.T) {
	// sha256 of the raw input, computed with Python's hashlib.
	ds, _ := ReadFile("h.csv", strings.NewReader("time,port,osnr_db\n"), Options{})
	const want = "8139b6168726756e5593367020f242944f60a1cb6d1be78d60479580ea1850d3"
	if got := ds.Inputs[0].SHA256; got != want {
		t.Errorf("sha256 %q, want %q", got, want)
	}
}

// A strict read stops each input at its first rejected row and counts exactly: every row up to
// and including the bad one is read, the ones before it used, the bad one rejected; nothing
// after it is read. Large inputs are cut into blocks parsed in parallel, so the bad row is put
// in the middle of a later block as well as in a small file read whole.
func TestStrictCountsExact(t *testing.T) {
	csvRows := func(n, bad int) string {
		var b strings.Builder
		b.WriteString("time,port,osnr_db\n")
		for i := 1; i <= n; i++ {
			v := "20.5"
			if i == bad {
				v = "abc"
			}
			fmt.Fprintf(&b, "%d,port-%d,%s\n", 1_700_000_000+i, i%7, v)
		}
		return b.String()
	}
	jsonRows := func(n, bad int) string {
		var b strings.Builder
		for i := 1; i <= n; i++ {
			v := "20.5"
			if i == bad {
				v = "-1e9"
			}
			fmt.Fprintf(&b, "{\"time\":%d,\"port\":\"p\",\"osnr_db\":20,\"pdl_db\":%s}\n", 1_700_000_000+i, v)
		}
		return b.String()
	}
	for _, tc := range []struct {
		name, file, content string
		bad, headerLines    int
	}{
		{"small CSV", "s.csv", csvRows(50, 17), 17, 1},
		{"CSV of several blocks", "big.csv", csvRows(150_000, 101_234), 101_234, 1},
		{"bad row on the first line", "first.csv", csvRows(10, 1), 1, 1},
		{"JSON Lines", "s.jsonl", jsonRows(40, 9), 9, 0},
	} {
		t.Run(tc.name, func(t *testing.T) {
			ds, err := ReadFile(tc.file, strings.NewReader(tc.content), Options{Strict: true, Workers: 4})
			var pe *ParseError
			if !errors.As(err, &pe) || pe.Line != tc.bad+tc.headerLines {
				t.Fatalf("err %v, want a *ParseError on line %d", err, tc.bad+tc.headerLines)
			}
			in := ds.Inputs[0]
			if in.RowsRead != tc.bad || in.RowsUsed != tc.bad-1 || in.RowsRejected != 1 {
				t.Errorf("read %d used %d rejected %d, want %d, %d, 1", in.RowsRead, in.RowsUsed, in.RowsRejected, tc.bad, tc.bad-1)
			}
			if !strings.Contains(in.Error, fmt.Sprintf(":%d:", tc.bad+tc.headerLines)) || !strings.Contains(in.Error, "strict") {
				t.Errorf("Error = %q: want the bad line and that strict reading stopped there", in.Error)
			}
			if len(ds.Rejected) != 1 || ds.Rejected[0].Line != tc.bad+tc.headerLines {
				t.Errorf("rejected %+v", ds.Rejected)
			}
			samples := 0
			for _, s := range ds.Series {
				samples += s.Len()
			}
			if samples != tc.bad-1 {
				t.Errorf("%d samples kept, want %d", samples, tc.bad-1)
			}
		})
	}
}

// Read in batches, a folder gives what ReadPaths gives: the batches' inputs, rejections and
// skipped files joined in order are ReadPaths', and each port's series is the same, in the
// batch of its file (the ports here lie in one file each).
func TestReadEachMatchesReadPaths(t *testing.T) {
	dir := t.TempDir()
	write := func(name, text string) {
		if err := os.WriteFile(filepath.Join(dir, name), []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	write("a.csv", "time,port,osnr_db,rx_power_dbm\n2026-03-14T08:00:00Z,p1,20,-9\n2026-03-14T08:01:00Z,p1,21,-9.5\n2026-03-14T08:01:00Z,p1,22,-9.25\n")
	write("b.csv", "time,port,pre_fec_ber\n2026-03-14T08:00:00Z,p2,0.9\n2026-03-14T08:01:00Z,p2,1e-3\n")
	write("c.txt", "")
	write("d.jsonl", `{"time":"2026-03-14T08:00:00Z","port":"p3","dgd_ps":4.5}`+"\n")
	write("e.pdf", "%PDF")
	write("f.csv", "time,port,q_db,profile\n2026-03-14T08:00:00Z,p0,9.5,400ZR\nnot a time,p0,9.1,400ZR\n")
	whole, werr := ReadPaths([]string{dir}, Options{})
	for _, batch := range []int{1, 2, 3, 10} {
		var got Dataset
		var errs []string
		series := map[string]*Series{}
		err := ReadEach([]string{dir}, Options{}, batch, func(ds *Dataset, err error) error {
			got.Inputs = append(got.Inputs, ds.Inputs...)
			got.Rejected = append(got.Rejected, ds.Rejected...)
			got.Skipped = append(got.Skipped, ds.Skipped...)
			if err != nil {
				errs = append(errs, err.Error())
			}
			for _, s := range ds.Series {
				if series[s.Port] != nil {
					t.Errorf("batch %d: port %s in two batches", batch, s.Port)
				}
				series[s.Port] = s
			}
			return nil
		})
		if err != nil {
			t.Fatal(err)
		}
		if !reflect.DeepEqual(got.Inputs, whole.Inputs) || !reflect.DeepEqual(got.Rejected, whole.Rejected) || !reflect.DeepEqual(got.Skipped, whole.Skipped) {
			t.Errorf("batch %d: inputs %+v\nrejected %+v\nskipped %+v\nwant %+v\n%+v\n%+v", batch, got.Inputs, got.Rejected, got.Skipped, whole.Inputs, whole.Rejected, whole.Skipped)
		}
		if (werr == nil) != (len(errs) == 0) {
			t.Errorf("batch %d: errors %q, ReadPaths %v", batch, errs, werr)
		}
		if len(series) != len(whole.Series) {
			t.Errorf("batch %d: %d ports, want %d", batch, len(series), len(whole.Series))
		}
		for _, w := range whole.Series {
			s := series[w.Port]
			if s == nil {
				t.Errorf("batch %d: port %s missing", batch, w.Port)
				continue
			}
			ws, gs := w.Decoded(), s.Decoded()
			if !reflect.DeepEqual(ws.TimesMs, gs.TimesMs) || !reflect.DeepEqual(fmt.Sprint(ws.Values), fmt.Sprint(gs.Values)) || !reflect.DeepEqual(ws.Profiles, gs.Profiles) {
				t.Errorf("batch %d: port %s differs", batch, w.Port)
			}
		}
	}
	if len(whole.Skipped) != 2 || len(whole.Rejected) == 0 || len(whole.Series) != 4 {
		t.Fatalf("the folder should have skipped files, rejections and four ports: %+v", whole)
	}
}
