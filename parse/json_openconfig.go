package parse

import (
	"fmt"
	"slices"
	"strconv"
	"strings"
)

// listEntry is one entry of a YANG list, with its key.
type listEntry struct {
	key string
	obj int // node of the entry's object
}

// listEntries reads a YANG list given as a JSON array of entries (RFC 7951) or as an object
// keyed by the list key (v: its node, -1 when absent). keyLeaf is "index" or "name".
func (d *jdoc) listEntries(v int, keyLeaf string) []listEntry {
	if v < 0 {
		return nil
	}
	keyOf := func(obj int, fallback string) string {
		for _, src := range [3]int{obj, d.memberObj(obj, "state"), d.memberObj(obj, "config")} {
			if m := d.member(src, keyLeaf); m >= 0 {
				if b, missing := d.scalar(m); !missing {
					return string(b)
				}
			}
		}
		return fallback
	}
	var out []listEntry
	switch d.nodes[v].kind {
	case jArray:
		i := 0
		for c := v + 1; c < int(d.nodes[v].end); c = int(d.nodes[c].end) {
			if d.nodes[c].kind == jObject {
				out = append(out, listEntry{keyOf(c, strconv.Itoa(i)), c})
			}
			i++
		}
	case jObject:
		// Sorted by member name, the last of equal names counting, as decoded into a map.
		var ms []listEntry
		for c := v + 1; c < int(d.nodes[v].end); c = int(d.nodes[c].end) {
			ms = append(ms, listEntry{string(d.key(&d.nodes[c])), c})
		}
		slices.SortStableFunc(ms, func(a, b listEntry) int { return strings.Compare(a.key, b.key) })
		for i, m := range ms {
			if i+1 < len(ms) && ms[i+1].key == m.key {
				continue
			}
			if d.nodes[m.obj].kind == jObject {
				out = append(out, listEntry{keyOf(m.obj, m.key), m.obj})
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

// leafMembers sets out[i] to d.member(obj, leaves[i].name) for every leaf, in one pass over
// the object's members.
func (d *jdoc) leafMembers(obj int, leaves []ocLeaf, out []int) {
	var prefixed [16]int
	for i := range out {
		out[i], prefixed[i] = -1, -1
	}
	for c := obj + 1; c < int(d.nodes[obj].end); c = int(d.nodes[c].end) {
		n := &d.nodes[c]
		k := d.key(n)
		base := k
		if i := lastColon(k); i >= 0 {
			base = k[i+1:]
		}
		for i, l := range leaves {
			if len(base) != len(l.name) || string(base) != l.name {
				continue
			}
			if len(base) == len(k) {
				out[i] = c // the last of equal names counts
			} else if prefixed[i] < 0 {
				prefixed[i] = c
			}
		}
	}
	for i := range out {
		if out[i] < 0 {
			out[i] = prefixed[i]
		}
		if out[i] >= 0 && d.nodes[out[i]].kind == jNull {
			out[i] = -1
		}
	}
}

// statValue picks the chosen statistic out of an instant/avg/min/max container (falling back
// to instant), or takes a plain value as is; v is the leaf's node (-1: absent). It returns the
// value's node, -1 when there is no value.
func (d *jdoc) statValue(v int, stat string) int {
	if v < 0 {
		return -1
	}
	if d.nodes[v].kind == jObject {
		if x := d.field(v, stat); x >= 0 {
			return x
		}
		return d.field(v, "instant")
	}
	return v
}

// field is the member of object obj named exactly name (the last of several), -1 when absent
// or null.
func (d *jdoc) field(obj int, name string) int {
	f := -1
	for c := obj + 1; c < int(d.nodes[obj].end); c = int(d.nodes[c].end) {
		if d.keyIs(&d.nodes[c], name) {
			f = c
		}
	}
	if f >= 0 && d.nodes[f].kind == jNull {
		return -1
	}
	return f
}

// ocRecord is one port's values from one document, with the first bad leaf if any.
type ocRecord struct {
	port string
	rec  record
	bad  *ParseError
}

// openConfig reads the OpenConfig-shaped document in jp.doc: one record per optical channel
// (port), in order of first mention.
func (jp *jsonParser) openConfig(lineNo int) {
	d := &jp.doc
	file := jp.file
	var recs []*ocRecord
	if jp.ocIdx == nil {
		jp.ocIdx = map[string]int{}
	}
	clear(jp.ocIdx)
	get := func(port string) *ocRecord {
		if i, ok := jp.ocIdx[port]; ok {
			return recs[i]
		}
		r := &ocRecord{port: port}
		jp.ocIdx[port] = len(recs)
		recs = append(recs, r)
		return r
	}
	readLeaves := func(r *ocRecord, state int, leaves []ocLeaf, path string, overwrite bool) {
		if state < 0 {
			return
		}
		var found [16]int
		d.leafMembers(state, leaves, found[:len(leaves)])
		for i, l := range leaves {
			val := d.statValue(found[i], jp.stat)
			if val < 0 {
				continue
			}
			if !overwrite && r.rec.mask&(1<<l.col.q) != 0 {
				continue
			}
			v, err := d.quantity(val, l.col)
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
	if comps := d.memberObj(0, "components"); comps >= 0 {
		for _, e := range d.listEntries(d.member(comps, "component"), "name") {
			och := d.memberObj(e.obj, "optical-channel")
			if och < 0 {
				continue
			}
			state := d.memberObj(och, "state")
			r := get(e.key)
			path := "components/component[" + e.key + "]/optical-channel/state"
			readLeaves(r, state, ocOpticalLeaves, path, true)
			readLeaves(r, state, ocFECLeaves, path, true)
			readLeaves(r, e.obj, ocFECLeaves[4:], "components/component["+e.key+"]", false)
			if a := d.member(state, "logical-channel-assignment"); a >= 0 {
				if b, missing := d.scalar(a); !missing {
					lcToPort[string(b)] = e.key
				}
			}
		}
	}
	if td := d.memberObj(0, "terminal-device"); td >= 0 {
		for _, e := range d.listEntries(d.member(d.memberObj(td, "logical-channels"), "channel"), "index") {
			state := d.memberObj(d.memberObj(e.obj, "otn"), "state")
			if state < 0 {
				continue
			}
			port := ""
			for _, a := range d.listEntries(d.member(d.memberObj(e.obj, "logical-channel-assignments"), "assignment"), "index") {
				for _, src := range [2]int{d.memberObj(a.obj, "state"), d.memberObj(a.obj, "config")} {
					if src < 0 || port != "" {
						continue
					}
					at := ""
					if n := d.member(src, "assignment-type"); n >= 0 && d.nodes[n].kind == jString {
						at = string(d.text(&d.nodes[n]))
					}
					if och := d.member(src, "optical-channel"); och >= 0 && (at == "" || strings.HasSuffix(at, "OPTICAL_CHANNEL")) {
						if b, missing := d.scalar(och); !missing {
							port = string(b)
						}
					}
				}
			}
			if port == "" {
				port = lcToPort[e.key]
			}
			if port == "" {
				hasData := false
				for _, l := range ocFECLeaves {
					if d.member(state, l.name) >= 0 {
						hasData = true
					}
				}
				if !hasData {
					continue
				}
				port = "logical-channel-" + e.key
				jp.noteOnce(fmt.Sprintf("logical channel %s has OTN data but no optical-channel assignment; read as port %q", e.key, port))
			}
			readLeaves(get(port), state, ocFECLeaves, "terminal-device/logical-channels/channel["+e.key+"]/otn/state", false)
		}
	}
	job := jp.job
	if len(recs) == 0 {
		job.rowsRead++
		jp.reject(&ParseError{File: file, Line: lineNo, Err: ErrNoData})
		return
	}
	var t int64
	var timeErr *ParseError
	tv, tname := d.member(0, "timestamp"), "timestamp"
	if tv < 0 {
		tv, tname = d.member(0, "time"), "time"
	}
	if b, missing := d.scalar(tv); missing {
		timeErr = &ParseError{File: file, Line: lineNo, Field: "timestamp", Err: ErrMissingValue}
	} else if ms, ok := jp.times.parse(b); !ok {
		timeErr = &ParseError{File: file, Line: lineNo, Field: tname, Err: jp.times.badTime(b)}
	} else {
		t = ms
	}
	for _, r := range recs {
		if jp.stopped {
			return
		}
		p := r.port
		job.rowsRead++
		var nameErr error
		if _, known := jp.portIdx[p]; !known && p != "" {
			nameErr = CheckPortName(p)
		}
		switch {
		case timeErr != nil:
			pe := *timeErr
			jp.reject(&pe)
		case r.bad != nil:
			jp.reject(r.bad)
		case nameErr != nil: // before the name can appear in any other message
			jp.reject(&ParseError{File: file, Line: lineNo, Field: "name", Err: nameErr})
		case r.rec.mask == 0:
			jp.reject(&ParseError{File: file, Line: lineNo, Field: p, Err: ErrNoData})
		case p == "":
			// A component or assignment with an empty name names no port.
			jp.reject(&ParseError{File: file, Line: lineNo, Field: "name", Err: fmt.Errorf("%w: empty port name", ErrMissingValue)})
		default:
			jp.use([]byte(p), t, &r.rec, lineNo)
		}
	}
}

// noteOnce adds a note to the block unless it has it already, or already has MaxNotesListed
// (then it marks the block as having more).
func (jp *jsonParser) noteOnce(s string) {
	switch {
	case slices.Contains(jp.job.notes, s):
	case len(jp.job.notes) < MaxNotesListed:
		jp.job.notes = append(jp.job.notes, s)
	default:
		jp.job.moreNotes = true
	}
}
