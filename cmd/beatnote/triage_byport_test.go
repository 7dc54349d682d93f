package main

import (
	"bytes"
	"compress/gzip"
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/beatnote/beatnote/parse"
)

// splitByPort writes every port of the demo network's logs into a file of its own (canonical
// CSV) under dir, and gives the port map of the demo network (copied with its plans).
func splitByPort(t *testing.T, dir string) (folder, portmap string) {
	t.Helper()
	root := filepath.Join("..", "..", "samples", "network")
	ds, err := parse.ReadPaths([]string{filepath.Join(root, "logs")}, parse.Options{})
	if err != nil {
		t.Fatal(err)
	}
	folder = filepath.Join(dir, "ports")
	if err := os.MkdirAll(folder, 0o755); err != nil {
		t.Fatal(err)
	}
	for i, s := range ds.Series {
		var b bytes.Buffer
		if err := parse.WriteCanonicalCSV(&b, &parse.Dataset{Series: []*parse.Series{s}}); err != nil {
			t.Fatal(err)
		}
		name := strings.NewReplacer("/", "_", " ", "_").Replace(s.Port) + ".csv"
		if i == 2 { // a rejected row: accounted the same way port by port
			b.WriteString("not a time," + s.Port + "\n")
		}
		if err := os.WriteFile(filepath.Join(folder, name), b.Bytes(), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	// A file that is not telemetry, skipped with a note.
	if err := os.WriteFile(filepath.Join(folder, "notes.txt"), nil, 0o644); err != nil {
		t.Fatal(err)
	}
	return folder, filepath.Join(root, "portmap.yaml")
}

// Port by port, triage prints what it prints reading every input first — every format, the
// notes, the exit status — on the demo network's logs (several ports a file) and on the same
// ports one file each (with a rejected row and a skipped file), a batch of one, two or all
// files at a time; and it did go port by port. A port whose rows lie in two batches makes it
// read whole, with the same output.
func TestTriagePortByPortMatchesWhole(t *testing.T) {
	defer func(b int) { byPortBatch = b }(byPortBatch)
	folder, portmap := splitByPort(t, t.TempDir())
	network := filepath.Join("..", "..", "samples", "network", "logs")
	formats := [][]string{{"--format", "json"}, {"--format", "text"}, {"--format", "csv"}, {"--format", "markdown", "--sort", "margin", "--top", "5"},
		{"--format", "json", "--sort", "port", "--verdict", "fail,marginal"}}
	for _, in := range []string{network, folder} {
		for _, batch := range []int{1, 2, 256} {
			byPortBatch = batch
			for _, f := range formats {
				args := append([]string{"triage", in, "--map", portmap}, f...)
				wantCode, want, wantErr := runCLI(t, append(args, "--port-by-port", "never")...)
				before := byPortRuns.Load()
				code, got, gotErr := runCLI(t, append(args, "--port-by-port", "always")...)
				if byPortRuns.Load() != before+1 {
					t.Errorf("%s %v batch %d: not judged port by port", in, f, batch)
				}
				if code != wantCode || got != want || gotErr != wantErr {
					t.Errorf("%s %v batch %d: port by port exit %d, %d bytes, stderr %q; whole exit %d, %d bytes, stderr %q",
						in, f, batch, code, len(got), gotErr, wantCode, len(want), wantErr)
				}
			}
		}
	}
	// The per-port folder still shows the line events, and the accounting of every file.
	_, out, _ := runCLI(t, "triage", folder, "--map", portmap, "--format", "json")
	var res struct {
		Inputs []struct {
			RowsRejected int `json:"rows_rejected"`
		} `json:"inputs"`
		Lines []struct {
			Findings []json.RawMessage `json:"findings"`
		} `json:"lines"`
	}
	if err := json.Unmarshal([]byte(out), &res); err != nil {
		t.Fatal(err)
	}
	findings, rejected := 0, 0
	for _, l := range res.Lines {
		findings += len(l.Findings)
	}
	for _, in := range res.Inputs {
		rejected += in.RowsRejected
	}
	if findings < 4 || rejected != 1 || len(res.Inputs) < 8 {
		t.Errorf("per-port folder: %d line findings (want the demo's 4 or more), %d rejected rows (want 1), %d inputs", findings, rejected, len(res.Inputs))
	}

	// One port's rows in two files, one batch each: read whole.
	entries, err := os.ReadDir(folder)
	if err != nil {
		t.Fatal(err)
	}
	first, err := os.ReadFile(filepath.Join(folder, entries[0].Name()))
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.SplitAfter(string(first), "\n")
	if err := os.WriteFile(filepath.Join(folder, "zz-late.csv"), []byte(lines[0]+lines[len(lines)/2]), 0o644); err != nil {
		t.Fatal(err)
	}
	byPortBatch = 1
	wantCode, want, wantErr := runCLI(t, "triage", folder, "--map", portmap, "--format", "json", "--port-by-port", "never")
	before := byPortRuns.Load()
	code, got, gotErr := runCLI(t, "triage", folder, "--map", portmap, "--format", "json")
	if byPortRuns.Load() != before {
		t.Errorf("a port in two files was judged port by port")
	}
	if code != wantCode || got != want || gotErr != wantErr {
		t.Errorf("port in two files: exit %d, %d bytes, stderr %q; whole exit %d, %d bytes, stderr %q", code, len(got), gotErr, wantCode, len(want), wantErr)
	}
}

// The lines triage finds from the ports' summaries, their DGD samples read back from the
// temporary file, are those line.Reason finds from the whole results (as check and report do),
// on the demo network, both ways of reading.
func TestTriageLinesMatchWholeResults(t *testing.T) {
	root := filepath.Join("..", "..", "samples", "network")
	var errw bytes.Buffer
	a, err := analyze([]string{filepath.Join(root, "logs")}, judgeFlags{readFlags: readFlags{MaxRows: parse.DefaultMaxRows}},
		filepath.Join(root, "portmap.yaml"), true, nil, newPrinter(&bytes.Buffer{}, &errw, true))
	if err != nil {
		t.Fatal(err)
	}
	want, err := json.Marshal(a.Result.Lines)
	if err != nil {
		t.Fatal(err)
	}
	if len(a.Result.Lines) == 0 || !bytes.Contains(want, []byte(`"mean_dgd_ps"`)) {
		t.Fatalf("the demo network should have lines with a pooled DGD: %s", want)
	}
	for _, mode := range []string{"always", "never"} {
		_, out, _ := runCLI(t, "triage", filepath.Join(root, "logs"), "--map", filepath.Join(root, "portmap.yaml"), "--format", "json", "--port-by-port", mode)
		var res struct {
			Lines json.RawMessage `json:"lines"`
		}
		if err := json.Unmarshal([]byte(out), &res); err != nil {
			t.Fatal(err)
		}
		var got bytes.Buffer
		if err := json.Compact(&got, res.Lines); err != nil {
			t.Fatal(err)
		}
		if !bytes.Equal(got.Bytes(), want) {
			t.Errorf("--port-by-port %s: lines differ from line.Reason's:\n%s\nwant\n%s", mode, got.Bytes(), want)
		}
	}
}

// fleetRows writes ports × rows canonical CSV rows after a title line and the header, the rows
// grouped by port (port after port) or time after time, with a rejected row (a Q that is not
// a number) every 997 rows. The values are invented, for the comparison only.
func fleetRows(ports, rows int, grouped bool) string {
	var b strings.Builder
	b.WriteString("Telemetry export\ntime,port,pre_fec_ber,post_fec_ber,uncorrected_blocks,q_db,osnr_db,cd_ps_nm,dgd_ps,rx_power_dbm,tx_power_dbm,frequency_thz\n")
	n := 0
	row := func(p, i int) {
		q := fmt.Sprintf("%.2f", 8.5+float64((p*7+i*3)%40)/20)
		if n++; n%997 == 0 {
			q = "n/a"
		}
		fmt.Fprintf(&b, "2026-03-14T%02d:%02d:00Z,NE%04d-1/1/C1,%.3g,0,0,%s,%.1f,%d,%.1f,%.2f,-1.5,%.4f\n",
			i/60, i%60, p, 1e-3+float64((p+i)%13)*1e-4, q, 28+float64(p%9), 1000+p%700, 1+float64(i%5)/10,
			-6-float64(p%11)/4+float64(i%3)/100, 191.7+float64(p%40)*0.05)
	}
	for a := range ports * rows {
		if grouped {
			row(a/rows, a%rows)
		} else {
			row(a%ports, a/ports)
		}
	}
	return b.String()
}

// A large input grouped by port (4 MiB or more, 256 KiB of gzip) is judged in parts, printing
// what reading it whole prints, as CSV with a title line and rejected rows, gzip and JSON
// Lines, in JSON and text (CSV); the same rows
// time after time, or with a port back at the end after parts were judged, are read whole with
// the same output.
func TestTriageInPartsMatchesWhole(t *testing.T) {
	dir := t.TempDir()
	csv := fleetRows(1100, 48, true)
	var gz bytes.Buffer
	zw := gzip.NewWriter(&gz)
	zw.Write([]byte(csv))
	zw.Close()
	lines := strings.Split(strings.TrimSuffix(csv, "\n"), "\n")
	cols := strings.Split(lines[1], ",")
	var jl strings.Builder
	for _, l := range lines[2:] {
		f := strings.Split(l, ",")
		fmt.Fprintf(&jl, `{"time":%q,"port":%q`, f[0], f[1])
		for i := 2; i < len(f); i++ {
			v := f[i]
			if v == "n/a" {
				v = `"n/a"`
			}
			fmt.Fprintf(&jl, `,%q:%s`, cols[i], v)
		}
		jl.WriteString("}\n")
	}
	inputs := map[string]string{
		"grouped.csv":    csv,
		"grouped.csv.gz": gz.String(),
		"grouped.jsonl":  jl.String(),
		"time-major.csv": fleetRows(1100, 48, false),
		"late.csv":       csv + lines[2] + "\n",
	}
	for name, content := range inputs {
		path := filepath.Join(dir, name)
		if err := os.WriteFile(path, []byte(content), 0o644); err != nil {
			t.Fatal(err)
		}
		inParts := strings.HasPrefix(name, "grouped")
		formats, modes := []string{"json"}, []string{"auto"}
		if name == "grouped.csv" {
			formats, modes = []string{"json", "text"}, []string{"auto", "always"}
		}
		for _, format := range formats {
			args := []string{"triage", path, "--profile", "400g-dp-16qam-cfec", "--format", format}
			wantCode, want, wantErr := runCLI(t, append(args, "--port-by-port", "never")...)
			if !strings.Contains(want, "NE1099-1/1/C1") {
				t.Fatalf("%s: the whole reading shows no last port:\n%.500s\n%.500s", name, want, wantErr)
			}
			for _, mode := range modes {
				runs, parts := byPortRuns.Load(), byPortParts.Load()
				code, got, gotErr := runCLI(t, append(args, "--port-by-port", mode)...)
				if code != wantCode || got != want || gotErr != wantErr {
					t.Errorf("%s %s %s: exit %d, %d bytes, stderr %q; whole exit %d, %d bytes, stderr %q",
						name, format, mode, code, len(got), gotErr, wantCode, len(want), wantErr)
				}
				byParts := byPortParts.Load() > parts
				byPort := byPortRuns.Load() > runs
				if byParts != inParts || byPort != (name != "late.csv") {
					t.Errorf("%s %s %s: judged in parts %v, port by port %v", name, format, mode, byParts, byPort)
				}
			}
		}
	}
}
