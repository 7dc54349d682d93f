package parse

import (
	"bytes"
	"fmt"
	"math/bits"
	"slices"
	"strconv"
)

// listEntry is one entry of a YANG list, with its key (bytes of the document, or decoded).
type listEntry struct {
	key []byte
	obj int // node of the entry's object
}

// listEntries appends to out the entries of a YANG list given as a JSON array of entries (RFC
// 7951) or as an object keyed by the list key (v: its node, -1 when absent). keyLeaf is
// "index" or "name".
func (d *jdoc) listEntries(v int, keyLeaf string, out []listEntry) []listEntry {
	if v < 0 {
		return out
	}
	keyOf := func(obj int) ([]byte, bool) {
		for i := range 3 {
			src := obj
			switch i {
			case 1:
				src = d.memberObj(obj, "state")
			case 2:
				src = d.memberObj(obj, "config")
			}
			if m := d.member(src, keyLeaf); m >= 0 {
				if b, missing := d.scalar(m); !missing {
					return b, true
				}
			}
		}
		return nil, false
	}
	switch d.nodes[v].kind {
	case jArray:
		i := 0
		for c := v + 1; c < int(d.nodes[v].end); c = int(d.nodes[c].end) {
			if d.nodes[c].kind == jObject {
				k, ok := keyOf(c)
				if !ok {
					k = strconv.AppendInt(nil, int64(i), 10)
				}
				out = append(out, listEntry{k, c})
			}
			i++
		}
	case jObject:
		// Sorted by member name, the last of equal names counting, as decoded into a map.
		var ms []listEntry
		for c := v + 1; c < int(d.nodes[v].end); c = int(d.nodes[c].end) {
			ms = append(ms, listEntry{d.key(&d.nodes[c]), c})
		}
		slices.SortStableFunc(ms, func(a, b listEntry) int { return bytes.Compare(a.key, b.key) })
		for i, m := range ms {
			if i+1 < len(ms) && bytes.Equal(ms[i+1].key, m.key) {
				continue
			}
			if d.nodes[m.obj].kind == jObject {
				k, ok := keyOf(m.obj)
				if !ok {
					k = m.key
				}
				out = append(out, listEntry{k, m.obj})
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

// ocLeafSet is a list of leaves indexed by the length of their names.
type ocLeafSet struct {
	leaves []ocLeaf
	byLen  [32]uint16 // bit i set: leaves[i].name has that length
}

func newLeafSet(leaves ...[]ocLeaf) *ocLeafSet {
	s := &ocLeafSet{leaves: slices.Concat(leaves...)}
	for i, l := range s.leaves {
		s.byLen[len(l.name)] |= 1 << i
	}
	return s
}

var (
	// the leaves of an optical channel's state: the optical ones, then the FEC ones a
	// 400ZR-style optical channel carries itself
	ocStateSet = newLeafSet(ocOpticalLeaves, ocFECLeaves)
	ocFECSet   = newLeafSet(ocFECLeaves)
	// the leaves read on a component itself
	ocComponentSet = newLeafSet(ocFECLeaves[4:])
)

// leafMembers sets out[i] to d.member(obj, set.leaves[i].name) for every leaf, in one pass over
// the object's members.
func (d *jdoc) leafMembers(obj int, set *ocLeafSet, out []int) {
	var prefixed [16]int
	for i := range out {
		out[i], prefixed[i] = -1, -1
	}
	for c := obj + 1; c < int(d.nodes[obj].end); c = int(d.nodes[c].end) {
		n := &d.nodes[c]
		k := d.key(n)
		base := k
		if bytes.IndexByte(k, ':') >= 0 {
			base = k[lastColon(k)+1:]
		}
		if len(base) >= len(set.byLen) {
			continue
		}
		for m := set.byLen[len(base)]; m != 0; m &= m - 1 {
			i := bits.TrailingZeros16(m)
			if string(base) != set.leaves[i].name {
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

func lastColon(b []byte) int {
	for i := len(b) - 1; i >= 0; i-- {
		if b[i] == ':' {
			return i
		}
	}
	return -1
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

// ocPort is a port name met in OpenConfig documents, kept by the worker from document to
// document so that the name is copied and checked once, not in every document.
type ocPort struct {
	name string
	err  error  // CheckPortName(name); nil for the empty name
	doc  uint32 // the document (jp.ocDoc) in which rec is this port's record
	rec  int32
}

// maxOCPorts and maxOCNameBytes bound the port names a worker keeps between documents (their
// number and their bytes), so that names made up by a hostile input are not kept without bound.
const (
	maxOCPorts     = 1 << 16
	maxOCNameBytes = 4 << 20
)

// ocRecord is one port's values from one document, with the first bad leaf if any.
type ocRecord struct {
	port *ocPort
	rec  record
	bad  *ParseError
}

// ocPort returns the record of port name in the current document, added (in order of first
// mention) when it has none yet.
func (jp *jsonParser) ocRecord(name []byte) int {
	p := jp.ocPorts[bytesString(name)]
	if p == nil {
		p = &ocPort{name: string(name)}
		if p.name != "" {
			p.err = CheckPortName(p.name)
		}
		jp.ocPorts[p.name] = p
		jp.ocNameBytes += len(name)
	}
	if p.doc != jp.ocDoc {
		p.doc, p.rec = jp.ocDoc, int32(len(jp.ocRecs))
		jp.ocRecs = append(jp.ocRecs, ocRecord{port: p})
	}
	return int(p.rec)
}

// ocLeaves reads the leaves of object state (-1: none) into record r; the path of a bad leaf
// is pre + key + post + "/" + the leaf's name. Without overwrite, a quantity the record has
// already is kept.
func (jp *jsonParser) ocLeaves(r int, state int, set *ocLeafSet, lineNo int, pre string, key []byte, post string, overwrite bool) {
	if state < 0 {
		return
	}
	d := &jp.doc
	var found [16]int
	d.leafMembers(state, set, found[:len(set.leaves)])
	for i, l := range set.leaves {
		val := d.statValue(found[i], jp.stat)
		if val < 0 {
			continue
		}
		rec := &jp.ocRecs[r]
		if !overwrite && rec.rec.mask&(1<<l.col.q) != 0 {
			continue
		}
		v, err := d.quantity(val, l.col)
		if err != nil {
			if rec.bad == nil {
				rec.bad = &ParseError{File: jp.file, Line: lineNo, Field: pre + string(key) + post + "/" + l.name, Err: err}
			}
			continue
		}
		rec.rec.set(l.col.q, v)
	}
}

// openConfig reads the OpenConfig-shaped document in jp.doc: one record per optical channel
// (port), in order of first mention.
func (jp *jsonParser) openConfig(lineNo int) {
	d := &jp.doc
	file := jp.file
	if jp.ocPorts == nil || len(jp.ocPorts) > maxOCPorts || jp.ocNameBytes > maxOCNameBytes {
		jp.ocPorts, jp.ocNameBytes = map[string]*ocPort{}, 0
	}
	jp.ocDoc++
	if jp.ocDoc == 0 { // wrapped: no port may think it has a record in this document
		clear(jp.ocPorts)
		jp.ocDoc, jp.ocNameBytes = 1, 0
	}
	jp.ocRecs = jp.ocRecs[:0]
	clear(jp.ocLC)
	if comps := d.memberObj(0, "components"); comps >= 0 {
		jp.ocList = d.listEntries(d.member(comps, "component"), "name", jp.ocList[:0])
		for _, e := range jp.ocList {
			och := d.memberObj(e.obj, "optical-channel")
			if och < 0 {
				continue
			}
			state := d.memberObj(och, "state")
			r := jp.ocRecord(e.key)
			jp.ocLeaves(r, state, ocStateSet, lineNo, "components/component[", e.key, "]/optical-channel/state", true)
			jp.ocLeaves(r, e.obj, ocComponentSet, lineNo, "components/component[", e.key, "]", false)
			if a := d.member(state, "logical-channel-assignment"); a >= 0 {
				if b, missing := d.scalar(a); !missing {
					if jp.ocLC == nil {
						jp.ocLC = map[string][]byte{}
					}
					jp.ocLC[string(b)] = e.key
				}
			}
		}
	}
	if td := d.memberObj(0, "terminal-device"); td >= 0 {
		jp.ocList = d.listEntries(d.member(d.memberObj(td, "logical-channels"), "channel"), "index", jp.ocList[:0])
		for _, e := range jp.ocList {
			state := d.memberObj(d.memberObj(e.obj, "otn"), "state")
			if state < 0 {
				continue
			}
			var port []byte
			jp.ocAssign = d.listEntries(d.member(d.memberObj(e.obj, "logical-channel-assignments"), "assignment"), "index", jp.ocAssign[:0])
			for _, a := range jp.ocAssign {
				for i := range 2 {
					if len(port) != 0 {
						continue
					}
					src := d.memberObj(a.obj, "state")
					if i == 1 {
						src = d.memberObj(a.obj, "config")
					}
					if src < 0 {
						continue
					}
					var at []byte
					if n := d.member(src, "assignment-type"); n >= 0 && d.nodes[n].kind == jString {
						at = d.text(&d.nodes[n])
					}
					if och := d.member(src, "optical-channel"); och >= 0 && (len(at) == 0 || bytes.HasSuffix(at, []byte("OPTICAL_CHANNEL"))) {
						if b, missing := d.scalar(och); !missing {
							port = b
						}
					}
				}
			}
			if len(port) == 0 {
				port = jp.ocLC[bytesString(e.key)]
			}
			if len(port) == 0 {
				hasData := false
				for _, l := range ocFECLeaves {
					if d.member(state, l.name) >= 0 {
						hasData = true
					}
				}
				if !hasData {
					continue
				}
				name := "logical-channel-" + string(e.key)
				port = []byte(name)
				jp.noteOnce(fmt.Sprintf("logical channel %s has OTN data but no optical-channel assignment; read as port %q", e.key, name))
			}
			jp.ocLeaves(jp.ocRecord(port), state, ocFECSet, lineNo, "terminal-device/logical-channels/channel[", e.key, "]/otn/state", false)
		}
	}
	job := jp.job
	if len(jp.ocRecs) == 0 {
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
	for i := range jp.ocRecs {
		if jp.stopped {
			return
		}
		r := &jp.ocRecs[i]
		p := r.port.name
		job.rowsRead++
		switch {
		case timeErr != nil:
			pe := *timeErr
			jp.reject(&pe)
		case r.bad != nil:
			jp.reject(r.bad)
		case r.port.err != nil: // before the name can appear in any other message
			jp.reject(&ParseError{File: file, Line: lineNo, Field: "name", Err: r.port.err})
		case r.rec.mask == 0:
			jp.reject(&ParseError{File: file, Line: lineNo, Field: p, Err: ErrNoData})
		case p == "":
			// A component or assignment with an empty name names no port.
			jp.reject(&ParseError{File: file, Line: lineNo, Field: "name", Err: fmt.Errorf("%w: empty port name", ErrMissingValue)})
		default:
			jp.use(p, true, t, &r.rec, lineNo)
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
