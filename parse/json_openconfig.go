package parse

import (
	"fmt"
	"sort"
	"strings"
	"unicode/utf8"
)

// member finds obj[name], also when the member name carries a module prefix ("module:name").
func member(obj map[string]any, name string) any {
	if obj == nil {
		return nil
	}
	if v, ok := obj[name]; ok {
		return v
	}
	for k, v := range obj {
		if i := strings.LastIndexByte(k, ':'); i >= 0 && k[i+1:] == name {
			return v
		}
	}
	return nil
}

func memberObj(obj map[string]any, name string) map[string]any {
	m, _ := member(obj, name).(map[string]any)
	return m
}

// listEntry is one entry of a YANG list, with its key.
type listEntry struct {
	key string
	obj map[string]any
}

// listEntries reads a YANG list given as a JSON array of entries (RFC 7951) or as an object
// keyed by the list key. keyLeaf is "index" or "name".
func listEntries(v any, keyLeaf string) []listEntry {
	keyOf := func(obj map[string]any, fallback string) string {
		for _, src := range []map[string]any{obj, memberObj(obj, "state"), memberObj(obj, "config")} {
			if b, missing := scalarBytes(member(src, keyLeaf)); src != nil && !missing && member(src, keyLeaf) != nil {
				return string(b)
			}
		}
		return fallback
	}
	var out []listEntry
	switch x := v.(type) {
	case []any:
		for i, e := range x {
			if obj, ok := e.(map[string]any); ok {
				out = append(out, listEntry{keyOf(obj, fmt.Sprint(i)), obj})
			}
		}
	case map[string]any:
		keys := make([]string, 0, len(x))
		for k := range x {
			keys = append(keys, k)
		}
		sort.Strings(keys)
		for _, k := range keys {
			if obj, ok := x[k].(map[string]any); ok {
				out = append(out, listEntry{keyOf(obj, k), obj})
			}
		}
	}
	return out
}

// ocLeaf maps one OpenConfig leaf (or statistics container) to a canonical column.
type ocLeaf struct {
	name string
	col  column
}

var ocOpticalLeaves = []ocLeaf{
	{"frequency", column{kind: colQuantity, q: FrequencyTHz, conv: convDiv1e6}}, // MHz → THz
	{"input-power", column{kind: colQuantity, q: RxPowerDBm}},
	{"output-power", column{kind: colQuantity, q: TxPowerDBm}},
	{"chromatic-dispersion", column{kind: colQuantity, q: CDpsPerNm}},
	{"polarization-mode-dispersion", column{kind: colQuantity, q: DGDps}},
	{"polarization-dependent-loss", column{kind: colQuantity, q: PDLdB}},
	{"osnr", column{kind: colQuantity, q: OSNRdB}},
	{"carrier-frequency-offset", column{kind: colQuantity, q: LOOffsetMHz}},
	{"sop-roc", column{kind: colQuantity, q: SOPRateKradPerS}},
}

var ocFECLeaves = []ocLeaf{
	{"pre-fec-ber", column{kind: colQuantity, q: PreFECBER}},
	{"post-fec-ber", column{kind: colQuantity, q: PostFECBER}},
	{"q-value", column{kind: colQuantity, q: QdB}},
	{"esnr", column{kind: colQuantity, q: ESNRdB}},
	{"fec-uncorrectable-blocks", column{kind: colQuantity, q: UncorrectedBlocks}},
}

// statValue picks the chosen statistic out of an instant/avg/min/max container (falling back
// to instant), or takes a plain value as is. present is false when there is no value.
func statValue(v any, stat string) (val any, present bool) {
	if m, ok := v.(map[string]any); ok {
		if x, ok := m[stat]; ok && x != nil {
			return x, true
		}
		if x, ok := m["instant"]; ok && x != nil {
			return x, true
		}
		return nil, false
	}
	if v == nil {
		return nil, false
	}
	return v, true
}

// ocRecord is one port's values from one document, with the first bad leaf if any.
type ocRecord struct {
	rec   record
	bad   *ParseError
	order int
}

// openConfig reads one OpenConfig-shaped document: one record per optical channel (port).
func (jr *jsonReader) openConfig(obj map[string]any, lineNo int) {
	file := jr.res.stats.File
	recs := map[string]*ocRecord{}
	get := func(port string) *ocRecord {
		r := recs[port]
		if r == nil {
			r = &ocRecord{order: len(recs)}
			recs[port] = r
		}
		return r
	}
	readLeaves := func(r *ocRecord, state map[string]any, leaves []ocLeaf, path string, overwrite bool) {
		for _, l := range leaves {
			raw := member(state, l.name)
			val, present := statValue(raw, jr.stat)
			if !present {
				continue
			}
			if !overwrite && r.rec.mask&(1<<l.col.q) != 0 {
				continue
			}
			v, err := jsonValue(val, l.col)
			if err != nil {
				if r.bad == nil {
					r.bad = &ParseError{File: file, Line: lineNo, Field: path + "/" + l.name, Err: err}
				}
				continue
			}
			r.rec.set(l.col.q, v)
		}
	}
	lcToPort := map[string]string{}
	if comps := memberObj(obj, "components"); comps != nil {
		for _, e := range listEntries(member(comps, "component"), "name") {
			och := memberObj(e.obj, "optical-channel")
			if och == nil {
				continue
			}
			state := memberObj(och, "state")
			r := get(e.key)
			path := "components/component[" + e.key + "]/optical-channel/state"
			readLeaves(r, state, ocOpticalLeaves, path, true)
			readLeaves(r, state, ocFECLeaves, path, true)
			readLeaves(r, e.obj, ocFECLeaves[4:], "components/component["+e.key+"]", false)
			if b, missing := scalarBytes(member(state, "logical-channel-assignment")); state != nil && member(state, "logical-channel-assignment") != nil && !missing {
				lcToPort[string(b)] = e.key
			}
		}
	}
	if td := memberObj(obj, "terminal-device"); td != nil {
		for _, e := range listEntries(member(memberObj(td, "logical-channels"), "channel"), "index") {
			state := memberObj(memberObj(e.obj, "otn"), "state")
			if state == nil {
				continue
			}
			port := ""
			for _, a := range listEntries(member(memberObj(e.obj, "logical-channel-assignments"), "assignment"), "index") {
				for _, src := range []map[string]any{memberObj(a.obj, "state"), memberObj(a.obj, "config")} {
					if src == nil || port != "" {
						continue
					}
					at, _ := member(src, "assignment-type").(string)
					if b, missing := scalarBytes(member(src, "optical-channel")); member(src, "optical-channel") != nil && !missing &&
						(at == "" || strings.HasSuffix(at, "OPTICAL_CHANNEL")) {
						port = string(b)
					}
				}
			}
			if port == "" {
				port = lcToPort[e.key]
			}
			if port == "" {
				hasData := false
				for _, l := range ocFECLeaves {
					if member(state, l.name) != nil {
						hasData = true
					}
				}
				if !hasData {
					continue
				}
				port = "logical-channel-" + e.key
				jr.noteOnce(fmt.Sprintf("logical channel %s has OTN data but no optical-channel assignment; read as port %q", e.key, port))
			}
			r := get(port)
			readLeaves(r, state, ocFECLeaves, "terminal-device/logical-channels/channel["+e.key+"]/otn/state", false)
		}
	}
	if len(recs) == 0 {
		jr.res.stats.RowsRead++
		jr.reject(&ParseError{File: file, Line: lineNo, Err: ErrNoData})
		return
	}
	ports := make([]string, 0, len(recs))
	for p := range recs {
		ports = append(ports, p)
	}
	sort.Slice(ports, func(i, j int) bool { return recs[ports[i]].order < recs[ports[j]].order })

	var t int64
	var timeErr *ParseError
	tv := member(obj, "timestamp")
	tname := "timestamp"
	if tv == nil {
		tv, tname = member(obj, "time"), "time"
	}
	if b, missing := scalarBytes(tv); missing {
		timeErr = &ParseError{File: file, Line: lineNo, Field: "timestamp", Err: ErrMissingValue}
	} else if ms, ok := jr.opt.times.parse(b); !ok {
		timeErr = &ParseError{File: file, Line: lineNo, Field: tname, Err: jr.opt.times.badTime(b)}
	} else {
		t = ms
	}
	for _, p := range ports {
		if jr.stopped {
			return
		}
		r := recs[p]
		jr.res.stats.RowsRead++
		switch {
		case timeErr != nil:
			pe := *timeErr
			jr.reject(&pe)
		case r.bad != nil:
			jr.reject(r.bad)
		case r.rec.mask == 0:
			jr.reject(&ParseError{File: file, Line: lineNo, Field: p, Err: ErrNoData})
		case p == "":
			// A component or assignment with an empty name names no port.
			jr.reject(&ParseError{File: file, Line: lineNo, Field: "name", Err: fmt.Errorf("%w: empty port name", ErrMissingValue)})
		case !utf8.ValidString(p):
			jr.reject(&ParseError{File: file, Line: lineNo, Field: "name", Err: fmt.Errorf("%w: port name %q", ErrEncoding, p)})
		default:
			jr.use(p, t, &r.rec)
		}
	}
}

func (jr *jsonReader) noteOnce(s string) {
	for _, n := range jr.notes {
		if n == s {
			return
		}
	}
	jr.notes = append(jr.notes, s)
}
