package parse

import (
	"bytes"
	"compress/gzip"
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"
)

// groupedCSV is bigCSV's rows grouped by port (a stable sort on the port), after a title line,
// with one row of every 37th port repeated at the end of its run (a duplicate the later row
// replaces) and the bad rows bigCSV writes; it returns the lines of the rejected rows.
func groupedCSV(rows, ports, badEvery int) (string, []int) {
	big, _ := bigCSV(rows, ports, badEvery)
	lines := strings.SplitAfter(big, "\n")
	body := slices.Clone(lines[1 : len(lines)-1])
	portOf := func(l string) string { return strings.Split(l, ",")[1] }
	slices.SortStableFunc(body, func(a, b string) int { return strings.Compare(portOf(a), portOf(b)) })
	var b strings.Builder
	b.WriteString("Telemetry export, fleet A\n")
	b.WriteString(lines[0])
	var bad []int
	line := 2
	for i, l := range body {
		b.WriteString(l)
		line++
		if strings.Contains(l, ",0.7,") {
			bad = append(bad, line)
		}
		if p := portOf(l); (i+1 == len(body) || portOf(body[i+1]) != p) && strings.HasSuffix(p, "7") && !strings.Contains(l, ",0.7,") {
			b.WriteString(strings.Replace(l, ",16.5,", ",16.75,", 1))
			line++
		}
	}
	return b.String(), bad
}

// jsonLinesOf writes the data rows of a canonical CSV (after its title and header lines) as
// JSON Lines with the same members, the numbers as written.
func jsonLinesOf(csv string, skip int) string {
	lines := strings.Split(strings.TrimSuffix(csv, "\n"), "\n")
	cols := strings.Split(lines[skip-1], ",")
	var b strings.Builder
	for _, l := range lines[skip:] {
		f := strings.Split(l, ",")
		fmt.Fprintf(&b, `{"time":%s,"port":%q`, f[0], f[1])
		for i := 2; i < len(f); i++ {
			fmt.Fprintf(&b, `,%q:%s`, cols[i], f[i])
		}
		b.WriteString("}\n")
	}
	return b.String()
}

// readParts reads paths with ReadEach in parts and joins what it hands over as triage does
// (Dataset.JoinAccounting: a Continued Dataset's accounting replaces the last input's). It returns the joined
// Dataset, the error handed over with each Dataset, and ReadEach's error.
func readParts(t *testing.T, paths []string, opt Options) (*Dataset, []error, error) {
	t.Helper()
	opt.PortParts = true
	all := &Dataset{}
	var errs []error
	err := ReadEach(paths, opt, 0, func(ds *Dataset, err error) error {
		all.JoinAccounting(ds)
		all.Series = append(all.Series, ds.Series...)
		errs = append(errs, err)
		return nil
	})
	slices.SortFunc(all.Series, func(a, b *Series) int { return strings.Compare(a.Port, b.Port) })
	return all, errs, err
}

// lastOf is the last error of errs (nil when none).
func lastOf(errs []error) error {
	if len(errs) == 0 {
		return nil
	}
	return errs[len(errs)-1]
}

// setPartSizes makes inputs of any size read in parts, a part handed over every few ports.
func setPartSizes(t *testing.T, rows, ports int) {
	t.Helper()
	old := []any{partMinBytes, partMinGzip, partRows, partPorts}
	partMinBytes, partMinGzip, partRows, partPorts = 0, 0, rows, ports
	t.Cleanup(func() {
		partMinBytes, partMinGzip = old[0].(int64), old[1].(int64)
		partRows, partPorts = old[2].(int), old[3].(int)
	})
}

// An input grouped by port read in parts gives, joined, the Dataset of reading it whole — the
// series (with their duplicates merged), the accounting (rows, duplicates, SHA-256, notes) and
// the rejections with their exact lines — as CSV (with a title line), gzip and JSON Lines, with
// parts cut inside blocks (every few ports) and at blocks' ends, on one worker or several.
func TestReadInPartsMatchesWhole(t *testing.T) {
	dir := t.TempDir()
	csv, bad := groupedCSV(60000, 240, 997)
	if len(csv) < 3*chunkSize {
		t.Fatalf("the test input spans %d bytes: too few blocks", len(csv))
	}
	var gz bytes.Buffer
	zw := gzip.NewWriter(&gz)
	zw.Write([]byte(csv))
	zw.Close()
	// Received power in mW, converted to dBm: values computed by a conversion.
	mixed := strings.Replace(strings.ReplaceAll(csv, ",-9.75,", ",0.125,"), "rx_power_dbm", "Rx power [mW]", 1)
	inputs := map[string][]byte{
		"grouped.csv":     []byte(csv),
		"grouped.csv.gz":  gz.Bytes(),
		"grouped.jsonl":   []byte(jsonLinesOf(csv, 2)),
		"mixed-units.csv": []byte(mixed),
	}
	for name, content := range inputs {
		path := filepath.Join(dir, name)
		if err := os.WriteFile(path, content, 0o644); err != nil {
			t.Fatal(err)
		}
		want, wantErr := ReadPaths([]string{path}, Options{})
		checkAccounting(t, want)
		// 0.125 mW is −9.03 dBm (10·log10 of the power in mW).
		if rx := want.Series[0].Decoded().Values[RxPowerDBm][0]; strings.HasPrefix(name, "mixed") != (math.Abs(rx+9.031) < 0.001) {
			t.Fatalf("%s: received power %v dBm", name, rx)
		}
		if len(want.Rejected) != len(bad) || want.Inputs[0].Duplicates == 0 {
			t.Fatalf("%s: %d rejections (want %d), %d duplicates: the input does not test what it should", name, len(want.Rejected), len(bad), want.Inputs[0].Duplicates)
		}
		for i, r := range want.Rejected {
			if r.Line != bad[i]-2*bytesCount(name, ".jsonl") {
				t.Fatalf("%s: rejection %d at line %d, want %d", name, i, r.Line, bad[i])
			}
		}
		for _, sizes := range [][2]int{{1000, 3}, {1 << 30, 50}, {1 << 30, 1 << 30}} {
			setPartSizes(t, sizes[0], sizes[1])
			for _, workers := range []int{1, 3} {
				got, errs, err := readParts(t, []string{path}, Options{Workers: workers})
				lastErr, parts := lastOf(errs), len(errs)
				if err != nil || fmt.Sprint(lastErr) != fmt.Sprint(wantErr) {
					t.Errorf("%s %v/%d: ReadEach %v, last error %v; want %v", name, sizes, workers, err, lastErr, wantErr)
				}
				if wantParts := sizes[1] < 240; (parts > 2) != wantParts {
					t.Errorf("%s %v/%d: %d parts", name, sizes, workers, parts)
				}
				if !sameDataset(got, want) {
					t.Errorf("%s %v/%d: the parts joined differ from the whole read", name, sizes, workers)
				}
			}
		}
	}
}

// bytesCount is 1 when name ends in suffix, else 0.
func bytesCount(name, suffix string) int {
	if strings.HasSuffix(name, suffix) {
		return 1
	}
	return 0
}

// An input not grouped by port is read whole when its first block shows it (no part), and
// stops the reading with ErrNotGrouped when a port comes back after parts were handed over.
// Strict reading and the row limit hand their errors over with the parts, and the joined
// accounting is still that of reading whole.
func TestReadInPartsNotGrouped(t *testing.T) {
	dir := t.TempDir()
	setPartSizes(t, 1000, 3)
	timeMajor, _ := bigCSV(30000, 17, 1001)
	grouped, bad := groupedCSV(30000, 60, 1001)
	lines := strings.SplitAfter(grouped, "\n")
	late := grouped + lines[3] // the first port again at the end
	write := func(name, content string) string {
		path := filepath.Join(dir, name)
		if err := os.WriteFile(path, []byte(content), 0o644); err != nil {
			t.Fatal(err)
		}
		return path
	}
	tm := write("time-major.csv", timeMajor)
	want, wantErr := ReadPaths([]string{tm}, Options{})
	got, errs, err := readParts(t, []string{tm}, Options{})
	lastErr, parts := lastOf(errs), len(errs)
	if err != nil || parts != 1 || fmt.Sprint(lastErr) != fmt.Sprint(wantErr) || !sameDataset(got, want) {
		t.Errorf("time-major input: ReadEach %v, %d Datasets, same as whole %v", err, parts, sameDataset(got, want))
	}
	_, errs, err = readParts(t, []string{write("late.csv", late)}, Options{})
	if parts := len(errs); !errors.Is(err, ErrNotGrouped) || parts == 0 {
		t.Errorf("a port back after parts: ReadEach %v after %d Datasets, want ErrNotGrouped", err, len(errs))
	}

	g := write("grouped.csv", grouped)
	for _, opt := range []Options{{Strict: true}, {MaxRows: 20000}} {
		want, wantErr := ReadPaths([]string{g}, opt)
		got, errs, err := readParts(t, []string{g}, opt)
		lastErr := lastOf(errs)
		if err != nil || wantErr == nil || fmt.Sprint(lastErr) != fmt.Sprint(wantErr) || !sameDataset(got, want) {
			t.Errorf("%+v: ReadEach %v, last error %v, want %v; same as whole %v", opt, err, lastErr, wantErr, sameDataset(got, want))
		}
	}
	if len(bad) == 0 {
		t.Fatal("no bad row to stop the strict reading")
	}
}

// FuzzReadInParts reads a CSV made of runs of rows (each byte of data: a port of 8 and a run of
// 1 to 16 rows, some repeating the last time, the longest run ending in a rejected row), after
// 64 KiB of rows of another port, in
// blocks of a few lines, whole and in parts of a few ports or rows: the input is found not
// grouped only when a port's rows are in two runs with another port between, and otherwise the
// parts joined are the whole read.
func FuzzReadInParts(f *testing.F) {
	f.Add([]byte{0x03, 0x13, 0x2f, 0x31, 0x45}, uint8(7))
	f.Add([]byte{0x03, 0x13, 0x05, 0x31}, uint8(0))
	f.Add([]byte{0x03, 0x23, 0x03}, uint8(0))
	f.Add([]byte{0xff, 0xf0, 0x00, 0x7e, 0x7e, 0x11}, uint8(200))
	f.Fuzz(func(t *testing.T, data []byte, knobs uint8) {
		if len(data) > 200 {
			return
		}
		old := []any{partMinBytes, partRows, partPorts, blockSize}
		defer func() {
			partMinBytes, partRows, partPorts, blockSize = old[0].(int64), old[1].(int), old[2].(int), old[3].(int)
		}()
		partMinBytes, partRows, partPorts = 0, 1+int(knobs%40), 1+int(knobs/40)
		blockSize = 48 + int(knobs)
		var b strings.Builder
		b.WriteString("time,port,q_db,osnr_db\n")
		// The header's reader takes the first 64 KiB, and the first block twice that: a port of
		// its own fills them, so that the runs come in blocks of blockSize.
		for i := 0; b.Len() < 135_000; i++ {
			fmt.Fprintf(&b, "%d,pad,9.1,20\n", 1773477000+60*i)
		}
		last := map[int]int{}  // port → last time written
		seen := map[int]bool{} // ports of the runs before the current one
		grouped, prev := true, -1
		for i, c := range data {
			port, n := int(c>>5), int(c&15)+1
			if port != prev {
				if seen[port] {
					grouped = false
				}
				if prev >= 0 {
					seen[prev] = true
				}
				prev = port
			}
			for k := range n {
				tm := last[port] + 60
				if (k+i)%5 == 4 {
					tm -= 60 // a repeated time: the later row wins
				}
				last[port] = tm
				q := fmt.Sprintf("%d.%d", 8+k%3, i%10)
				if n == 16 && k == n-1 {
					q = "bad"
				}
				fmt.Fprintf(&b, "%d,p%d,%s,%d\n", 1773477000+tm, port, q, 20+k%7)
			}
		}
		path := filepath.Join(t.TempDir(), "runs.csv")
		if err := os.WriteFile(path, []byte(b.String()), 0o644); err != nil {
			t.Fatal(err)
		}
		opt := Options{Workers: 1 + int(knobs%3)}
		want, wantErr := ReadPaths([]string{path}, opt)
		got, errs, err := readParts(t, []string{path}, opt)
		lastErr, parts := lastOf(errs), len(errs)
		switch {
		case errors.Is(err, ErrNotGrouped):
			if grouped || parts == 0 {
				t.Fatalf("not grouped after %d Datasets, but the input is grouped %v:\n%s", parts, grouped, b.String())
			}
		case err != nil:
			t.Fatal(err)
		case fmt.Sprint(lastErr) != fmt.Sprint(wantErr) || !sameDataset(got, want):
			t.Fatalf("%d Datasets: error %v, want %v; same dataset %v:\n%s", parts, lastErr, wantErr, sameDataset(got, want), b.String())
		}
	})
}

// A folder of a few large inputs grouped by port (CSV, JSON Lines), small files between them and
// a file that is not telemetry: each large input is read alone, in parts, in its place, and
// the Datasets joined are the folder read whole, its skipped files in the same order; the
// progress reports end at the folder's size.
func TestReadInPartsFolder(t *testing.T) {
	setPartSizes(t, 5000, 40)
	partMinBytes = 200_000
	dir := t.TempDir()
	csv, _ := groupedCSV(20000, 50, 997)
	small, _ := bigCSV(300, 3, 0)
	files := map[string]string{
		"a-big.csv":     csv,
		"b-small.csv":   strings.ReplaceAll(small, "port-", "small-"),
		"c-empty.csv":   "",
		"d-big.jsonl":   strings.ReplaceAll(jsonLinesOf(csv, 2), "port-", "jl-"),
		"e-small.jsonl": `{"time":1773477000,"port":"e","q_db":9}` + "\n",
	}
	for name, content := range files {
		if err := os.WriteFile(filepath.Join(dir, name), []byte(content), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	want, wantErr := ReadPaths([]string{dir}, Options{})
	if len(want.Inputs) != 4 || len(want.Skipped) != 1 {
		t.Fatalf("the folder read whole: %d inputs, %d skipped", len(want.Inputs), len(want.Skipped))
	}
	for _, batch := range []int{1, 2, 0} {
		got := &Dataset{}
		n := 0
		var read, size int64
		progress := func(done, total int64) { read, size = done, total }
		err := ReadEach([]string{dir}, Options{PortParts: true, Progress: progress}, batch, func(ds *Dataset, err error) error {
			n++
			got.JoinAccounting(ds)
			got.Series = append(got.Series, ds.Series...)
			if fmt.Sprint(err) != fmt.Sprint(wantErr) && err != nil {
				t.Errorf("batch %d: error %v", batch, err)
			}
			return nil
		})
		slices.SortFunc(got.Series, func(a, b *Series) int { return strings.Compare(a.Port, b.Port) })
		if read != size || size < 2*200_000 {
			t.Errorf("batch %d: the last progress report: %d of %d bytes", batch, read, size)
		}
		if err != nil || n < 6 || !sameDataset(got, want) || !slices.Equal(got.Skipped, want.Skipped) {
			t.Errorf("batch %d: ReadEach %v, %d Datasets, same as whole %v, skipped %v (want %v)", batch, err, n, sameDataset(got, want), got.Skipped, want.Skipped)
		}
	}
}
