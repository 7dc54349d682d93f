package main

import (
	"encoding/json"
	"go.yaml.in/yaml/v3"
	"os"
	"path/filepath"
	"regexp"
	"slices"
	"strings"
	"testing"
	"time"
)

// The demo logs in samples/ were generated for a stated verdict and causes (samples/manifest.yaml).
// Triage with the demo port map must give each port an acceptable verdict, its intended top
// cause on top, and every intended cause listed.
func TestTriageOnDemoSamplesMatchesManifest(t *testing.T) {
	root := filepath.Join("..", "..", "samples")
	raw, err := os.ReadFile(filepath.Join(root, "manifest.yaml"))
	if err != nil {
		t.Skipf("no demo samples: %v", err)
	}
	var man struct {
		Logs []struct {
			File       string   `yaml:"file"`
			Port       string   `yaml:"port"`
			Acceptable []string `yaml:"acceptable_verdicts"`
			Causes     []string `yaml:"causes"`
		} `yaml:"logs"`
	}
	if err := yaml.Unmarshal(raw, &man); err != nil {
		t.Fatal(err)
	}
	code, out, errw := runCLI(t, "triage", filepath.Join(root, "logs"), "--map", filepath.Join(root, "portmap.yaml"), "--format", "json")
	if code != 1 {
		t.Fatalf("exit %d, want 1 (%s)", code, errw)
	}
	var res struct {
		Ports []struct {
			Port    string `json:"port"`
			Verdict string `json:"verdict"`
			Causes  []struct {
				ID string `json:"id"`
			} `json:"causes"`
		} `json:"ports"`
	}
	if err := json.Unmarshal([]byte(out), &res); err != nil {
		t.Fatal(err)
	}
	for _, want := range man.Logs {
		i := slices.IndexFunc(res.Ports, func(p struct {
			Port    string `json:"port"`
			Verdict string `json:"verdict"`
			Causes  []struct {
				ID string `json:"id"`
			} `json:"causes"`
		}) bool {
			return p.Port == want.Port
		})
		if i < 0 {
			t.Errorf("%s (%s): port missing from triage", want.Port, want.File)
			continue
		}
		got := res.Ports[i]
		var ids []string
		for _, c := range got.Causes {
			ids = append(ids, c.ID)
		}
		if !slices.Contains(want.Acceptable, got.Verdict) {
			t.Errorf("%s (%s): verdict %s, want one of %v", want.Port, want.File, got.Verdict, want.Acceptable)
		}
		if len(want.Causes) == 0 && len(ids) != 0 {
			t.Errorf("%s (%s): causes %v, want none", want.Port, want.File, ids)
		}
		if len(want.Causes) > 0 && (len(ids) == 0 || ids[0] != want.Causes[0]) {
			t.Errorf("%s (%s): causes %v, want %s on top", want.Port, want.File, ids, want.Causes[0])
		}
		for _, c := range want.Causes {
			if !slices.Contains(ids, c) {
				t.Errorf("%s (%s): causes %v lack %s", want.Port, want.File, ids, c)
			}
		}
	}
}

// The service-impact ranking on the demo samples: the two ports that went dark first, then the
// ports with uncorrected blocks or Q below the FEC threshold, then the ports whose carrier offset
// is forecast to leave the capture range within the horizon (the one marginal port among them
// about an hour away) ahead of every other failing port; --sort port orders by id.
func TestTriageImpactOrderOnDemoSamples(t *testing.T) {
	root := filepath.Join("..", "..", "samples")
	if _, err := os.Stat(filepath.Join(root, "portmap.yaml")); err != nil {
		t.Skipf("no demo samples: %v", err)
	}
	type port struct {
		Port     string `json:"port"`
		Verdict  string `json:"verdict"`
		Criteria []struct {
			Metric    string  `json:"metric"`
			Statistic string  `json:"statistic"`
			Unit      string  `json:"unit"`
			Measured  float64 `json:"measured"`
			Margin    float64 `json:"margin"`
		} `json:"criteria"`
		Metrics map[string]struct {
			Margin *float64 `json:"margin"`
		} `json:"metrics"`
	}
	run := func(args ...string) []port {
		t.Helper()
		code, out, errw := runCLI(t, append([]string{"triage", filepath.Join(root, "logs"), "--map", filepath.Join(root, "portmap.yaml"), "--format", "json"}, args...)...)
		if code != 1 {
			t.Fatalf("exit %d, want 1 (%s)", code, errw)
		}
		var res struct{ Ports []port }
		if err := json.Unmarshal([]byte(out), &res); err != nil {
			t.Fatal(err)
		}
		return res.Ports
	}
	ports := run()
	rank := map[string]int{}
	for i, p := range ports {
		rank[p.Port] = i + 1
	}
	// Ports named by what the generator put in them (samples/manifest.yaml).
	if rank["OSK-LC5/2"] > 2 || rank["TLV-LC2/5"] > 2 {
		t.Errorf("dark ports rank %d and %d, want 1 and 2", rank["OSK-LC5/2"], rank["TLV-LC2/5"])
	}
	lastErrored, forecast := 0, 0
	urgent := make([]bool, len(ports)) // dark, errored or forecast
	for i, p := range ports {
		for _, c := range p.Criteria {
			switch {
			case c.Metric == "rx_power_dbm" && c.Statistic == "count" && c.Measured > 0:
				urgent[i] = true
			case c.Metric == "uncorrected_blocks" && c.Measured > 0:
				lastErrored, urgent[i] = i+1, true
			case c.Statistic == "trend" && c.Unit == "h" && c.Margin < 0:
				urgent[i] = true
				if p.Verdict == "marginal" {
					forecast = i + 1
					if c.Measured < 0.9 || c.Measured > 1.3 {
						t.Errorf("%s forecast %.2f h, want about an hour", p.Port, c.Measured)
					}
				}
			}
		}
		if m := p.Metrics["q_db"].Margin; m != nil && *m < 0 {
			lastErrored, urgent[i] = i+1, true
		}
	}
	if lastErrored == 0 || forecast == 0 {
		t.Fatalf("no errored port (%d) or no forecast port (%d) in the samples", lastErrored, forecast)
	}
	// Right after the errored ones: only another forecast port (sooner) may stand between.
	if forecast-lastErrored < 1 || forecast-lastErrored > 2 {
		t.Errorf("forecast port ranks %d, the last errored port %d", forecast, lastErrored)
	}
	for i, p := range ports[:forecast] {
		if !urgent[i] {
			t.Errorf("%s (%s, nothing dark, errored or forecast) ranks %d, above the forecast port", p.Port, p.Verdict, i+1)
		}
	}
	byPort := run("--sort", "port")
	if !slices.IsSortedFunc(byPort, func(a, b port) int { return strings.Compare(a.Port, b.Port) }) {
		t.Errorf("--sort port: not in port order")
	}
}

// Every event the generator put on a demo network line comes out of triage as exactly one line
// finding of the expected id, on every channel of the line, starting within two minutes of the
// event; a line without events has none (samples/network/manifest.yaml).
func TestTriageLineFindingsOnDemoNetwork(t *testing.T) {
	root := filepath.Join("..", "..", "samples", "network")
	raw, err := os.ReadFile(filepath.Join(root, "manifest.yaml"))
	if err != nil {
		t.Skipf("no demo network: %v", err)
	}
	var man struct {
		Lines []struct {
			Line   string   `yaml:"line"`
			Ports  []string `yaml:"ports"`
			Events []struct {
				From    time.Time `yaml:"from"`
				Finding string    `yaml:"finding"`
			} `yaml:"events"`
		} `yaml:"lines"`
	}
	if err := yaml.Unmarshal(raw, &man); err != nil {
		t.Fatal(err)
	}
	code, out, errw := runCLI(t, "triage", root, "--map", filepath.Join(root, "portmap.yaml"), "--format", "json")
	if code != 1 {
		t.Fatalf("exit %d, want 1 (%s)", code, errw)
	}
	type lineJSON struct {
		Line     string   `json:"line"`
		Ports    []string `json:"ports"`
		Findings []struct {
			ID            string    `json:"id"`
			Confidence    float64   `json:"confidence"`
			From          time.Time `json:"from"`
			PortsAffected []string  `json:"ports_affected"`
			Evidence      []string  `json:"evidence"`
		} `json:"findings"`
	}
	var res struct {
		Lines []lineJSON `json:"lines"`
		Ports []struct {
			Port         string `json:"port"`
			LineFindings []struct {
				Line, ID string
			} `json:"line_findings"`
		} `json:"ports"`
	}
	if err := json.Unmarshal([]byte(out), &res); err != nil {
		t.Fatal(err)
	}
	if len(res.Lines) != len(man.Lines) {
		t.Fatalf("%d lines, the manifest has %d", len(res.Lines), len(man.Lines))
	}
	events := 0
	for _, want := range man.Lines {
		i := slices.IndexFunc(res.Lines, func(l lineJSON) bool {
			return l.Line == want.Line
		})
		if i < 0 {
			t.Errorf("line %s missing", want.Line)
			continue
		}
		got := res.Lines[i]
		if len(got.Findings) != len(want.Events) {
			t.Errorf("%s: %d findings, want %d (one per event)", want.Line, len(got.Findings), len(want.Events))
		}
		for _, ev := range want.Events {
			events++
			n := 0
			for _, f := range got.Findings {
				if f.ID != ev.Finding {
					continue
				}
				n++
				if d := f.From.Sub(ev.From); d < -2*time.Minute || d > 2*time.Minute {
					t.Errorf("%s %s: from %v, the event at %v", want.Line, f.ID, f.From, ev.From)
				}
				if !slices.Equal(f.PortsAffected, want.Ports) {
					t.Errorf("%s %s: ports %v, want all of %v", want.Line, f.ID, f.PortsAffected, want.Ports)
				}
				if !(f.Confidence >= 0.95 && f.Confidence <= 1) || len(f.Evidence) == 0 {
					t.Errorf("%s %s: confidence %g, evidence %v", want.Line, f.ID, f.Confidence, f.Evidence)
				}
			}
			if n != 1 {
				t.Errorf("%s: event %s at %v gave %d findings of that id, want exactly 1", want.Line, ev.Finding, ev.From, n)
			}
		}
	}
	if events < 4 {
		t.Errorf("the demo network has %d line events, want at least 4", events)
	}
	// Ports point at their line's findings.
	for _, p := range res.Ports {
		if strings.HasPrefix(p.Port, "TLV-LX2/") && (len(p.LineFindings) != 1 || p.LineFindings[0].ID != "line-outage") {
			t.Errorf("%s points at %v, want the line-outage", p.Port, p.LineFindings)
		}
	}
}

// Both directions on the demo network: the circuit whose Ferrowick → Oskelby line lost OSNR
// is clean the other way, so check points at the Ferrowick → Oskelby path.
func TestCheckBothDirectionsOnDemoNetwork(t *testing.T) {
	root := filepath.Join("..", "..", "samples", "network")
	if _, err := os.Stat(filepath.Join(root, "portmap.yaml")); err != nil {
		t.Skipf("no demo network: %v", err)
	}
	code, out, errw := runCLI(t, "check", filepath.Join(root, "logs", "line-ferrowick-oskelby.csv"), filepath.Join(root, "logs", "line-oskelby-ferrowick.csv"),
		"--map", filepath.Join(root, "portmap.yaml"), "--port", "OSK-LX1/1", "--soak", "6h", "--format", "json")
	if code != 1 {
		t.Fatalf("exit %d, want 1 (%s)", code, errw)
	}
	var res struct {
		Ports []struct {
			Port string `json:"port"`
		} `json:"ports"`
		Directions []struct {
			Circuit    string `json:"circuit"`
			OneWay     string `json:"one_way"`
			Finding    string `json:"finding"`
			Directions []struct {
				ReceivedAt string `json:"received_at"`
				Verdict    string `json:"verdict"`
			} `json:"directions"`
		} `json:"directions"`
	}
	if err := json.Unmarshal([]byte(out), &res); err != nil {
		t.Fatal(err)
	}
	if len(res.Ports) != 2 || len(res.Directions) != 1 {
		t.Fatalf("%d ports, %d pairs; want the port and its peer, one pair", len(res.Ports), len(res.Directions))
	}
	d := res.Directions[0]
	if d.Circuit != "QRO-FRW-OSK-521" || d.OneWay != "OSK-LX1/1" || !strings.Contains(d.Finding, "QRO-LN-FRW-OSK") ||
		d.Directions[1].ReceivedAt != "FRW-LX1/1" || d.Directions[1].Verdict != "pass" {
		t.Errorf("pair %+v", d)
	}
	code, out, _ = runCLI(t, "check", filepath.Join(root, "logs", "line-ferrowick-oskelby.csv"), filepath.Join(root, "logs", "line-oskelby-ferrowick.csv"),
		"--map", filepath.Join(root, "portmap.yaml"), "--port", "OSK-LX1/1", "--soak", "6h")
	if code != 1 || !strings.Contains(out, "Both directions") || !strings.Contains(out, "Seen in one direction only") {
		t.Errorf("text: exit %d\n%s", code, out)
	}
}

// The acceptance report of the demo circuit with a port map holds both directions and points
// at the direction whose line lost OSNR.
func TestReportBothDirectionsOnDemoNetwork(t *testing.T) {
	root := filepath.Join("..", "..", "samples", "network")
	if _, err := os.Stat(filepath.Join(root, "portmap.yaml")); err != nil {
		t.Skipf("no demo network: %v", err)
	}
	out := filepath.Join(t.TempDir(), "pair.md")
	code, _, errw := runCLI(t, "report", filepath.Join(root, "logs", "line-ferrowick-oskelby.csv"), filepath.Join(root, "logs", "line-oskelby-ferrowick.csv"),
		"--map", filepath.Join(root, "portmap.yaml"), "--soak", "6h", "--format", "markdown", "--out", out, "--time", "2026-03-14T12:00:00Z")
	if code == 2 {
		t.Fatalf("exit 2: %s", errw)
	}
	md, err := os.ReadFile(out)
	if err != nil {
		t.Fatal(err)
	}
	s := string(md)
	if !strings.Contains(s, "## Both directions") || !strings.Contains(s, "| FRW-LX1/1 | OSK-LX1/1 | QRO-LN-FRW-OSK |") ||
		!strings.Contains(s, "Seen in one direction only") || !strings.Contains(s, "## Port FRW-LX1/1") {
		t.Errorf("report lacks both directions:\n%s", s[:min(len(s), 3000)])
	}
}

// A folder of circuits with its port map gives one report per circuit, each judged on its own
// plan and profile: the demo's fifteen circuits give fifteen reports, and the healthy one,
// whose log covers the 24-hour test period, passes with error-performance figures.
func TestReportByCircuitOnDemoSamples(t *testing.T) {
	root := filepath.Join("..", "..", "samples")
	if _, err := os.Stat(filepath.Join(root, "portmap.yaml")); err != nil {
		t.Skipf("no demo samples: %v", err)
	}
	dir := t.TempDir()
	code, _, errw := runCLI(t, "report", filepath.Join(root, "logs"), "--map", filepath.Join(root, "portmap.yaml"), "--by-circuit",
		"--format", "markdown", "--out", dir, "--time", "2026-03-15T09:00:00Z")
	if code != 1 {
		t.Fatalf("exit %d, want 1 (some demo circuits fail): %s", code, errw)
	}
	files, _ := filepath.Glob(filepath.Join(dir, "*.md"))
	if len(files) != 15 {
		t.Fatalf("%d reports, want 15", len(files))
	}
	md, err := os.ReadFile(filepath.Join(dir, "QRO-FRW-LTF-401.md"))
	if err != nil {
		t.Fatal(err)
	}
	s := string(md)
	for _, want := range []string{"# Coherent link acceptance report — QRO-FRW-LTF-401", "**Verdict: PASS**", "## Port FRW-OT1/1/C1",
		"Test period 24 h: the log covers 24 h", "0 severely errored seconds", "400g-dp-16qam-cfec"} {
		if !strings.Contains(s, want) {
			t.Errorf("QRO-FRW-LTF-401 report lacks %q", want)
		}
	}
	if strings.Contains(s, "## Port OSK-OT2/1/C1") {
		t.Error("a port of another circuit is in QRO-FRW-LTF-401's report")
	}
	if !strings.Contains(s, "qro-frw-ltf-401.yaml") || strings.Contains(s, "qro-osk-ven-402.yaml") {
		t.Error("QRO-FRW-LTF-401's report should list its own plan and no other circuit's")
	}
	low, _ := os.ReadFile(filepath.Join(dir, "QRO-GLM-TLV-403.md"))
	for _, want := range []string{"- action: Inspect and clean every connector", "*Laser safety: confirm the fibre dark", "before the OTDR shot"} {
		if !strings.Contains(string(low), want) {
			t.Errorf("QRO-GLM-TLV-403 report lacks %q beside its actions", want)
		}
	}
	cut, _ := os.ReadFile(filepath.Join(dir, "QRO-OSK-MDQ-212.md"))
	if !strings.Contains(string(cut), "| Samples without signal | count | 203 samples | 0 samples | -203 samples | fail | from memory [") {
		t.Error("QRO-OSK-MDQ-212: the samples-without-signal limit does not show the class of its rules source (from memory)")
	}
	qpsk, _ := os.ReadFile(filepath.Join(dir, "QRO-RSK-MDQ-104.md"))
	if !strings.Contains(string(qpsk), "100g-dp-qpsk") {
		t.Error("QRO-RSK-MDQ-104 is not judged on its own profile, 100g-dp-qpsk")
	}
}

// A signed report per circuit of the demo network lists and signs only that circuit's logs
// (the line logs that hold its ports: both directions' for a circuit judged both ways), its
// own plans and the port map; verify passes for each.
func TestReportByCircuitSignsOwnInputs(t *testing.T) {
	root := filepath.Join("..", "..", "samples", "network")
	if _, err := os.Stat(filepath.Join(root, "portmap.yaml")); err != nil {
		t.Skipf("no demo network: %v", err)
	}
	dir := t.TempDir()
	if code, _, e := runCLI(t, "keygen", "--out", filepath.Join(dir, "tech")); code != 0 {
		t.Fatalf("keygen: %s", e)
	}
	out := filepath.Join(dir, "reports")
	code, _, errw := runCLI(t, "report", filepath.Join(root, "logs"), "--map", filepath.Join(root, "portmap.yaml"), "--by-circuit",
		"--format", "markdown", "--out", out, "--soak", "6h", "--time", "2026-03-15T09:00:00Z",
		"--sign-key", filepath.Join(dir, "tech.key"), "--signer", "A. Technician")
	if code != 1 {
		t.Fatalf("exit %d, want 1 (some circuits fail): %s", code, errw)
	}
	logsOf := map[string][]string{
		"QRO-FRW-OSK": {"line-ferrowick-oskelby.csv", "line-oskelby-ferrowick.csv"},
		"QRO-GLM-TLV": {"line-glimmerby-tollaven.csv"},
		"QRO-RSK-TLV": {"line-tollaven-ruskhollow-aerial.csv"},
	}
	reports, _ := filepath.Glob(filepath.Join(out, "*.md"))
	if len(reports) != 12 {
		t.Fatalf("%d reports, want 12 (one per circuit, both directions in one)", len(reports))
	}
	for _, rep := range reports {
		circuit := strings.TrimSuffix(filepath.Base(rep), ".md")
		var want []string
		for _, l := range logsOf[circuit[:11]] {
			want = append(want, "logs/"+l)
		}
		plans, _ := filepath.Glob(filepath.Join(root, "plans", strings.ToLower(circuit)+"-*.yaml"))
		for _, p := range plans {
			want = append(want, "plans/"+filepath.Base(p))
		}
		want = append(want, "portmap.yaml")
		var got []string
		for _, in := range readSig(t, rep+".sig").Inputs {
			path := filepath.ToSlash(in.Path)
			got = append(got, path[strings.LastIndex(path, "samples/network/")+len("samples/network/"):])
		}
		slices.Sort(want)
		slices.Sort(got)
		if len(want) < 3 || !slices.Equal(got, want) {
			t.Errorf("%s signs %v, want %v", circuit, got, want)
		}
		md, _ := os.ReadFile(rep)
		for _, other := range []string{"line-ferrowick-oskelby.csv", "line-glimmerby-tollaven.csv", "line-tollaven-ruskhollow-aerial.csv"} {
			if listed := strings.Contains(string(md), other); listed != slices.Contains(logsOf[circuit[:11]], other) {
				t.Errorf("%s: %s listed %v", circuit, other, listed)
			}
		}
		if code, stdout, _ := runCLI(t, "verify", rep, "--pub", filepath.Join(dir, "tech.pub")); code != 0 || !strings.HasPrefix(stdout, "VERIFIED") {
			t.Errorf("verify %s: exit %d\n%s", circuit, code, stdout)
		}
	}
}

// Every sentence check writes about the demo logs and the demo network counts in proper
// words: no "burst(s)", no "1 samples" or "1 of 1 BER bursts fall".
func TestSampleWordingCountsInWords(t *testing.T) {
	oneMany := regexp.MustCompile(`\b1 ([A-Za-z-]+ ){0,2}(bursts|spikes|samples|intervals|gaps|steps|blocks|ports|channels|rows|files|times|points|seconds|lines|findings)\b`)
	for _, set := range [][2]string{{"logs", "portmap.yaml"}, {"network/logs", "network/portmap.yaml"}} {
		root := filepath.Join("..", "..", "samples")
		for _, format := range []string{"text", "json"} {
			_, out, errw := runCLI(t, "check", filepath.Join(root, set[0]), "--map", filepath.Join(root, set[1]), "--format", format)
			if out == "" {
				t.Fatalf("check %s: no output: %s", set[0], errw)
			}
			if strings.Contains(out, "(s)") {
				i := strings.Index(out, "(s)")
				t.Errorf("check %s --format %s writes %q", set[0], format, out[max(0, i-60):i+3])
			}
			for _, m := range oneMany.FindAllString(out, -1) {
				if !strings.HasPrefix(m, "1 dB") {
					t.Errorf("check %s --format %s writes %q", set[0], format, m)
				}
			}
		}
	}
}
