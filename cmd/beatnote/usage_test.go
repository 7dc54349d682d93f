package main

import (
	"encoding/json"
	"fmt"
	"path/filepath"
	"slices"
	"strings"
	"testing"
)

// A usage error is one line on stderr ending with the hint to --help, nothing on stdout (so a
// redirected --format json file never holds help text), and exit status 2.
func TestUsageErrorIsOneLine(t *testing.T) {
	dir := t.TempDir()
	log := writeFile(t, dir, "a.csv", "time,port,osnr_db\n2026-03-14T08:00:00Z,p,20\n")
	for _, tc := range []struct {
		args []string
		hint string
	}{
		{[]string{}, "see 'beatnote --help'"},
		{[]string{"frobnicate"}, "see 'beatnote --help'"},
		{[]string{"check", "--bogus", log}, "see 'beatnote check --help'"},
		{[]string{"check"}, "see 'beatnote check --help'"},
		{[]string{"check", log, "--format", "xml"}, "see 'beatnote check --help'"},
		{[]string{"check", log, "--plan", filepath.Join(dir, "none.yaml")}, "see 'beatnote check --help'"},
		{[]string{"check", log, "--profile", "no-such-profile"}, "see 'beatnote check --help'"},
		{[]string{"scan", "--format", "json", "--statistic", "median", log}, "see 'beatnote scan --help'"},
		{[]string{"triage", log, "--format", "json", "--top=-1"}, "see 'beatnote triage --help'"},
		{[]string{"triage", log, "--verdict", "bad"}, "see 'beatnote triage --help'"},
		{[]string{"triage", log, "--cause", "gremlins"}, "see 'beatnote triage --help'"},
		{[]string{"report", log, "--out", filepath.Join(dir, "r.pdf"), "--signer", "X"}, "see 'beatnote report --help'"},
		{[]string{"report", log, "--out", filepath.Join(dir, "r.pdf"), "--time", "yesterday"}, "see 'beatnote report --help'"},
		{[]string{"verify"}, "see 'beatnote verify --help'"},
		{[]string{"calc", "q", "--ber", "2"}, "see 'beatnote calc q --help'"},
	} {
		t.Run(strings.Join(tc.args, " "), func(t *testing.T) {
			code, stdout, stderr := runCLI(t, tc.args...)
			if code != 2 {
				t.Errorf("exit %d, want 2", code)
			}
			if stdout != "" {
				t.Errorf("stdout holds %q, want nothing", stdout)
			}
			if strings.Count(stderr, "\n") != 1 || !strings.HasPrefix(stderr, "beatnote: ") || !strings.HasSuffix(stderr, tc.hint+"\n") {
				t.Errorf("stderr %q: want one line starting 'beatnote: ' and ending %q", stderr, tc.hint)
			}
		})
	}
}

// --strict on every reading command stops an input at its first rejected row, judges
// nothing, and says exactly how many rows were read, used and rejected before it stopped.
func TestStrictOnEveryReadingCommand(t *testing.T) {
	dir := t.TempDir()
	var b strings.Builder
	b.WriteString("time,port,osnr_db\n")
	for i := range 30 {
		v := "20"
		if i == 11 {
			v = "abc"
		}
		fmt.Fprintf(&b, "2026-03-14T08:%02d:00Z,p,%s\n", i, v)
	}
	log := writeFile(t, dir, "s.csv", b.String())
	const counts = "12 rows read, 11 used, 1 rejected"
	for _, args := range [][]string{
		{"check", "--strict", log},
		{"check", "--strict", "--format", "json", log},
		{"triage", "--strict", "--format", "csv", "--profile", "400g-dp-16qam-cfec", log},
		{"report", "--strict", log, "--out", filepath.Join(dir, "r.md"), "--format", "markdown"},
	} {
		t.Run(strings.Join(args[:2], " "), func(t *testing.T) {
			code, stdout, stderr := runCLI(t, args...)
			if code != 2 || stdout != "" {
				t.Errorf("exit %d, stdout %q: want 2 and nothing", code, stdout)
			}
			if !strings.Contains(stderr, counts) || !strings.Contains(stderr, "s.csv:13:3") {
				t.Errorf("stderr %q: want %q and the bad row s.csv:13:3", stderr, counts)
			}
		})
		// Without --strict the same input is judged: the bad row is rejected and reported.
		lenient := slices.DeleteFunc(slices.Clone(args), func(a string) bool { return a == "--strict" })
		if code, stdout, _ := runCLI(t, lenient...); code == 2 || (stdout == "" && args[0] != "report") {
			t.Errorf("%v: exit %d without --strict, output %q", lenient, code, stdout)
		}
	}
	code, stdout, _ := runCLI(t, "scan", "--strict", "--format", "json", log)
	var doc struct {
		Inputs []struct {
			RowsRead     int    `json:"rows_read"`
			RowsUsed     int    `json:"rows_used"`
			RowsRejected int    `json:"rows_rejected"`
			Error        string `json:"error"`
		} `json:"inputs"`
	}
	if err := json.Unmarshal([]byte(stdout), &doc); err != nil {
		t.Fatal(err)
	}
	in := doc.Inputs[0]
	if code != 2 || in.RowsRead != 12 || in.RowsUsed != 11 || in.RowsRejected != 1 || in.Error == "" {
		t.Errorf("scan --strict: exit %d, inputs %+v: want exit 2, 12 read, 11 used, 1 rejected and the error", code, in)
	}
	_, text, _ := runCLI(t, "scan", "--strict", log)
	if strings.Contains(text, " ok") || !strings.Contains(text, "NOT READ COMPLETELY") {
		t.Errorf("scan --strict text says the input was read completely:\n%s", text)
	}
}
