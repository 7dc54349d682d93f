package main

import (
	"bytes"
	"context"
	"crypto/ecdsa"
	"crypto/elliptic"
	"crypto/rand"
	"crypto/tls"
	"crypto/x509"
	"crypto/x509/pkix"
	"encoding/json"
	"encoding/pem"
	"fmt"
	"math"
	"math/big"
	"net"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"sync"
	"sync/atomic"
	"testing"
	"time"

	"github.com/alecthomas/kong"
	"github.com/beatnote/beatnote/parse"
	"github.com/beatnote/beatnote/parse/gnmisub"
	gpb "github.com/openconfig/gnmi/proto/gnmi"
	"google.golang.org/grpc"
	"google.golang.org/grpc/codes"
	"google.golang.org/grpc/credentials"
	"google.golang.org/grpc/metadata"
	"google.golang.org/grpc/status"
)

// testTarget is an in-process gNMI target built on the gnmi library's server interface. It
// streams a sample circuit's telemetry, one sample per interval, as a module does: the
// optical-channel leaves under /components, the FEC statistics under the logical channel that
// is assigned to the optical channel. From sample faultAt on it injects a fault (the received
// power drops by 15 dB and the pre-FEC BER passes the FEC threshold); with dropAfter > 0 it
// ends the session with an error after that many samples.
type testTarget struct {
	gpb.UnimplementedGNMIServer
	series    *parse.Series
	interval  time.Duration
	faultAt   int
	dropAfter int
	user      string
	pass      string

	mu        sync.Mutex
	faultSent time.Time
	setCalls  atomic.Int32
	getCalls  atomic.Int32
	// sawDeadline is set when a Subscribe call arrived with a deadline: watch must send none,
	// or the target may end the stream DeadlineExceeded just before watch's own --for timer
	// fires, and a planned stop reads as a failed session.
	sawDeadline atomic.Bool
}

func (tt *testTarget) Set(_ context.Context, _ *gpb.SetRequest) (*gpb.SetResponse, error) {
	tt.setCalls.Add(1)
	return nil, status.Error(codes.PermissionDenied, "read-only test target")
}

func (tt *testTarget) Subscribe(stream gpb.GNMI_SubscribeServer) error {
	if _, ok := stream.Context().Deadline(); ok {
		tt.sawDeadline.Store(true)
	}
	md, _ := metadata.FromIncomingContext(stream.Context())
	if first(md["username"]) != tt.user || first(md["password"]) != tt.pass {
		return status.Error(codes.Unauthenticated, "bad user name or password")
	}
	req, err := stream.Recv()
	if err != nil {
		return err
	}
	sl := req.GetSubscribe()
	if sl == nil || sl.GetMode() != gpb.SubscriptionList_STREAM || len(sl.GetSubscription()) == 0 {
		return status.Error(codes.InvalidArgument, "want a STREAM subscription")
	}
	for _, s := range sl.GetSubscription() {
		if s.GetMode() != gpb.SubscriptionMode_SAMPLE {
			return status.Error(codes.InvalidArgument, "want SAMPLE subscriptions")
		}
	}
	tick := time.NewTicker(tt.interval)
	defer tick.Stop()
	for i := 0; i < tt.series.Len(); i++ {
		if tt.dropAfter > 0 && i == tt.dropAfter {
			return status.Error(codes.Unavailable, "line card restarting")
		}
		if i == tt.faultAt {
			tt.mu.Lock()
			tt.faultSent = time.Now()
			tt.mu.Unlock()
		}
		for _, n := range tt.notifications(i) {
			if err := stream.Send(&gpb.SubscribeResponse{Response: &gpb.SubscribeResponse_Update{Update: n}}); err != nil {
				return err
			}
		}
		if i == 0 {
			if err := stream.Send(&gpb.SubscribeResponse{Response: &gpb.SubscribeResponse_SyncResponse{SyncResponse: true}}); err != nil {
				return err
			}
		}
		select {
		case <-tick.C:
		case <-stream.Context().Done():
			return nil
		}
	}
	return nil
}

func first(v []string) string {
	if len(v) == 0 {
		return ""
	}
	return v[0]
}

// notifications are the updates of sample i: two notifications, as a module sends its
// component and its logical channel separately.
func (tt *testTarget) notifications(i int) []*gpb.Notification {
	s := tt.series
	val := func(q parse.Quantity) float64 {
		v := s.Values[q][i]
		if i >= tt.faultAt {
			switch q {
			case parse.RxPowerDBm:
				v -= 15
			case parse.PreFECBER:
				v = 0.03
			case parse.QdB:
				v = 20 * math.Log10(1.88) // Q of BER 0.03: Q = √2·erfc⁻¹(0.06) ≈ 1.88
			}
		}
		return v
	}
	ts := s.TimesMs[i] * int64(time.Millisecond)
	dbl := func(v float64) *gpb.TypedValue {
		return &gpb.TypedValue{Value: &gpb.TypedValue_DoubleVal{DoubleVal: v}}
	}
	var ups []*gpb.Update
	for leaf, q := range map[string]parse.Quantity{
		"input-power/instant": parse.RxPowerDBm, "output-power/instant": parse.TxPowerDBm,
		"chromatic-dispersion/instant": parse.CDpsPerNm, "polarization-mode-dispersion/instant": parse.DGDps,
		"polarization-dependent-loss/instant": parse.PDLdB, "osnr/instant": parse.OSNRdB,
		"carrier-frequency-offset/instant": parse.LOOffsetMHz, "sop-roc/instant": parse.SOPRateKradPerS,
	} {
		ups = append(ups, &gpb.Update{Path: gnmisub.StringPath(leaf), Val: dbl(val(q))})
	}
	// frequency is a uint64 in MHz (openconfig-terminal-device.yang).
	ups = append(ups, &gpb.Update{Path: gnmisub.StringPath("frequency"),
		Val: &gpb.TypedValue{Value: &gpb.TypedValue_UintVal{UintVal: uint64(math.Round(val(parse.FrequencyTHz) * 1e6))}}})
	comp := &gpb.Notification{Timestamp: ts, Prefix: gnmisub.StringPath("components/component[name=" + s.Port + "]/optical-channel/state"), Update: ups}
	otn := map[string]any{
		"pre-fec-ber":              map[string]any{"instant": fmt.Sprint(val(parse.PreFECBER))},
		"post-fec-ber":             map[string]any{"instant": fmt.Sprint(val(parse.PostFECBER))},
		"q-value":                  map[string]any{"instant": val(parse.QdB)},
		"esnr":                     map[string]any{"instant": val(parse.ESNRdB)},
		"fec-uncorrectable-blocks": fmt.Sprint(val(parse.UncorrectedBlocks)),
	}
	js, _ := json.Marshal(otn)
	lc := &gpb.Notification{Timestamp: ts + 3e6, Prefix: gnmisub.StringPath("terminal-device/logical-channels/channel[index=10101]"),
		Update: []*gpb.Update{
			{Path: gnmisub.StringPath("otn/state"), Val: &gpb.TypedValue{Value: &gpb.TypedValue_JsonIetfVal{JsonIetfVal: js}}},
			{Path: gnmisub.StringPath("logical-channel-assignments/assignment[index=1]/state/optical-channel"),
				Val: &gpb.TypedValue{Value: &gpb.TypedValue_StringVal{StringVal: s.Port}}},
			{Path: gnmisub.StringPath("logical-channel-assignments/assignment[index=1]/state/assignment-type"),
				Val: &gpb.TypedValue{Value: &gpb.TypedValue_StringVal{StringVal: "OPTICAL_CHANNEL"}}},
		}}
	return []*gpb.Notification{comp, lc}
}

// testPKI writes a CA certificate to dir and returns it with a server certificate for
// 127.0.0.1 signed by it.
func testPKI(t *testing.T, dir string) (caFile string, server tls.Certificate) {
	t.Helper()
	caKey, _ := ecdsa.GenerateKey(elliptic.P256(), rand.Reader)
	caTmpl := &x509.Certificate{SerialNumber: big.NewInt(1), Subject: pkix.Name{CommonName: "test operator CA"},
		NotBefore: time.Now().Add(-time.Hour), NotAfter: time.Now().Add(time.Hour), IsCA: true,
		KeyUsage: x509.KeyUsageCertSign, BasicConstraintsValid: true}
	caDER, err := x509.CreateCertificate(rand.Reader, caTmpl, caTmpl, &caKey.PublicKey, caKey)
	if err != nil {
		t.Fatal(err)
	}
	ca, _ := x509.ParseCertificate(caDER)
	srvKey, _ := ecdsa.GenerateKey(elliptic.P256(), rand.Reader)
	srvTmpl := &x509.Certificate{SerialNumber: big.NewInt(2), Subject: pkix.Name{CommonName: "module"},
		NotBefore: time.Now().Add(-time.Hour), NotAfter: time.Now().Add(time.Hour),
		IPAddresses: []net.IP{net.ParseIP("127.0.0.1")}, ExtKeyUsage: []x509.ExtKeyUsage{x509.ExtKeyUsageServerAuth},
		KeyUsage: x509.KeyUsageDigitalSignature}
	srvDER, err := x509.CreateCertificate(rand.Reader, srvTmpl, ca, &srvKey.PublicKey, caKey)
	if err != nil {
		t.Fatal(err)
	}
	caFile = filepath.Join(dir, "ca.pem")
	if err := os.WriteFile(caFile, pem.EncodeToMemory(&pem.Block{Type: "CERTIFICATE", Bytes: caDER}), 0o644); err != nil {
		t.Fatal(err)
	}
	return caFile, tls.Certificate{Certificate: [][]byte{srvDER}, PrivateKey: srvKey}
}

// startTarget serves tt over TLS on a loopback port and returns its address.
func startTarget(t *testing.T, tt *testTarget, cert tls.Certificate) string {
	t.Helper()
	l, err := net.Listen("tcp", "127.0.0.1:0")
	if err != nil {
		t.Fatal(err)
	}
	srv := grpc.NewServer(grpc.Creds(credentials.NewServerTLSFromCert(&cert)))
	gpb.RegisterGNMIServer(srv, tt)
	go srv.Serve(l)
	t.Cleanup(srv.Stop)
	return l.Addr().String()
}

// timedWriter keeps each write (one view of watch) with the time it was made.
type timedWriter struct {
	mu     sync.Mutex
	writes []timedWrite
}

type timedWrite struct {
	at   time.Time
	text string
}

func (w *timedWriter) Write(p []byte) (int, error) {
	w.mu.Lock()
	w.writes = append(w.writes, timedWrite{time.Now(), string(p)})
	w.mu.Unlock()
	return len(p), nil
}

// runWatch runs the watch command as main does, with stdout kept per write.
func runWatch(t *testing.T, args ...string) (code int, views []timedWrite, stderr string) {
	t.Helper()
	var cli CLI
	out, errw := &timedWriter{}, &bytes.Buffer{}
	parser, err := kong.New(&cli, kong.Name("beatnote"), kong.Exit(func(int) {}), kong.Writers(out, errw), kong.Vars{"version": "test"})
	if err != nil {
		t.Fatal(err)
	}
	ctx, err := parser.Parse(append([]string{"watch"}, args...))
	if err != nil {
		t.Fatal(err)
	}
	pr := newPrinter(out, errw, false)
	ctx.Bind(&cli.Globals, pr)
	if err := ctx.Run(); err != nil {
		code = exitCode(err, pr, "watch")
	}
	return code, out.writes, errw.String()
}

func healthyCircuit(t *testing.T, n int) *parse.Series {
	t.Helper()
	ds, err := parse.ReadPaths([]string{filepath.Join("..", "..", "samples", "logs", "ferrowick-lantryford-healthy.csv")}, parse.Options{})
	if err != nil {
		t.Fatal(err)
	}
	s := ds.Series[0].Decoded()
	cut := &parse.Series{Port: s.Port, TimesMs: s.TimesMs[:n]}
	for q := range s.Values {
		if s.Values[q] != nil {
			cut.Values[q] = s.Values[q][:n]
		}
	}
	return cut
}

// watch on a module that develops a fault mid-stream shows the fault within one sample
// interval, never calls Set, and records a file that report signs and verify accepts.
func TestWatchShowsInjectedFaultAndRecordsASignableFile(t *testing.T) {
	dir := t.TempDir()
	caFile, cert := testPKI(t, dir)
	const interval = 300 * time.Millisecond
	tt := &testTarget{series: healthyCircuit(t, 24), interval: interval, faultAt: 18, user: "tech", pass: "s3cret"}
	addr := startTarget(t, tt, cert)
	t.Setenv(passwordEnv, "s3cret")
	rec := filepath.Join(dir, "turnup.csv")
	code, views, errw := runWatch(t, addr, "--ca", caFile, "--username", "tech", "--interval", interval.String(),
		"--record", rec, "--profile", "400g-dp-16qam-cfec", "--soak", "15m", "--for", "30s")
	if code != 1 {
		t.Fatalf("exit %d, want 1 (the fault fails the port); stderr: %s", code, errw)
	}
	if n := tt.setCalls.Load(); n != 0 {
		t.Fatalf("watch called Set %d times", n)
	}
	tt.mu.Lock()
	faultSent := tt.faultSent
	tt.mu.Unlock()
	var passedBefore bool
	var shown time.Time
	var shownText string
	for _, v := range views {
		if !strings.Contains(v.text, "VERDICT:") {
			continue
		}
		// Every quantity arrived: the received-power and OSNR criteria are judged.
		if v.at.Before(faultSent) && strings.Contains(v.text, "VERDICT: PASS") &&
			strings.Contains(v.text, "Received power above the sensitivity limit") && strings.Contains(v.text, "OSNR margin") {
			passedBefore = true
		}
		if !v.at.Before(faultSent) && strings.Contains(v.text, "VERDICT: FAIL") && strings.Contains(v.text, "1. rx-power-low") {
			shown, shownText = v.at, v.text
			break
		}
	}
	if !passedBefore {
		t.Fatalf("no view showed the healthy circuit passing before the fault; views: %d", len(views))
	}
	if shown.IsZero() {
		t.Fatalf("no view showed the fault (VERDICT: FAIL, top cause rx-power-low); last view:\n%s", views[len(views)-1].text)
	}
	// "Within one sample interval" is checked by sample count, not by the wall clock (a loaded
	// machine must not fail the test): the first view that shows the fault was drawn before
	// the sample after the faulty one had been taken in (the view of the faulty sample itself).
	if n := viewSamples(shownText); n < 1 || n > tt.faultAt+1 {
		t.Fatalf("the fault first showed in a view of %d samples; the faulty sample is number %d, so it showed later than one sample interval:\n%s", n, tt.faultAt+1, shownText)
	}
	t.Logf("fault shown %v after it was sent (interval %v)", shown.Sub(faultSent), interval)
	last := views[len(views)-1].text
	t.Logf("last view:\n%s", last)
	for _, want := range []string{"24 samples, 24 rows", "Soak FRW-OT1/1/C1: 0:24:00 of 0:15:00 watched, 100.0 % of sample slots used — test period complete", "Recording to " + rec} {
		if !strings.Contains(last, want) {
			t.Errorf("last view lacks %q:\n%s", want, last)
		}
	}

	// The recording reads back as the samples sent, and report signs it; verify accepts it.
	ds, err := parse.ReadPaths([]string{rec}, parse.Options{})
	if err != nil || len(ds.Series) != 1 || ds.Series[0].Len() != 24 || ds.Inputs[0].RowsRejected != 0 {
		t.Fatalf("recorded file: %v %+v", err, ds.Inputs)
	}
	got, want := ds.Series[0].Decoded(), tt.series
	for _, q := range []parse.Quantity{parse.RxPowerDBm, parse.CDpsPerNm, parse.OSNRdB, parse.ESNRdB, parse.FrequencyTHz} {
		if math.Abs(got.Values[q][0]-want.Values[q][0]) > 1e-9*math.Abs(want.Values[q][0]) {
			t.Errorf("%s recorded %g, sent %g", q, got.Values[q][0], want.Values[q][0])
		}
	}
	if v := got.Values[parse.RxPowerDBm][20]; math.Abs(v-(want.Values[parse.RxPowerDBm][20]-15)) > 1e-9 {
		t.Errorf("faulty rx power recorded %g, sent %g", v, want.Values[parse.RxPowerDBm][20]-15)
	}
	if code, _, e := runCLI(t, "keygen", "--out", filepath.Join(dir, "tech")); code != 0 {
		t.Fatalf("keygen: %s", e)
	}
	pdf := filepath.Join(dir, "acceptance.pdf")
	code, _, e := runCLI(t, "report", rec, "--profile", "400g-dp-16qam-cfec", "--out", pdf, "--technician", "A. Technician",
		"--sign-key", filepath.Join(dir, "tech.key"), "--time", "2026-12-02T00:00:00Z")
	if code != 1 {
		t.Fatalf("report: exit %d, want 1 (a failing port): %s", code, e)
	}
	code, out, e := runCLI(t, "verify", pdf, "--pub", filepath.Join(dir, "tech.pub"))
	if code != 0 || !strings.Contains(out, "VERIFIED") {
		t.Fatalf("verify: exit %d: %s %s", code, out, e)
	}
}

// A session that drops mid-stream ends watch with one line naming why (exit 2) and leaves a
// complete recording of every sample that arrived.
func TestWatchDroppedSessionLeavesCompleteRecording(t *testing.T) {
	dir := t.TempDir()
	caFile, cert := testPKI(t, dir)
	tt := &testTarget{series: healthyCircuit(t, 20), interval: 100 * time.Millisecond, faultAt: 1000, dropAfter: 7, user: "tech", pass: "s3cret"}
	addr := startTarget(t, tt, cert)
	t.Setenv(passwordEnv, "s3cret")
	rec := filepath.Join(dir, "dropped.csv")
	code, _, errw := runWatch(t, addr, "--ca", caFile, "--username", "tech", "--interval", "100ms", "--record", rec,
		"--profile", "400g-dp-16qam-cfec", "--for", "30s")
	if code != 2 || !strings.Contains(errw, "session dropped") || !strings.Contains(errw, "line card restarting") {
		t.Fatalf("exit %d, stderr %q; want 2 naming the dropped session", code, errw)
	}
	raw, err := os.ReadFile(rec)
	if err != nil || !bytes.HasSuffix(raw, []byte("\n")) {
		t.Fatalf("recording does not end with a whole row: %v", err)
	}
	ds, err := parse.ReadPaths([]string{rec}, parse.Options{})
	if err != nil || ds.Series[0].Len() != 7 || ds.Inputs[0].RowsRejected != 0 {
		t.Fatalf("recording after the drop: %v %+v, want the 7 samples sent", err, ds.Inputs)
	}
}

// Wrong credentials, a CA that did not sign the module's certificate, and an existing
// recording are refused with one line each, and nothing is written.
func TestWatchRefusals(t *testing.T) {
	dir := t.TempDir()
	caFile, cert := testPKI(t, dir)
	otherCA, _ := testPKI(t, t.TempDir())
	tt := &testTarget{series: healthyCircuit(t, 5), interval: 100 * time.Millisecond, faultAt: 1000, user: "tech", pass: "s3cret"}
	addr := startTarget(t, tt, cert)
	existing := filepath.Join(dir, "existing.csv")
	os.WriteFile(existing, []byte("keep me\n"), 0o644)
	cases := []struct {
		name, pass string
		args       []string
		want       string
	}{
		{"wrong password", "nope", []string{"--ca", caFile, "--username", "tech"}, "refused the credentials"},
		{"unknown CA", "s3cret", []string{"--ca", otherCA, "--username", "tech"}, "cannot reach the target"},
		{"existing recording", "s3cret", []string{"--ca", caFile, "--username", "tech", "--record", existing}, "the file exists"},
		{"insecure with CA", "s3cret", []string{"--ca", caFile, "--insecure"}, "does not go with --ca"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			t.Setenv(passwordEnv, c.pass)
			code, _, errw := runWatch(t, append([]string{addr, "--interval", "100ms", "--for", "10s"}, c.args...)...)
			if code != 2 || !strings.Contains(errw, c.want) {
				t.Fatalf("exit %d, stderr %q; want 2 with %q", code, errw, c.want)
			}
		})
	}
	if b, _ := os.ReadFile(existing); string(b) != "keep me\n" {
		t.Fatal("an existing file was overwritten")
	}
}

// Stopping watch mid-stream (--for here; Ctrl-C cancels the same way) ends it without an error
// and leaves a complete recording of the samples that arrived.
func TestWatchStoppedMidStreamLeavesCompleteRecording(t *testing.T) {
	dir := t.TempDir()
	caFile, cert := testPKI(t, dir)
	tt := &testTarget{series: healthyCircuit(t, 200), interval: 100 * time.Millisecond, faultAt: 1000, user: "tech", pass: "s3cret"}
	addr := startTarget(t, tt, cert)
	t.Setenv(passwordEnv, "s3cret")
	rec := filepath.Join(dir, "stopped.csv")
	code, _, errw := runWatch(t, addr, "--ca", caFile, "--username", "tech", "--interval", "100ms", "--record", rec,
		"--profile", "400g-dp-16qam-cfec", "--soak", "15m", "--for", "3s")
	if code == 2 {
		t.Fatalf("exit 2 after a stop: %s", errw)
	}
	if tt.sawDeadline.Load() {
		t.Fatal("watch --for sent its deadline to the target (the target may then end the stream first, and the stop reads as a failure)")
	}
	raw, err := os.ReadFile(rec)
	if err != nil || !bytes.HasSuffix(raw, []byte("\n")) {
		t.Fatalf("recording does not end with a whole row: %v", err)
	}
	ds, err := parse.ReadPaths([]string{rec}, parse.Options{})
	if err != nil || len(ds.Series) != 1 || ds.Inputs[0].RowsRejected != 0 {
		t.Fatalf("recording after the stop: %v %+v", err, ds.Inputs)
	}
	// The target sends one sample per 100 ms, so 3 s can never see all 200; the lower bound
	// asks only for some, so that a slow start on a loaded machine does not fail the test.
	if n := ds.Series[0].Len(); n < 1 || n >= 200 {
		t.Fatalf("%d samples recorded in 3 s at 100 ms, want some and not all", n)
	}
}

// viewSamples reads the sample count from a watch view's first line ("… — N samples, M rows"),
// or -1 when the line is not there.
func viewSamples(view string) int {
	_, rest, ok := strings.Cut(view, " — ")
	if !ok {
		return -1
	}
	n, _, ok := strings.Cut(rest, " samples,")
	if !ok {
		return -1
	}
	v, err := strconv.Atoi(n)
	if err != nil {
		return -1
	}
	return v
}

// A sample that the consumer puts off (Follow's again > 0) is handed back without its document
// once that time is up, before the next sample arrives: a slow judgement delays a view by its
// own cost, not by a whole sample interval.
func TestFollowCallsBackAPutOffSample(t *testing.T) {
	dir := t.TempDir()
	caFile, cert := testPKI(t, dir)
	const interval = 800 * time.Millisecond
	tt := &testTarget{series: healthyCircuit(t, 3), interval: interval, faultAt: 1000, user: "tech", pass: "s3cret"}
	addr := startTarget(t, tt, cert)
	opts := gnmisub.Options{Target: addr, CAFile: caFile, Username: "tech", Password: "s3cret", Interval: interval}
	conn, err := gnmisub.Dial(opts)
	if err != nil {
		t.Fatal(err)
	}
	defer conn.Close()
	ctx, cancel := context.WithTimeout(context.Background(), 30*time.Second)
	defer cancel()
	var got []string // "sample" or "callback", in the order Follow handed them over
	err = gnmisub.Follow(ctx, conn, opts, func(s gnmisub.Sample) (time.Duration, error) {
		if s.Document == nil {
			got = append(got, "callback")
			return 0, nil
		}
		got = append(got, "sample")
		if len(got) == 1 {
			return 50 * time.Millisecond, nil // put the first sample off
		}
		return 0, nil
	})
	if err != nil {
		t.Fatal(err)
	}
	if want := "sample callback sample sample"; strings.Join(got, " ") != want {
		t.Fatalf("Follow handed over %q, want %q", strings.Join(got, " "), want)
	}
}
