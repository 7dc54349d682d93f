package main

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"os/signal"
	"strings"
	"syscall"
	"time"

	"github.com/beatnote/beatnote/diagnose"
	"github.com/beatnote/beatnote/parse"
	"github.com/beatnote/beatnote/parse/gnmisub"
	"github.com/beatnote/beatnote/report"
	"github.com/beatnote/beatnote/report/escape"
	"github.com/beatnote/beatnote/rules"
	"golang.org/x/term"
)

// passwordEnv is the environment variable holding the gNMI password.
const passwordEnv = "BEATNOTE_GNMI_PASSWORD"

// WatchCmd follows a module live over gNMI at turn-up.
type WatchCmd struct {
	Target string `arg:"" help:"The module's gNMI server, HOST:PORT."`
	judgeFlags
	soakFlag
	CA            string        `help:"PEM file of the CA that signed the module's certificate (default: the system's CAs)." type:"existingfile" placeholder:"FILE"`
	Cert          string        `help:"Client certificate (PEM) for mutual TLS, with --key." type:"existingfile" placeholder:"FILE"`
	Key           string        `help:"Private key (PEM) of --cert." type:"existingfile" placeholder:"FILE"`
	TLSServerName string        `name:"tls-server-name" help:"Name to check in the module's certificate (default: the host of TARGET)." placeholder:"NAME"`
	Insecure      bool          `help:"LAB BENCH ONLY: connect without TLS. Credentials and telemetry cross the network in clear text and the module is not authenticated."`
	Username      string        `help:"gNMI user name; the password comes from $BEATNOTE_GNMI_PASSWORD or --password-file, never the command line." placeholder:"NAME"`
	PasswordFile  string        `help:"File holding the gNMI password." type:"existingfile" placeholder:"FILE"`
	Interval      time.Duration `help:"Sample interval asked of the module." default:"10s" placeholder:"DURATION"`
	Record        string        `help:"Write the samples as canonical CSV to FILE as they arrive (a new file), for 'beatnote report' to sign afterwards." type:"path" placeholder:"FILE.csv"`
	For           time.Duration `help:"Stop after DURATION (default: until Ctrl-C or the module ends the session)." placeholder:"DURATION"`
}

// Help is the long help of the command.
func (c *WatchCmd) Help() string {
	return `Subscribes over gNMI (Subscribe only: watch never writes to the module) to the
optical-channel state of every component and the OTN statistics of every logical channel,
and redraws, at every sample, the verdict, the criteria and the likely causes of the whole
session so far (the same judgement as 'check'), with the soak timer: the acceptance test period (--soak, as
for check) on the module's clock. With --record the
samples go to a canonical CSV file row by row, so Ctrl-C or a dropped session leaves a
complete file that 'beatnote report' can sign.

TLS with the operator's CA (--ca) is the default; --insecure is for lab benches only.

Exit status: 0 every port passes; 1 some port is marginal, failing or could not be judged;
2 the session could not start, failed, or no sample arrived.`
}

func (c *WatchCmd) validate() error {
	switch {
	case c.Insecure && (c.CA != "" || c.Cert != "" || c.TLSServerName != ""):
		return errors.New("--insecure turns TLS off: it does not go with --ca, --cert or --tls-server-name")
	case (c.Cert == "") != (c.Key == ""):
		return errors.New("--cert and --key go together")
	case c.Interval < 100*time.Millisecond:
		return fmt.Errorf("--interval %v: give at least 100ms", c.Interval)
	case c.For < 0:
		return errors.New("--for takes a positive duration")
	case c.active():
		return errors.New("watch follows a module over gNMI; --prometheus is for scan, check, triage and report")
	case c.PasswordFile != "" && c.Username == "":
		return errors.New("--password-file goes with --username")
	}
	return nil
}

// password reads the password from --password-file, else $BEATNOTE_GNMI_PASSWORD.
func (c *WatchCmd) password() (string, error) {
	if c.PasswordFile == "" {
		return os.Getenv(passwordEnv), nil
	}
	b, err := rules.ReadConfig(c.PasswordFile)
	if err != nil {
		return "", fmt.Errorf("--password-file: %w", err)
	}
	return strings.TrimRight(string(b), "\r\n"), nil
}

// watchSession is the state of one watch.
type watchSession struct {
	c         *WatchCmd
	pr        *printer
	file      *os.File
	rec       *parse.CSVRecorder
	acc       *diagnose.AcceptanceTest
	pending   bool // a sample arrived that the view does not judge yet
	judgedAt  time.Time
	judgeTook time.Duration
	first     int64 // first sample time, Unix ms
	last      int64
	samples   int
	rows      int
	rejected  int
	lastRej   string
	result    *analysis
	clear     bool
	transport string
}

// Run subscribes, records and redraws until the session ends.
func (c *WatchCmd) Run(g *Globals, pr *printer) error {
	if err := c.validate(); err != nil {
		return &exitError{code: 2, err: err}
	}
	acc, err := c.acceptanceTest()
	if err != nil {
		return &exitError{code: 2, err: err}
	}
	pass, err := c.password()
	if err != nil {
		return &exitError{code: 2, err: err}
	}
	opts := gnmisub.Options{Target: c.Target, CAFile: c.CA, CertFile: c.Cert, KeyFile: c.Key, ServerName: c.TLSServerName,
		Insecure: c.Insecure, Username: c.Username, Password: pass, Interval: c.Interval}
	ws := &watchSession{c: c, pr: pr, acc: acc, transport: "TLS"}
	switch {
	case c.Insecure:
		ws.transport = "NO TLS (--insecure, lab only)"
		pr.Notef("WARNING: --insecure: no TLS; the module is not authenticated and everything, credentials included, crosses the network in clear text")
	case c.CA != "":
		ws.transport = "TLS, CA " + c.CA
	}
	if f, ok := pr.Out().(*os.File); ok && term.IsTerminal(int(f.Fd())) {
		ws.clear = true
	}
	// The recording is also what is judged: a file of our own when --record is not given.
	if c.Record != "" {
		ws.file, err = os.OpenFile(c.Record, os.O_WRONLY|os.O_CREATE|os.O_EXCL, 0o644)
		if errors.Is(err, os.ErrExist) {
			return &exitError{code: 2, err: fmt.Errorf("--record %s: the file exists; give a new name (a recording is never overwritten)", c.Record)}
		}
	} else {
		ws.file, err = os.CreateTemp("", "beatnote-watch-*.csv")
		if err == nil {
			defer os.Remove(ws.file.Name())
		}
	}
	if err != nil {
		return &exitError{code: 2, err: err}
	}
	defer ws.file.Close()
	if ws.rec, err = parse.NewCSVRecorder(ws.file); err != nil {
		return &exitError{code: 2, err: err}
	}
	conn, err := gnmisub.Dial(opts)
	if err != nil {
		return &exitError{code: 2, err: err}
	}
	defer conn.Close()
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
	defer stop()
	if c.For > 0 {
		var cancel context.CancelFunc
		ctx, cancel = context.WithTimeout(ctx, c.For)
		defer cancel()
	}
	pr.Notef("watching %s (%s), every %v; Ctrl-C stops", c.Target, ws.transport, c.Interval)
	ferr := gnmisub.Follow(ctx, conn, opts, ws.sample)
	if ws.pending {
		if err := ws.judge(); err != nil && ferr == nil {
			ferr = err
		}
	}
	if c.Record != "" && ws.rows > 0 {
		pr.Notef("recorded %d rows to %s; 'beatnote report %s …' signs exactly what was watched", ws.rows, c.Record, c.Record)
	}
	switch {
	case ferr != nil:
		return &exitError{code: 2, err: ferr}
	case ws.result == nil:
		return &exitError{code: 2, err: fmt.Errorf("gNMI %s: no sample arrived", c.Target)}
	}
	return exitFor(ws.result, allPass(ws.result.Result.Ports))
}

// sample records one sample time, re-judges the whole session and redraws. Judging the whole
// session costs more as it grows: while the last judgement took more than a quarter of the time
// since it, the sample is put off, and Follow calls back (a Sample without a Document) when that
// time is up, unless the next sample comes first and is judged with it.
func (ws *watchSession) sample(s gnmisub.Sample) (time.Duration, error) {
	if s.Document != nil {
		if err := ws.record(s); err != nil {
			return 0, err
		}
	}
	if !ws.pending {
		return 0, nil
	}
	if wait := 4*ws.judgeTook - time.Since(ws.judgedAt); ws.rows > 0 && wait > 0 {
		return wait, nil
	}
	return 0, ws.judge()
}

// record appends one sample time's rows to the recording.
func (ws *watchSession) record(s gnmisub.Sample) error {
	ds, _ := parse.ReadFile(fmt.Sprintf("gNMI %s", ws.c.Target), bytes.NewReader(s.Document), parse.Options{})
	for _, in := range ds.Inputs {
		ws.rejected += in.RowsRejected
	}
	if len(ds.Rejected) > 0 {
		ws.lastRej = ds.Rejected[len(ds.Rejected)-1].Reason
	}
	for _, sr := range ds.Series {
		sr := sr.Decoded()
		if err := ws.rec.WriteSeries(sr); err != nil {
			return fmt.Errorf("--record: %w", err)
		}
		if ws.rows == 0 {
			ws.first, ws.last = sr.TimesMs[0], sr.TimesMs[0]
		}
		ws.rows += sr.Len()
		ws.first = min(ws.first, sr.TimesMs[0])
		ws.last = max(ws.last, sr.TimesMs[sr.Len()-1])
	}
	ws.samples++
	if err := ws.file.Sync(); err != nil {
		return fmt.Errorf("--record: %w", err)
	}
	ws.pending = true
	return nil
}

// judge re-judges the whole recording and redraws.
func (ws *watchSession) judge() error {
	ws.pending = false
	if ws.rows == 0 {
		ws.draw()
		return nil
	}
	start := time.Now()
	quiet := newPrinter(io.Discard, io.Discard, true)
	acc := *ws.acc
	acc.Rejected = ws.rejected
	a, err := analyze([]string{ws.file.Name()}, ws.c.judgeFlags, "", false, &acc, quiet)
	if err != nil {
		return err
	}
	ws.result = a
	ws.judgedAt, ws.judgeTook = time.Now(), time.Since(start)
	ws.draw()
	return nil
}

// draw prints the view: a clean screen on a terminal, else a separator before each view.
func (ws *watchSession) draw() {
	var b bytes.Buffer
	if ws.clear {
		b.WriteString("\x1b[H\x1b[2J")
	} else {
		b.WriteString("──────── ")
		b.WriteString(time.Now().UTC().Format(time.RFC3339))
		b.WriteString("\n")
	}
	fmt.Fprintf(&b, "Watching %s over gNMI (%s), every %v — %d samples, %d rows", ws.c.Target, ws.transport, ws.c.Interval, ws.samples, ws.rows)
	if ws.rejected > 0 {
		fmt.Fprintf(&b, ", %d rejected (last: %s)", ws.rejected, escape.Visible(ws.lastRej))
	}
	b.WriteString("\n")
	if ws.result != nil {
		// The soak timer is the acceptance test period of each port, on the module's clock.
		for _, p := range ws.result.Result.Ports {
			tp := p.TestPeriod
			if tp == nil {
				continue
			}
			observed, required := secs(tp.ObservedS), secs(tp.RequiredS)
			fmt.Fprintf(&b, "Soak %s: %s of %s watched, %.1f %% of sample slots used", escape.Visible(p.Port), clock(observed), clock(required), 100*tp.Fraction)
			switch {
			case tp.Complete:
				b.WriteString(" — test period complete")
			case observed < required:
				fmt.Fprintf(&b, " — %s to go", clock(required-observed))
			default:
				fmt.Fprintf(&b, " — %s", escape.Visible(tp.Shortfall))
			}
			b.WriteString("\n")
		}
		fmt.Fprintf(&b, "Samples from %s to %s (module clock)\n", rfc3339(ws.first), rfc3339(ws.last))
	}
	if ws.c.Record != "" {
		fmt.Fprintf(&b, "Recording to %s\n", ws.c.Record)
	}
	b.WriteString("\n")
	if ws.result != nil {
		_ = report.WriteCheckText(&b, ws.result.Result)
	} else {
		b.WriteString("No usable sample yet.\n")
	}
	_, _ = ws.pr.Out().Write(b.Bytes())
}

func rfc3339(ms int64) string { return time.UnixMilli(ms).UTC().Format(time.RFC3339) }

func secs(s float64) time.Duration { return time.Duration(s * float64(time.Second)) }

// clock writes d as H:MM:SS.
func clock(d time.Duration) string {
	d = d.Round(time.Second)
	return fmt.Sprintf("%d:%02d:%02d", int(d.Hours()), int(d.Minutes())%60, int(d.Seconds())%60)
}
