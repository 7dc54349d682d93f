package main

import (
	"bytes"
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/beatnote/beatnote/diagnose"
	"github.com/beatnote/beatnote/parse"
	"github.com/beatnote/beatnote/samples/synth"
	"go.yaml.in/yaml/v3"
)

// runCLI runs the command line args as main does, returning the exit status and output.
func runCLI(t *testing.T, args ...string) (code int, stdout, stderr string) {
	t.Helper()
	var out, errw bytes.Buffer
	code = run(args, &out, &errw, func(int) {})
	return code, out.String(), errw.String()
}

// writeCase writes a synthetic port as canonical CSV and its plan as YAML into dir.
func writeCase(t *testing.T, dir, name string, spec synth.Spec) (logPath, planPath string) {
	t.Helper()
	spec.Port, spec.Circuit = name, "C-"+name
	c, err := synth.Make(spec)
	if err != nil {
		t.Fatal(err)
	}
	var buf bytes.Buffer
	if err := parse.WriteCanonicalCSV(&buf, &parse.Dataset{Series: []*parse.Series{c.Series}}); err != nil {
		t.Fatal(err)
	}
	logPath = filepath.Join(dir, name+".csv")
	if err := os.WriteFile(logPath, buf.Bytes(), 0o644); err != nil {
		t.Fatal(err)
	}
	plan := c.Plan
	plan.Profile = c.Profile.ID
	y, err := yaml.Marshal(plan)
	if err != nil {
		t.Fatal(err)
	}
	planPath = filepath.Join(dir, name+".plan.yaml")
	if err := os.WriteFile(planPath, y, 0o644); err != nil {
		t.Fatal(err)
	}
	return logPath, planPath
}

// Exit status by the design contract: 0 all pass, 1 some marginal or failing, 2 could not complete.
func TestCheckExitCodes(t *testing.T) {
	dir := t.TempDir()
	healthy, healthyPlan := writeCase(t, dir, "ok-1", synth.Spec{Seed: 3, Samples: 300})
	bad, badPlan := writeCase(t, dir, "low-1", synth.Spec{Seed: 3, Samples: 300, Causes: []diagnose.CauseID{"rx-power-low"}, Severity: 1})

	code, out, errw := runCLI(t, "check", healthy, "--plan", healthyPlan, "--soak", "2h")
	if code != 0 {
		t.Errorf("healthy check: exit %d, want 0\n%s\n%s", code, out, errw)
	}
	if !strings.Contains(out, "VERDICT: PASS") {
		t.Errorf("healthy check text lacks the pass verdict:\n%s", out)
	}
	code, out, _ = runCLI(t, "check", bad, "--plan", badPlan)
	if code != 1 {
		t.Errorf("low-power check: exit %d, want 1", code)
	}
	// Every field action that touches the fibre carries the laser-safety caution; the OTDR shot
	// also the warning to disconnect the receiver.
	for _, want := range []string{"Inspect and clean every connector", "Laser safety: confirm the fibre dark with a power meter",
		"never look into a fibre end", "local codes and licensed practice prevail", "Disconnect the receiver at the far end before the OTDR shot"} {
		if !strings.Contains(strings.Join(strings.Fields(out), " "), want) { // lines are wrapped
			t.Errorf("low-power check text lacks %q", want)
		}
	}
	for _, want := range []string{"rx-power-low", "dBm", "What to do on site", "Criteria", "Plan vs measured"} {
		if !strings.Contains(out, want) {
			t.Errorf("low-power check text lacks %q", want)
		}
	}
	if code, _, _ := runCLI(t, "check", filepath.Join(dir, "missing.csv")); code != 2 {
		t.Errorf("missing input: exit %d, want 2", code)
	}
	if code, _, _ := runCLI(t, "check", healthy, "--profile", "no-such-profile"); code != 2 {
		t.Errorf("unknown profile: exit %d, want 2", code)
	}
	if code, _, _ := runCLI(t, "check", healthy, "--port", "nope"); code != 2 {
		t.Errorf("unknown port: exit %d, want 2", code)
	}
	empty := filepath.Join(dir, "empty.csv")
	os.WriteFile(empty, []byte("time,port,pre_fec_ber\n"), 0o644)
	if code, _, _ := runCLI(t, "check", empty); code != 2 {
		t.Errorf("nothing usable: exit %d, want 2", code)
	}
	// Without a plan cd-mismatch is not judged, and the default profile is announced on stderr.
	code, out, errw = runCLI(t, "check", healthy, "--soak", "5h")
	if code != 0 || !strings.Contains(out, "cd-mismatch: no link plan") || !strings.Contains(errw, "default profile") {
		t.Errorf("check without plan: exit %d\nstdout:\n%s\nstderr:\n%s", code, out, errw)
	}
}

// The JSON of check and triage has the members and keys of the design contract.
func TestCheckAndTriageJSONContract(t *testing.T) {
	dir := t.TempDir()
	writeCase(t, dir, "ok-1", synth.Spec{Seed: 5, Samples: 200})
	writeCase(t, dir, "sop-1", synth.Spec{Seed: 5, Samples: 200, Causes: []diagnose.CauseID{"sop-transient"}, Severity: 1})
	writeCase(t, dir, "los-1", synth.Spec{Seed: 5, Samples: 200, Causes: []diagnose.CauseID{"signal-loss"}, Severity: 1})
	for _, cmd := range []string{"check", "triage"} {
		args := []string{cmd, dir, "--format", "json", "--profile", "400g-dp-16qam-cfec"}
		if cmd == "check" {
			args = append(args, "--soak", "2h")
		}
		code, out, errw := runCLI(t, args...)
		if code != 1 {
			t.Errorf("%s: exit %d, want 1 (%s)", cmd, code, errw)
		}
		var doc map[string]json.RawMessage
		if err := json.Unmarshal([]byte(out), &doc); err != nil {
			t.Fatalf("%s: not JSON: %v\n%s", cmd, err, out)
		}
		for _, k := range []string{"tool", "version", "inputs", "ports", "rejected"} {
			if _, ok := doc[k]; !ok {
				t.Errorf("%s JSON lacks %q", cmd, k)
			}
		}
		var ports []map[string]any
		json.Unmarshal(doc["ports"], &ports)
		if len(ports) != 3 {
			t.Fatalf("%s: %d ports, want 3", cmd, len(ports))
		}
		for _, p := range ports {
			for _, k := range []string{"port", "profile", "samples", "from", "to", "verdict", "causes", "metrics", "profile_source"} {
				if _, ok := p[k]; !ok {
					t.Errorf("%s: port %v lacks %q", cmd, p["port"], k)
				}
			}
			for name, m := range p["metrics"].(map[string]any) {
				for _, k := range []string{"min", "p50", "p99", "max", "limit", "margin"} {
					if _, ok := m.(map[string]any)[k]; !ok {
						t.Errorf("%s: metric %s lacks %q", cmd, name, k)
					}
				}
			}
		}
		if ports[len(ports)-1]["verdict"] != "pass" || ports[0]["verdict"] != "fail" {
			t.Errorf("%s: ports not worst first: %v … %v", cmd, ports[0]["verdict"], ports[len(ports)-1]["verdict"])
		}
		var inputs []map[string]any
		json.Unmarshal(doc["inputs"], &inputs)
		for _, in := range inputs {
			if in["rows_read"].(float64) != in["rows_used"].(float64)+in["rows_rejected"].(float64) {
				t.Errorf("%s: input %v: rows_read ≠ used + rejected", cmd, in["file"])
			}
		}
	}
}

func TestTriageFormatsAndFilters(t *testing.T) {
	dir := t.TempDir()
	writeCase(t, dir, "ok-1", synth.Spec{Seed: 7, Samples: 200})
	writeCase(t, dir, "pdl-1", synth.Spec{Seed: 7, Samples: 200, Causes: []diagnose.CauseID{"pdl-high"}, Severity: 1})
	writeCase(t, dir, "lo-1", synth.Spec{Seed: 7, Samples: 200, Causes: []diagnose.CauseID{"lo-offset"}, Severity: 1})

	// Nothing names the ports' profile: triage refuses to assume one; check judges on the default
	// and says so in its output.
	code, out, errw := runCLI(t, "triage", dir)
	if code != 2 || out != "" || !strings.Contains(errw, "3 of 3 ports have no known profile") || !strings.Contains(errw, "--profile") {
		t.Errorf("triage without a profile: exit %d, want 2 and a clear error\n%s%s", code, out, errw)
	}
	code, out, _ = runCLI(t, "check", filepath.Join(dir, "ok-1.csv"), "--soak", "2h")
	if code != 0 || !strings.Contains(out, "Profile 400g-dp-16qam-cfec (assumed: ") {
		t.Errorf("check without a profile: exit %d, the assumption not shown\n%s", code, out)
	}
	code, out, _ = runCLI(t, "check", filepath.Join(dir, "ok-1.csv"), "--format", "json", "--soak", "2h")
	if code != 0 || !strings.Contains(out, `"profile_source": "default"`) {
		t.Errorf("check JSON without a profile: exit %d, no profile_source default\n%s", code, out)
	}
	code, out, _ = runCLI(t, "triage", dir, "--profile", "400g-dp-16qam-cfec")
	if code != 1 || !strings.Contains(out, "Ports per cause") || !strings.Contains(out, "pdl-high") {
		t.Errorf("triage text: exit %d\n%s", code, out)
	}
	code, out, _ = runCLI(t, "triage", dir, "--verdict", "pass", "--profile", "400g-dp-16qam-cfec")
	if code != 0 || !strings.Contains(out, "1 ports: 0 fail, 0 marginal, 1 pass") || !strings.Contains(out, "ok-1  PASS") {
		t.Errorf("--verdict pass: exit %d\n%s", code, out)
	}
	_, out, _ = runCLI(t, "triage", dir, "--cause", "lo-offset", "--format", "csv", "--profile", "400g-dp-16qam-cfec")
	lines := strings.Split(strings.TrimSpace(out), "\n")
	if len(lines) != 2 || !strings.Contains(lines[1], "lo-1") || !strings.HasPrefix(lines[0], "rank,port") {
		t.Errorf("--cause lo-offset csv:\n%s", out)
	}
	_, out, _ = runCLI(t, "triage", dir, "--top", "1", "--format", "markdown", "--profile", "400g-dp-16qam-cfec")
	rows := 0
	for _, l := range strings.Split(out, "\n") {
		if strings.Contains(l, "| FAIL |") || strings.Contains(l, "| MARGINAL |") || strings.Contains(l, "| PASS |") {
			rows++
		}
	}
	if rows != 1 || !strings.Contains(out, "3 ports") {
		t.Errorf("--top 1 markdown:\n%s", out)
	}
	if code, _, _ := runCLI(t, "triage", dir, "--cause", "gremlins"); code != 2 {
		t.Errorf("unknown cause: exit %d, want 2", code)
	}
	if code, _, _ := runCLI(t, "triage", dir, "--format", "xml"); code != 2 {
		t.Errorf("bad format: exit %d, want 2", code)
	}
}

// A log shorter than the test period, or too sparse, cannot pass: its verdict is incomplete
// (exit 1), in text and JSON, whatever its limits say.
func TestCheckShortLogIsIncomplete(t *testing.T) {
	dir := t.TempDir()
	healthy, plan := writeCase(t, dir, "ok-1", synth.Spec{Seed: 3, Samples: 300}) // 5 h of 1-min samples
	for _, tc := range []struct {
		soak    []string
		verdict string
		code    int
	}{
		{nil, "incomplete", 1}, // the 24 h default
		{[]string{"--soak", "7d"}, "incomplete", 1},
		{[]string{"--soak", "2h"}, "pass", 0},
	} {
		args := append([]string{"check", healthy, "--plan", plan, "--format", "json"}, tc.soak...)
		code, out, errw := runCLI(t, args...)
		var doc struct {
			Ports []struct {
				Verdict    string `json:"verdict"`
				TestPeriod struct {
					RequiredS float64 `json:"required_s"`
					Complete  bool    `json:"complete"`
				} `json:"test_period"`
				ErrorPerformance *struct {
					SES int `json:"severely_errored_seconds"`
				} `json:"error_performance"`
			} `json:"ports"`
		}
		if err := json.Unmarshal([]byte(out), &doc); err != nil || len(doc.Ports) != 1 {
			t.Fatalf("%v: %v\n%s%s", tc.soak, err, out, errw)
		}
		p := doc.Ports[0]
		if code != tc.code || p.Verdict != tc.verdict || p.TestPeriod.Complete != (tc.verdict == "pass") || p.ErrorPerformance == nil {
			t.Errorf("%v: exit %d verdict %q test period %+v; want exit %d %q with error performance", tc.soak, code, p.Verdict, p.TestPeriod, tc.code, tc.verdict)
		}
	}
	code, out, _ := runCLI(t, "check", healthy, "--plan", plan)
	if code != 1 || !strings.Contains(out, "VERDICT: INCOMPLETE") || !strings.Contains(out, "the log covers 5 h of the 24 h test period") {
		t.Errorf("text: exit %d\n%s", code, out)
	}
	if code, _, errw := runCLI(t, "check", healthy, "--soak", "soon"); code != 2 || !strings.Contains(errw, "--soak") {
		t.Errorf("bad --soak: exit %d, %s", code, errw)
	}
}

// Rejected rows count against the coverage of the ports of their own log only: 30 rejected
// rows in another port's log leave a complete 5-hour log complete (they would make it 91 %).
func TestCheckRejectedRowsOfAnotherLogDoNotCount(t *testing.T) {
	dir := t.TempDir()
	healthy, plan := writeCase(t, dir, "ok-1", synth.Spec{Seed: 3, Samples: 300})
	var b strings.Builder
	b.WriteString("time,port,pre_fec_ber\n")
	for i := range 40 {
		ber := "1e-3"
		if i >= 10 {
			ber = "0.7" // impossible: rejected
		}
		fmt.Fprintf(&b, "2026-03-14T%02d:%02d:00Z,other-port,%s\n", i/60, i%60, ber)
	}
	other := filepath.Join(dir, "other.csv")
	if err := os.WriteFile(other, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	_, out, errw := runCLI(t, "check", healthy, other, "--plan", plan, "--soak", "2h", "--format", "json")
	var doc struct {
		Ports []struct {
			Port       string `json:"port"`
			Verdict    string `json:"verdict"`
			TestPeriod struct {
				RejectedRows int  `json:"rejected_rows"`
				Complete     bool `json:"complete"`
			} `json:"test_period"`
		} `json:"ports"`
	}
	if err := json.Unmarshal([]byte(out), &doc); err != nil {
		t.Fatalf("%v\n%s%s", err, out, errw)
	}
	seen := 0
	for _, p := range doc.Ports {
		want := p.Port == "other-port"
		if p.Port == "other-port" {
			seen++
		}
		if got := p.TestPeriod.RejectedRows == 30; got != want || (p.Port != "other-port" && !p.TestPeriod.Complete) {
			t.Errorf("%s: %d rejected rows counted, complete %v, verdict %s", p.Port, p.TestPeriod.RejectedRows, p.TestPeriod.Complete, p.Verdict)
		}
	}
	if seen != 1 || len(doc.Ports) != 2 {
		t.Errorf("ports %+v", doc.Ports)
	}
}

// Three rows, two of them impossible (BER 0.7, +45 dBm): the one row left is no acceptance
// test, whatever its values, in check and in report.
func TestCheckRejectedRowsCannotPass(t *testing.T) {
	dir := t.TempDir()
	log := filepath.Join(dir, "three.csv")
	os.WriteFile(log, []byte("time,port,pre_fec_ber,rx_power_dbm\n"+
		"2026-03-14T00:00:00Z,P1,1e-4,-8\n"+
		"2026-03-14T00:01:00Z,P1,0.7,-8\n"+
		"2026-03-14T00:02:00Z,P1,1e-4,45\n"), 0o644)
	for _, soak := range []string{"15m", "24h"} {
		code, out, errw := runCLI(t, "check", log, "--soak", soak, "--format", "json")
		if code != 1 || !strings.Contains(out, `"verdict": "incomplete"`) {
			t.Errorf("check --soak %s: exit %d\n%s%s", soak, code, out, errw)
		}
	}
	pdf := filepath.Join(dir, "r.md")
	code, _, errw := runCLI(t, "report", log, "--soak", "15m", "--format", "markdown", "--out", pdf)
	md, _ := os.ReadFile(pdf)
	if code != 1 || strings.Contains(string(md), "Verdict: PASS") || !strings.Contains(string(md), "INCOMPLETE") {
		t.Errorf("report: exit %d (%s)\n%s", code, errw, md)
	}
}

// Both ends' logs, one port each, without a map: check pairs them as the two directions.
func TestCheckBothEndsLogs(t *testing.T) {
	dir := t.TempDir()
	a, _ := writeCase(t, dir, "end-a", synth.Spec{Seed: 9, Samples: 200, Causes: []diagnose.CauseID{"pdl-high"}, Severity: 1})
	z, _ := writeCase(t, dir, "end-z", synth.Spec{Seed: 10, Samples: 200})
	code, out, errw := runCLI(t, "check", a, z, "--profile", "400g-dp-16qam-cfec", "--soak", "3h", "--format", "json")
	if code != 1 {
		t.Fatalf("exit %d (%s)", code, errw)
	}
	var res struct {
		Directions []struct {
			OneWay string `json:"one_way"`
		} `json:"directions"`
	}
	if err := json.Unmarshal([]byte(out), &res); err != nil {
		t.Fatal(err)
	}
	if len(res.Directions) != 1 || res.Directions[0].OneWay != "end-a" {
		t.Errorf("directions %+v, want one pair pointing at end-a", res.Directions)
	}
	// One log: nothing to pair.
	_, out, _ = runCLI(t, "check", a, "--profile", "400g-dp-16qam-cfec", "--soak", "3h", "--format", "json")
	if strings.Contains(out, `"directions"`) {
		t.Errorf("one log gave directions")
	}
}

// --baseline compares an earlier period of the same port criterion by criterion: a low-power
// period before and a healthy one after shows the received-power criterion going from fail to
// pass, in text and JSON.
func TestCheckBaseline(t *testing.T) {
	before, _ := writeCase(t, t.TempDir(), "p-1", synth.Spec{Seed: 3, Samples: 200, Causes: []diagnose.CauseID{"rx-power-low"}, Severity: 1})
	after, plan := writeCase(t, t.TempDir(), "p-1", synth.Spec{Seed: 3, Samples: 200})
	code, out, errw := runCLI(t, "check", after, "--plan", plan, "--soak", "2h", "--baseline", before)
	if code != 0 || !strings.Contains(out, "Compared with the baseline period") || !strings.Contains(out, "FAIL → PASS") {
		t.Fatalf("text: exit %d\n%s%s", code, out, errw)
	}
	_, out, _ = runCLI(t, "check", after, "--plan", plan, "--soak", "2h", "--baseline", before, "--format", "json")
	var doc struct {
		Ports    []json.RawMessage `json:"ports"`
		Baseline struct {
			Ports []struct {
				Port          string `json:"port"`
				VerdictBefore string `json:"verdict_before"`
				VerdictAfter  string `json:"verdict_after"`
				Criteria      []struct {
					Name          string   `json:"name"`
					Before        *float64 `json:"before"`
					After         *float64 `json:"after"`
					VerdictBefore string   `json:"verdict_before"`
					VerdictAfter  string   `json:"verdict_after"`
				} `json:"criteria"`
			} `json:"ports"`
		} `json:"baseline"`
	}
	if err := json.Unmarshal([]byte(out), &doc); err != nil || len(doc.Ports) != 1 || len(doc.Baseline.Ports) != 1 {
		t.Fatalf("JSON: %v\n%s", err, out)
	}
	bp := doc.Baseline.Ports[0]
	if bp.Port != "p-1" || bp.VerdictBefore != "fail" || bp.VerdictAfter != "pass" {
		t.Errorf("baseline port %+v", bp)
	}
	found := false
	for _, c := range bp.Criteria {
		if strings.HasPrefix(c.Name, "Received power above") {
			found = c.VerdictBefore == "fail" && c.VerdictAfter == "pass" && c.Before != nil && c.After != nil && *c.After > *c.Before
		}
	}
	if !found {
		t.Errorf("the sensitivity criterion does not go from fail to pass: %+v", bp.Criteria)
	}
}
