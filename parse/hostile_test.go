package parse

import (
	"bytes"
	"compress/gzip"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"runtime"
	"strings"
	"testing"
	"time"
)

// The hostile and messy inputs: bounded resources (row, byte and line limits, repeated rows,
// streams that never end, standard input twice) and the exports people really have (title
// lines, day-first dates, times without seconds, zones, quoted decimal commas, binary files
// and non-log files in folders). Expected times come from time.Date.

func gzipBytes(t *testing.T, parts ...[]byte) []byte {
	t.Helper()
	var buf bytes.Buffer
	zw, _ := gzip.NewWriterLevel(&buf, gzip.BestCompression)
	for _, p := range parts {
		if _, err := zw.Write(p); err != nil {
			t.Fatal(err)
		}
	}
	if err := zw.Close(); err != nil {
		t.Fatal(err)
	}
	return buf.Bytes()
}

const bombHeader = "time,port,pre_fec_ber,rx_power_dbm\n"
const bombRow = "2026-03-14T08:30:00Z,1/1/C1,1.2e-3,-8.1\n"

// A small gzip of many repeated rows: the repeats are merged as they arrive (one sample, the
// later row winning) and the row limit ends the read with a clear error, whatever the
// decompressed size.
func TestGzipOfRepeatedRows(t *testing.T) {
	last := "2026-03-14T08:30:00Z,1/1/C1,2.5e-3,-9.5\n"
	z := gzipBytes(t, []byte(bombHeader), bytes.Repeat([]byte(bombRow), 60000), []byte(last))
	t.Run("under the limit", func(t *testing.T) {
		ds, err := ReadFile("bomb.csv.gz", bytes.NewReader(z), Options{})
		if err != nil {
			t.Fatal(err)
		}
		checkAccounting(t, ds)
		in := ds.Inputs[0]
		if in.RowsRead != 60001 || in.Duplicates != 60000 {
			t.Errorf("read %d, duplicates %d; want 60001 and 60000", in.RowsRead, in.Duplicates)
		}
		if len(ds.Series) != 1 || ds.Series[0].Len() != 1 {
			t.Fatalf("series %+v, want one port with one sample", ds.Series)
		}
		s := ds.Series[0].Decoded()
		if s.Values[PreFECBER][0] != 2.5e-3 || s.Values[RxPowerDBm][0] != -9.5 {
			t.Errorf("the last row must win: BER %g, Rx %g", s.Values[PreFECBER][0], s.Values[RxPowerDBm][0])
		}
	})
	t.Run("over the row limit", func(t *testing.T) {
		ds, err := ReadFile("bomb.csv.gz", bytes.NewReader(z), Options{MaxRows: 10000})
		if !errors.Is(err, ErrTooLarge) || !strings.Contains(err.Error(), "--max-rows") {
			t.Fatalf("err = %v, want ErrTooLarge naming --max-rows", err)
		}
		checkAccounting(t, ds)
		if in := ds.Inputs[0]; in.RowsRead > 10000 || in.Error == "" {
			t.Errorf("read %d rows (limit 10000), error %q", in.RowsRead, in.Error)
		}
	})
}

// The row limit counts over all inputs of a run.
func TestRowLimitAcrossInputs(t *testing.T) {
	dir := t.TempDir()
	var rows strings.Builder
	rows.WriteString(bombHeader)
	for i := range 600 {
		rows.WriteString(time.Date(2026, 3, 14, 0, i, 0, 0, time.UTC).Format(time.RFC3339) + ",p,1e-3,-8\n")
	}
	for _, n := range []string{"a.csv", "b.csv"} {
		if err := os.WriteFile(filepath.Join(dir, n), []byte(rows.String()), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	// Each file's port counts as PortRows rows more.
	if _, err := ReadPaths([]string{dir}, Options{MaxRows: 1200 + 2*PortRows}); err != nil {
		t.Fatalf("1200 rows and 2 file ports under a limit of %d: %v", 1200+2*PortRows, err)
	}
	ds, err := ReadPaths([]string{dir}, Options{MaxRows: 1000})
	if !errors.Is(err, ErrTooLarge) {
		t.Fatalf("err = %v, want ErrTooLarge", err)
	}
	checkAccounting(t, ds)
	total := 0
	for _, in := range ds.Inputs {
		total += in.RowsRead
	}
	if total > 1000 {
		t.Errorf("read %d rows past the limit of 1000", total)
	}
}

// A gzip of blank lines holds no row: the unpacked-byte bound (1 KiB per row of the limit)
// ends it.
func TestGzipOfBlankLines(t *testing.T) {
	z := gzipBytes(t, []byte(bombHeader), bytes.Repeat([]byte("\n"), 3<<20))
	ds, err := ReadFile("blank.csv.gz", bytes.NewReader(z), Options{MaxRows: 1000})
	if !errors.Is(err, ErrTooLarge) || !strings.Contains(err.Error(), "unpacked input") {
		t.Fatalf("err = %v, want ErrTooLarge about unpacked input", err)
	}
	checkAccounting(t, ds)
}

// Lines are bounded: a header or a row with no line end in 1 MiB stops the input with a clear
// error (and a 1 MiB header line is scanned once, not once per read).
func TestLongLines(t *testing.T) {
	long := strings.Repeat("x", 3<<20)
	for _, tc := range []struct{ name, in, want string }{
		{"header", "time,port," + long, "not a CSV header"},
		{"header then more", "time,port," + long + "\n" + bombRow, "not a CSV header"},
		{"row", bombHeader + bombRow + "2026-03-14T08:31:00Z,p," + long + "\n" + bombRow, "longer than 1 MiB"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			// A stream of unknown size takes the block-by-block path.
			ds, err := ReadFile("long.csv", io.MultiReader(strings.NewReader(tc.in)), Options{})
			if !errors.Is(err, ErrTooLarge) || !strings.Contains(err.Error(), tc.want) {
				t.Fatalf("err = %v, want ErrTooLarge saying %q", err, tc.want)
			}
			checkAccounting(t, ds)
		})
	}
}

// endless is a stream that never ends (like /dev/zero or a FIFO fed forever).
type endless struct {
	line []byte
	off  int
}

func (e *endless) Read(p []byte) (int, error) {
	n := 0
	for n < len(p) {
		c := copy(p[n:], e.line[e.off:])
		n += c
		e.off = (e.off + c) % len(e.line)
	}
	return n, nil
}

// Streams that never end finish with a clear error, not a hang: binary ones at once (the
// hash covers at most 64 MiB more), text ones at the row limit.
func TestEndlessStreams(t *testing.T) {
	t.Run("zeros", func(t *testing.T) {
		ds, err := ReadFile("zeros", &endless{line: []byte{0}}, Options{})
		if !errors.Is(err, ErrNotText) {
			t.Fatalf("err = %v, want ErrNotText", err)
		}
		if in := ds.Inputs[0]; in.SHA256 != "" || len(in.Notes) == 0 {
			t.Errorf("an endless stream has no whole hash: sha %q, notes %v", in.SHA256, in.Notes)
		}
	})
	t.Run("text rows", func(t *testing.T) {
		r := io.MultiReader(strings.NewReader(bombHeader), &endless{line: []byte("2026-03-14T08:30:00Z,p,1e-3,-8\n")})
		ds, err := ReadFile("rows", r, Options{MaxRows: 50000})
		if !errors.Is(err, ErrTooLarge) {
			t.Fatalf("err = %v, want ErrTooLarge", err)
		}
		checkAccounting(t, ds)
	})
	if runtime.GOOS == "linux" {
		t.Run("/dev/zero", func(t *testing.T) {
			if _, err := ReadPaths([]string{"/dev/zero"}, Options{}); !errors.Is(err, ErrNotText) {
				t.Fatalf("err = %v, want ErrNotText", err)
			}
		})
	}
}

func TestStandardInputOnce(t *testing.T) {
	_, err := ReadPaths([]string{"-", "-"}, Options{})
	if err == nil || !strings.Contains(err.Error(), "given twice") {
		t.Fatalf("err = %v, want a refusal of the second -", err)
	}
}

// Binary files get "not a text file", not a complaint about columns.
func TestNotText(t *testing.T) {
	for _, tc := range []struct{ file, want string }{
		{"messy/workbook.csv", "binary data"},
		{"messy/utf16.csv", "UTF-16"},
	} {
		t.Run(tc.file, func(t *testing.T) {
			_, err := ReadPaths([]string{filepath.Join("testdata", tc.file)}, Options{})
			if !errors.Is(err, ErrNotText) || !strings.Contains(err.Error(), tc.want) {
				t.Fatalf("err = %v, want ErrNotText saying %q", err, tc.want)
			}
		})
	}
}

// Title lines above the header are skipped, named in a note and not counted as rows;
// day-first dates without seconds are read with DayFirst.
func TestPreambleAndDayFirst(t *testing.T) {
	path := filepath.Join("testdata", "messy", "preamble_day_first.csv")
	ds, err := ReadPaths([]string{path}, Options{DayFirst: true})
	if err != nil {
		t.Fatal(err)
	}
	in := ds.Inputs[0]
	if in.RowsRead != 2 || in.RowsUsed != 2 {
		t.Fatalf("read %d used %d, want 2 and 2 (title lines are not rows)", in.RowsRead, in.RowsUsed)
	}
	note := strings.Join(in.Notes, "\n")
	for _, w := range []string{"2 lines (1–2)", "header (line 4)", `"Performance export of node site-a-ot1"`} {
		if !strings.Contains(note, w) {
			t.Errorf("notes %q lack %q", note, w)
		}
	}
	s := ds.Series[0].Decoded()
	want := time.Date(2026, 3, 14, 8, 30, 0, 0, time.UTC).UnixMilli()
	if s.TimesMs[0] != want || s.Values[PreFECBER][0] != 1.2e-3 || s.Values[RxPowerDBm][1] != -8.2 {
		t.Errorf("got %v %v %v", s.TimesMs, s.Values[PreFECBER], s.Values[RxPowerDBm])
	}

	// Without --day-first the rows are rejected with the reason and the accepted formats.
	ds, _ = ReadPaths([]string{path}, Options{})
	if len(ds.Rejected) != 2 || !strings.Contains(ds.Rejected[0].Reason, "--day-first") || !strings.Contains(ds.Rejected[0].Reason, "accepted: RFC 3339") {
		t.Errorf("rejections %+v", ds.Rejected)
	}
	// With the zone the same civil times are an hour earlier in UTC (CET, UTC+1 in March).
	ds, err = ReadPaths([]string{path}, Options{DayFirst: true, TimeZone: "Europe/Berlin"})
	if err != nil || ds.Series[0].Decoded().TimesMs[0] != want-3600000 {
		t.Errorf("with Europe/Berlin: %v, %v", ds.Series[0].Decoded().TimesMs, err)
	}
}

// A title search gives up after maxPreambleLines and reports the first line's problem.
func TestPreambleWithoutHeader(t *testing.T) {
	in := strings.Repeat("some title\n", maxPreambleLines+5) + bombHeader + bombRow
	_, err := ReadFile("titles.csv", strings.NewReader(in), Options{})
	if !errors.Is(err, ErrMissingColumn) || !strings.Contains(err.Error(), "titles.csv:1:") {
		t.Fatalf("err = %v, want the first line's missing-column error", err)
	}
	// A header with a duplicate column is that header's error, not a title.
	_, err = ReadFile("dup.csv", strings.NewReader("time,port,rx_power_dbm,rx_power_mw\n"+bombRow), Options{})
	if !errors.Is(err, ErrDuplicateColumn) {
		t.Fatalf("err = %v, want ErrDuplicateColumn", err)
	}
}

// In comma CSV a quoted field may carry a decimal comma; one that could be a thousands
// separator is rejected as ambiguous, never guessed.
func TestQuotedDecimalComma(t *testing.T) {
	ds, err := ReadPaths([]string{filepath.Join("testdata", "messy", "quoted_decimal_comma.csv")}, Options{})
	if err != nil {
		t.Fatal(err)
	}
	checkAccounting(t, ds)
	in := ds.Inputs[0]
	if in.RowsUsed != 2 || in.RowsRejected != 2 {
		t.Fatalf("used %d rejected %d, want 2 and 2", in.RowsUsed, in.RowsRejected)
	}
	s := ds.Series[0].Decoded()
	if s.Values[PreFECBER][0] != 0.0012 || s.Values[RxPowerDBm][0] != -8.15 || s.Values[CDpsPerNm][0] != 1702.5 {
		t.Errorf("values %v %v %v", s.Values[PreFECBER], s.Values[RxPowerDBm], s.Values[CDpsPerNm])
	}
	if r := ds.Rejected[0]; r.Line != 3 || !strings.Contains(r.Reason, "ambiguous") || r.Field != "cd_ps_nm" {
		t.Errorf("rejection %+v, want line 3 cd_ps_nm ambiguous", r)
	}
	if r := ds.Rejected[1]; r.Line != 5 || !strings.Contains(r.Reason, "not a number") {
		t.Errorf("rejection %+v, want line 5 not a number", r)
	}
	for _, tc := range []struct {
		in   string
		want bool
	}{{"1,702", true}, {"-1,702", true}, {"999,000", true}, {"0,001", false}, {"-8,15", false}, {"1702,5", false}, {"1,7025", false}, {"1,702.5", false}} {
		if got := thousandsLike([]byte(tc.in), strings.IndexByte(tc.in, ',')); got != tc.want {
			t.Errorf("thousandsLike(%q) = %v", tc.in, got)
		}
	}
}

// --time-format reads what no built-in format does; a T time without a zone needs --timezone.
func TestTimeOptionsThroughTheReader(t *testing.T) {
	ds, err := ReadPaths([]string{filepath.Join("testdata", "messy", "us_twelve_hour.csv")}, Options{TimeFormat: "%m/%d/%Y %I:%M:%S %p"})
	if err != nil {
		t.Fatal(err)
	}
	if got, want := ds.Series[0].Decoded().TimesMs[0], time.Date(2026, 3, 14, 20, 30, 15, 0, time.UTC).UnixMilli(); got != want {
		t.Errorf("time %d, want %d", got, want)
	}
	path := filepath.Join("testdata", "messy", "t_without_zone.csv")
	ds, _ = ReadPaths([]string{path}, Options{})
	if len(ds.Rejected) != 2 || !strings.Contains(ds.Rejected[0].Reason, "--timezone") {
		t.Errorf("rejections %+v", ds.Rejected)
	}
	ds, err = ReadPaths([]string{path}, Options{TimeZone: "+02:00"})
	if err != nil || ds.Series[0].Decoded().TimesMs[0] != time.Date(2026, 3, 14, 6, 30, 0, 0, time.UTC).UnixMilli() {
		t.Errorf("with +02:00: %v, %v", ds.Series, err)
	}
	if _, err := ReadPaths([]string{path}, Options{TimeFormat: "%Y"}); err == nil {
		t.Error("a --time-format without a clock must be refused before reading")
	}
}

// In a folder, files that are not telemetry are skipped with a reason instead of failing the
// run; named explicitly, the same files are errors.
func TestFolderSkipsNonLogs(t *testing.T) {
	dir := t.TempDir()
	write := func(name string, data []byte) string {
		p := filepath.Join(dir, name)
		if err := os.WriteFile(p, data, 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	write("good.csv", []byte(bombHeader+bombRow))
	empty := write("empty.csv", nil)
	write("notes.txt", []byte("call the site before 9\n"))
	write("picture.csv", []byte{0x89, 'P', 'N', 'G', '\r', '\n', 0x1a, '\n', 0, 0, 0, 13})
	write("damaged.csv.gz", gzipBytes(t, []byte(bombHeader+bombRow))[:30])
	ds, err := ReadPaths([]string{dir}, Options{})
	if err == nil || !errors.Is(err, ErrTruncated) {
		t.Fatalf("err = %v: a damaged log stays an input error", err)
	}
	if len(ds.Inputs) != 2 {
		t.Errorf("inputs %+v, want good.csv and damaged.csv.gz", ds.Inputs)
	}
	reasons := map[string]string{}
	for _, s := range ds.Skipped {
		reasons[filepath.Base(s.File)] = s.Reason
	}
	for name, want := range map[string]string{"empty.csv": "empty input", "notes.txt": "line 1: required column missing", "picture.csv": "not a text file"} {
		if !strings.Contains(reasons[name], want) {
			t.Errorf("%s skipped for %q, want %q", name, reasons[name], want)
		}
	}
	if _, err := ReadPaths([]string{empty}, Options{}); !errors.Is(err, ErrEmpty) {
		t.Errorf("an empty file named explicitly: err = %v, want ErrEmpty", err)
	}
}

// JSON times go through the same reader as CSV times.
func TestJSONTimeOptions(t *testing.T) {
	in := `{"time": "14.03.2026 08:30", "port": "p", "osnr_db": 25}` + "\n"
	ds, err := ReadFile("a.jsonl", strings.NewReader(in), Options{DayFirst: true})
	if err != nil || ds.Series[0].Decoded().TimesMs[0] != time.Date(2026, 3, 14, 8, 30, 0, 0, time.UTC).UnixMilli() {
		t.Fatalf("%v %v", ds.Series, err)
	}
	ds, _ = ReadFile("a.jsonl", strings.NewReader(in), Options{})
	if len(ds.Rejected) != 1 || !strings.Contains(ds.Rejected[0].Reason, "--day-first") {
		t.Errorf("rejections %+v", ds.Rejected)
	}
}

// A JSON input is streamed, but one document is held whole while it is parsed: a document
// that never ends stops the input with ErrTooLarge at maxJSONDocument, the documents before it
// read.
func TestJSONDocumentBounded(t *testing.T) {
	defer func(n int) { maxJSONDocument = n }(maxJSONDocument)
	maxJSONDocument = 1 << 20
	r := io.MultiReader(strings.NewReader("[{\"time\": 0, \"port\": \"p\", \"osnr_db\": 20},\n{\"values\": [\n"),
		&endless{line: []byte("1,\n")})
	ds, err := ReadFile("big.json", r, Options{})
	if !errors.Is(err, ErrTooLarge) || !strings.Contains(err.Error(), "JSON document after line 1 ") {
		t.Fatalf("err = %v, want ErrTooLarge for the endless document", err)
	}
	if in := ds.Inputs[0]; in.RowsUsed != 1 {
		t.Errorf("accounting %+v, want the first document used", in)
	}
}

// Repeats of any earlier time (not only the one before) are merged as they arrive: a block of
// rows repeated many times keeps one row per port and time, the last copy winning.
func TestRepeatedBlocksMergeAsTheyArrive(t *testing.T) {
	block := func(ber string) string {
		var b strings.Builder
		for _, tm := range []string{"08:30", "08:31", "08:32"} {
			for _, p := range []string{"a", "b"} {
				b.WriteString("2026-03-14T" + tm + ":00Z," + p + "," + ber + ",-8\n")
			}
		}
		return b.String()
	}
	var in strings.Builder
	in.WriteString(bombHeader)
	for range 20000 {
		in.WriteString(block("1e-3"))
	}
	in.WriteString(block("2e-3"))
	z := gzipBytes(t, []byte(in.String()))
	ds, err := ReadFile("blocks.csv.gz", bytes.NewReader(z), Options{})
	if err != nil {
		t.Fatal(err)
	}
	checkAccounting(t, ds)
	if d := ds.Inputs[0].Duplicates; d != 20000*6 {
		t.Errorf("duplicates %d, want %d", d, 20000*6)
	}
	for _, s := range ds.Series {
		s := s.Decoded()
		if s.Len() != 3 || s.Values[PreFECBER][0] != 2e-3 || s.Values[PreFECBER][2] != 2e-3 {
			t.Errorf("port %s: %v %v; want 3 samples with the last copy's BER", s.Port, s.TimesMs, s.Values[PreFECBER])
		}
	}
}

// The row limit covers JSON inputs too (a block that would pass it is not taken).
func TestRowLimitJSON(t *testing.T) {
	var in strings.Builder
	for i := range 500 {
		in.WriteString(`{"time": ` + time.Date(2026, 3, 14, 0, i, 0, 0, time.UTC).Format(`"2006-01-02T15:04:05Z"`) + `, "port": "p", "osnr_db": 20}` + "\n")
	}
	ds, err := ReadFile("rows.jsonl", strings.NewReader(in.String()), Options{MaxRows: 100})
	if !errors.Is(err, ErrTooLarge) {
		t.Fatalf("err = %v, want ErrTooLarge", err)
	}
	checkAccounting(t, ds)
	if in := ds.Inputs[0]; in.RowsRead > 100 || !strings.Contains(in.Error, "--max-rows") {
		t.Errorf("input %+v, want at most 100 rows read and the limit as its error", in)
	}
}

// A port name is at most MaxPortNameBytes long in every format: a row naming a port of
// megabytes (which every table, report and index would then hold and print, beyond the memory
// ceiling the row limit sets) is rejected with the reason, and the other rows are used.
func TestLongPortNames(t *testing.T) {
	long := strings.Repeat("p", 512<<10) // under the 1 MiB line limit of CSV
	atLimit := strings.Repeat("q", MaxPortNameBytes)
	inputs := map[string]string{
		"x.csv": "time,port,q_db\n2026-03-14T00:00:00Z," + long + ",10\n2026-03-14T00:00:00Z," + atLimit + ",10\n",
		"x.jsonl": `{"time":"2026-03-14T00:00:00Z","port":"` + long + `","q_db":10}` + "\n" +
			`{"time":"2026-03-14T00:00:00Z","port":"` + atLimit + `","q_db":10}` + "\n",
		"x.json": strings.Replace(ocSample, `"name": "och-1/1/1"`, `"name": "`+long+`"`, 1),
	}
	for name, content := range inputs {
		t.Run(name, func(t *testing.T) {
			ds, err := ReadFile(name, strings.NewReader(content), Options{})
			if err != nil && name != "x.json" {
				t.Fatalf("err = %v", err)
			}
			in := ds.Inputs[0]
			if in.RowsRejected != 1 || in.RowsRead != in.RowsUsed+in.RowsRejected {
				t.Fatalf("input %+v, want the long-named row rejected and every row accounted for", in)
			}
			if len(ds.Rejected) != 1 || !strings.Contains(ds.Rejected[0].Reason, "longer than the 256-byte limit for a port name") ||
				len(ds.Rejected[0].Reason) > 200 {
				t.Fatalf("rejected %.300v, want one short reason naming the port-name limit", ds.Rejected)
			}
			for _, s := range ds.Series {
				if len(s.Port) > MaxPortNameBytes {
					t.Fatalf("a port of %d bytes was kept", len(s.Port))
				}
			}
			if name != "x.json" && (len(ds.Series) != 1 || ds.Series[0].Port != atLimit) {
				t.Errorf("%d series, want the port named with exactly %d bytes", len(ds.Series), MaxPortNameBytes)
			}
		})
	}
}

// Each port counts against the row limit beyond its rows (PortRows), so that a file of one row
// per port — whose ports cost far more memory than their rows — cannot pass the memory ceiling
// either: with the limit at 100 one-row ports plus their rows, the 101st port stops the read.
func TestPortsCountAgainstTheRowLimit(t *testing.T) {
	var b strings.Builder
	b.WriteString(bombHeader)
	for i := range 200 {
		fmt.Fprintf(&b, "2026-03-14T00:00:00Z,port-%d,1e-3,-8\n", i)
	}
	limit := 100 * (1 + PortRows)
	ds, err := ReadFile("ports.csv", strings.NewReader(b.String()), Options{MaxRows: limit})
	if !errors.Is(err, ErrTooLarge) || !strings.Contains(err.Error(), "each port counting as") {
		t.Fatalf("err = %v, want ErrTooLarge saying ports count", err)
	}
	checkAccounting(t, ds)
	if len(ds.Series) > 100 {
		t.Errorf("%d ports kept under a limit worth 100 one-row ports", len(ds.Series))
	}
	if _, err := ReadFile("ports.csv", strings.NewReader(b.String()), Options{MaxRows: 2 * limit}); err != nil {
		t.Errorf("200 one-row ports under a limit worth 200: %v", err)
	}
}

// An export with very many unknown columns or members gets the first MaxNotesListed
// named and one note for the rest, not a note each (500 000 of them flooded 22 MB of output).
func TestManyUnknownNames(t *testing.T) {
	var csvIn, jsonIn strings.Builder
	csvIn.WriteString("time,port,q_db")
	for i := range 100 {
		fmt.Fprintf(&csvIn, ",extra%d", i)
		fmt.Fprintf(&jsonIn, `{"time":"2026-03-14T00:%02d:00Z","port":"p","q_db":10,"extra%d":1}`+"\n", i%60, i)
	}
	csvIn.WriteString("\n2026-03-14T00:00:00Z,p,10" + strings.Repeat(",1", 100) + "\n")
	for name, c := range map[string]struct{ in, more string }{
		"x.csv":   {csvIn.String(), "80 more unknown columns ignored (the first 20 are named)"},
		"x.jsonl": {jsonIn.String(), "more unknown fields ignored (the first 20 are named)"},
	} {
		ds, err := ReadFile(name, strings.NewReader(c.in), Options{})
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		notes := ds.Inputs[0].Notes
		if len(notes) != MaxNotesListed+1 || notes[len(notes)-1] != c.more {
			t.Errorf("%s: %d notes ending %q, want %d naming one unknown each and %q", name, len(notes), notes[len(notes)-1], MaxNotesListed, c.more)
		}
	}
}

// OpenConfig notes are bounded too: a document of many logical channels read as ports lists the
// first MaxNotesListed and sums up the rest (100 000 of them took 12 s, listing each once by a
// quadratic search).
func TestManyOpenConfigNotes(t *testing.T) {
	var b strings.Builder
	b.WriteString(`{"timestamp":"2026-03-14T08:30:00Z","openconfig-terminal-device:terminal-device":{"logical-channels":{"channel":[`)
	for i := range 30 {
		if i > 0 {
			b.WriteString(",")
		}
		fmt.Fprintf(&b, `{"index":%d,"otn":{"state":{"q-value":{"instant":9.8}}}}`, 100+i)
	}
	b.WriteString("]}}}\n")
	ds, err := ReadFile("oc.json", strings.NewReader(b.String()), Options{})
	if err != nil {
		t.Fatal(err)
	}
	if len(ds.Series) != 30 {
		t.Fatalf("%d ports, want the 30 logical channels", len(ds.Series))
	}
	notes := ds.Inputs[0].Notes
	want := "more notes like these not listed (the first 20 are)"
	if len(notes) != MaxNotesListed+1 || notes[len(notes)-1] != want {
		t.Errorf("%d notes ending %q, want %d and %q", len(notes), notes[len(notes)-1], MaxNotesListed+1, want)
	}
}
