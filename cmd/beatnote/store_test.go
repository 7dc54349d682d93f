package main

import (
	"bufio"
	"context"
	"encoding/json"
	"fmt"
	"math"
	"net"
	"net/http"
	"net/http/httptest"
	"net/http/httputil"
	"net/url"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/beatnote/beatnote/parse"
	"github.com/beatnote/beatnote/parse/promapi"
)

// These tests run beatnote against a real Prometheus server (the Debian package; .ci/run
// installs it) started on a loopback port, its data directory filled by backfilling
// OpenMetrics text with promtool. They skip when prometheus or promtool is not installed.

var promServer struct {
	once sync.Once
	url  string
	cmd  *exec.Cmd
	dir  string
	err  error
}

func TestMain(m *testing.M) {
	code := m.Run()
	if promServer.cmd != nil && promServer.cmd.Process != nil {
		_ = promServer.cmd.Process.Kill()
		_, _ = promServer.cmd.Process.Wait()
	}
	if promServer.dir != "" {
		os.RemoveAll(promServer.dir)
	}
	os.Exit(code)
}

// badMetric is a metric of the test data outside the built-in mapping: one series with a BER
// of 0.7 among good values, read with a mapping of its own.
const badMetric = "test_line_pre_fec_ber"

// demoRangeStart and demoRangeEnd bound the demo logs (samples/README.md: 2026-03-14, one
// sample a minute for up to 24 hours).
const (
	demoRangeStart = "2026-03-14T00:00:00Z"
	demoRangeEnd   = "2026-03-14T23:59:00Z"
)

// prometheusURL starts (once) a Prometheus server holding the demo logs and returns its URL.
func prometheusURL(t *testing.T) string {
	t.Helper()
	prom, err1 := exec.LookPath("prometheus")
	promtool, err2 := exec.LookPath("promtool")
	if err1 != nil || err2 != nil {
		if os.Getenv("CI") != "" {
			t.Fatal("prometheus and promtool are not installed: .ci/run should have installed them (apt-get install prometheus)")
		}
		t.Skip("prometheus and promtool are not installed (Debian: apt-get install prometheus); .ci/run installs them")
	}
	promServer.once.Do(func() {
		promServer.url, promServer.err = startPrometheus(prom, promtool)
	})
	if promServer.err != nil {
		t.Fatalf("starting prometheus: %v", promServer.err)
	}
	return promServer.url
}

func startPrometheus(prom, promtool string) (string, error) {
	dir, err := os.MkdirTemp("", "beatnote-prom-")
	if err != nil {
		return "", err
	}
	promServer.dir = dir
	ds, err := parse.ReadPaths([]string{filepath.Join("..", "..", "samples", "logs")}, parse.Options{})
	if err != nil {
		return "", err
	}
	om := filepath.Join(dir, "demo.om")
	if err := writeOpenMetrics(om, ds, promapi.DefaultMapping()); err != nil {
		return "", err
	}
	data := filepath.Join(dir, "data")
	out, err := exec.Command(promtool, "tsdb", "create-blocks-from", "openmetrics", om, data).CombinedOutput()
	if err != nil {
		return "", fmt.Errorf("promtool: %v: %s", err, out)
	}
	cfg := filepath.Join(dir, "prometheus.yml")
	if err := os.WriteFile(cfg, []byte("global: {}\n"), 0o644); err != nil {
		return "", err
	}
	l, err := net.Listen("tcp", "127.0.0.1:0")
	if err != nil {
		return "", err
	}
	addr := l.Addr().String()
	l.Close()
	cmd := exec.Command(prom, "--config.file="+cfg, "--storage.tsdb.path="+data, "--web.listen-address="+addr,
		"--storage.tsdb.retention.time=100y", "--log.level=warn")
	logf, err := os.Create(filepath.Join(dir, "prometheus.log"))
	if err != nil {
		return "", err
	}
	cmd.Stdout, cmd.Stderr = logf, logf
	if err := cmd.Start(); err != nil {
		return "", err
	}
	promServer.cmd = cmd
	u := "http://" + addr
	deadline := time.Now().Add(60 * time.Second)
	for time.Now().Before(deadline) {
		resp, err := http.Get(u + "/-/ready")
		if err == nil {
			resp.Body.Close()
			if resp.StatusCode == http.StatusOK {
				return u, nil
			}
		}
		time.Sleep(200 * time.Millisecond)
	}
	log, _ := os.ReadFile(filepath.Join(dir, "prometheus.log"))
	return "", fmt.Errorf("prometheus at %s not ready after 60 s: %s", u, log)
}

// writeOpenMetrics writes every series of ds as OpenMetrics text under the mapping's metric
// names, plus the badMetric series.
func writeOpenMetrics(name string, ds *parse.Dataset, m promapi.Mapping) error {
	f, err := os.Create(name)
	if err != nil {
		return err
	}
	w := bufio.NewWriter(f)
	for _, mm := range m.Metrics {
		spec, _ := parse.LookupColumnSpec(mm.Column)
		q := spec.Quantity()
		scale := 1.0
		switch mm.Column {
		case q.Column():
		case "frequency_mhz":
			scale = 1e6
		default:
			return fmt.Errorf("writeOpenMetrics: no inverse conversion for %s", mm.Column)
		}
		fmt.Fprintf(w, "# TYPE %s gauge\n", mm.Metric)
		for _, s := range ds.Series {
			s := s.Decoded()
			for i, v := range s.Values[q] {
				if math.IsNaN(v) {
					continue
				}
				fmt.Fprintf(w, "%s{%s=%q} %s %s\n", mm.Metric, mm.PortLabel, s.Port,
					strconv.FormatFloat(v*scale, 'g', -1, 64), strconv.FormatFloat(float64(s.TimesMs[i])/1000, 'f', 3, 64))
			}
		}
	}
	fmt.Fprintf(w, "# TYPE %s gauge\n", badMetric)
	t0, _ := time.Parse(time.RFC3339, demoRangeStart)
	for i, v := range []float64{1e-3, 1.1e-3, 0.7, 1.2e-3} {
		fmt.Fprintf(w, "%s{line=\"L1\"} %g %d\n", badMetric, v, t0.Unix()+int64(60*i))
	}
	fmt.Fprintln(w, "# EOF")
	if err := w.Flush(); err != nil {
		f.Close()
		return err
	}
	return f.Close()
}

type triageJSON struct {
	Inputs []parse.InputStats `json:"inputs"`
	Ports  []struct {
		Port    string `json:"port"`
		Verdict string `json:"verdict"`
		Samples int    `json:"samples"`
		Causes  []struct {
			ID         string  `json:"id"`
			Confidence float64 `json:"confidence"`
		} `json:"causes"`
	} `json:"ports"`
}

func decodeTriage(t *testing.T, out string) triageJSON {
	t.Helper()
	var tj triageJSON
	if err := json.Unmarshal([]byte(out), &tj); err != nil {
		t.Fatalf("triage JSON: %v\n%s", err, out)
	}
	return tj
}

// The demo fleet triaged from the store gives the same ports, in the same order, with the same
// verdicts, causes and sample counts as triage of the same logs as files.
func TestTriageFromPrometheusMatchesFiles(t *testing.T) {
	u := prometheusURL(t)
	root := filepath.Join("..", "..", "samples")
	pm := filepath.Join(root, "portmap.yaml")
	codeF, outF, errF := runCLI(t, "triage", filepath.Join(root, "logs"), "--map", pm, "--format", "json")
	codeP, outP, errP := runCLI(t, "triage", "--prometheus", u, "--start", demoRangeStart, "--end", demoRangeEnd,
		"--step", "60s", "--map", pm, "--format", "json")
	if codeF != 1 || codeP != codeF {
		t.Fatalf("exit status: files %d, store %d (want 1 for both)\nfiles: %s\nstore: %s", codeF, codeP, errF, errP)
	}
	files, store := decodeTriage(t, outF), decodeTriage(t, outP)
	if len(store.Ports) != 15 || len(files.Ports) != len(store.Ports) {
		t.Fatalf("ports: files %d, store %d (the demo fleet has 15)", len(files.Ports), len(store.Ports))
	}
	for i := range files.Ports {
		f, s := files.Ports[i], store.Ports[i]
		if f.Port != s.Port || f.Verdict != s.Verdict || f.Samples != s.Samples {
			t.Errorf("rank %d: files %s %s (%d samples), store %s %s (%d samples)", i+1, f.Port, f.Verdict, f.Samples, s.Port, s.Verdict, s.Samples)
		}
		if len(f.Causes) != len(s.Causes) {
			t.Errorf("%s: causes files %v, store %v", f.Port, f.Causes, s.Causes)
			continue
		}
		for j := range f.Causes {
			if f.Causes[j].ID != s.Causes[j].ID || math.Abs(f.Causes[j].Confidence-s.Causes[j].Confidence) > 1e-9 {
				t.Errorf("%s: cause %d files %+v, store %+v", f.Port, j+1, f.Causes[j], s.Causes[j])
			}
		}
	}
	// Accounting: one input per series (15 ports × 14 quantities), every sample used, each named
	// by its query and range, with a SHA-256.
	if len(store.Inputs) != 15*14 {
		t.Errorf("store inputs: %d, want %d (one per series)", len(store.Inputs), 15*14)
	}
	used := 0
	for _, in := range store.Inputs {
		if in.RowsRead != in.RowsUsed+in.RowsRejected || in.RowsRejected != 0 || len(in.SHA256) != 64 ||
			!strings.Contains(in.File, "last_over_time(") || !strings.Contains(in.File, demoRangeStart) {
			t.Errorf("store input %+v", in)
		}
		used += in.RowsUsed
	}
	// Missing values of the logs are absent from the store, so the store holds one sample per
	// value present in the files.
	ds, err := parse.ReadPaths([]string{filepath.Join(root, "logs")}, parse.Options{})
	if err != nil {
		t.Fatal(err)
	}
	present := 0
	for _, s := range ds.Series {
		s := s.Decoded()
		for q := parse.Quantity(0); q < parse.NumQuantities; q++ {
			for _, v := range s.Values[q] {
				if !math.IsNaN(v) {
					present++
				}
			}
		}
	}
	if used != present {
		t.Errorf("samples used from the store: %d, want %d (the values present in the logs)", used, present)
	}
}

// A sample outside the physical range is rejected with its reason and counted; the rest of the
// series is used.
func TestPrometheusRejectsImpossibleSample(t *testing.T) {
	u := prometheusURL(t)
	dir := t.TempDir()
	mapFile := filepath.Join(dir, "map.yaml")
	if err := os.WriteFile(mapFile, []byte("metrics:\n  - {column: pre_fec_ber, metric: "+badMetric+", port_label: line}\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	code, out, errw := runCLI(t, "scan", "--prometheus", u, "--prometheus-map", mapFile, "--start", demoRangeStart,
		"--end", "2026-03-14T00:10:00Z", "--step", "1m", "--format", "json")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errw)
	}
	var res struct {
		Inputs   []parse.InputStats `json:"inputs"`
		Rejected []parse.Rejection  `json:"rejected"`
	}
	if err := json.Unmarshal([]byte(out), &res); err != nil {
		t.Fatal(err)
	}
	if len(res.Inputs) != 1 || res.Inputs[0].RowsRead != 4 || res.Inputs[0].RowsUsed != 3 || res.Inputs[0].RowsRejected != 1 {
		t.Fatalf("inputs %+v, want one series with 4 samples read, 3 used, 1 rejected", res.Inputs)
	}
	if len(res.Rejected) != 1 || res.Rejected[0].Line != 3 || !strings.Contains(res.Rejected[0].Reason, "BER 0.7 outside 0…0.5") {
		t.Fatalf("rejected %+v, want sample 3 with BER 0.7 outside 0…0.5", res.Rejected)
	}
}

// Each failure is one line on stderr naming what went wrong, with exit status 2.
func TestPrometheusErrors(t *testing.T) {
	u := prometheusURL(t)
	// A proxy in front of the server that wants a bearer token, as a store behind an
	// authenticating gateway does.
	target, _ := url.Parse(u)
	proxy := httputil.NewSingleHostReverseProxy(target)
	// A transport of its own, one connection per request: the proxy shares no pooled
	// connection with the client under test.
	proxy.Transport = &http.Transport{DisableKeepAlives: true}
	proxy.ErrorHandler = func(w http.ResponseWriter, r *http.Request, err error) {
		t.Logf("proxy: %v", err)
		w.WriteHeader(http.StatusBadGateway)
	}
	gate := httptest.NewServer(http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		if r.Header.Get("Authorization") != "Bearer s3cret-token" {
			http.Error(w, "unauthorized", http.StatusUnauthorized)
			return
		}
		proxy.ServeHTTP(w, r)
	}))
	defer gate.Close()
	l, _ := net.Listen("tcp", "127.0.0.1:0")
	closed := "http://" + l.Addr().String()
	l.Close()
	dir := t.TempDir()
	noMatch := filepath.Join(dir, "nomatch.yaml")
	os.WriteFile(noMatch, []byte("metrics:\n  - {column: rx_power_dbm, metric: no_such_metric, port_label: port}\n"), 0o644)
	tokenFile := filepath.Join(dir, "token")
	os.WriteFile(tokenFile, []byte("s3cret-token\n"), 0o600)
	rng := []string{"--start", demoRangeStart, "--end", demoRangeEnd}
	cases := []struct {
		name string
		env  string
		args []string
		want string
	}{
		{"unreachable", "", []string{"--prometheus", closed}, "cannot reach the server"},
		{"no token", "", []string{"--prometheus", gate.URL}, "refused access (HTTP 401 Unauthorized: no bearer token was sent)"},
		{"wrong token", "wrong", []string{"--prometheus", gate.URL}, "the bearer token was not accepted"},
		{"empty range", "", []string{"--prometheus", u, "--start", "2025-01-01T00:00:00Z", "--end", "2025-01-02T00:00:00Z"}, "no samples in the time range"},
		{"mapping matches nothing", "", []string{"--prometheus", u, "--prometheus-map", noMatch}, "the mapping matches no series"},
		{"files and store", "", []string{"--prometheus", u, "x.csv"}, "not both"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			t.Setenv(tokenEnv, c.env)
			args := append([]string{"scan"}, c.args...)
			if !strings.Contains(strings.Join(c.args, " "), "--start") {
				args = append(args, rng...)
			}
			code, _, errw := runCLI(t, args...)
			if code != 2 || !strings.Contains(errw, c.want) || strings.Count(strings.TrimSpace(errw), "\n") != 0 {
				t.Fatalf("exit %d, stderr %q; want 2 and one line with %q", code, errw, c.want)
			}
		})
	}
	t.Run("token from file", func(t *testing.T) {
		t.Setenv(tokenEnv, "")
		code, out, errw := runCLI(t, append([]string{"scan", "--prometheus", gate.URL, "--prometheus-token-file", tokenFile}, rng...)...)
		if code != 0 || !strings.Contains(out, "15 ports") {
			t.Fatalf("exit %d: %s %s", code, errw, out)
		}
	})
	t.Run("token from environment", func(t *testing.T) {
		t.Setenv(tokenEnv, "s3cret-token")
		ctx, cancel := context.WithTimeout(context.Background(), time.Minute)
		defer cancel()
		start, _ := time.Parse(time.RFC3339, demoRangeStart)
		ds, err := promapi.Read(ctx, promapi.Query{URL: gate.URL, Token: os.Getenv(tokenEnv), Start: start, End: start.Add(time.Hour), Step: time.Minute})
		if err != nil || len(ds.Series) != 15 {
			t.Fatalf("%v", err)
		}
	})
}

// Read in small port batches and in time chunks (a 1 s step over three hours takes two
// queries per batch and metric) gives the same series as the files.
func TestPrometheusBatchesAndChunksMatchFiles(t *testing.T) {
	u := prometheusURL(t)
	start, _ := time.Parse(time.RFC3339, demoRangeStart)
	end := start.Add(3 * time.Hour)
	ctx, cancel := context.WithTimeout(context.Background(), 2*time.Minute)
	defer cancel()
	got, err := promapi.Read(ctx, promapi.Query{URL: u, Start: start, End: end, Step: time.Second, BatchPorts: 4})
	if err != nil {
		t.Fatal(err)
	}
	want, err := parse.ReadPaths([]string{filepath.Join("..", "..", "samples", "logs")}, parse.Options{})
	if err != nil {
		t.Fatal(err)
	}
	if len(got.Series) != len(want.Series) {
		t.Fatalf("%d ports, want %d", len(got.Series), len(want.Series))
	}
	for i, g := range got.Series {
		g := g.Decoded()
		w := want.Series[i].Decoded()
		n := 0
		for n < w.Len() && w.TimesMs[n] <= end.UnixMilli() {
			n++
		}
		if g.Port != w.Port || g.Len() != n {
			t.Fatalf("series %d: %s with %d samples, want %s with %d", i, g.Port, g.Len(), w.Port, n)
		}
		for k := 0; k < n; k++ {
			if g.TimesMs[k] != w.TimesMs[k] {
				t.Fatalf("%s sample %d at %d, want %d", g.Port, k, g.TimesMs[k], w.TimesMs[k])
			}
			for q := parse.Quantity(0); q < parse.NumQuantities; q++ {
				gv, wv := math.NaN(), w.Values[q][k]
				if g.Values[q] != nil {
					gv = g.Values[q][k]
				}
				// The frequency goes through MHz and back: allow a relative 1e-12.
				if !(math.IsNaN(gv) && math.IsNaN(wv)) && !(math.Abs(gv-wv) <= 1e-12*math.Abs(wv)) {
					t.Fatalf("%s %s at sample %d: %g, want %g", g.Port, q, k, gv, wv)
				}
			}
		}
	}
}

// A report read from the store asks for the plan's ports only and lists each of their series'
// query, range and SHA-256 among its inputs; signing one is refused (verify can check files,
// not queries) with the way out.
func TestReportFromPrometheus(t *testing.T) {
	u := prometheusURL(t)
	dir := t.TempDir()
	out := filepath.Join(dir, "r.json")
	args := []string{"report", "--prometheus", u, "--start", demoRangeStart, "--end", "2026-03-14T01:00:00Z", "--step", "60s",
		"--plan", filepath.Join("..", "..", "samples", "plans", "qro-glm-tlv-403.yaml"), "--format", "json", "--out", out}
	code, _, errw := runCLI(t, args...)
	if code == 2 {
		t.Fatalf("report: exit 2: %s", errw)
	}
	raw, err := os.ReadFile(out)
	if err != nil {
		t.Fatal(err)
	}
	var rep struct {
		Inputs []parse.InputStats `json:"inputs"`
	}
	if err := json.Unmarshal(raw, &rep); err != nil {
		t.Fatal(err)
	}
	var b strings.Builder
	for _, in := range rep.Inputs {
		if len(in.SHA256) != 64 {
			t.Errorf("input without SHA-256: %+v", in)
		}
		b.WriteString(in.File + "\n")
	}
	if !strings.Contains(b.String(), `last_over_time(components_component_optical_channel_state_input_power_instant{component_name="GLM-OT1/2/C1"}[59999ms]) `+demoRangeStart) {
		t.Fatalf("the report's inputs do not name the query and range:\n%s", b.String())
	}
	// The plan names one port, GLM-OT1/2/C1: its 14 series are the inputs.
	if n := strings.Count(b.String(), "last_over_time("); n != 14 || strings.Count(b.String(), "GLM-OT1/2/C1") != 14 {
		t.Fatalf("%d series listed, want the 14 of the plan's port:\n%s", n, b.String())
	}
	code, _, errw = runCLI(t, append(args[:len(args)-2], "--out", filepath.Join(dir, "r.pdf"), "--format", "pdf",
		"--sign-key", filepath.Join(dir, "k.key"), "--signer", "A. Technician")...)
	if code != 2 || !strings.Contains(errw, "--export FILE.csv") {
		t.Fatalf("signed report from a store: exit %d, %s", code, errw)
	}
}

// --strict stops a series read from the store at its first rejected sample exactly as it stops
// a file: exit 2, the counts up to that sample, and the input's error saying where it stopped.
func TestPrometheusStrictStopsLikeFiles(t *testing.T) {
	u := prometheusURL(t)
	mapFile := filepath.Join(t.TempDir(), "map.yaml")
	if err := os.WriteFile(mapFile, []byte("metrics:\n  - {column: pre_fec_ber, metric: "+badMetric+", port_label: line}\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	src := []string{"--prometheus", u, "--prometheus-map", mapFile, "--start", demoRangeStart,
		"--end", "2026-03-14T00:10:00Z", "--step", "1m", "--strict"}
	code, out, errw := runCLI(t, append([]string{"scan", "--format", "json"}, src...)...)
	if code != 2 {
		t.Fatalf("scan --strict: exit %d, want 2: %s", code, errw)
	}
	var res struct {
		Inputs []parse.InputStats `json:"inputs"`
	}
	if err := json.Unmarshal([]byte(out), &res); err != nil {
		t.Fatalf("scan --strict: %v: %q", err, out)
	}
	// The series holds 4 samples, the 3rd a BER of 0.7: reading stops there.
	if len(res.Inputs) != 1 || res.Inputs[0].RowsRead != 3 || res.Inputs[0].RowsUsed != 2 || res.Inputs[0].RowsRejected != 1 ||
		!strings.Contains(res.Inputs[0].Error, "strict reading stops at the first rejected row") {
		t.Fatalf("scan --strict: inputs %+v, want 3 read, 2 used, 1 rejected and where reading stopped", res.Inputs)
	}
	code, _, errw = runCLI(t, append([]string{"triage", "--profile", "400g-dp-16qam-cfec"}, src...)...)
	if code != 2 || !strings.Contains(errw, "--strict: nothing judged") || !strings.Contains(errw, "3 rows read, 2 used, 1 rejected") {
		t.Fatalf("triage --strict: exit %d, stderr %q, want 2 and the counts where reading stopped", code, errw)
	}
}
