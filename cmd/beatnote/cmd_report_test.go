package main

import (
	"bytes"
	"encoding/json"
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/beatnote/beatnote/diagnose"
	"github.com/beatnote/beatnote/parse"
	"github.com/beatnote/beatnote/samples/synth"
)

// reportFixture writes a generated circuit (samples/synth) as CSV and its plan, and a key pair.
func reportFixture(t *testing.T) (dir, log, plan, key string) {
	t.Helper()
	dir = t.TempDir()
	c, err := synth.Make(synth.Spec{Causes: []diagnose.CauseID{diagnose.CauseRxPowerLow}, Severity: 0.6, Seed: 3, Samples: 240, Circuit: "demo-7", EndA: "hill-hut", EndZ: "lake-pop"})
	if err != nil {
		t.Fatal(err)
	}
	var buf bytes.Buffer
	if err := synth.WriteCSV(&buf, []*parse.Series{c.Series}, synth.CSVStyle{}); err != nil {
		t.Fatal(err)
	}
	log = filepath.Join(dir, "demo-7.csv")
	plan = filepath.Join(dir, "demo-7.plan.yaml")
	p := c.Plan
	p.Ports = []string{c.Series.Port}
	pj, err := json.Marshal(p) // JSON is YAML
	if err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(log, buf.Bytes(), 0o644); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(plan, pj, 0o644); err != nil {
		t.Fatal(err)
	}
	var out, errw bytes.Buffer
	if err := (&KeygenCmd{Out: filepath.Join(dir, "tech")}).Run(&Globals{}, newPrinter(&out, &errw, true)); err != nil {
		t.Fatal(err)
	}
	return dir, log, plan, filepath.Join(dir, "tech.key")
}

func exitStatus(err error) int {
	if err == nil {
		return 0
	}
	var ee *exitError
	if errors.As(err, &ee) {
		return ee.code
	}
	return 2
}

func runCmd(t *testing.T, run func(g *Globals, pr *printer) error) (string, int) {
	t.Helper()
	var out, errw bytes.Buffer
	err := run(&Globals{}, newPrinter(&out, &errw, true))
	if err != nil && exitStatus(err) == 2 {
		t.Logf("stderr: %s; err: %v", errw.String(), err)
	}
	return out.String(), exitStatus(err)
}

func TestReportSignVerifyTamper(t *testing.T) {
	dir, log, plan, key := reportFixture(t)
	pdf := filepath.Join(dir, "acceptance.pdf")
	rc := &ReportCmd{Logs: []string{log}, judgeFlags: judgeFlags{Plan: plan}, Out: pdf, Format: "pdf", Paper: "a4",
		Technician: "T. Person", Time: "2026-03-15T09:00:00Z", SignKey: key, Signer: "T. Person"}
	out, code := runCmd(t, rc.Run)
	if code == 2 {
		t.Fatalf("report exit 2: %s", out)
	}
	first, err := os.ReadFile(pdf)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := os.Stat(pdf + ".sig"); err != nil {
		t.Fatal("no signature written")
	}
	// Same inputs, fields and time: same bytes.
	if _, code := runCmd(t, rc.Run); code == 2 {
		t.Fatal("second run failed")
	}
	second, _ := os.ReadFile(pdf)
	if !bytes.Equal(first, second) {
		t.Error("two runs with the same --time differ")
	}

	verify := func() (string, int) {
		return runCmd(t, (&VerifyCmd{Report: pdf, Pub: filepath.Join(dir, "tech.pub"), Format: "text"}).Run)
	}
	if out, code := verify(); code != 0 || !strings.Contains(out, "VERIFIED") || !strings.Contains(out, "T. Person") {
		t.Fatalf("verify of an untouched report: exit %d\n%s", code, out)
	}
	// A flipped byte in the report, in the signature and in an input each fails (exit 1).
	for _, target := range []string{pdf, pdf + ".sig", log} {
		orig, _ := os.ReadFile(target)
		mod := append([]byte(nil), orig...)
		mod[len(mod)/2] ^= 0x04
		os.WriteFile(target, mod, 0o644)
		if out, code := verify(); code != 1 {
			t.Errorf("flipped byte in %s: exit %d, want 1\n%s", filepath.Base(target), code, out)
		}
		os.WriteFile(target, orig, 0o644)
	}
	// A removed input is a warning only.
	os.Rename(plan, plan+".away")
	if out, code := verify(); code != 0 || !strings.Contains(out, "no longer present") {
		t.Errorf("missing input: exit %d, want 0 with a warning\n%s", code, out)
	}
	os.Rename(plan+".away", plan)
	// No signature: cannot complete.
	os.Remove(pdf + ".sig")
	if _, code := verify(); code != 2 {
		t.Errorf("missing signature: exit %d, want 2", code)
	}
}

func TestReportFormatsAndUsage(t *testing.T) {
	dir, log, plan, key := reportFixture(t)
	for _, f := range []string{"markdown", "json"} {
		out := filepath.Join(dir, "r."+f)
		_, code := runCmd(t, (&ReportCmd{Logs: []string{log}, judgeFlags: judgeFlags{Plan: plan}, Out: out, Format: f, Paper: "a4", Time: "2026-03-15T09:00:00Z"}).Run)
		if code == 2 {
			t.Fatalf("%s: exit 2", f)
		}
		data, _ := os.ReadFile(out)
		if !strings.Contains(string(data), "IEC 60825-2") {
			t.Errorf("%s report lacks the safety section", f)
		}
	}
	for name, c := range map[string]*ReportCmd{
		"sign without signer": {Logs: []string{log}, judgeFlags: judgeFlags{Plan: plan}, Out: filepath.Join(dir, "x.pdf"), Format: "pdf", Paper: "a4", SignKey: key},
		"bad time":            {Logs: []string{log}, judgeFlags: judgeFlags{Plan: plan}, Out: filepath.Join(dir, "x.pdf"), Format: "pdf", Paper: "a4", Time: "yesterday"},
		"unknown profile":     {Logs: []string{log}, judgeFlags: judgeFlags{Profile: "no-such-module"}, Out: filepath.Join(dir, "x.pdf"), Format: "pdf", Paper: "a4"},
		"out is an input":     {Logs: []string{log}, judgeFlags: judgeFlags{Plan: plan}, Out: log, Format: "pdf", Paper: "a4"},
		"missing log":         {Logs: []string{filepath.Join(dir, "none.csv")}, judgeFlags: judgeFlags{Plan: plan}, Out: filepath.Join(dir, "x.pdf"), Format: "pdf", Paper: "a4"},
	} {
		if _, code := runCmd(t, c.Run); code != 2 {
			t.Errorf("%s: exit %d, want 2", name, code)
		}
	}
	if _, err := os.Stat(filepath.Join(dir, "x.pdf")); err == nil {
		t.Error("a failed run left a report behind")
	}
}

func TestKeygenRefusesOverwrite(t *testing.T) {
	dir := t.TempDir()
	k := &KeygenCmd{Out: filepath.Join(dir, "k")}
	if _, code := runCmd(t, k.Run); code != 0 {
		t.Fatal("first keygen failed")
	}
	if _, code := runCmd(t, k.Run); code != 2 {
		t.Errorf("second keygen without --force: exit %d, want 2", code)
	}
	k.Force = true
	if _, code := runCmd(t, k.Run); code != 0 {
		t.Error("keygen --force failed")
	}
}

// A report judged on the assumed default profile says so in its header; with a plan naming the
// profile it does not.
func TestReportHeaderShowsAssumedProfile(t *testing.T) {
	dir, log, plan, _ := reportFixture(t)
	for _, c := range []struct {
		plan string
		want bool
	}{{"", true}, {plan, false}} {
		out := filepath.Join(dir, "assumed.md")
		if _, code := runCmd(t, (&ReportCmd{Logs: []string{log}, judgeFlags: judgeFlags{Plan: c.plan}, Out: out, Format: "markdown", Paper: "a4", Time: "2026-03-15T09:00:00Z"}).Run); code == 2 {
			t.Fatal("exit 2")
		}
		data, _ := os.ReadFile(out)
		header := string(data)
		if i := strings.Index(header, "## "); i > 0 {
			header = header[:i]
		}
		if got := strings.Contains(header, "ASSUMED"); got != c.want {
			t.Errorf("plan %q: header says assumed %v, want %v\n%s", c.plan, got, c.want, header)
		}
	}
}
