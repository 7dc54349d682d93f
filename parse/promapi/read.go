// Package promapi reads coherent-transceiver telemetry from a Prometheus-compatible store
// through its HTTP query API (the Prometheus HTTP API, version 1: /api/v1/query_range and
// /api/v1/label/<name>/values), maps the metrics to beatnote's quantities and ports (Mapping),
// and feeds the samples through the parse package's unit conversion, range checks, row building
// and accounting, so that a store and a file give the same Dataset for the same samples.
//
// Each step of the range takes the latest sample of the step that ends there — the query is
// last_over_time(selector[step − 1 ms]) — so a gap in the data stays a gap (the store's
// look-back would otherwise repeat the last value for minutes) and no sample is read twice.
// Ports are read in batches (Query.BatchPorts per query) and the range in chunks of at most
// maxPointsPerQuery steps, so the memory in flight does not grow with the fleet or the range.
//
// Accounting: every series is one input of the Dataset, named by the query that returned it
// (selector, range and step); each of its samples is a record, used or rejected with its reason
// (a value outside the physical range, a second series for the same port and quantity). The
// input's SHA-256 covers the series' samples as the server wrote them: one line per sample,
// "<timestamp> <value>\n", in the server's own text.
package promapi

import (
	"bytes"
	"context"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"hash"
	"io"
	"math"
	"net/http"
	"net/url"
	"slices"
	"sort"
	"strconv"
	"strings"
	"time"

	"github.com/beatnote/beatnote/parse"
)

// Sentinel errors, for errors.Is; the messages of the errors returned say more.
var (
	ErrUnreachable = errors.New("cannot reach the server")
	ErrAuth        = errors.New("the server refused access")
	ErrNoMatch     = errors.New("the mapping matches no series in the store")
	ErrEmpty       = errors.New("no samples in the time range")
	ErrServer      = errors.New("the server could not answer the query")
)

// Query says what to read and from where.
type Query struct {
	URL        string        // base URL of the query API, e.g. http://127.0.0.1:9090
	Token      string        // bearer token sent as "Authorization: Bearer …"; "" for none
	Start, End time.Time     // the range, both included
	Step       time.Duration // resolution, at least 1 s
	Mapping    Mapping
	// Ports, when set, are the only ports read (e.g. a plan's); otherwise every port the
	// mapped metrics have in the range.
	Ports []string
	// BatchPorts is how many ports one query asks for (default 64).
	BatchPorts int
	// Client is the HTTP client (default: a client with a 60 s timeout per request).
	Client *http.Client
	// Strict makes the first rejected sample an error.
	Strict bool
}

// maxPointsPerQuery bounds the steps of one query, below the 11,000 points per series that
// Prometheus answers at most.
const maxPointsPerQuery = 10000

// maxResponseBytes bounds one response body.
const maxResponseBytes = 256 << 20

// Read runs the queries and returns the Dataset. Errors are one line and wrap one of the
// sentinel errors when they are about the server, the credentials, the mapping or the range.
func Read(ctx context.Context, q Query) (*parse.Dataset, error) {
	base, err := url.Parse(q.URL)
	if err != nil || (base.Scheme != "http" && base.Scheme != "https") || base.Host == "" {
		return nil, fmt.Errorf("prometheus URL %q: give http://HOST:PORT or https://HOST:PORT", q.URL)
	}
	base.Path = strings.TrimSuffix(base.Path, "/")
	if q.Step < time.Second {
		return nil, fmt.Errorf("step %v: give at least 1s", q.Step)
	}
	if !q.End.After(q.Start) {
		return nil, fmt.Errorf("time range %s to %s: the end must come after the start", fmtT(q.Start), fmtT(q.End))
	}
	if len(q.Mapping.Metrics) == 0 {
		q.Mapping = DefaultMapping()
	}
	if q.BatchPorts <= 0 {
		q.BatchPorts = 64
	}
	if q.Client == nil {
		q.Client = &http.Client{Timeout: 60 * time.Second}
	}
	r := &reader{q: q, base: base, feed: &parse.Feed{Strict: q.Strict}, inputs: map[string]*seriesInput{}}
	var ports []string
	if len(q.Ports) > 0 {
		ports = slices.Compact(slices.Sorted(slices.Values(q.Ports)))
	} else if ports, err = r.ports(ctx, true); err != nil {
		return nil, err
	}
	if len(ports) == 0 {
		anytime, err := r.ports(ctx, false)
		if err != nil {
			return nil, err
		}
		if len(anytime) == 0 {
			return nil, fmt.Errorf("prometheus %s: %w: none of the %d mapped metrics (%s) has series with its port label",
				r.base.Redacted(), ErrNoMatch, len(q.Mapping.Metrics), r.metricList())
		}
		return nil, fmt.Errorf("prometheus %s: %w %s to %s (the mapped metrics have %d ports at other times)",
			r.base.Redacted(), ErrEmpty, fmtT(q.Start), fmtT(q.End), len(anytime))
	}
	for i := 0; i < len(ports); i += q.BatchPorts {
		batch := ports[i:min(i+q.BatchPorts, len(ports))]
		if err := r.readBatch(ctx, batch); err != nil {
			return nil, err
		}
	}
	for _, in := range r.order {
		r.feed.SetSHA256(in.idx, hex.EncodeToString(in.h.Sum(nil)))
	}
	if r.samples == 0 && len(q.Ports) > 0 {
		return nil, fmt.Errorf("prometheus %s: %w %s to %s for the ports asked for (%s)", r.base.Redacted(), ErrEmpty,
			fmtT(q.Start), fmtT(q.End), shortenMsg(strings.Join(ports, ", ")))
	}
	if r.samples == 0 {
		return nil, fmt.Errorf("prometheus %s: %w %s to %s at step %v (%d ports have series, but no sample falls on a step)",
			r.base.Redacted(), ErrEmpty, fmtT(q.Start), fmtT(q.End), q.Step, len(ports))
	}
	return r.feed.Dataset()
}

// seriesInput is one series: an input of the Dataset.
type seriesInput struct {
	idx  int
	h    hash.Hash
	n    int // samples read so far (the record number of the next one is n+1)
	name string
}

type reader struct {
	q       Query
	base    *url.URL
	feed    *parse.Feed
	inputs  map[string]*seriesInput
	order   []*seriesInput
	samples int
}

func (r *reader) metricList() string {
	names := make([]string, len(r.q.Mapping.Metrics))
	for i, m := range r.q.Mapping.Metrics {
		names[i] = m.Metric
	}
	s := strings.Join(names, ", ")
	if len(s) > 200 {
		s = s[:200] + "…"
	}
	return s
}

// ports lists the ports the mapped metrics have, in the range or (inRange false) at any time.
func (r *reader) ports(ctx context.Context, inRange bool) ([]string, error) {
	byLabel := map[string][]string{}
	for i := range r.q.Mapping.Metrics {
		mm := &r.q.Mapping.Metrics[i]
		byLabel[mm.PortLabel] = append(byLabel[mm.PortLabel], mm.selector(nil))
	}
	labels := make([]string, 0, len(byLabel))
	for l := range byLabel {
		labels = append(labels, l)
	}
	sort.Strings(labels)
	seen := map[string]bool{}
	var out []string
	for _, l := range labels {
		form := url.Values{"match[]": byLabel[l]}
		if inRange {
			form.Set("start", promTime(r.q.Start))
			form.Set("end", promTime(r.q.End))
		}
		var vals []string
		if err := r.call(ctx, "/api/v1/label/"+l+"/values", form, &vals); err != nil {
			return nil, err
		}
		for _, v := range vals {
			if !seen[v] {
				seen[v] = true
				out = append(out, v)
			}
		}
	}
	sort.Strings(out)
	return out, nil
}

// window is the range of last_over_time: one step less a millisecond, so that a step takes
// the samples after the previous step up to and including itself.
func (r *reader) window() string {
	return strconv.FormatInt(r.q.Step.Milliseconds()-1, 10) + "ms"
}

// pending is one port's row at one time, being gathered from the series of a batch.
type pending struct {
	in   int // the input the row is added to (the first series that gave it a value)
	qs   []parse.Quantity
	vals []float64
}

func (r *reader) readBatch(ctx context.Context, ports []string) error {
	stepMs := r.q.Step.Milliseconds()
	chunk := time.Duration(maxPointsPerQuery-1) * r.q.Step
	owner := map[string]int{} // port + quantity → the input that gives it
	for from := r.q.Start; !from.After(r.q.End); from = from.Add(chunk + r.q.Step) {
		to := from.Add(chunk)
		if to.After(r.q.End) {
			to = r.q.End
		}
		rows := map[string]map[int64]*pending{}
		for i := range r.q.Mapping.Metrics {
			mm := &r.q.Mapping.Metrics[i]
			query := "last_over_time(" + mm.selector(ports) + "[" + r.window() + "])"
			form := url.Values{"query": {query}, "start": {promTime(from)}, "end": {promTime(to)},
				"step": {strconv.FormatFloat(float64(stepMs)/1000, 'f', -1, 64)}}
			var m matrix
			if err := r.call(ctx, "/api/v1/query_range", form, &m); err != nil {
				return err
			}
			if m.ResultType != "matrix" {
				return fmt.Errorf("prometheus %s: %w: query_range answered a %q, not a matrix", r.base.Redacted(), ErrServer, m.ResultType)
			}
			for _, s := range m.Result {
				if err := r.series(mm, s, rows, owner); err != nil {
					return fmt.Errorf("prometheus %s: %w (%v)", r.base.Redacted(), ErrServer, err)
				}
			}
		}
		r.flush(rows)
	}
	return nil
}

// series accounts for one series' samples and gathers the accepted ones into rows.
func (r *reader) series(mm *MetricMap, s series, rows map[string]map[int64]*pending, owner map[string]int) error {
	in := r.input(mm, s.Metric)
	port := s.Metric[mm.PortLabel]
	q := mm.spec.Quantity()
	key := port + "\x00" + q.Column()
	prev, taken := owner[key]
	if !taken {
		owner[key] = in.idx
	}
	byT := rows[port]
	if byT == nil {
		byT = map[int64]*pending{}
		rows[port] = byT
	}
	var portErr error
	if port != "" {
		portErr = parse.CheckPortName(port)
	}
	nq := len(r.q.Mapping.Metrics)
	return eachPair(s.Values, func(pt []json.RawMessage) {
		in.n++
		r.samples++
		tsText, valText, tMs, v, perr := parsePoint(pt)
		in.h.Write(tsText)
		in.h.Write(space)
		in.h.Write(valText)
		in.h.Write(newline)
		if r.feed.Stopped(in.idx) {
			return // a strict read stopped this series: hashed, not counted
		}
		reason := ""
		switch {
		case perr != nil:
			reason = perr.Error()
		case port == "":
			reason = fmt.Sprintf("%s: the series has no %s label (no port)", mm.Column, mm.PortLabel)
		case portErr != nil:
			reason = fmt.Sprintf("%s: %s label: %v", mm.Column, mm.PortLabel, portErr)
		case taken && prev != in.idx:
			reason = fmt.Sprintf("%s: port %q already has this quantity from another series (%s): check the mapping's labels", q.Column(), port, r.order[prev].name)
		}
		val, err := 0.0, error(nil)
		if reason == "" {
			if val, err = mm.spec.Value(v); err != nil {
				reason = fmt.Sprintf("%s: %v at %s", mm.Column, err, fmtT(time.UnixMilli(tMs)))
			}
		}
		if reason != "" {
			r.feed.Reject(in.idx, parse.Rejection{File: in.name, Line: in.n, Field: mm.Metric, Reason: reason})
			return
		}
		p := byT[tMs]
		if p == nil {
			p = &pending{in: in.idx, qs: make([]parse.Quantity, 0, nq), vals: make([]float64, 0, nq)}
			byT[tMs] = p
		}
		p.qs = append(p.qs, q)
		p.vals = append(p.vals, val)
		r.feed.Used(in.idx, 1)
	})
}

// flush adds the gathered rows, port by port in time order.
func (r *reader) flush(rows map[string]map[int64]*pending) {
	ports := make([]string, 0, len(rows))
	for p := range rows {
		ports = append(ports, p)
	}
	sort.Strings(ports)
	for _, port := range ports {
		byT := rows[port]
		times := make([]int64, 0, len(byT))
		for t := range byT {
			times = append(times, t)
		}
		sort.Slice(times, func(i, j int) bool { return times[i] < times[j] })
		for _, t := range times {
			p := byT[t]
			r.feed.Row(p.in, port, t, p.qs, p.vals)
		}
	}
}

// input finds or declares the input of a series, named by the query that reads it alone.
func (r *reader) input(mm *MetricMap, labels map[string]string) *seriesInput {
	keys := make([]string, 0, len(labels))
	for k := range labels {
		if k != "__name__" {
			keys = append(keys, k)
		}
	}
	sort.Strings(keys)
	var b strings.Builder
	b.WriteString(mm.Metric)
	b.WriteByte('{')
	for i, k := range keys {
		if i > 0 {
			b.WriteByte(',')
		}
		b.WriteString(k + "=" + strconv.Quote(labels[k]))
	}
	b.WriteByte('}')
	sel := b.String()
	if in := r.inputs[sel]; in != nil {
		return in
	}
	name := fmt.Sprintf("%s last_over_time(%s[%s]) %s to %s step %v", r.base.Redacted(), sel, r.window(),
		fmtT(r.q.Start), fmtT(r.q.End), r.q.Step)
	in := &seriesInput{idx: r.feed.AddInput(name, "prometheus"), h: sha256.New(), name: name}
	r.inputs[sel] = in
	r.order = append(r.order, in)
	return in
}

// space and newline separate the hashed text of a sample.
var space, newline = []byte{' '}, []byte{'\n'}

// parsePoint reads one [timestamp, "value"] pair of a matrix; tsText and valText are the
// time and the value as the server wrote them (the value without its JSON quotes). A value of
// NaN is a missing value.
func parsePoint(pt []json.RawMessage) (tsText, valText []byte, tMs int64, v float64, err error) {
	if len(pt) != 2 {
		return nil, nil, 0, 0, fmt.Errorf("sample is not a [time, value] pair")
	}
	tsText = pt[0]
	secs, perr := strconv.ParseFloat(string(tsText), 64)
	if perr != nil || math.IsInf(secs, 0) || math.IsNaN(secs) {
		return tsText, nil, 0, 0, fmt.Errorf("%w: sample time %q", parse.ErrBadTime, shorten(string(tsText)))
	}
	tMs = int64(math.Round(secs * 1000))
	raw := pt[1]
	switch {
	case len(raw) >= 2 && raw[0] == '"' && raw[len(raw)-1] == '"' && !bytes.ContainsAny(raw[1:len(raw)-1], "\\\""):
		valText = raw[1 : len(raw)-1] // the common case: no escapes to undo
	default:
		var s string
		if err := json.Unmarshal(raw, &s); err != nil {
			return tsText, raw, tMs, 0, fmt.Errorf("%w: sample value %q is not a JSON string", parse.ErrNotNumber, shorten(string(raw)))
		}
		valText = []byte(s)
	}
	v, perr = strconv.ParseFloat(string(valText), 64)
	if perr != nil {
		return tsText, valText, tMs, 0, fmt.Errorf("%w: sample value %q", parse.ErrNotNumber, shorten(string(valText)))
	}
	return tsText, valText, tMs, v, nil
}

// eachPair calls fn with the elements of every pair in a matrix series' values,
// [[t,"v"],[t,"v"],…], as slices of raw (no copy, no decoding): a series of thousands of
// samples costs no allocation per sample. An element that is itself an array or object, or
// values that are not an array of arrays, make an error.
func eachPair(raw []byte, fn func(pt []json.RawMessage)) error {
	bad := errors.New("the values of a series are not [time, value] pairs")
	i := skipWS(raw, 0)
	if i >= len(raw) || raw[i] != '[' {
		return bad
	}
	pt := make([]json.RawMessage, 0, 2)
	for i = skipWS(raw, i+1); i < len(raw) && raw[i] != ']'; {
		if raw[i] != '[' {
			return bad
		}
		pt = pt[:0]
		for i = skipWS(raw, i+1); i < len(raw) && raw[i] != ']'; {
			end, ok := scalarEnd(raw, i)
			if !ok {
				return bad
			}
			pt = append(pt, raw[i:end])
			if i = skipWS(raw, end); i < len(raw) && raw[i] == ',' {
				i = skipWS(raw, i+1)
			}
		}
		if i >= len(raw) {
			return bad
		}
		fn(pt)
		if i = skipWS(raw, i+1); i < len(raw) && raw[i] == ',' {
			i = skipWS(raw, i+1)
		}
	}
	if i >= len(raw) {
		return bad
	}
	return nil
}

func skipWS(b []byte, i int) int {
	for i < len(b) && (b[i] == ' ' || b[i] == '\t' || b[i] == '\n' || b[i] == '\r') {
		i++
	}
	return i
}

// scalarEnd finds the end of the JSON string or scalar starting at b[i]; ok is false for an
// array, an object or an unterminated string.
func scalarEnd(b []byte, i int) (end int, ok bool) {
	switch b[i] {
	case '[', '{', ',':
		return i, false
	case '"':
		for j := i + 1; j < len(b); j++ {
			switch b[j] {
			case '\\':
				j++
			case '"':
				return j + 1, true
			}
		}
		return i, false
	}
	j := i
	for j < len(b) && b[j] != ',' && b[j] != ']' && b[j] != ' ' && b[j] != '\t' && b[j] != '\n' && b[j] != '\r' {
		j++
	}
	return j, j > i
}

func shorten(s string) string {
	if len(s) > 40 {
		return s[:40] + "…"
	}
	return s
}

type series struct {
	Metric map[string]string `json:"metric"`
	Values json.RawMessage   `json:"values"`
}

type matrix struct {
	ResultType string   `json:"resultType"`
	Result     []series `json:"result"`
}

// envelope is every API response: {"status": "success"|"error", "data": …, "errorType", "error"}.
// Data holds a pointer to where the data member is decoded, so the answer is decoded once.
type envelope struct {
	Status    string `json:"status"`
	Data      any    `json:"data"`
	ErrorType string `json:"errorType"`
	Error     string `json:"error"`
}

// call sends form to the API path and decodes the data member into out. A query only reads,
// so a connection that fails before the whole answer arrived is tried once more.
func (r *reader) call(ctx context.Context, path string, form url.Values, out any) error {
	err := r.callOnce(ctx, path, form, out)
	if errors.Is(err, ErrUnreachable) && ctx.Err() == nil {
		time.Sleep(500 * time.Millisecond)
		err = r.callOnce(ctx, path, form, out)
	}
	return err
}

func (r *reader) callOnce(ctx context.Context, path string, form url.Values, out any) error {
	u := *r.base
	u.Path += path
	// The query endpoints take POST (no length limit on the query); the label endpoint only GET.
	var req *http.Request
	var err error
	if strings.HasPrefix(path, "/api/v1/label/") {
		u.RawQuery = form.Encode()
		req, err = http.NewRequestWithContext(ctx, http.MethodGet, u.String(), nil)
	} else {
		req, err = http.NewRequestWithContext(ctx, http.MethodPost, u.String(), strings.NewReader(form.Encode()))
		if req != nil {
			req.Header.Set("Content-Type", "application/x-www-form-urlencoded")
		}
	}
	if err != nil {
		return err
	}
	req.Header.Set("Accept", "application/json")
	if r.q.Token != "" {
		req.Header.Set("Authorization", "Bearer "+r.q.Token)
	}
	resp, err := r.q.Client.Do(req)
	if err != nil {
		var ue *url.Error
		if errors.As(err, &ue) {
			err = ue.Err
		}
		return fmt.Errorf("prometheus %s: %w (%v)", r.base.Redacted(), ErrUnreachable, err)
	}
	defer resp.Body.Close()
	body, err := io.ReadAll(io.LimitReader(resp.Body, maxResponseBytes+1))
	if err != nil {
		return fmt.Errorf("prometheus %s: %w (reading the answer: %v)", r.base.Redacted(), ErrUnreachable, err)
	}
	if len(body) > maxResponseBytes {
		return fmt.Errorf("prometheus %s: %w: an answer is larger than %d MiB; read a shorter range or a coarser step", r.base.Redacted(), ErrServer, maxResponseBytes>>20)
	}
	if resp.StatusCode == http.StatusUnauthorized || resp.StatusCode == http.StatusForbidden {
		what := "no bearer token was sent"
		if r.q.Token != "" {
			what = "the bearer token was not accepted"
		}
		return fmt.Errorf("prometheus %s: %w (HTTP %d %s: %s)", r.base.Redacted(), ErrAuth, resp.StatusCode, http.StatusText(resp.StatusCode), what)
	}
	env := envelope{Data: out}
	jerr := json.Unmarshal(body, &env)
	switch {
	case env.Status == "":
		return fmt.Errorf("prometheus %s: %w (HTTP %d, and the answer is not the query API's JSON: is this the right URL?)", r.base.Redacted(), ErrServer, resp.StatusCode)
	case env.Status != "success":
		return fmt.Errorf("prometheus %s: %w (HTTP %d, %s: %q)", r.base.Redacted(), ErrServer, resp.StatusCode, shorten(env.ErrorType), shortenMsg(env.Error))
	case jerr != nil:
		return fmt.Errorf("prometheus %s: %w (unexpected answer to %s: %q)", r.base.Redacted(), ErrServer, path, shortenMsg(jerr.Error()))
	}
	return nil
}

func shortenMsg(s string) string {
	if len(s) > 300 {
		return s[:300] + "…"
	}
	return s
}

// promTime writes t as the API's Unix seconds with milliseconds.
func promTime(t time.Time) string {
	return strconv.FormatFloat(float64(t.UnixMilli())/1000, 'f', 3, 64)
}

func fmtT(t time.Time) string { return t.UTC().Format(time.RFC3339) }
