package main

import (
	"bytes"
	"encoding/json"
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
