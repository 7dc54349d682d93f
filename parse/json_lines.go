package parse

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"sort"
	"strings"
	"unicode/utf8"
)

// readJSON reads JSON Lines, a JSON document, a stream of documents or an array of documents.
// Each document is either a canonical record (same field names as the CSV) or an
// OpenConfig-shaped telemetry document; see docs/formats.md.
func readJSON(res *fileResult, r io.Reader, opt Options) {
	data, readErr := io.ReadAll(r)
	if errors.Is(readErr, ErrTooLarge) { // nothing is read of an input over the limit
		res.fail(&ParseError{File: res.stats.File, Err: readErr}, nil)
		return
	}
	jr := &jsonReader{res: res, opt: opt, unknown: map[string]bool{}}
	jr.stat, _ = opt.statistic()
	start := skipSpace(data, 0)
	switch {
	case start < len(data) && data[start] == '{' && json.Valid(bytes.TrimSpace(firstLine(data[start:]))):
		res.stats.Format = strings.Replace(res.stats.Format, "json", "jsonl", 1)
		jr.readLines(data)
	default:
		jr.readDocuments(data, start)
	}
	if len(jr.unknown) > 0 {
		names := make([]string, 0, len(jr.unknown))
		for n := range jr.unknown {
			names = append(names, n)
		}
		sort.Strings(names)
		for _, n := range names {
			res.stats.Notes = append(res.stats.Notes, fmt.Sprintf("unknown field %q ignored", n))
		}
	}
	res.stats.Notes = append(res.stats.Notes, jr.notes...)
	if readErr != nil {
		res.fail(&ParseError{File: res.stats.File, Line: jr.line, Err: truncated(readErr)}, nil)
	}
}

func firstLine(b []byte) []byte {
	if i := bytes.IndexByte(b, '\n'); i >= 0 {
		return b[:i]
	}
	return b
}

func skipSpace(b []byte, i int) int {
	for i < len(b) && (b[i] == ' ' || b[i] == '\t' || b[i] == '\r' || b[i] == '\n') {
		i++
	}
	return i
}

type jsonReader struct {
	res     *fileResult
	opt     Options
	stat    string
	unknown map[string]bool
	notes   []string
	line    int // last line reached, for messages
	stopped bool
}

// readLines treats every non-blank line as one document.
func (jr *jsonReader) readLines(data []byte) {
	lineNo := 0
	for len(data) > 0 && !jr.stopped {
		lineNo++
		ln := data
		if i := bytes.IndexByte(data, '\n'); i >= 0 {
			ln, data = data[:i], data[i+1:]
		} else {
			data = nil
		}
		jr.line = lineNo
		ln = bytes.TrimSpace(ln)
		if len(ln) == 0 {
			continue
		}
		if bytes.Equal(ln, []byte{0xef, 0xbb, 0xbf}) {
			continue
		}
		dec := json.NewDecoder(bytes.NewReader(ln))
		dec.UseNumber()
		var v any
		err := dec.Decode(&v)
		if err == nil && dec.More() {
			err = errors.New("more than one value on the line")
		}
		if err != nil {
			jr.res.stats.RowsRead++
			jr.reject(&ParseError{File: jr.res.stats.File, Line: lineNo, Err: fmt.Errorf("%w: %v", ErrJSON, err)})
			continue
		}
		jr.document(v, lineNo)
	}
}

// readDocuments reads a stream of JSON values (or one array of them); a syntax error stops the
// file because the decoder cannot find the next value after it.
func (jr *jsonReader) readDocuments(data []byte, start int) {
	lc := lineCounter{data: data, line: 1}
	dec := json.NewDecoder(bytes.NewReader(data))
	dec.UseNumber()
	inArray := false
	if start < len(data) && data[start] == '[' {
		if _, err := dec.Token(); err != nil {
			jr.fileErr(lc.at(start), err)
			return
		}
		inArray = true
	}
	for !jr.stopped {
		if inArray && !dec.More() {
			if _, err := dec.Token(); err != nil {
				jr.fileErr(lc.at(int(dec.InputOffset())), err)
			}
			break
		}
		off := int(dec.InputOffset())
		for off < len(data) && (data[off] == ',' || data[off] == ' ' || data[off] == '\t' || data[off] == '\r' || data[off] == '\n') {
			off++
		}
		if !inArray && off >= len(data) {
			break
		}
		lineNo := lc.at(off)
		jr.line = lineNo
		var v any
		if err := dec.Decode(&v); err != nil {
			jr.fileErr(lineNo, err)
			return
		}
		jr.document(v, lineNo)
	}
}

func (jr *jsonReader) fileErr(line int, err error) {
	jr.res.fail(&ParseError{File: jr.res.stats.File, Line: line, Err: fmt.Errorf("%w: %v", ErrJSON, err)}, nil)
	jr.stopped = true
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

func (jr *jsonReader) reject(pe *ParseError) {
	jr.res.stats.RowsRejected++
	jr.res.addRejection(pe.rejection())
	if jr.opt.Strict {
		jr.res.stopStrict(pe)
		jr.stopped = true
	}
}

func (jr *jsonReader) use(port string, t int64, rec *record) {
	jr.res.stats.RowsUsed++
	qs := make([]Quantity, 0, NumQuantities)
	vals := make([]float64, 0, NumQuantities)
	for q := Quantity(0); q < NumQuantities; q++ {
		if rec.mask&(1<<q) != 0 {
			qs = append(qs, q)
			vals = append(vals, rec.vals[q])
		}
	}
	jr.res.fb.port([]byte(port)).addDense(t, qs, vals, rec.mask)
}

// record is one port's values at one time; mask marks the quantities it carries a column for.
type record struct {
	vals [NumQuantities]float64
	mask uint32
}

func (rec *record) set(q Quantity, v float64) {
	rec.vals[q] = v
	rec.mask |= 1 << q
}

// document dispatches one decoded JSON value.
func (jr *jsonReader) document(v any, lineNo int) {
	obj, ok := v.(map[string]any)
	if !ok {
		jr.res.stats.RowsRead++
		jr.reject(&ParseError{File: jr.res.stats.File, Line: lineNo, Err: fmt.Errorf("%w: a record must be a JSON object", ErrJSON)})
		return
	}
	if member(obj, "terminal-device") != nil || member(obj, "components") != nil {
		if !strings.Contains(jr.res.stats.Format, "openconfig") {
			jr.res.stats.Format = strings.Replace(strings.Replace(jr.res.stats.Format, "jsonl", "json", 1), "json", "openconfig-json", 1)
		}
		jr.openConfig(obj, lineNo)
		return
	}
	jr.canonical(obj, lineNo)
}

// canonical reads a flat record with CSV field names.
func (jr *jsonReader) canonical(obj map[string]any, lineNo int) {
	jr.res.stats.RowsRead++
	file := jr.res.stats.File
	keys := make([]string, 0, len(obj))
	for k := range obj {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	var rec record
	var t int64
	var port string
	haveTime, havePort := false, false
	seen := map[column]string{}
	for _, k := range keys {
		c := lookupColumn(k)
		if c.kind == colUnknown {
			jr.unknown[k] = true
			continue
		}
		key := column{kind: c.kind, q: c.q}
		if prev, dup := seen[key]; dup {
			jr.reject(&ParseError{File: file, Line: lineNo, Field: k,
				Err: fmt.Errorf("%w: fields %q and %q are the same quantity", ErrDuplicateColumn, prev, k)})
			return
		}
		seen[key] = k
		val := obj[k]
		switch c.kind {
		case colTime:
			b, missing := scalarBytes(val)
			if missing {
				continue
			}
			ms, ok := jr.opt.times.parse(b)
			if !ok {
				jr.reject(&ParseError{File: file, Line: lineNo, Field: k, Err: jr.opt.times.badTime(b)})
				return
			}
			t, haveTime = ms, true
		case colPort:
			b, missing := scalarBytes(val)
			if missing {
				continue
			}
			if !utf8.Valid(b) {
				jr.reject(&ParseError{File: file, Line: lineNo, Field: k, Err: fmt.Errorf("%w: port name %s", ErrEncoding, quoteShort(b))})
				return
			}
			port, havePort = string(b), true
		case colQuantity:
			v, err := jsonValue(val, c)
			if err != nil {
				jr.reject(&ParseError{File: file, Line: lineNo, Field: k, Err: err})
				return
			}
			rec.set(c.q, v)
		}
	}
	if !haveTime {
		jr.reject(&ParseError{File: file, Line: lineNo, Field: "time", Err: ErrMissingValue})
		return
	}
	if !havePort {
		jr.reject(&ParseError{File: file, Line: lineNo, Field: "port", Err: ErrMissingValue})
		return
	}
	if rec.mask == 0 {
		jr.reject(&ParseError{File: file, Line: lineNo, Err: fmt.Errorf("%w: the record has no measured quantity", ErrMissingColumn)})
		return
	}
	jr.use(port, t, &rec)
}

// scalarBytes gives the text of a JSON string or number; missing is true for null and the
// missing-value spellings.
func scalarBytes(v any) (b []byte, missing bool) {
	switch x := v.(type) {
	case nil:
		return nil, true
	case json.Number:
		return []byte(x.String()), false
	case string:
		b := bytes.TrimSpace([]byte(x))
		return b, isMissing(b)
	case bool:
		return []byte(fmt.Sprint(x)), false
	}
	return []byte("(object or array)"), false
}

// jsonValue converts a JSON value of column c to the stored unit and checks it; NaN means missing.
func jsonValue(val any, c column) (float64, error) {
	b, missing := scalarBytes(val)
	if missing {
		return math.NaN(), nil
	}
	v, ok := parseFloat(b)
	if !ok {
		return 0, fmt.Errorf("%w: %s", ErrNotNumber, quoteShort(b))
	}
	out, ok := c.convert(v)
	if !ok {
		return 0, c.convFailure(v)
	}
	if err := checkRange(c.q, out); err != nil {
		return 0, err
	}
	return out, nil
}
