package parse

import (
	"bytes"
	"fmt"
	"io"
	"math"
	"math/bits"
	"slices"
	"sort"
	"strings"
	"unicode/utf8"
)

// readJSON reads JSON Lines, a JSON document, a stream of documents or an array of documents.
// Each document is either a canonical record (same field names as the CSV) or an
// OpenConfig-shaped telemetry document; see docs/formats.md.
//
// The input is streamed like a CSV: cut into blocks of whole lines (JSON Lines) or whole
// documents, parsed in parallel with jdoc (a flat node list, no maps), and accounted and merged
// in input order. Only the blocks in flight are in memory.
func readJSON(res *fileResult, r io.Reader, opt Options) {
	stat, _ := opt.statistic()
	hb := getBytes(bufferSize(res.sizeHint))
	defer func() { bytesPool.Put(hb) }()
	buf := *hb
	var readErr error
	eof := false
	// Read until the first line after leading white space is complete: it decides the mode.
	for {
		start := skipSpace(buf, 0)
		if eof || bytes.IndexByte(buf[start:], '\n') >= 0 {
			break
		}
		if len(buf) == cap(buf) {
			if len(buf) >= maxJSONDocument {
				res.fail(&ParseError{File: res.stats.File, Line: 1, Err: documentTooLong(1)}, readErr)
				return
			}
			buf = slices.Grow(buf, cap(buf))
			*hb = buf
		}
		buf = readMore(r, buf, &eof, &readErr)
	}
	jr := &jsonFile{res: res, opt: opt, stat: stat, unknown: map[string]bool{}}
	start := skipSpace(buf, 0)
	f := blockFormat{
		parser: func() func(*csvJob) {
			p := &jsonParser{file: res.stats.File, stat: stat, strict: opt.Strict, mode: jr.mode, times: opt.times, onePass: !opt.treeOnly}
			return p.parse
		},
		reserve: func(job *csvJob, rows int) {
			if jr.mode == jsonModeLines {
				job.rowPort = slices.Grow(job.rowPort, rows)
				job.times = slices.Grow(job.times, rows)
				job.rowMask = slices.Grow(job.rowMask, rows)
				job.vals = slices.Grow(job.vals, rows*int(NumQuantities))
			}
		},
		maxRecord: maxJSONDocument,
		tooLong:   documentTooLong,
		account:   jr.account,
		apply:     applySparse,
	}
	line := 1
	var d jdoc
	switch {
	case start < len(buf) && buf[start] == '{' && d.validLine(bytes.TrimSpace(firstLine(buf[start:]))):
		res.stats.Format = strings.Replace(res.stats.Format, "json", "jsonl", 1)
		jr.mode = jsonModeLines
		f.cut = cutLines
	case start < len(buf) && buf[start] == '[':
		jr.mode = jsonModeArray
		line += bytes.Count(buf[:start], []byte{'\n'})
		buf = buf[start+1:]
		f.cut = cutDocuments(true)
	default:
		jr.mode = jsonModeStream
		f.cut = cutDocuments(false)
	}
	if jr.mode != jsonModeLines {
		res.part = nil // documents of many ports each: read whole
	}
	if jr.mode != jsonModeLines || len(firstLine(buf[start:])) >= bigDocument {
		// Documents such as OpenConfig snapshots are large: blocks of several of them, so that
		// a block's fixed costs (cutting off the rest, grouping and merging each port's rows)
		// are shared by more rows.
		f.block = 4 * chunkSize
	}
	runBlocks(res, r, opt, f, buf, line, eof, readErr)
	if len(jr.unknown) > 0 {
		names := make([]string, 0, len(jr.unknown))
		for n := range jr.unknown {
			names = append(names, n)
		}
		sort.Strings(names)
		for _, n := range names {
			res.stats.Notes = append(res.stats.Notes, fmt.Sprintf("unknown field %s ignored", quoteShort([]byte(n))))
		}
		if jr.moreUnknown {
			res.stats.Notes = append(res.stats.Notes, fmt.Sprintf("more unknown fields ignored (the first %d are named)", MaxNotesListed))
		}
	}
	res.stats.Notes = append(res.stats.Notes, jr.notes...)
	if jr.moreNotes {
		res.stats.Notes = append(res.stats.Notes, fmt.Sprintf("more notes like these not listed (the first %d are)", MaxNotesListed))
	}
}

// bigDocument is the length of a JSON Lines line from which documents are read in larger
// blocks (see readJSON).
const bigDocument = 64 << 10

func firstLine(b []byte) []byte {
	if i := bytes.IndexByte(b, '\n'); i >= 0 {
		return b[:i]
	}
	return b
}

func skipSpace(b []byte, i int) int {
	if i < len(b) && b[i] > ' ' {
		return i
	}
	for i < len(b) && (b[i] == ' ' || b[i] == '\t' || b[i] == '\r' || b[i] == '\n') {
		i++
	}
	return i
}

// validLine reports whether line is exactly one JSON value (with white space around).
func (d *jdoc) validLine(line []byte) bool {
	end, err := d.parseValue(line, 0)
	return err == nil && skipSpace(line, end) == len(line)
}

// jsonMode is how a JSON input is laid out.
type jsonMode uint8

const (
	jsonModeLines  jsonMode = iota // one document per line
	jsonModeStream                 // documents one after the other, any layout
	jsonModeArray                  // one array of documents (its '[' already consumed)
)

// cutDocuments returns the cut function of a stream (or array) of documents: it cuts after the
// last document that is an object or array closed in b. Strings are skipped; a bracket that
// closes nothing is left for the parser to report. In an array, the array's closing bracket
// ends the input (what follows it is not read, as a JSON decoder would not).
func cutDocuments(array bool) func(b []byte) (int, bool) {
	return func(b []byte) (int, bool) {
		depth, last := 0, 0
		for i := 0; i < len(b); i++ {
			switch b[i] {
			case '"':
				for i++; i < len(b) && b[i] != '"'; i++ {
					if b[i] == '\\' {
						i++
					}
				}
			case '{', '[':
				depth++
			case '}', ']':
				if depth == 0 {
					if array && b[i] == ']' {
						return i, true
					}
					continue
				}
				if depth--; depth == 0 {
					last = i + 1
				}
			}
		}
		return last, false
	}
}

// jsonFile is the per-input state of readJSON, updated in input order by account.
type jsonFile struct {
	res     *fileResult
	opt     Options
	stat    string
	mode    jsonMode
	unknown map[string]bool // unknown members met, the first MaxNotesListed of them
	// moreUnknown: other unknown members were met
	moreUnknown bool
	notes       []string // the input's notes, the first MaxNotesListed of them
	moreNotes   bool     // some notes were not kept
}

// documentTooLong is the read error of a JSON document (or line) longer than maxJSONDocument
// that starts at or after line.
func documentTooLong(line int) error {
	return fmt.Errorf("%w: a JSON document after line %d is longer than %d MiB", ErrTooLarge, line, maxJSONDocument>>20)
}

// account adds a parsed block to the input's accounting; false stops the input after it. A
// block stopped by a syntax error or a strict rejection still gives the rows before it.
func (jr *jsonFile) account(job *csvJob) bool {
	res := jr.res
	if res.overRowLimit(job) {
		return false
	}
	res.stats.RowsRead += job.rowsRead
	res.stats.RowsRejected += job.nReject
	res.stats.RowsUsed += len(job.times)
	for _, pe := range job.rejects {
		res.addRejection(pe.rejection())
	}
	res.takeProfiles(job)
	for _, u := range job.unknown {
		if len(jr.unknown) < MaxNotesListed {
			jr.unknown[u] = true
		} else if !jr.unknown[u] {
			jr.moreUnknown = true
		}
	}
	for _, n := range job.notes {
		switch {
		case slices.Contains(jr.notes, n):
		case len(jr.notes) < MaxNotesListed:
			jr.notes = append(jr.notes, n)
		default:
			jr.moreNotes = true
		}
	}
	jr.moreNotes = jr.moreNotes || job.moreNotes
	res.hintFirst(job, func(g int) int { return bits.OnesCount32(job.gMask[g]) })
	if job.sawOC && !strings.Contains(res.stats.Format, "openconfig") {
		res.stats.Format = strings.Replace(strings.Replace(res.stats.Format, "jsonl", "json", 1), "json", "openconfig-json", 1)
	}
	if job.stopErr != nil {
		if job.stopStrict {
			res.stopStrict(job.stopErr)
		} else {
			res.fail(job.stopErr, nil)
		}
	}
	return job.stopErr == nil
}

// jsonParser parses blocks of JSON input; one per worker goroutine.
type jsonParser struct {
	file    string
	stat    string
	strict  bool
	mode    jsonMode
	times   *timeReader
	doc     jdoc
	portIdx map[string]int32
	cols    map[string]column // member name → column, for names without escapes
	slots   []keySlot         // the previous record's member names, by position
	members []canonMember
	unknown []string
	seenU   map[string]bool
	// OpenConfig documents (see openConfig): the port names met, the current document's number
	// and records, the logical channels components name, and the lists being read.
	ocPorts     map[string]*ocPort
	ocNameBytes int // bytes of the names in ocPorts
	ocDoc       uint32
	ocRecs      []ocRecord
	ocLC        map[string][]byte
	ocList      []listEntry
	ocAssign    []listEntry
	oc          ocDoc
	scan        ocScan
	job         *csvJob
	stopped     bool
	// onePass: OpenConfig documents are first tried with the one-pass reader (ocOnePass);
	// canonical: the last document was a canonical record (then the next is not tried).
	onePass, canonical bool
}

// keySlot remembers the member name met at one position of the previous record and its
// column: JSON Lines exporters write the members of every record in the same order.
type keySlot struct {
	key []byte
	col column
}

// column is the column of member n, the slot-th of its record.
func (jp *jsonParser) column(d *jdoc, n *jnode, slot int) column {
	if n.keyEsc {
		return lookupColumn(d.keys[n.k0])
	}
	k := d.data[n.k0:n.k1]
	if slot < len(jp.slots) && bytes.Equal(jp.slots[slot].key, k) {
		return jp.slots[slot].col
	}
	col, hit := jp.cols[bytesString(k)]
	if !hit {
		col = lookupColumn(string(k))
		if len(jp.cols) < 1024 {
			jp.cols[string(k)] = col
		}
	}
	if slot < 64 {
		for len(jp.slots) <= slot {
			jp.slots = append(jp.slots, keySlot{})
		}
		jp.slots[slot] = keySlot{append(jp.slots[slot].key[:0], k...), col}
	}
	return col
}

// canonMember is one member of a canonical record.
type canonMember struct {
	key  string
	node int
}

func (jp *jsonParser) parse(job *csvJob) {
	if jp.portIdx == nil {
		jp.portIdx, jp.cols, jp.seenU = map[string]int32{}, map[string]column{}, map[string]bool{}
	}
	clear(jp.portIdx)
	clear(jp.seenU)
	jp.job, jp.stopped = job, false
	defer func() { job.groupSparse(); jp.job = nil }()
	if jp.mode == jsonModeLines {
		jp.parseLines(job)
		return
	}
	jp.parseDocuments(job)
}

// parseLines treats every non-blank line as one document.
func (jp *jsonParser) parseLines(job *csvJob) {
	data := job.data
	lineNo := job.firstLine - 1
	for len(data) > 0 && !jp.stopped {
		lineNo++
		ln := data
		if i := bytes.IndexByte(data, '\n'); i >= 0 {
			ln, data = data[:i], data[i+1:]
		} else {
			data = nil
		}
		ln = bytes.TrimSpace(ln)
		if len(ln) == 0 || bytes.Equal(ln, []byte{0xef, 0xbb, 0xbf}) {
			continue
		}
		if jp.onePass && !jp.canonical {
			if end, ok := jp.ocOnePass(ln, 0); ok && end == len(ln) {
				jp.ocApply(lineNo)
				continue
			}
		}
		end, err := jp.doc.parseValue(ln, 0)
		if err == nil {
			// As json.Decoder.More: a closing bracket after the value ends the line quietly.
			if i := skipSpace(ln, end); i < len(ln) && ln[i] != ']' && ln[i] != '}' {
				err = fmt.Errorf("more than one value on the line")
			}
		}
		if err != nil {
			job.rowsRead++
			jp.reject(&ParseError{File: jp.file, Line: lineNo, Err: fmt.Errorf("%w: %v", ErrJSON, err)})
			continue
		}
		jp.document(lineNo)
	}
}

// parseDocuments reads the documents of a block of a stream or an array; a syntax error stops
// the input because the next document cannot be found after it.
func (jp *jsonParser) parseDocuments(job *csvJob) {
	data := job.data
	lc := lineCounter{data: data, line: job.firstLine}
	i := 0
	first := job.seq == 0
	for !jp.stopped {
		i = skipSpace(data, i)
		if jp.mode == jsonModeArray && i < len(data) && !first {
			if data[i] != ',' {
				jp.stop(lc.at(i), fmt.Errorf("invalid character %q after array element", data[i]))
				return
			}
			if i = skipSpace(data, i+1); i >= len(data) {
				jp.stop(lc.at(i), fmt.Errorf("unexpected end of JSON input"))
				return
			}
		}
		if jp.mode == jsonModeStream && i < len(data) && data[i] == ',' {
			// Commas between documents are an error, but trailing ones at the very end are
			// not read (as json.Decoder used in a loop that stops at the end would not).
			j := i
			for j < len(data) && (data[j] == ',' || skipSpace(data, j) > j) {
				j = max(j+1, skipSpace(data, j))
			}
			if j < len(data) || !job.last {
				jp.stop(lc.at(i), fmt.Errorf("invalid character ',' looking for beginning of value"))
				return
			}
			i = j
		}
		if i >= len(data) {
			if jp.mode == jsonModeArray && job.last && !job.closed {
				jp.stop(lc.at(i), fmt.Errorf("unexpected end of JSON input"))
			}
			return
		}
		first = false
		lineNo := lc.at(i)
		if jp.onePass && !jp.canonical {
			if end, ok := jp.ocOnePass(data, i); ok {
				jp.ocApply(lineNo)
				i = end
				continue
			}
		}
		end, err := jp.doc.parseValue(data, i)
		if err != nil {
			if !job.broken {
				jp.stop(lineNo, err)
			} // else the document was cut off with the stream, whose error says so
			return
		}
		jp.document(lineNo)
		i = end
	}
}

// stop ends the input at a syntax error.
func (jp *jsonParser) stop(line int, err error) {
	jp.job.stopErr = &ParseError{File: jp.file, Line: line, Err: fmt.Errorf("%w: %v", ErrJSON, err)}
	jp.stopped = true
}

// lineCounter maps byte offsets (non-decreasing) to 1-based line numbers.
type lineCounter struct {
	data []byte
	off  int
	line int
}

func (lc *lineCounter) at(off int) int {
	if off > len(lc.data) {
		off = len(lc.data)
	}
	if off > lc.off {
		lc.line += bytes.Count(lc.data[lc.off:off], []byte{'\n'})
		lc.off = off
	}
	return lc.line
}

// reject records a rejected row; in strict mode it also stops the input there.
func (jp *jsonParser) reject(pe *ParseError) {
	job := jp.job
	job.reject(pe)
	if jp.strict {
		job.stopErr, job.stopStrict = pe, true
		jp.stopped = true
	}
}

// record is one port's values at one time; mask marks the quantities it carries a column for.
// profile is the module profile the record names (nil: none).
type record struct {
	vals    [NumQuantities]float64
	mask    uint32
	profile []byte
}

func (rec *record) set(q Quantity, v float64) {
	rec.vals[q] = v
	rec.mask |= 1 << q
}

// use adds an accepted row, of the record at line lineNo, to the block. The port's name is
// kept as it is when keep says that it is not the bytes of the input.
func (jp *jsonParser) use(port string, keep bool, t int64, rec *record, lineNo int) {
	job := jp.job
	pi, known := jp.portIdx[port]
	if !known {
		pi = int32(len(job.names))
		name := port
		if !keep {
			name = strings.Clone(port)
		}
		job.names = append(job.names, name)
		jp.portIdx[name] = pi
	}
	if rec.profile != nil {
		job.markProfile(pi, rec.profile, lineNo)
	}
	job.rowPort = append(job.rowPort, pi)
	job.times = append(job.times, t)
	job.rowMask = append(job.rowMask, rec.mask)
	for q, v := range rec.vals {
		if rec.mask&(1<<q) == 0 {
			v = math.NaN()
		}
		job.vals = append(job.vals, v)
	}
}

// document dispatches the parsed document in jp.doc.
func (jp *jsonParser) document(lineNo int) {
	d := &jp.doc
	if d.nodes[0].kind != jObject {
		jp.job.rowsRead++
		jp.reject(&ParseError{File: jp.file, Line: lineNo, Err: fmt.Errorf("%w: a record must be a JSON object", ErrJSON)})
		return
	}
	if d.isOpenConfig() {
		jp.canonical = false
		jp.ocFromTree()
		jp.ocApply(lineNo)
		return
	}
	jp.canonical = true
	jp.canonicalRecord(lineNo)
}

// isOpenConfig reports whether the object d holds has a terminal-device or components member
// (with or without a module prefix) that is not null: d.member for both, in one pass.
func (d *jdoc) isOpenConfig() bool {
	for c := 1; c < int(d.nodes[0].end); c = int(d.nodes[c].end) {
		n := &d.nodes[c]
		k := d.key(n)
		if (bytes.HasSuffix(k, []byte("terminal-device")) || bytes.HasSuffix(k, []byte("components"))) && n.kind != jNull {
			if d.member(0, "terminal-device") >= 0 || d.member(0, "components") >= 0 {
				return true
			}
		}
	}
	return false
}

// canonicalRecord reads a flat record with CSV field names. The members are taken in document order;
// a record with a duplicate or a bad field is read again in the order of its sorted member
// names (as decoded into a map, the last of equal names winning), which decides the one
// reason it is rejected for.
func (jp *jsonParser) canonicalRecord(lineNo int) {
	jp.job.rowsRead++
	d := &jp.doc
	var rec record
	var t int64
	var port []byte
	var seen uint32 // bit q for quantity q, bits 29, 30 and 31 for profile, time and port
	haveTime, havePort := false, false
	jp.unknown = jp.unknown[:0]
	ok := true
	slot := 0
	for c := 1; c < int(d.nodes[0].end) && ok; c = int(d.nodes[c].end) {
		n := &d.nodes[c]
		col := jp.column(d, n, slot)
		slot++
		var bit uint32
		switch col.kind {
		case colUnknown:
			jp.unknown = append(jp.unknown, string(d.key(n)))
			continue
		case colTime:
			bit = 1 << 30
		case colPort:
			bit = 1 << 31
		case colProfile:
			bit = 1 << 29
		default:
			bit = 1 << col.q
		}
		if seen&bit != 0 {
			ok = false
			break
		}
		seen |= bit
		switch col.kind {
		case colTime:
			b, missing := d.scalar(c)
			if missing {
				continue
			}
			t, ok = jp.times.parse(b)
			haveTime = true
		case colPort:
			b, missing := d.scalar(c)
			if missing {
				continue
			}
			port, ok = b, utf8.Valid(b)
			havePort = true
		case colProfile:
			b, err := d.profile(c)
			rec.profile, ok = b, err == nil
		case colQuantity:
			v, err := d.quantity(c, col)
			rec.set(col.q, v)
			ok = err == nil
		}
	}
	if !ok {
		jp.canonicalSorted(lineNo)
		return
	}
	for _, u := range jp.unknown {
		jp.noteUnknown(u)
	}
	jp.finishCanonical(lineNo, haveTime, havePort, port, t, &rec)
}

func (jp *jsonParser) noteUnknown(name string) {
	if !jp.seenU[name] {
		jp.seenU[name] = true
		jp.job.unknown = append(jp.job.unknown, name)
	}
}

func (jp *jsonParser) finishCanonical(lineNo int, haveTime, havePort bool, port []byte, t int64, rec *record) {
	switch {
	case !haveTime:
		jp.reject(&ParseError{File: jp.file, Line: lineNo, Field: "time", Err: ErrMissingValue})
	case !havePort:
		jp.reject(&ParseError{File: jp.file, Line: lineNo, Field: "port", Err: ErrMissingValue})
	case rec.mask == 0:
		jp.reject(&ParseError{File: jp.file, Line: lineNo, Err: fmt.Errorf("%w: the record has no measured quantity", ErrMissingColumn)})
	default:
		if _, known := jp.portIdx[bytesString(port)]; !known {
			if err := CheckPortName(bytesString(port)); err != nil {
				jp.reject(&ParseError{File: jp.file, Line: lineNo, Field: "port", Err: err})
				return
			}
		}
		jp.use(bytesString(port), false, t, rec, lineNo)
	}
}

// canonicalSorted is canonical in sorted member order, for a record with a duplicate or bad
// field: it finds the reason the record is rejected for.
func (jp *jsonParser) canonicalSorted(lineNo int) {
	d := &jp.doc
	file := jp.file
	jp.members = jp.members[:0]
	for c := 1; c < int(d.nodes[0].end); c = int(d.nodes[c].end) {
		jp.members = append(jp.members, canonMember{string(d.key(&d.nodes[c])), c})
	}
	// Stable sort then keep the last of equal names: what decoding into a map keeps.
	slices.SortStableFunc(jp.members, func(a, b canonMember) int { return strings.Compare(a.key, b.key) })
	ms := jp.members[:0]
	for i, m := range jp.members {
		if i+1 < len(jp.members) && jp.members[i+1].key == m.key {
			continue
		}
		ms = append(ms, m)
	}
	var rec record
	var t int64
	var port []byte
	haveTime, havePort := false, false
	seen := map[column]string{}
	for _, m := range ms {
		k := m.key
		c := lookupColumn(k)
		if c.kind == colUnknown {
			jp.noteUnknown(k)
			continue
		}
		key := column{kind: c.kind, q: c.q}
		if prev, dup := seen[key]; dup {
			jp.reject(&ParseError{File: file, Line: lineNo, Field: k,
				Err: fmt.Errorf("%w: fields %q and %q are the same quantity", ErrDuplicateColumn, prev, k)})
			return
		}
		seen[key] = k
		switch c.kind {
		case colTime:
			b, missing := d.scalar(m.node)
			if missing {
				continue
			}
			ms, ok := jp.times.parse(b)
			if !ok {
				jp.reject(&ParseError{File: file, Line: lineNo, Field: k, Err: jp.times.badTime(b)})
				return
			}
			t, haveTime = ms, true
		case colPort:
			b, missing := d.scalar(m.node)
			if missing {
				continue
			}
			if !utf8.Valid(b) {
				jp.reject(&ParseError{File: file, Line: lineNo, Field: k, Err: fmt.Errorf("%w: port name %s", ErrEncoding, quoteShort(b))})
				return
			}
			port, havePort = b, true
		case colProfile:
			b, err := d.profile(m.node)
			if err != nil {
				jp.reject(&ParseError{File: file, Line: lineNo, Field: k, Err: err})
				return
			}
			rec.profile = b
		case colQuantity:
			v, err := d.quantity(m.node, c)
			if err != nil {
				jp.reject(&ParseError{File: file, Line: lineNo, Field: k, Err: err})
				return
			}
			rec.set(c.q, v)
		}
	}
	jp.finishCanonical(lineNo, haveTime, havePort, port, t, &rec)
}

// profile reads JSON value node v as a profile name: a string (or a number's literal); nil
// when missing.
func (d *jdoc) profile(v int) ([]byte, error) {
	if k := d.nodes[v].kind; k == jObject || k == jArray {
		return nil, fmt.Errorf("%w: a profile name is a string, not an object or array", ErrJSON)
	}
	b, missing := d.scalar(v)
	if missing {
		return nil, nil
	}
	return b, checkProfileName(b)
}

// quantity converts JSON value node v of column c to the stored unit and checks it; NaN means
// missing.
func (d *jdoc) quantity(v int, c column) (float64, error) {
	b, missing := d.scalar(v)
	return quantityOf(b, missing, c)
}

// quantityOf is quantity of a value's text b (missing: a missing-value spelling).
func quantityOf(b []byte, missing bool, c column) (float64, error) {
	if missing {
		return math.NaN(), nil
	}
	x, ok := parseFloat(b)
	if !ok {
		return 0, fmt.Errorf("%w: %s", ErrNotNumber, quoteShort(b))
	}
	out, ok := c.convert(x)
	if !ok {
		return 0, c.convFailure(x)
	}
	if err := checkRange(c.q, out); err != nil {
		return 0, err
	}
	return out, nil
}

// groupSparse is group for blocks whose rows carry different quantities (JSON): vals holds
// NumQuantities values per row, rowMask says which are present, and each port's group gets a
// column for every quantity one of its rows has (NaN in the rows without it).
func (job *csvJob) groupSparse() {
	np := len(job.names)
	job.groupEnd = slices.Grow(job.groupEnd[:0], np)[:np]
	job.gMask = slices.Grow(job.gMask[:0], np)[:np]
	job.gOff = slices.Grow(job.gOff[:0], np)[:np]
	job.spread = slices.Grow(job.spread[:0], np)[:np]
	counts := make([]int32, np)
	first := make([]int32, np)
	clear(job.gMask)
	for r, pi := range job.rowPort {
		if counts[pi] == 0 {
			first[pi] = int32(r)
		}
		counts[pi]++
		job.spread[pi] = int32(r) - first[pi]
		job.gMask[pi] |= job.rowMask[r]
	}
	total, rows := 0, int32(0)
	starts := make([]int32, np)
	for g := range counts {
		starts[g] = rows
		rows += counts[g]
		job.groupEnd[g] = rows
		job.gOff[g] = int32(total)
		total += int(counts[g]) * bits.OnesCount32(job.gMask[g])
	}
	job.gTimes = slices.Grow(job.gTimes[:0], len(job.times))[:len(job.times)]
	job.gVals = slices.Grow(job.gVals[:0], total)[:total]
	cur := make([]int32, np)
	k := int(NumQuantities)
	for r, pi := range job.rowPort {
		at := cur[pi]
		cur[pi]++
		job.gTimes[starts[pi]+at] = job.times[r]
		row := job.vals[r*k : (r+1)*k]
		base, cnt := int(job.gOff[pi]), int(counts[pi])
		j := 0
		for m := job.gMask[pi]; m != 0; m &= m - 1 {
			q := bits.TrailingZeros32(m)
			job.gVals[base+j*cnt+int(at)] = row[q]
			j++
		}
	}
	job.packGroups(func(g int) int { return bits.OnesCount32(job.gMask[g]) })
}

// applySparse appends the rows of a block grouped by groupSparse.
func applySparse(fb *fileBuilder, job *csvJob) {
	start := int32(0)
	var qbuf [NumQuantities]Quantity
	for g, name := range job.names {
		end := job.groupEnd[g]
		qs := qbuf[:0]
		for m := job.gMask[g]; m != 0; m &= m - 1 {
			qs = append(qs, Quantity(bits.TrailingZeros32(m)))
		}
		n, off := int(end-start), int(job.gOff[g])
		p := fb.port([]byte(name))
		if job.hint != nil && p.times.n == 0 && p.mask == 0 {
			job.hint.apply(p, g, qs)
		}
		a, b := off, off+n*len(qs)
		p.addBlock(job.gTimes[start:end], qs, job.gVals[a:b], job.gCodes[a:b], job.gWide[g], job.gMask[g])
		start = end
	}
}
