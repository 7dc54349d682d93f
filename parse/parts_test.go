package parse

import (
	"bytes"
	"compress/gzip"
	"errors"
	"fmt"
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

// readParts reads paths with ReadEach in parts and joins what it hands over as the caller of
// parts does: a Continued Dataset's accounting replaces the last input's. It returns the joined
// Dataset, the last error handed over, ReadEach's error and the number of parts.
func readParts(t *testing.T, paths []string, opt Options) (*Dataset, error, error, int) {
	t.Helper()
	opt.PortParts = true
	all := &Dataset{}
	var last error
	parts := 0
	err := ReadEach(paths, opt, 0, func(ds *Dataset, err error) error {
		if ds.Continued {
			all.Inputs = all.Inputs[:len(all.Inputs)-1]
			parts++
		}
		all.Inputs = append(all.Inputs, ds.Inputs...)
		all.Series = append(all.Series, ds.Series...)
		all.Rejected = append(all.Rejected, ds.Rejected...)
		all.Skipped = append(all.Skipped, ds.Skipped...)
		last = err
		return nil
	})
	slices.SortFunc(all.Series, func(a, b *Series) int { return strings.Compare(a.Port, b.Port) })
	return all, last, err, parts
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
	inputs := map[string][]byte{
		"grouped.csv":    []byte(csv),
		"grouped.csv.gz": gz.Bytes(),
		"grouped.jsonl":  []byte(jsonLinesOf(csv, 2)),
	}
	for name, content := range inputs {
		path := filepath.Join(dir, name)
		if err := os.WriteFile(path, content, 0o644); err != nil {
			t.Fatal(err)
		}
		want, wantErr := ReadPaths([]string{path}, Options{})
		checkAccounting(t, want)
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
				got, lastErr, err, parts := readParts(t, []string{path}, Options{Workers: workers})
				if err != nil || fmt.Sprint(lastErr) != fmt.Sprint(wantErr) {
					t.Errorf("%s %v/%d: ReadEach %v, last error %v; want %v", name, sizes, workers, err, lastErr, wantErr)
				}
				if wantParts := sizes[1] < 240; (parts > 1) != wantParts {
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
	got, lastErr, err, parts := readParts(t, []string{tm}, Options{})
	if err != nil || parts != 0 || fmt.Sprint(lastErr) != fmt.Sprint(wantErr) || !sameDataset(got, want) {
		t.Errorf("time-major input: ReadEach %v, %d parts, same as whole %v", err, parts, sameDataset(got, want))
	}
	_, _, err, parts = readParts(t, []string{write("late.csv", late)}, Options{})
	if !errors.Is(err, ErrNotGrouped) || parts == 0 {
		t.Errorf("a port back after parts: ReadEach %v after %d parts, want ErrNotGrouped", err, parts)
	}

	g := write("grouped.csv", grouped)
	for _, opt := range []Options{{Strict: true}, {MaxRows: 20000}} {
		want, wantErr := ReadPaths([]string{g}, opt)
		got, lastErr, err, _ := readParts(t, []string{g}, opt)
		if err != nil || wantErr == nil || fmt.Sprint(lastErr) != fmt.Sprint(wantErr) || !sameDataset(got, want) {
			t.Errorf("%+v: ReadEach %v, last error %v, want %v; same as whole %v", opt, err, lastErr, wantErr, sameDataset(got, want))
		}
	}
	if len(bad) == 0 {
		t.Fatal("no bad row to stop the strict reading")
	}
}
