package parse

import (
	"bytes"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// The parallel paths (several files at once, several blocks of one large file at once) give
// exactly the Dataset of one worker: a folder mixing one large file (more than two blocks, with
// bad rows), many small files read whole, a gzip-free JSON Lines file, ports split across
// files, rows of one port and time repeated in a later file (the later one wins and is
// counted), and rows out of time order.
func TestParallelReadMatchesOneWorker(t *testing.T) {
	dir := t.TempDir()
	write := func(name, content string) {
		t.Helper()
		if err := os.WriteFile(filepath.Join(dir, name), []byte(content), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	big, _ := bigCSV(40000, 23, 997)
	write("a-big.csv", big)
	header := strings.SplitN(big, "\n", 2)[0] + "\n"
	for f := range 40 {
		var b strings.Builder
		b.WriteString(header)
		for i := range 150 {
			// port-000…port-004 also appear in the big file; times run backwards in every
			// seventh file; every fifth file repeats times of the big file.
			tm := 1773477000 + int64(i)*10
			if f%7 == 3 {
				tm = 1773477000 + int64(150-i)*10
			}
			if f%5 != 0 {
				tm += 1_000_000
			}
			fmt.Fprintf(&b, "%d,port-%03d,%.4e,0,%d,%.2f,16.5,%.2f,1702.5,3.25,0.5,12.5,-120.5,-9.75,-1.5,193.1\n",
				tm, f%45, 1e-3+float64(i%89)*1e-5, i%2, 9+float64(f)/10, 20+float64(i%11)/4)
		}
		if f == 13 {
			b.WriteString("not a time,port-013,1e-3,0,0,9,16,20,1700,3,0.5,12,-120,-9,-1,193.1\n")
		}
		write(fmt.Sprintf("b-small-%02d.csv", f), b.String())
	}
	write("c-lines.jsonl", "{\"time\":\"2026-03-14T08:00:00Z\",\"port\":\"port-001\",\"osnr_db\":21}\n{\"time\":1773477060,\"port\":\"port-050\",\"osnr_db\":22.5}\n")

	one, err1 := ReadPaths([]string{dir}, Options{Workers: 1})
	checkAccounting(t, one)
	if len(one.Inputs) != 42 || one.Inputs[0].RowsRejected == 0 || one.Inputs[14].RowsRejected != 1 {
		t.Fatalf("unexpected reference read: %d inputs, %+v", len(one.Inputs), one.Inputs[:2])
	}
	dups := 0
	for _, in := range one.Inputs {
		dups += in.Duplicates
	}
	if dups == 0 {
		t.Fatal("the test input has no repeated (port, time): it does not exercise the merge")
	}
	for _, workers := range []int{2, 3, 8} {
		got, err := ReadPaths([]string{dir}, Options{Workers: workers})
		if fmt.Sprint(err) != fmt.Sprint(err1) {
			t.Errorf("%d workers: err %v, want %v", workers, err, err1)
		}
		if !sameDataset(got, one) {
			t.Errorf("%d workers: dataset differs from one worker", workers)
		}
	}
}

// The hot path's plain bounds never accept what checkRange rejects: values at, just inside and
// just outside every bound, ±0, ±Inf and NaN, for every quantity.
func TestPlainBoundsAgreeWithCheckRange(t *testing.T) {
	probes := []float64{math.Inf(-1), -math.MaxFloat64, -1e300, -1, math.Copysign(0, -1), 0, 0.25, 1, 1e300, math.MaxFloat64, math.Inf(1), math.NaN()}
	for q := Quantity(0); q < NumQuantities; q++ {
		for _, b := range []float64{plainLo[q], plainHi[q]} {
			probes = append(probes, b, math.Nextafter(b, math.Inf(1)), math.Nextafter(b, math.Inf(-1)))
		}
	}
	for q := Quantity(0); q < NumQuantities; q++ {
		for _, v := range probes {
			if v >= plainLo[q] && v <= plainHi[q] && checkRange(q, v) != nil {
				t.Errorf("%s: %v passes the plain bounds but checkRange rejects it", q, v)
			}
		}
	}
}

// splitFields' quote-free fast path cuts and trims exactly like the definition: split at every
// delimiter, then drop spaces (and tabs unless tab is the delimiter) at both ends of each field.
func TestSplitFieldsUnquotedMatchesDefinition(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 6))
	alphabet := []byte("a1. \t,;")
	for _, delim := range []byte{',', ';', '\t'} {
		spaces := " \t"
		if delim == '\t' {
			spaces = " "
		}
		for range 2000 {
			line := make([]byte, rng.IntN(24))
			for i := range line {
				line[i] = alphabet[rng.IntN(len(alphabet))]
			}
			var want []string
			for _, f := range strings.Split(string(line), string(delim)) {
				want = append(want, strings.Trim(f, spaces))
			}
			got, _, err := splitFields(line, delim, nil, nil)
			if err != nil || len(got) != len(want) {
				t.Fatalf("%q (delimiter %q): %q, %v; want %q", line, delim, got, err, want)
			}
			for i := range got {
				if string(got[i]) != want[i] {
					t.Fatalf("%q (delimiter %q): field %d %q, want %q", line, delim, i, got[i], want[i])
				}
			}
		}
	}
}

// JSON inputs over several blocks (more than 1 MiB, size hidden from the reader) read on
// several workers give exactly the Dataset of one worker: JSON Lines with rows carrying
// different quantities, bad lines and unknown fields; OpenConfig documents pretty-printed one
// after another and in one array.
func TestParallelJSONMatchesOneWorker(t *testing.T) {
	var lines bytes.Buffer
	qs := []string{"pre_fec_ber", "osnr_db", "rx_power_mw", "q", "pdl_db"}
	for i := 0; i < 30000; i++ {
		fmt.Fprintf(&lines, `{"time":%d,"port":"p%02d"`, 1773477000+i/37, i%37)
		for j, q := range qs {
			if (i+j)%(3+i%4) != 0 {
				fmt.Fprintf(&lines, `,"%s":%g`, q, 0.001+float64(i%13)*0.01)
			}
		}
		if i%1013 == 0 {
			lines.WriteString(`,"extra":1`)
		}
		lines.WriteString("}\n")
		if i%7919 == 0 {
			lines.WriteString("{bad\n\n")
		}
	}
	var stream, array bytes.Buffer
	array.WriteString("[\n")
	for i := 0; i < 250; i++ {
		var comps []any
		for p := 0; p < 40; p++ {
			comps = append(comps, map[string]any{"name": fmt.Sprintf("och-%d", p), "optical-channel": map[string]any{"state": map[string]any{
				"osnr": map[string]any{"instant": 20 + float64(p%7)}, "input-power": map[string]any{"instant": -5 - float64(i%5)}}}})
		}
		doc, _ := json.MarshalIndent(map[string]any{"timestamp": 1773477000000 + int64(i)*60000,
			"openconfig-platform:components": map[string]any{"component": comps}}, "", "  ")
		stream.Write(doc)
		stream.WriteString("\n")
		if i > 0 {
			array.WriteString(",\n")
		}
		array.Write(doc)
	}
	array.WriteString("\n]\n")
	for name, data := range map[string][]byte{"lines.jsonl": lines.Bytes(), "stream.json": stream.Bytes(), "array.json": array.Bytes()} {
		if len(data) < 2*chunkSize {
			t.Fatalf("%s: %d bytes, not more than two blocks", name, len(data))
		}
		read := func(workers int) *Dataset {
			ds, err := ReadFile(name, io.MultiReader(bytes.NewReader(data)), Options{Workers: workers})
			if err != nil {
				t.Fatalf("%s: %v", name, err)
			}
			checkAccounting(t, ds)
			return ds
		}
		one := read(1)
		if one.Inputs[0].RowsUsed == 0 {
			t.Fatalf("%s: nothing read: %+v", name, one.Inputs[0])
		}
		for _, workers := range []int{2, 3} {
			if !sameDataset(read(workers), one) {
				t.Errorf("%s, %d workers: dataset differs from one worker", name, workers)
			}
		}
	}
}
