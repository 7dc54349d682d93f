package parse

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"math"
	"slices"
	"strings"
)

// maxLineBytes bounds a CSV line (the header and every row): a real telemetry row is well
// under 1 KiB, and a longer line means the input is not CSV; the bound keeps such an input
// from filling memory while its line end is looked for.
const maxLineBytes = 1 << 20

// lineTooLong is the read error of line number line, longer than maxLineBytes.
func lineTooLong(line int) error {
	return fmt.Errorf("%w: line %d is longer than %d MiB, which no telemetry row is", ErrTooLarge, line, maxLineBytes>>20)
}

// truncated is the error of an input whose stream broke off with readErr: a reading limit
// (ErrTooLarge) as it is, anything else as ErrTruncated.
func truncated(readErr error) error {
	if errors.Is(readErr, ErrTooLarge) {
		return readErr
	}
	return fmt.Errorf("%w: %v", ErrTruncated, readErr)
}

// csvLayout is what the header row says about every following row.
type csvLayout struct {
	delim        byte
	decimalComma bool
	cols         []column
	names        []string // header cells as written
	timeCol      int
	portCol      int
	profileCol   int        // field of the module profile, -1 when none
	qFields      []int      // field index of each quantity column
	qs           []Quantity // quantity of each quantity column
	qmask        uint32
	times        *timeReader // how the time column is read (nil: built-in formats, UTC)
	bins         *binLayout  // bin companions (min/max columns, bin length); nil when none
	// fast: rows may take csvParser.fastRow (no profile or bin columns), which reads the
	// columns as plan says; mark: the decimal mark besides '.' ('.' itself when none other)
	fast bool
	plan []fastCol
	mark byte
}

// fastCol is what csvParser.fastRow needs of a column: its kind (colTime, colPort, colQuantity
// for a value column, colUnknown for one the row's values do not come from) and, for a value,
// the unit conversion and the bounds within which checkRange surely accepts it.
type fastCol struct {
	lo, hi float64
	kind   colKind
	conv   unitConv
	q      Quantity
}

// sniffDelimiter picks the most frequent of tab, semicolon and comma outside quotes; ties go to
// tab, then semicolon.
func sniffDelimiter(line []byte) byte {
	var tabs, semis, commas int
	inQuote := false
	for _, c := range line {
		switch c {
		case '"':
			inQuote = !inQuote
		case '\t':
			if !inQuote {
				tabs++
			}
		case ';':
			if !inQuote {
				semis++
			}
		case ',':
			if !inQuote {
				commas++
			}
		}
	}
	switch {
	case tabs >= semis && tabs >= commas && tabs > 0:
		return '\t'
	case semis >= commas && semis > 0:
		return ';'
	}
	return ','
}

// parseHeader reads the header row. notes lists unknown columns.
func parseHeader(file string, lineNo int, line []byte) (*csvLayout, []string, error) {
	lay := &csvLayout{delim: sniffDelimiter(line), timeCol: -1, portCol: -1, profileCol: -1}
	lay.decimalComma = lay.delim == ';'
	fields, _, err := splitFields(line, lay.delim, nil, nil)
	if err != nil {
		return nil, nil, &ParseError{File: file, Line: lineNo, Err: err}
	}
	var notes []string
	unknown := 0
	type cellKey struct {
		kind colKind
		q    Quantity
		st   binStat
	}
	seen := map[cellKey]int{}
	bl := &binLayout{lengthCol: -1}
	for i, f := range fields {
		name := string(f)
		lay.names = append(lay.names, name)
		c, st, unitS := lookupHeaderCell(name)
		lay.cols = append(lay.cols, c)
		if c.kind == colUnknown {
			if unknown++; unknown <= MaxNotesListed {
				notes = append(notes, fmt.Sprintf("unknown column %d %s ignored", i+1, quoteShort(f)))
			}
			continue
		}
		key := cellKey{c.kind, c.q, st}
		if j, dup := seen[key]; dup {
			return nil, nil, &ParseError{File: file, Line: lineNo, Column: i + 1, Field: name,
				Err: fmt.Errorf("%w: columns %d %q and %d %q are the same quantity", ErrDuplicateColumn, j+1, lay.names[j], i+1, name)}
		}
		seen[key] = i
		switch c.kind {
		case colTime:
			lay.timeCol = i
		case colPort:
			lay.portCol = i
		case colBinLength:
			bl.lengthCol, bl.lengthUnitS = i, unitS
		case colProfile:
			lay.profileCol = i
		case colQuantity:
			switch st {
			case statLow:
				bl.lowFields, bl.lowQs = append(bl.lowFields, i), append(bl.lowQs, c.q)
			case statHigh:
				bl.highFields, bl.highQs = append(bl.highFields, i), append(bl.highQs, c.q)
			default:
				lay.qFields = append(lay.qFields, i)
				lay.qs = append(lay.qs, c.q)
				lay.qmask |= 1 << c.q
			}
		}
	}
	if more := unknown - MaxNotesListed; more > 0 {
		notes = append(notes, fmt.Sprintf("%d more unknown columns ignored (the first %d are named)", more, MaxNotesListed))
	}
	if bl.any() {
		notes = append(notes, bl.valueFallbacks(lay)...)
		lay.bins = bl
	}
	var missing []string
	if lay.timeCol < 0 {
		missing = append(missing, "time")
	}
	if lay.portCol < 0 {
		missing = append(missing, "port")
	}
	if len(lay.qs) == 0 {
		missing = append(missing, "measured-quantity")
	}
	if len(missing) > 0 {
		return nil, nil, &ParseError{File: file, Line: lineNo, Err: fmt.Errorf("%w: header has no %s column (docs/formats.md lists the column names)", ErrMissingColumn, strings.Join(missing, ", no "))}
	}
	// fastRow appends a row's values in column order, which must be the order of lay.qs.
	lay.fast = lay.bins == nil && lay.profileCol < 0 && slices.IsSorted(lay.qFields)
	lay.plan = make([]fastCol, len(lay.cols)) // colUnknown: a column fastRow skips
	lay.plan[lay.timeCol].kind, lay.plan[lay.portCol].kind = colTime, colPort
	for j, fi := range lay.qFields {
		c := lay.cols[fi]
		lay.plan[fi] = fastCol{lo: plainLo[c.q], hi: plainHi[c.q], kind: colQuantity, conv: c.conv, q: lay.qs[j]}
	}
	lay.mark = '.'
	if lay.decimalComma {
		lay.mark = ','
	}
	return lay, notes, nil
}

// splitFields cuts line at delim. Fields are trimmed of spaces (and tabs unless tab is the
// delimiter). A field may be quoted with "; inside quotes the delimiter is literal and "" is a
// quote. Unescaped fields are slices of line; fields with "" are copied into scratch.
func splitFields(line []byte, delim byte, fields [][]byte, scratch []byte) ([][]byte, []byte, error) {
	fields = fields[:0]
	scratch = scratch[:0]
	isSpace := func(c byte) bool { return c == ' ' || (c == '\t' && delim != '\t') }
	if bytes.IndexByte(line, '"') < 0 {
		// No quotes (nearly every telemetry line): cut at each delimiter in one pass and trim,
		// which is what the general loop below does for unquoted fields.
		start := 0
		for i := 0; i <= len(line); i++ {
			if i < len(line) && line[i] != delim {
				continue
			}
			f := line[start:i]
			for len(f) > 0 && isSpace(f[0]) {
				f = f[1:]
			}
			for len(f) > 0 && isSpace(f[len(f)-1]) {
				f = f[:len(f)-1]
			}
			fields = append(fields, f)
			start = i + 1
		}
		return fields, scratch, nil
	}
	i, n := 0, len(line)
	for {
		for i < n && isSpace(line[i]) {
			i++
		}
		if i < n && line[i] == '"' {
			i++
			start := i
			escaped := false
			for {
				j := bytes.IndexByte(line[i:], '"')
				if j < 0 {
					return fields, scratch, ErrQuote
				}
				i += j
				if i+1 < n && line[i+1] == '"' {
					escaped = true
					i += 2
					continue
				}
				break
			}
			f := line[start:i]
			i++ // closing quote
			if escaped {
				s0 := len(scratch)
				for k := 0; k < len(f); k++ {
					scratch = append(scratch, f[k])
					if f[k] == '"' {
						k++
					}
				}
				f = scratch[s0:]
			}
			for i < n && isSpace(line[i]) {
				i++
			}
			fields = append(fields, f)
			if i == n {
				return fields, scratch, nil
			}
			if line[i] != delim {
				return fields, scratch, fmt.Errorf("%w: text after closing quote", ErrQuote)
			}
			i++
			continue
		}
		j := bytes.IndexByte(line[i:], delim)
		end := n
		if j >= 0 {
			end = i + j
		}
		f := line[i:end]
		for len(f) > 0 && isSpace(f[len(f)-1]) {
			f = f[:len(f)-1]
		}
		fields = append(fields, f)
		if j < 0 {
			return fields, scratch, nil
		}
		i = end + 1
	}
}

// csvParser parses jobs; one per worker goroutine, so its scratch space is private.
type csvParser struct {
	file    string
	lay     *csvLayout
	strict  bool // stop the block at its first rejected row
	fields  [][]byte
	scratch []byte
	num     []byte
	// the last time field parsed and its value: rows of one sample time usually follow each other
	lastTime   []byte
	lastTimeMs int64
	portIdx    map[string]int32 // port name → index into the current job's names
	hints      []int8           // per column: the exponent packValue tries first (see pack)
}

func (cp *csvParser) parse(job *csvJob) {
	cp.startBlock()
	defer job.group(len(cp.lay.qs))
	job.binLow, job.binHigh, job.binLen = job.binLow[:0], job.binHigh[:0], job.binLen[:0]
	data := job.data
	line := job.firstLine
	for len(data) > 0 {
		nl := bytes.IndexByte(data, '\n')
		var ln []byte
		last := false
		if nl < 0 {
			ln, data, last = data, nil, true
		} else {
			ln, data = data[:nl], data[nl+1:]
		}
		lineNo := line
		line++
		if len(ln) > 0 && ln[len(ln)-1] == '\r' {
			ln = ln[:len(ln)-1]
		}
		if isBlank(ln) {
			continue
		}
		job.rowsRead++
		if last && job.cutTail {
			job.reject(&ParseError{File: cp.file, Line: lineNo, Err: fmt.Errorf("%w: last line cut short", ErrTruncated)})
			return
		}
		base, wbase := len(job.codes), len(job.wideAt)
		if pe := cp.row(job, ln, lineNo); pe != nil {
			job.codes, job.wideAt, job.wideVals = job.codes[:base], job.wideAt[:wbase], job.wideVals[:wbase]
			job.reject(pe)
			if cp.strict {
				return // the rows before it are kept and counted; none after it is read
			}
		}
	}
}

// startBlock forgets the port indexes of the previous block.
func (cp *csvParser) startBlock() {
	if cp.portIdx == nil {
		cp.portIdx = map[string]int32{}
	}
	clear(cp.portIdx)
}

func (job *csvJob) reject(pe *ParseError) {
	job.nReject++
	if len(job.rejects) < MaxRejectionsKept {
		job.rejects = append(job.rejects, pe)
	}
}

func isBlank(b []byte) bool {
	for _, c := range b {
		if c != ' ' && c != '\t' {
			return false
		}
	}
	return true
}

// row parses one record into job, or says why it is rejected.
func (cp *csvParser) row(job *csvJob, ln []byte, lineNo int) *ParseError {
	if cp.lay.fast && cp.fastRow(job, ln) {
		return nil
	}
	return cp.splitRow(job, ln, lineNo)
}

// splitRow is row for any line: it splits the line into fields, then reads them.
func (cp *csvParser) splitRow(job *csvJob, ln []byte, lineNo int) *ParseError {
	lay := cp.lay
	var err error
	cp.fields, cp.scratch, err = splitFields(ln, lay.delim, cp.fields, cp.scratch)
	if err != nil {
		return &ParseError{File: cp.file, Line: lineNo, Err: err}
	}
	fields := cp.fields
	if len(fields) != len(lay.cols) {
		return &ParseError{File: cp.file, Line: lineNo, Column: min(len(fields), len(lay.cols)) + 1,
			Err: fmt.Errorf("%w: row has %d fields, header has %d", ErrFieldCount, len(fields), len(lay.cols))}
	}
	tf := fields[lay.timeCol]
	if isMissing(tf) {
		return cp.fieldErr(lineNo, lay.timeCol, ErrMissingValue)
	}
	var t int64
	if len(cp.lastTime) > 0 && bytes.Equal(tf, cp.lastTime) {
		t = cp.lastTimeMs
	} else {
		var ok bool
		if t, ok = lay.times.parse(tf); !ok {
			return cp.fieldErr(lineNo, lay.timeCol, lay.times.badTime(tf))
		}
		cp.lastTime = append(cp.lastTime[:0], tf...)
		cp.lastTimeMs = t
	}
	pf := fields[lay.portCol]
	if isMissing(pf) {
		return cp.fieldErr(lineNo, lay.portCol, ErrMissingValue)
	}
	pi, known := cp.portIdx[bytesString(pf)]
	if !known { // a name seen before in this block was valid then
		if err := CheckPortName(bytesString(pf)); err != nil {
			return cp.fieldErr(lineNo, lay.portCol, err)
		}
	}
	var prof []byte
	if fi := lay.profileCol; fi >= 0 && !isMissing(fields[fi]) {
		if err := checkProfileName(fields[fi]); err != nil {
			return cp.fieldErr(lineNo, fi, err)
		}
		prof = fields[fi]
	}
	for j, fi := range lay.qFields {
		v, pe := cp.value(fields[fi], lineNo, fi, lay.qs[j])
		if pe != nil {
			return pe
		}
		job.codes, job.wideAt, job.wideVals = cp.pack(job.codes, job.wideAt, job.wideVals, v, fi)
	}
	if lay.bins != nil {
		if pe := cp.binCompanions(job, fields, lineNo); pe != nil {
			return pe
		}
	}
	if !known {
		pi = int32(len(job.names))
		name := string(pf)
		job.names = append(job.names, name)
		cp.portIdx[name] = pi
	}
	if prof != nil {
		job.markProfile(pi, prof, lineNo)
	}
	job.rowPort = append(job.rowPort, pi)
	job.times = append(job.times, t)
	return nil
}

// fastRow reads a row of the common shape in one pass over ln, finding the separators while it
// reads the numbers: every field as cut finds it (no blank padding, no escaped quote), and
// nothing to reject. It stores
// the row and returns true, or stores nothing and returns false; row then reads the line and,
// when it is to be rejected, says why. What it accepts it reads as splitRow does: the same time
// reader and caches, value for any number outside scanFloat's fast path (missing, decimal comma,
// long), the same unit conversion and range checks.
func (cp *csvParser) fastRow(job *csvJob, ln []byte) bool {
	lay := cp.lay
	delim := lay.delim
	n := len(ln)
	// The job's values keep their length until the row is taken.
	codes, wideAt, wideVals := job.codes, job.wideAt, job.wideVals
	last := len(lay.plan) - 1
	var t int64
	var pf []byte
	i := 0
	for c := range lay.plan {
		fc := &lay.plan[c]
		var e int // end of the field: a delimiter, or n
		switch fc.kind {
		case colQuantity:
			d, end, ok := scanDecimal(ln, i, lay.mark)
			e = end
			var v float64
			if ok && (e == n || ln[e] == delim) {
				v = d.value()
				if fc.conv == convNone {
					if !(v >= fc.lo && v <= fc.hi) && checkRange(fc.q, v) != nil {
						return false
					}
					if code, ok := d.code(); ok { // the code straight from the digits
						codes = append(codes, code)
						break
					}
				} else {
					if v, ok = lay.cols[c].convert(v); !ok {
						return false
					}
					if !(v >= fc.lo && v <= fc.hi) && checkRange(fc.q, v) != nil {
						return false
					}
				}
			} else {
				f, fe, ok := cp.cut(ln, i)
				if !ok {
					return false
				}
				e = fe
				var pe *ParseError
				if v, pe = cp.value(f, 0, c, fc.q); pe != nil {
					return false
				}
			}
			codes, wideAt, wideVals = cp.pack(codes, wideAt, wideVals, v, c)
		case colTime:
			if lt := cp.lastTime; len(lt) > 0 && n-i >= len(lt) && bytesString(ln[i:i+len(lt)]) == bytesString(lt) &&
				(i+len(lt) == n || ln[i+len(lt)] == delim) && cp.plain(lt) {
				t, e = cp.lastTimeMs, i+len(lt)
				break
			}
			tf, fe, ok := cp.cut(ln, i)
			if !ok || isMissing(tf) {
				return false
			}
			e = fe
			if len(cp.lastTime) > 0 && bytesString(tf) == bytesString(cp.lastTime) { // a quoted time
				t = cp.lastTimeMs
				break
			}
			if t, ok = lay.times.parse(tf); !ok {
				return false
			}
			cp.lastTime = append(cp.lastTime[:0], tf...)
			cp.lastTimeMs = t
		case colPort:
			var ok bool
			if pf, e, ok = cp.cut(ln, i); !ok || isMissing(pf) {
				return false
			}
		default: // a column no value comes from: only its end matters
			if i < n && ln[i] == '"' {
				var ok bool
				if _, e, ok = cp.cut(ln, i); !ok {
					return false
				}
			} else if e = fieldEnd(ln, i, delim); e > i && cp.isSpace(ln[i]) {
				return false
			}
		}
		if c < last {
			if e == n { // fewer fields than the header
				return false
			}
			i = e + 1
		} else if e != n { // more fields than the header
			return false
		}
	}
	pi, known := cp.portIdx[bytesString(pf)]
	if !known {
		if CheckPortName(bytesString(pf)) != nil {
			return false
		}
		pi = int32(len(job.names))
		name := string(pf)
		job.names = append(job.names, name)
		cp.portIdx[name] = pi
	}
	job.codes, job.wideAt, job.wideVals = codes, wideAt, wideVals
	job.rowPort = append(job.rowPort, pi)
	job.times = append(job.times, t)
	return true
}

// pack appends value v of column c to a job's codes (see csvJob.codes): its code (packValue),
// or wideMark with v kept in wideVals.
func (cp *csvParser) pack(codes []uint32, wideAt []int32, wideVals []float64, v float64, c int) ([]uint32, []int32, []float64) {
	if c >= len(cp.hints) { // a new parser, or one reused for another layout
		cp.hints = make([]int8, len(cp.lay.cols))
	}
	if code, ok := packValue(v, &cp.hints[c]); ok {
		return append(codes, code), wideAt, wideVals
	}
	return append(codes, wideMark), append(wideAt, int32(len(codes))), append(wideVals, v)
}

// cut returns the field at ln[i:] as splitFields reads it, its text f, and the index e of the
// delimiter after it (or len(ln)), when reading it needs no trimming and no unescaping: an
// unquoted field that neither starts with a quote nor starts or ends with a blank, or a quoted
// one that holds no quote and has the delimiter (or the end) right after its closing quote. ok
// is false for any other field; the split path reads it.
func (cp *csvParser) cut(ln []byte, i int) (f []byte, e int, ok bool) {
	if i < len(ln) && ln[i] == '"' {
		j := bytes.IndexByte(ln[i+1:], '"')
		if j < 0 {
			return nil, 0, false
		}
		e = i + 2 + j
		if e < len(ln) && ln[e] != cp.lay.delim {
			return nil, 0, false
		}
		return ln[i+1 : e-1], e, true
	}
	e = fieldEnd(ln, i, cp.lay.delim)
	return ln[i:e], e, cp.plain(ln[i:e])
}

// fieldEnd is the index of the first delim in ln from i on, or len(ln).
func fieldEnd(ln []byte, i int, delim byte) int {
	if j := bytes.IndexByte(ln[i:], delim); j >= 0 {
		return i + j
	}
	return len(ln)
}

// isSpace says whether splitFields trims c from a field.
func (cp *csvParser) isSpace(c byte) bool { return c == ' ' || c == '\t' && cp.lay.delim != '\t' }

// plain says whether f, an unquoted field as it stands between delimiters, is read as it is by
// splitFields: it neither starts with a quote nor starts or ends with a blank.
func (cp *csvParser) plain(f []byte) bool {
	return len(f) == 0 || f[0] != '"' && !cp.isSpace(f[0]) && !cp.isSpace(f[len(f)-1])
}

// thousandsLike reports whether the number f, with its first comma at c, could be read with
// that comma as a thousands separator: one comma, no point, one to three digits before it (not
// a lone 0) and exactly three after, e.g. "1,702" (1.702 or 1702?). "0,001", "-8,15" and
// "1702,5" are decimal commas.
func thousandsLike(f []byte, c int) bool {
	intPart, frac := f[:c], f[c+1:]
	if len(intPart) > 0 && (intPart[0] == '-' || intPart[0] == '+') {
		intPart = intPart[1:]
	}
	if len(frac) != 3 || len(intPart) < 1 || len(intPart) > 3 || intPart[0] == '0' {
		return false
	}
	return bytes.IndexByte(frac, ',') < 0 && bytes.IndexByte(f, '.') < 0
}

// value reads field (trimmed) of column fi, a quantity q column, in the stored unit: NaN when missing, else a
// number converted and range-checked, or the reason the row is rejected.
func (cp *csvParser) value(field []byte, lineNo, fi int, q Quantity) (float64, *ParseError) {
	lay := cp.lay
	f := field
	if isMissing(f) {
		return math.NaN(), nil
	}
	if c := bytes.IndexByte(f, ','); c >= 0 && (lay.decimalComma || lay.delim == ',') {
		// With ";" the comma is the decimal mark; in comma CSV only a quoted field holds
		// one, and it is a decimal mark unless it could be a thousands separator.
		if lay.delim == ',' && thousandsLike(f, c) {
			return 0, cp.fieldErr(lineNo, fi, fmt.Errorf("%w: %s is ambiguous: a decimal comma or a thousands separator (write it without the comma, or with a decimal point)", ErrNotNumber, quoteShort(f)))
		}
		cp.num = append(cp.num[:0], f...)
		cp.num[c] = '.'
		f = cp.num
	}
	v, ok := parseFloat(f)
	if !ok {
		return 0, cp.fieldErr(lineNo, fi, fmt.Errorf("%w: %s", ErrNotNumber, quoteShort(field)))
	}
	col := lay.cols[fi]
	v, ok = col.convert(v)
	if !ok {
		return 0, cp.fieldErr(lineNo, fi, col.convFailure(v))
	}
	if !(v >= plainLo[q] && v <= plainHi[q]) { // else surely in range
		if err := checkRange(q, v); err != nil {
			return 0, cp.fieldErr(lineNo, fi, err)
		}
	}
	return v, nil
}

// binCompanions reads a row's bin minimum, maximum and length columns into job; on a bad
// field nothing of the row is kept there and the row is rejected.
func (cp *csvParser) binCompanions(job *csvJob, fields [][]byte, lineNo int) *ParseError {
	b := cp.lay.bins
	nLow, nHigh := len(job.binLow), len(job.binHigh)
	for j, fi := range b.lowFields {
		v, pe := cp.value(fields[fi], lineNo, fi, b.lowQs[j])
		if pe != nil {
			job.binLow = job.binLow[:nLow]
			return pe
		}
		job.binLow = append(job.binLow, v)
	}
	for j, fi := range b.highFields {
		v, pe := cp.value(fields[fi], lineNo, fi, b.highQs[j])
		if pe != nil {
			job.binLow, job.binHigh = job.binLow[:nLow], job.binHigh[:nHigh]
			return pe
		}
		job.binHigh = append(job.binHigh, v)
	}
	length := int64(0)
	if fi := b.lengthCol; fi >= 0 && !isMissing(fields[fi]) {
		var ok bool
		if length, ok = parseBinLength(fields[fi], b.lengthUnitS); !ok {
			job.binLow, job.binHigh = job.binLow[:nLow], job.binHigh[:nHigh]
			return cp.fieldErr(lineNo, fi, fmt.Errorf("%w: bin length %s (want e.g. 15min, 24h, 900 or 00:15:00, at most 7 days)", ErrNotNumber, quoteShort(fields[fi])))
		}
	}
	job.binLen = append(job.binLen, length)
	return nil
}

func (cp *csvParser) fieldErr(lineNo, fi int, err error) *ParseError {
	return &ParseError{File: cp.file, Line: lineNo, Column: fi + 1, Field: cp.lay.names[fi], Err: err}
}

// quoteShort quotes b for a message, cut to 40 bytes.
func quoteShort(b []byte) string {
	if len(b) > 40 {
		return fmt.Sprintf("%q…", b[:40])
	}
	return fmt.Sprintf("%q", b)
}

// maxPreambleLines bounds the non-blank lines looked at for the header: exports from
// spreadsheets and management systems put a title, the device name or the export time above
// it, rarely more than a few lines.
const maxPreambleLines = 50

// readCSVHeader reads the stream up to and including its header row into *hb (a buffer from
// getBytes, which the caller puts back once done with the returned carry) and parses the
// header into res.lay, adding its notes. Lines above the header that name no column (a title,
// a preamble) are skipped and named in a note; they are not rows. The scan is linear and a
// header line is bounded by maxLineBytes. On failure it records the error in res — the first
// candidate line's, when no header is found — and returns false.
func readCSVHeader(res *fileResult, r io.Reader, hb *[]byte) (st csvStart, ok bool) {
	file := res.stats.File
	buf := *hb
	line := 1    // line number of buf[0]
	scanned := 0 // bytes at the start of buf known to hold no line end
	var readErr error
	eof := false
	var firstErr error
	var preamble []int // line numbers of the lines skipped above the header
	var title []byte   // the first of them, for the note
	for {
		nl := bytes.IndexByte(buf[scanned:], '\n')
		if nl < 0 && !eof {
			if len(buf) > maxLineBytes {
				res.fail(&ParseError{File: file, Line: line, Err: fmt.Errorf("%w: no line end in the first %d MiB: not a CSV header", ErrTooLarge, maxLineBytes>>20)}, readErr)
				return st, false
			}
			scanned = len(buf)
			if len(buf) == cap(buf) {
				buf = slices.Grow(buf, cap(buf))
				*hb = buf
			}
			buf = readMore(r, buf, &eof, &readErr)
			continue
		}
		ln, rest := buf, len(buf)
		if nl >= 0 {
			ln, rest = buf[:scanned+nl], scanned+nl+1
		}
		scanned = 0
		lineNo := line
		trimmed := bytes.TrimRight(ln, "\r")
		buf = buf[rest:]
		line++
		if isBlank(trimmed) {
			if nl < 0 { // the end of the input, and no header
				if firstErr == nil {
					firstErr = &ParseError{File: file, Line: lineNo, Err: ErrNoHeader}
				}
				res.fail(firstErr, readErr)
				return st, false
			}
			continue
		}
		lay, notes, err := parseHeader(file, lineNo, trimmed)
		if err == nil {
			if len(preamble) > 0 {
				res.stats.Notes = append(res.stats.Notes, preambleNote(preamble, title, lineNo))
			}
			res.stats.Notes = append(res.stats.Notes, notes...)
			lay.times = res.times
			res.lay = lay
			if lay.bins != nil {
				res.bins = &binRows{lay: lay.bins}
			}
			return csvStart{carry: buf, line: line, eof: eof, readErr: readErr}, true
		}
		if firstErr == nil {
			firstErr = err
		}
		// A line that names no column at all may be a title above the header; a line with a
		// duplicate column, the last line, or too many lines without a header end the search.
		if !errors.Is(err, ErrMissingColumn) || nl < 0 || len(preamble) == maxPreambleLines {
			res.fail(firstErr, readErr)
			return st, false
		}
		if title == nil {
			title = append([]byte{}, trimmed...)
		}
		preamble = append(preamble, lineNo)
	}
}

// preambleNote names the lines skipped above the header at line header.
func preambleNote(lines []int, first []byte, header int) string {
	what := fmt.Sprintf("line %d", lines[0])
	if len(lines) > 1 {
		what = fmt.Sprintf("%d lines (%d–%d)", len(lines), lines[0], lines[len(lines)-1])
	}
	return fmt.Sprintf("%s above the header (line %d) skipped as a title or preamble, not rows; the first reads %s", what, header, quoteShort(first))
}

// csvStart is where a CSV stream stands once its header row is read.
type csvStart struct {
	carry   []byte // bytes after the header, not yet parsed
	line    int    // line number of the first byte of carry
	eof     bool
	readErr error
}
