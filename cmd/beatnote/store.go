package main

import (
	"context"
	"errors"
	"fmt"
	"net"
	"net/url"
	"os"
	"os/signal"
	"strings"
	"time"

	"github.com/beatnote/beatnote/parse"
	"github.com/beatnote/beatnote/parse/promapi"
	"github.com/beatnote/beatnote/rules"
)

// tokenEnv is the environment variable holding the store's bearer token.
const tokenEnv = "BEATNOTE_PROMETHEUS_TOKEN"

// storeFlags read the telemetry from a Prometheus-compatible store instead of files; every
// command that reads logs has them.
type storeFlags struct {
	Prometheus    string        `group:"store" help:"Read from the query API of a Prometheus-compatible store at URL instead of files (see README, 'Reading from a store')." placeholder:"URL"`
	Since         time.Duration `group:"store" help:"With --prometheus: read the last DURATION, e.g. 24h (default 24h unless --start is given)." placeholder:"DURATION"`
	Start         string        `group:"store" help:"With --prometheus: start of the range, RFC 3339 (e.g. 2026-03-14T00:00:00Z)." placeholder:"TIME"`
	End           string        `group:"store" help:"With --prometheus: end of the range, RFC 3339 (default: now)." placeholder:"TIME"`
	Step          time.Duration `group:"store" help:"With --prometheus: the resolution; each step takes the latest sample of the step before it. Set it to the export interval." default:"60s" placeholder:"DURATION"`
	PrometheusMap string        `group:"store" help:"YAML mapping from metrics and labels to quantities and ports (default: the built-in one, named after the OpenConfig paths)." type:"existingfile" placeholder:"FILE"`
	TokenFile     string        `group:"store" name:"prometheus-token-file" help:"File holding the bearer token for the store (else $BEATNOTE_PROMETHEUS_TOKEN when set; never on the command line)." type:"existingfile" placeholder:"FILE"`

	// ports, when set, are the only ports asked for (a plan's).
	ports []string `kong:"-"`
}

// active reports whether the store is the source.
func (s *storeFlags) active() bool { return s.Prometheus != "" }

// checkSource refuses files and a store together, and store options without a store.
func (s *storeFlags) checkSource(paths []string) error {
	switch {
	case s.active() && len(paths) > 0:
		return usageErrorf("give log files or --prometheus URL, not both")
	case !s.active() && len(paths) == 0:
		return usageErrorf("no input: give log files or folders (or - for standard input), or --prometheus URL")
	case !s.active() && (s.Since != 0 || s.Start != "" || s.End != "" || s.PrometheusMap != "" || s.TokenFile != ""):
		return usageErrorf("--since, --start, --end, --prometheus-map and --prometheus-token-file go with --prometheus URL")
	}
	return nil
}

// query turns the flags into a promapi.Query; now is the end when --end is not given.
func (s *storeFlags) query(now time.Time) (promapi.Query, error) {
	q := promapi.Query{URL: s.Prometheus, Step: s.Step, End: now.UTC().Truncate(time.Second), Ports: s.ports}
	if s.Since != 0 && s.Start != "" {
		return q, usageErrorf("give --since or --start, not both")
	}
	if s.End != "" {
		t, err := time.Parse(time.RFC3339, s.End)
		if err != nil {
			return q, usageErrorf("--end %q: give an RFC 3339 time, e.g. 2026-03-14T10:00:00Z", s.End)
		}
		q.End = t
	}
	switch {
	case s.Start != "":
		t, err := time.Parse(time.RFC3339, s.Start)
		if err != nil {
			return q, usageErrorf("--start %q: give an RFC 3339 time, e.g. 2026-03-14T00:00:00Z", s.Start)
		}
		q.Start = t
	case s.Since < 0:
		return q, usageErrorf("--since %v: give a positive duration", s.Since)
	case s.Since > 0:
		q.Start = q.End.Add(-s.Since)
	default:
		q.Start = q.End.Add(-24 * time.Hour)
	}
	if s.PrometheusMap != "" {
		m, err := promapi.LoadMapping(s.PrometheusMap)
		if err != nil {
			return q, err
		}
		q.Mapping = m
	}
	tok, err := bearerToken(s.TokenFile)
	if err != nil {
		return q, err
	}
	q.Token = tok
	return q, nil
}

// bearerToken reads the token from file, else from $BEATNOTE_PROMETHEUS_TOKEN; "" for none.
func bearerToken(file string) (string, error) {
	if file == "" {
		return strings.TrimSpace(os.Getenv(tokenEnv)), nil
	}
	b, err := rules.ReadConfig(file)
	if err != nil {
		return "", fmt.Errorf("--prometheus-token-file: %w", err)
	}
	tok := strings.TrimSpace(string(b))
	if tok == "" || strings.ContainsAny(tok, "\r\n") {
		return "", fmt.Errorf("--prometheus-token-file %s: give one token on one line", file)
	}
	return tok, nil
}

// readStore reads the store named by the flags; Ctrl-C stops it.
func readStore(s *storeFlags, strict bool, pr *printer) (*parse.Dataset, error) {
	q, err := s.query(time.Now())
	if err != nil {
		return nil, err
	}
	q.Strict = strict
	if u, err := url.Parse(q.URL); err == nil && q.Token != "" && u.Scheme == "http" && !isLoopback(u.Hostname()) {
		pr.Notef("the bearer token goes to %s over plain http: anyone on the path can read it; use https", u.Redacted())
	}
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt)
	defer stop()
	ds, err := promapi.Read(ctx, q)
	if errors.Is(err, promapi.ErrAuth) {
		err = fmt.Errorf("%w; give the token in $%s or with --prometheus-token-file", err, tokenEnv)
	}
	return ds, err
}

func isLoopback(host string) bool {
	if host == "localhost" {
		return true
	}
	ip := net.ParseIP(host)
	return ip != nil && ip.IsLoopback()
}
