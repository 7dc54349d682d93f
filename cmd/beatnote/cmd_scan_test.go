package main

import (
	"bytes"
	"encoding/json"
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

func runScan(t *testing.T, c ScanCmd) (string, error) {
	t.Helper()
	var out, errw bytes.Buffer
	if c.Format == "" {
		c.Format = "text"
	}
	err := c.Run(&Globals{}, newPrinter(&out, &errw, true))
	return out.String(), err
}

func exitCodeOf(err error) int {
	var ee *exitError
	if errors.As(err, &ee) {
		return ee.code
	}
	if err != nil {
		return 2
	}
	return 0
}

func writeFile(t *testing.T, dir, name, content string) string {
	t.Helper()
	p := filepath.Join(dir, name)
	if err := os.WriteFile(p, []byte(content), 0o644); err != nil {
		t.Fatal(err)
	}
	return p
}

// The JSON carries DESIGN.md's inputs and rejected members, and the counts add up.
func TestScanJSON(t *testing.T) {
	dir := t.TempDir()
	writeFile(t, dir, "a.csv", "time,port,pre_fec_ber,rx_power_dbm\n2026-03-14T08:00:00Z,p1,1e-3,-9\n2026-03-14T08:01:00Z,p1,0.7,-9\n2026-03-14T08:02:00Z,p1,1e-3,45\n2026-03-14T08:03:00Z,p1,1e-3,-9\n")
	out, err := runScan(t, ScanCmd{Paths: []string{dir}, Format: "json"})
	if err != nil {
		t.Fatal(err)
	}
	var doc struct {
		Tool     string           `json:"tool"`
		Rejected []map[string]any `json:"rejected"`
		Ports    []struct {
			Port      string   `json:"port"`
			Samples   int      `json:"samples"`
			IntervalS *float64 `json:"interval_s"`
		} `json:"ports"`
	}
	if err := json.Unmarshal([]byte(out), &doc); err != nil {
		t.Fatalf("not JSON: %v\n%s", err, out)
	}
	var raw struct {
		Inputs []map[string]any `json:"inputs"`
	}
	json.Unmarshal([]byte(out), &raw)
	in := raw.Inputs[0]
	if in["rows_read"].(float64) != 4 || in["rows_used"].(float64) != 2 || in["rows_rejected"].(float64) != 2 || len(in["sha256"].(string)) != 64 {
		t.Errorf("inputs %v", in)
	}
	if len(doc.Rejected) != 2 || doc.Rejected[0]["line"].(float64) != 3 || doc.Rejected[1]["line"].(float64) != 4 {
		t.Errorf("rejected %v", doc.Rejected)
	}
	for _, r := range doc.Rejected {
		for _, k := range []string{"file", "line", "reason"} {
			if _, ok := r[k]; !ok {
				t.Errorf("rejection lacks %q", k)
			}
		}
	}
	if len(doc.Ports) != 1 || doc.Ports[0].Samples != 2 || doc.Ports[0].IntervalS == nil || *doc.Ports[0].IntervalS != 180 {
		t.Errorf("ports %+v", doc.Ports)
	}
}

func TestScanTextAndExport(t *testing.T) {
	dir := t.TempDir()
	src := writeFile(t, dir, "a.csv", "Time;Port;OSNR [dB];Rx power [mW]\n2026-03-14 08:00:00;1/1/C1;21,5;0,5\n2026-03-14 08:00:10;1/1/C1;21,4;0,5\n")
	export := filepath.Join(dir, "out", "norm.csv")
	os.Mkdir(filepath.Dir(export), 0o755)
	out, err := runScan(t, ScanCmd{Paths: []string{src}, Export: export})
	if err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{"Read 1 file: 2 rows, 2 used, 0 rejected; 1 port.", "1/1/C1", "10 s", "osnr_db rx_power_dbm"} {
		if !strings.Contains(out, want) {
			t.Errorf("text lacks %q:\n%s", want, out)
		}
	}
	b, err := os.ReadFile(export)
	if err != nil {
		t.Fatal(err)
	}
	// 0.5 mW = -3.0103 dBm (definition of dBm), written in the shortest exact form.
	want := "time,port,osnr_db,rx_power_dbm\n2026-03-14T08:00:00Z,1/1/C1,21.5,-3.010299956639812\n2026-03-14T08:00:10Z,1/1/C1,21.4,-3.010299956639812\n"
	if string(b) != want {
		t.Errorf("export:\n%s\nwant:\n%s", b, want)
	}
}

func TestScanExitCodes(t *testing.T) {
	dir := t.TempDir()
	good := writeFile(t, dir, "good.csv", "time,port,osnr_db\n2026-03-14T08:00:00Z,p,20\n2026-03-14T08:01:00Z,p,x\n")
	allBad := writeFile(t, dir, "bad.csv", "time,port,osnr_db\nnever,p,20\n")
	empty := writeFile(t, dir, "empty.csv", "")
	tests := []struct {
		name string
		cmd  ScanCmd
		code int
	}{
		{"some rows rejected", ScanCmd{Paths: []string{good}}, 0},
		{"strict", ScanCmd{Paths: []string{good}, Strict: true}, 2},
		{"nothing usable", ScanCmd{Paths: []string{allBad}}, 2},
		{"unreadable input", ScanCmd{Paths: []string{good, empty}}, 2},
		{"missing path", ScanCmd{Paths: []string{filepath.Join(dir, "nope.csv")}}, 2},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			_, err := runScan(t, tc.cmd)
			if got := exitCodeOf(err); got != tc.code {
				t.Errorf("exit %d (%v), want %d", got, err, tc.code)
			}
		})
	}
}

// When nothing is usable the message says why: rejected rows (listed above it), or no data row
// at all (a header followed by blank lines), never a pointer to rejections that do not exist.
func TestScanNothingUsableSaysWhy(t *testing.T) {
	dir := t.TempDir()
	for _, c := range []struct{ content, want string }{
		{"time,port,osnr_db\nnever,p,20\n", "see the rejected rows above"},
		{"time,port,osnr_db\n\n\n\n", "the inputs hold no data row"},
	} {
		_, err := runScan(t, ScanCmd{Paths: []string{writeFile(t, dir, "x.csv", c.content)}})
		if exitCodeOf(err) != 2 || err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%q: err %v, want exit 2 saying %q", c.content, err, c.want)
		}
	}
}
