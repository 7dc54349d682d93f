// Package gnmisub follows a coherent module live over gNMI (the OpenConfig gNMI
// specification: the Subscribe RPC in STREAM mode with SAMPLE subscriptions). It subscribes to
// the terminal-device and optical-channel paths that beatnote's OpenConfig reader knows and
// turns the notifications of each sample time into one OpenConfig-shaped JSON document, which
// the parse package reads exactly as it reads OpenConfig telemetry files (docs/formats.md).
//
// It is read-only by construction: the only RPC it calls is Subscribe.
package gnmisub

import (
	"context"
	"crypto/tls"
	"crypto/x509"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"sort"
	"strconv"
	"strings"
	"time"

	"github.com/beatnote/beatnote/rules"
	gpb "github.com/openconfig/gnmi/proto/gnmi"
	"google.golang.org/grpc"
	"google.golang.org/grpc/codes"
	"google.golang.org/grpc/credentials"
	"google.golang.org/grpc/credentials/insecure"
	"google.golang.org/grpc/status"
)

// Paths are the subscribed paths: the optical-channel state of every component and the OTN
// statistics and optical-channel assignments of every logical channel
// (openconfig-platform.yang with the openconfig-terminal-device.yang augmentation).
var Paths = []string{
	"/components/component/optical-channel/state",
	"/terminal-device/logical-channels/channel/otn/state",
	"/terminal-device/logical-channels/channel/logical-channel-assignments",
}

// Options say where and how to connect.
type Options struct {
	Target     string // HOST:PORT of the module's gNMI server
	CAFile     string // PEM file of the CA that signed the target's certificate ("" for the system roots)
	CertFile   string // client certificate (PEM) for mutual TLS, with KeyFile
	KeyFile    string
	ServerName string // name to check in the target's certificate ("" for the host of Target)
	// Insecure connects without TLS: for a lab bench only (credentials then cross the wire in
	// clear text).
	Insecure bool
	Username string // sent as the "username" and "password" metadata (gNMI specification, authentication)
	Password string
	// Interval is the sample interval asked of the target.
	Interval time.Duration
}

// userPass sends the gNMI username and password with every call.
type userPass struct {
	user, pass string
	secure     bool
}

func (u userPass) GetRequestMetadata(context.Context, ...string) (map[string]string, error) {
	return map[string]string{"username": u.user, "password": u.pass}, nil
}
func (u userPass) RequireTransportSecurity() bool { return u.secure }

// Dial prepares the connection (gRPC connects lazily, on the first call).
func Dial(o Options) (*grpc.ClientConn, error) {
	var opts []grpc.DialOption
	if o.Insecure {
		opts = append(opts, grpc.WithTransportCredentials(insecure.NewCredentials()))
	} else {
		cfg := &tls.Config{MinVersion: tls.VersionTLS12, ServerName: o.ServerName}
		if o.CAFile != "" {
			pem, err := rules.ReadConfig(o.CAFile)
			if err != nil {
				return nil, fmt.Errorf("--ca: %w", err)
			}
			pool := x509.NewCertPool()
			if !pool.AppendCertsFromPEM(pem) {
				return nil, fmt.Errorf("--ca %s: no PEM certificate in the file", o.CAFile)
			}
			cfg.RootCAs = pool
		}
		if o.CertFile != "" || o.KeyFile != "" {
			certPEM, err := rules.ReadConfig(o.CertFile)
			if err != nil {
				return nil, fmt.Errorf("--cert: %w", err)
			}
			keyPEM, err := rules.ReadConfig(o.KeyFile)
			if err != nil {
				return nil, fmt.Errorf("--key: %w", err)
			}
			cert, err := tls.X509KeyPair(certPEM, keyPEM)
			if err != nil {
				return nil, fmt.Errorf("--cert/--key: %w", err)
			}
			cfg.Certificates = []tls.Certificate{cert}
		}
		opts = append(opts, grpc.WithTransportCredentials(credentials.NewTLS(cfg)))
	}
	if o.Username != "" || o.Password != "" {
		opts = append(opts, grpc.WithPerRPCCredentials(userPass{o.Username, o.Password, !o.Insecure}))
	}
	return grpc.NewClient(o.Target, opts...)
}

// Sample is one sample time: the OpenConfig-shaped JSON document holding every update the
// target sent for it.
type Sample struct {
	TimeNs   int64
	Document []byte
}

// Follow subscribes and calls onSample with each sample time's document, in order, until ctx
// ends (nil), the target ends the stream (nil) or the session fails (the error, one line). A
// sample is complete when an update of a later sample time arrives, when the target says it
// has sent the initial state (sync_response), or after a quiet spell of a quarter of the
// interval (at most 1 s) — so it is handed on within a fraction of the interval.
//
// onSample may ask to be called back: a positive again makes Follow call it with a Sample
// without a Document after that long, unless a sample arrives first (onSample then decides
// anew). A consumer that cannot keep up with every sample can so put one off without it
// waiting for the next.
func Follow(ctx context.Context, conn *grpc.ClientConn, o Options, onSample func(Sample) (again time.Duration, err error)) error {
	if o.Interval <= 0 {
		o.Interval = 10 * time.Second
	}
	// The stream gets a context without the caller's deadline, cancelled once the caller's
	// context ends: with the deadline, gRPC sends it to the target, which may end the stream
	// (DeadlineExceeded) a moment before the caller's own timer fires, and a stop by --for
	// would read as a failed session. So the stream only ever ends by our cancel, after
	// ctx.Err() is set.
	sctx, cancel := context.WithCancel(context.WithoutCancel(ctx))
	defer cancel()
	defer context.AfterFunc(ctx, cancel)()
	sl := &gpb.SubscriptionList{Mode: gpb.SubscriptionList_STREAM, Encoding: gpb.Encoding_JSON_IETF}
	for _, p := range Paths {
		sl.Subscription = append(sl.Subscription, &gpb.Subscription{Path: StringPath(p), Mode: gpb.SubscriptionMode_SAMPLE,
			SampleInterval: uint64(o.Interval.Nanoseconds())})
	}
	stream, err := gpb.NewGNMIClient(conn).Subscribe(sctx)
	if err != nil {
		return sessionError(o.Target, err)
	}
	if err := stream.Send(&gpb.SubscribeRequest{Request: &gpb.SubscribeRequest_Subscribe{Subscribe: sl}}); err != nil {
		if errors.Is(err, io.EOF) {
			_, err = stream.Recv() // the status that ended the stream
		}
		return sessionError(o.Target, err)
	}
	type recv struct {
		resp *gpb.SubscribeResponse
		err  error
	}
	ch := make(chan recv)
	go func() {
		for {
			r, err := stream.Recv()
			select {
			case ch <- recv{r, err}:
			case <-sctx.Done():
				return
			}
			if err != nil {
				return
			}
		}
	}()
	quiet := min(o.Interval/4, time.Second)
	timer := time.NewTimer(time.Hour)
	timer.Stop()
	callback := time.NewTimer(time.Hour)
	callback.Stop()
	deliver := func(s Sample) error {
		again, err := onSample(s)
		callback.Stop()
		if again > 0 {
			callback.Reset(again)
		}
		return err
	}
	var cur *docBuilder
	flush := func() error {
		if cur == nil || cur.leaves == 0 {
			cur = nil
			return nil
		}
		doc, err := cur.document()
		ts := cur.ts
		cur = nil
		if err != nil {
			return err
		}
		return deliver(Sample{TimeNs: ts, Document: doc})
	}
	for {
		select {
		case <-ctx.Done():
			return flush()
		case <-callback.C:
			if err := deliver(Sample{}); err != nil {
				return err
			}
		case <-timer.C:
			if err := flush(); err != nil {
				return err
			}
		case r := <-ch:
			if r.err != nil {
				ferr := flush()
				// Our own context ending (Ctrl-C, or the --for deadline) is a stop, not a failure,
				// whichever status the stream ends with (Canceled or DeadlineExceeded).
				if errors.Is(r.err, io.EOF) || ctx.Err() != nil {
					return ferr
				}
				return errors.Join(sessionError(o.Target, r.err), ferr)
			}
			switch x := r.resp.GetResponse().(type) {
			case *gpb.SubscribeResponse_SyncResponse:
				if err := flush(); err != nil {
					return err
				}
			case *gpb.SubscribeResponse_Update:
				n := x.Update
				bucket := n.GetTimestamp() / o.Interval.Nanoseconds()
				if cur != nil && bucket != cur.bucket {
					if err := flush(); err != nil {
						return err
					}
				}
				if cur == nil {
					cur = &docBuilder{root: map[string]any{}, bucket: bucket}
				}
				if err := cur.add(n); err != nil {
					return err
				}
				timer.Reset(quiet)
			}
		}
	}
}

// sessionError says in one line why the session failed.
func sessionError(target string, err error) error {
	st, _ := status.FromError(err)
	msg := st.Message()
	if len(msg) > 300 {
		msg = msg[:300] + "…"
	}
	switch st.Code() {
	case codes.Unauthenticated, codes.PermissionDenied:
		return fmt.Errorf("gNMI %s: the target refused the credentials (%s: %q)", target, st.Code(), msg)
	case codes.Unavailable:
		return fmt.Errorf("gNMI %s: cannot reach the target or the session dropped (%q)", target, msg)
	case codes.Unimplemented:
		return fmt.Errorf("gNMI %s: the target does not offer gNMI Subscribe (%q)", target, msg)
	}
	return fmt.Errorf("gNMI %s: session failed (%s: %q)", target, st.Code(), msg)
}

// StringPath turns a path written "/a/b[k=v]/c" into a gNMI path. A key value may hold "/"
// (port names do); it ends at the closing bracket.
func StringPath(p string) *gpb.Path {
	var elems []*gpb.PathElem
	p = strings.Trim(p, "/")
	for p != "" {
		end, depth := len(p), 0
		for i := 0; i < len(p); i++ {
			switch p[i] {
			case '[':
				depth++
			case ']':
				depth--
			case '/':
				if depth == 0 {
					end = i
				}
			}
			if end == i {
				break
			}
		}
		seg := p[:end]
		p = strings.TrimPrefix(p[end:], "/")
		name, keys, _ := strings.Cut(seg, "[")
		pe := &gpb.PathElem{Name: name}
		for keys != "" {
			kv, rest, _ := strings.Cut(keys, "]")
			keys = strings.TrimPrefix(rest, "[")
			if k, v, ok := strings.Cut(kv, "="); ok {
				if pe.Key == nil {
					pe.Key = map[string]string{}
				}
				pe.Key[k] = v
			}
		}
		elems = append(elems, pe)
	}
	return &gpb.Path{Elem: elems}
}

// maxLeaves bounds the leaves of one sample time: a module has a few hundred.
const maxLeaves = 200000

// docBuilder gathers the updates of one sample time into a nested JSON tree. A list entry
// becomes an object keyed by its key value (the OpenConfig reader accepts lists given so) that
// also carries its key leaves.
type docBuilder struct {
	root   map[string]any
	bucket int64
	ts     int64
	leaves int
}

func (d *docBuilder) add(n *gpb.Notification) error {
	if n.GetTimestamp() > d.ts {
		d.ts = n.GetTimestamp()
	}
	for _, u := range n.GetUpdate() {
		if d.leaves++; d.leaves > maxLeaves {
			return fmt.Errorf("gNMI: more than %d leaves for one sample time: not a module's telemetry", maxLeaves)
		}
		elems := append(append([]*gpb.PathElem{}, n.GetPrefix().GetElem()...), u.GetPath().GetElem()...)
		if len(elems) == 0 {
			continue
		}
		v, ok := jsonValue(u.GetVal())
		if !ok {
			continue
		}
		node := d.root
		for i, e := range elems {
			if len(e.GetKey()) > 0 {
				node = child(node, e.GetName())
				node = child(node, keyOf(e.GetKey()))
				for k, kv := range e.GetKey() {
					node[k] = kv
				}
				if i == len(elems)-1 {
					merge(node, v)
				}
				continue
			}
			if i == len(elems)-1 {
				if m, ok := v.(map[string]any); ok {
					merge(child(node, e.GetName()), m)
				} else {
					node[e.GetName()] = v
				}
				continue
			}
			node = child(node, e.GetName())
		}
	}
	return nil
}

func (d *docBuilder) document() ([]byte, error) {
	// Milliseconds: the reader's unit for this magnitude, and exact (nanoseconds would pass
	// through a float64 and lose the last digits).
	d.root["timestamp"] = json.Number(strconv.FormatInt(d.ts/int64(time.Millisecond), 10))
	return json.Marshal(d.root)
}

// child returns node[name] as an object, creating it (or replacing a scalar) as needed.
func child(node map[string]any, name string) map[string]any {
	if m, ok := node[name].(map[string]any); ok {
		return m
	}
	m := map[string]any{}
	node[name] = m
	return m
}

// keyOf is a list entry's key: the key value, or key=value pairs when there are several.
func keyOf(keys map[string]string) string {
	if len(keys) == 1 {
		for _, v := range keys {
			return v
		}
	}
	names := make([]string, 0, len(keys))
	for k := range keys {
		names = append(names, k)
	}
	sort.Strings(names)
	parts := make([]string, len(names))
	for i, k := range names {
		parts[i] = k + "=" + keys[k]
	}
	return strings.Join(parts, ",")
}

// merge copies v (an object) into dst, recursively; a non-object v is ignored.
func merge(dst map[string]any, v any) {
	m, ok := v.(map[string]any)
	if !ok {
		return
	}
	for k, x := range m {
		if xm, ok := x.(map[string]any); ok {
			merge(child(dst, k), xm)
			continue
		}
		dst[k] = x
	}
}

// jsonValue turns a gNMI TypedValue into a JSON value for the document. Numbers that JSON
// cannot hold (NaN, ±Inf) become strings, which the reader treats as missing (NaN) or rejects
// (Inf); decimal64 is written exactly. ok is false for kinds the telemetry does not use.
func jsonValue(tv *gpb.TypedValue) (v any, ok bool) {
	switch x := tv.GetValue().(type) {
	case *gpb.TypedValue_DoubleVal:
		return floatJSON(x.DoubleVal), true
	case *gpb.TypedValue_FloatVal:
		return floatJSON(float64(x.FloatVal)), true
	case *gpb.TypedValue_IntVal:
		return json.Number(strconv.FormatInt(x.IntVal, 10)), true
	case *gpb.TypedValue_UintVal:
		return json.Number(strconv.FormatUint(x.UintVal, 10)), true
	case *gpb.TypedValue_DecimalVal:
		if x.DecimalVal.GetPrecision() > 18 { // decimal64 has at most 18 fraction digits (RFC 7950, 9.3.4)
			return nil, false
		}
		return decimalString(x.DecimalVal.GetDigits(), x.DecimalVal.GetPrecision()), true
	case *gpb.TypedValue_StringVal:
		return x.StringVal, true
	case *gpb.TypedValue_AsciiVal:
		return x.AsciiVal, true
	case *gpb.TypedValue_BoolVal:
		return x.BoolVal, true
	case *gpb.TypedValue_JsonIetfVal:
		return decodeJSON(x.JsonIetfVal)
	case *gpb.TypedValue_JsonVal:
		return decodeJSON(x.JsonVal)
	}
	return nil, false
}

func floatJSON(f float64) any {
	if f != f || f > 1.7976931348623157e308 || f < -1.7976931348623157e308 {
		return strconv.FormatFloat(f, 'g', -1, 64)
	}
	return json.Number(strconv.FormatFloat(f, 'g', -1, 64))
}

// decimalString writes digits·10^−precision exactly.
func decimalString(digits int64, precision uint32) string {
	s := strconv.FormatInt(digits, 10)
	if precision == 0 {
		return s
	}
	neg := strings.HasPrefix(s, "-")
	s = strings.TrimPrefix(s, "-")
	for len(s) <= int(precision) {
		s = "0" + s
	}
	s = s[:len(s)-int(precision)] + "." + s[len(s)-int(precision):]
	if neg {
		s = "-" + s
	}
	return s
}

func decodeJSON(b []byte) (any, bool) {
	dec := json.NewDecoder(strings.NewReader(string(b)))
	dec.UseNumber()
	var v any
	if err := dec.Decode(&v); err != nil {
		return nil, false
	}
	return v, true
}
