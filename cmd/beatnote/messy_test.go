package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/beatnote/beatnote/samples/synth"
)

// One empty or non-log file in a folder does not make the run fail: it is skipped with a note
// and the exit status follows the judged ports.
func TestFolderWithNonLogsFollowsTheVerdicts(t *testing.T) {
	dir := t.TempDir()
	log, _ := writeCase(t, dir, "ok-1", synth.Spec{Seed: 3, Samples: 300})
	os.Remove(filepath.Join(dir, "ok-1.plan.yaml"))
	writeFile(t, dir, "empty.csv", "")
	writeFile(t, dir, "notes.txt", "call the far end before noon\n")
	writeFile(t, dir, "photo.csv", "\x89PNG\r\n\x1a\n\x00\x00\x00\x0dIHDR")
	for _, cmd := range []string{"triage", "check"} {
		alone, _, _ := runCLI(t, cmd, log, "--profile", "400g-dp-16qam-cfec")
		code, out, errw := runCLI(t, cmd, dir, "--profile", "400g-dp-16qam-cfec")
		if code != alone || code == 2 {
			t.Errorf("%s: exit %d, want %d as for the log alone\nstdout:\n%s\nstderr:\n%s", cmd, code, alone, out, errw)
		}
		if !strings.Contains(errw, "3 files in folders skipped as not telemetry") {
			t.Errorf("%s: stderr lacks the skipped-files note:\n%s", cmd, errw)
		}
	}
	code, out, _ := runCLI(t, "scan", dir)
	if code != 0 || !strings.Contains(out, "photo.csv: not a text file") || !strings.Contains(out, "empty.csv: empty input") {
		t.Errorf("scan: exit %d\n%s", code, out)
	}
}

// The reading options exist on every command that reads telemetry and reach the reader.
func TestReadingOptionsOnEveryReadingCommand(t *testing.T) {
	dir := t.TempDir()
	log := writeFile(t, dir, "export.csv", "Exported from the element manager\n"+
		"time;port;pre_fec_ber;rx_power_dbm\n"+
		"14.03.2026 08:30;p1;1,0E-04;-8,1\n14.03.2026 08:45;p1;1,1E-04;-8,2\n14.03.2026 09:00;p1;1,0E-04;-8,1\n")
	out := filepath.Join(dir, "r.md")
	for _, args := range [][]string{
		{"scan", log},
		{"check", log},
		{"triage", log, "--profile", "400g-dp-16qam-cfec"},
		{"report", log, "--out", out, "--format", "markdown", "--time", "2026-03-14T10:00:00Z"},
	} {
		t.Run(args[0], func(t *testing.T) {
			if code, _, errw := runCLI(t, args...); code != 2 {
				t.Errorf("without --day-first: exit %d, want 2 (no row usable)\n%s", code, errw)
			}
			code, stdout, errw := runCLI(t, append(args, "--day-first", "--timezone", "Europe/Berlin")...)
			if code == 2 {
				t.Errorf("with --day-first: exit 2\nstdout:\n%s\nstderr:\n%s", stdout, errw)
			}
			code, _, errw = runCLI(t, append(args, "--time-format", "%d.%m.%Y %H:%M", "--max-rows", "2")...)
			if code != 2 || !strings.Contains(errw, "--max-rows") {
				t.Errorf("--max-rows 2 over 3 rows: exit %d, want 2 naming the limit\n%s", code, errw)
			}
			if code, _, errw := runCLI(t, append(args, "--timezone", "Nowhere/Else")...); code != 2 || !strings.Contains(errw, "unknown time zone") || !strings.Contains(errw, "--help") {
				t.Errorf("bad zone: exit %d\n%s", code, errw)
			}
		})
	}
	if code, _, errw := runCLI(t, "scan", "-", "-"); code != 2 || !strings.Contains(errw, "given twice") || !strings.Contains(errw, "see 'beatnote scan --help'") {
		t.Errorf("scan - -: exit %d\n%s", code, errw)
	}
}

// A performance-monitoring export end to end: scan lists the bin extremes it read, check judges
// the worst bin (the 12.5 ps DGD maximum, not a percentile of the averages).
func TestPMExportEndToEnd(t *testing.T) {
	pm := filepath.Join("..", "..", "parse", "testdata", "messy", "pm_15min.csv")
	code, out, errw := runCLI(t, "scan", "--format", "json", pm)
	if code != 0 || !strings.Contains(out, `"dgd_ps_max"`) || !strings.Contains(out, `"q_db_min"`) {
		t.Errorf("scan: exit %d\n%s\n%s", code, out, errw)
	}
	code, out, errw = runCLI(t, "check", "--format", "json", "--profile", "400g-dp-16qam-cfec", pm)
	if code == 2 {
		t.Fatalf("check: exit 2\n%s", errw)
	}
	for _, want := range []string{`"metric": "dgd_ps"`, `"statistic": "max"`, `"measured": 12.5`, "performance-monitoring bins"} {
		if !strings.Contains(out, want) {
			t.Errorf("check JSON lacks %q", want)
		}
	}
}
