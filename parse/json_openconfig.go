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

// index is the position in the set of the leaf named name, -1 when none is.
func (s *ocLeafSet) index(name []byte) int {
	if len(name) >= len(s.byLen) {
		return -1
	}
	for m := s.byLen[len(name)]; m != 0; m &= m - 1 {
		if i := bits.TrailingZeros16(m); string(name) == s.leaves[i].name {
			return i
		}
	}
	return -1
}

// baseName is a member name without its module prefix (what follows the last colon).
func baseName(k []byte) []byte {
	return k[lastColon(k)+1:]
}

// leafMembers sets out[i] to d.member(obj, set.leaves[i].name) for every leaf, in one pass over
// the object's members.
func (d *jdoc) leafMembers(obj int, set *ocLeafSet, out []int) {
	var prefixed [16]int
	for i := range out {
		out[i], prefixed[i] = -1, -1
	}
	for c := obj + 1; c < int(d.nodes[obj].end); c = int(d.nodes[c].end) {
		k := d.key(&d.nodes[c])
		base := baseName(k)
		i := set.index(base)
		if i < 0 {
			continue
		}
		if len(base) == len(k) {
			out[i] = c // the last of equal names counts
		} else if prefixed[i] < 0 {
			prefixed[i] = c
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

// ocRecord returns the record of port name in the current document, added (in order of first
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

// ocVal is one leaf of a document as the reader takes it: the text of the chosen statistic
// (see jdoc.scalar), or nothing.
type ocVal struct {
	b       []byte
	set     bool // the leaf has a value: present, not null
	missing bool // the value is a missing-value spelling
}

// The number of leaves of ocStateSet and ocFECSet.
const (
	nOCState = 14
	nOCFEC   = 5
)

// ocComponent is what a document says of one component that has an optical channel.
type ocComponent struct {
	key   []byte
	state [nOCState]ocVal // ocStateSet's leaves in optical-channel/state
	own   [1]ocVal        // fec-uncorrectable-blocks of the component itself
	lc    []byte          // state/logical-channel-assignment, when lcSet
	lcSet bool
}

// ocChannel is what a document says of one logical channel that has an OTN state.
type ocChannel struct {
	key     []byte
	port    []byte // the optical channel its assignments name (empty: none)
	fec     [nOCFEC]ocVal
	hasData bool // some FEC leaf is present, whichever statistics it has
}

// ocDoc is what the reader takes from one OpenConfig document, in document order. Both the
// tree reader (ocFromTree) and the one-pass reader (ocScan) fill it; ocApply makes the records.
type ocDoc struct {
	comps    []ocComponent
	chans    []ocChannel
	tb       []byte // the time's text
	tMissing bool   // no time, or a missing-value spelling
	tname    string // the member the time was read from
}

// leafVals fills out with the leaves of set in object obj (-1: none), each as its chosen
// statistic; some says whether any leaf is present (not null), whatever its statistics.
func (d *jdoc) leafVals(obj int, set *ocLeafSet, stat string, out []ocVal) (some bool) {
	clear(out)
	if obj < 0 {
		return false
	}
	var found [16]int
	d.leafMembers(obj, set, found[:len(set.leaves)])
	for i := range out {
		if found[i] >= 0 {
			some = true
		}
		if v := d.statValue(found[i], stat); v >= 0 {
			b, missing := d.scalar(v)
			out[i] = ocVal{b: b, set: true, missing: missing}
		}
	}
	return some
}

// ocFromTree takes the OpenConfig document in jp.doc into jp.oc.
func (jp *jsonParser) ocFromTree() {
	d := &jp.doc
	oc := &jp.oc
	oc.comps, oc.chans = oc.comps[:0], oc.chans[:0]
	if comps := d.memberObj(0, "components"); comps >= 0 {
		jp.ocList = d.listEntries(d.member(comps, "component"), "name", jp.ocList[:0])
		for _, e := range jp.ocList {
			och := d.memberObj(e.obj, "optical-channel")
			if och < 0 {
				continue
			}
			state := d.memberObj(och, "state")
			oc.comps = append(oc.comps, ocComponent{key: e.key})
			c := &oc.comps[len(oc.comps)-1]
			d.leafVals(state, ocStateSet, jp.stat, c.state[:])
			d.leafVals(e.obj, ocComponentSet, jp.stat, c.own[:])
			if a := d.member(state, "logical-channel-assignment"); a >= 0 {
				b, missing := d.scalar(a)
				c.lc, c.lcSet = b, !missing
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
					if och := d.member(src, "optical-channel"); och >= 0 {
						if b, missing := d.scalar(och); !missing {
							port = assignedPort(port, at, b)
						}
					}
				}
			}
			oc.chans = append(oc.chans, ocChannel{key: e.key, port: port})
			ch := &oc.chans[len(oc.chans)-1]
			ch.hasData = d.leafVals(state, ocFECSet, jp.stat, ch.fec[:])
		}
	}
	tv, tname := d.member(0, "timestamp"), "timestamp"
	if tv < 0 {
		tv, tname = d.member(0, "time"), "time"
	}
	oc.tb, oc.tMissing = d.scalar(tv)
	oc.tname = tname
}

// assignedPort is the port an assignment of type at (empty: not given) naming optical channel
// och gives, when no earlier assignment gave one (port empty).
func assignedPort(port, at, och []byte) []byte {
	if len(port) == 0 && (len(at) == 0 || bytes.HasSuffix(at, []byte("OPTICAL_CHANNEL"))) {
		return och
	}
	return port
}

// ocLeaves reads the leaves vals of set into record r; the path of a bad leaf is pre + key +
// post + "/" + the leaf's name. Without overwrite, a quantity the record has already is kept.
func (jp *jsonParser) ocLeaves(r int, vals []ocVal, set *ocLeafSet, lineNo int, pre string, key []byte, post string, overwrite bool) {
	for i, l := range set.leaves {
		val := &vals[i]
		if !val.set {
			continue
		}
		rec := &jp.ocRecs[r]
		if !overwrite && rec.rec.mask&(1<<l.col.q) != 0 {
			continue
		}
		v, err := quantityOf(val.b, val.missing, l.col)
		if err != nil {
			if rec.bad == nil {
				rec.bad = &ParseError{File: jp.file, Line: lineNo, Field: pre + string(key) + post + "/" + l.name, Err: err}
			}
			continue
		}
		rec.rec.set(l.col.q, v)
	}
}

// ocApply makes the records of the OpenConfig document in jp.oc, which begins on line lineNo:
// one record per optical channel (port), in order of first mention.
func (jp *jsonParser) ocApply(lineNo int) {
	oc := &jp.oc
	file := jp.file
	jp.job.sawOC = true
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
	for i := range oc.comps {
		c := &oc.comps[i]
		r := jp.ocRecord(c.key)
		jp.ocLeaves(r, c.state[:], ocStateSet, lineNo, "components/component[", c.key, "]/optical-channel/state", true)
		jp.ocLeaves(r, c.own[:], ocComponentSet, lineNo, "components/component[", c.key, "]", false)
		if c.lcSet {
			if jp.ocLC == nil {
				jp.ocLC = map[string][]byte{}
			}
			jp.ocLC[string(c.lc)] = c.key
		}
	}
	for i := range oc.chans {
		ch := &oc.chans[i]
		port := ch.port
		if len(port) == 0 {
			port = jp.ocLC[bytesString(ch.key)]
		}
		if len(port) == 0 {
			if !ch.hasData {
				continue
			}
			name := "logical-channel-" + string(ch.key)
			port = []byte(name)
			jp.noteOnce(fmt.Sprintf("logical channel %s has OTN data but no optical-channel assignment; read as port %q", ch.key, name))
		}
		jp.ocLeaves(jp.ocRecord(port), ch.fec[:], ocFECSet, lineNo, "terminal-device/logical-channels/channel[", ch.key, "]/otn/state", false)
	}
	job := jp.job
	if len(jp.ocRecs) == 0 {
		job.rowsRead++
		jp.reject(&ParseError{File: file, Line: lineNo, Err: ErrNoData})
		return
	}
	var t int64
	var timeErr *ParseError
	if oc.tMissing {
		timeErr = &ParseError{File: file, Line: lineNo, Field: "timestamp", Err: ErrMissingValue}
	} else if ms, ok := jp.times.parse(oc.tb); !ok {
		timeErr = &ParseError{File: file, Line: lineNo, Field: oc.tname, Err: jp.times.badTime(oc.tb)}
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
