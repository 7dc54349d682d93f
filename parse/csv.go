package parse

import (
	"bytes"
	"fmt"
	"io"
	"math"
	"strings"
	"sync"
	"sync/atomic"
	"unicode/utf8"
)

// chunkSize is the size of the blocks a CSV input is cut into (at line ends) for parallel parsing.
const chunkSize = 1 << 20

var chunkPool = sync.Pool{New: func() any { b := make([]byte, chunkSize); return &b }}

// jobPool recycles jobs with their row buffers, so a long input allocates them only once.
var jobPool = sync.Pool{New: func() any { return new(csvJob) }}

// newJob takes a recycled job and resets it.
func newJob(bp *[]byte, firstLine int) *csvJob {
	j := jobPool.Get().(*csvJob)
	*j = csvJob{buf: bp, firstLine: firstLine, done: make(chan struct{}),
		arena: j.arena[:0], portEnd: j.portEnd[:0], times: j.times[:0], vals: j.vals[:0]}
	return j
}

// csvLayout is what the header row says about every following row.
type csvLayout struct {
	delim        byte
	decimalComma bool
	cols         []column
	names        []string // header cells as written
	timeCol      int
	portCol      int
	qFields      []int      // field index of each quantity column
	qs           []Quantity // quantity of each quantity column
	qmask        uint32
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
	lay := &csvLayout{delim: sniffDelimiter(line), timeCol: -1, portCol: -1}
	lay.decimalComma = lay.delim == ';'
	fields, _, err := splitFields(line, lay.delim, nil, nil)
	if err != nil {
		return nil, nil, &ParseError{File: file, Line: lineNo, Err: err}
	}
	var notes []string
	seen := map[column]int{}
	for i, f := range fields {
		name := string(f)
		lay.names = append(lay.names, name)
		c := lookupColumn(name)
		lay.cols = append(lay.cols, c)
		if c.kind == colUnknown {
			notes = append(notes, fmt.Sprintf("unknown column %d %q ignored", i+1, name))
			continue
		}
		key := column{kind: c.kind, q: c.q}
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
		case colQuantity:
			lay.qFields = append(lay.qFields, i)
			lay.qs = append(lay.qs, c.q)
			lay.qmask |= 1 << c.q
		}
	}
	var missing []string
	if lay.timeCol < 0 {
		missing = append(missing, "time")
	}
	if lay.portCol < 0 {
		missing = append(missing, "port")
	}
	if len(lay.qs) == 0 {
		missing = append(missing, "any measured quantity")
	}
	if len(missing) > 0 {
		return nil, nil, &ParseError{File: file, Line: lineNo, Err: fmt.Errorf("%w: header has no %s column", ErrMissingColumn, strings.Join(missing, ", no "))}
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

// csvJob is one block of complete lines and, once parsed, its rows.
type csvJob struct {
	buf       *[]byte
	data      []byte
	firstLine int
	cutTail   bool // the last line has no line end because the stream broke off
	done      chan struct{}

	rowsRead int
	arena    []byte  // port names, back to back
	portEnd  []int32 // end of each accepted row's port name in arena
	times    []int64
	vals     []float64 // len(qs) values per accepted row
	rejects  []*ParseError
	nReject  int
}

// csvParser parses jobs; one per worker goroutine, so its scratch space is private.
type csvParser struct {
	file    string
	lay     *csvLayout
	fields  [][]byte
	scratch []byte
	num     []byte
	// the last time field parsed and its value: rows of one sample time usually follow each other
	lastTime   []byte
	lastTimeMs int64
}

func (cp *csvParser) parse(job *csvJob) {
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
			continue
		}
		base := len(job.vals)
		if pe := cp.row(job, ln, lineNo); pe != nil {
			job.vals = job.vals[:base]
			job.reject(pe)
		}
	}
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
		if t, ok = parseTime(tf); !ok {
			return cp.fieldErr(lineNo, lay.timeCol, fmt.Errorf("%w: %s", ErrBadTime, quoteShort(tf)))
		}
		cp.lastTime = append(cp.lastTime[:0], tf...)
		cp.lastTimeMs = t
	}
	pf := fields[lay.portCol]
	if isMissing(pf) {
		return cp.fieldErr(lineNo, lay.portCol, ErrMissingValue)
	}
	if !utf8.Valid(pf) {
		return cp.fieldErr(lineNo, lay.portCol, fmt.Errorf("%w: port name %s", ErrEncoding, quoteShort(pf)))
	}
	for j, fi := range lay.qFields {
		f := fields[fi]
		if isMissing(f) {
			job.vals = append(job.vals, math.NaN())
			continue
		}
		if lay.decimalComma {
			if c := bytes.IndexByte(f, ','); c >= 0 {
				cp.num = append(cp.num[:0], f...)
				cp.num[c] = '.'
				f = cp.num
			}
		}
		v, ok := parseFloat(f)
		if !ok {
			return cp.fieldErr(lineNo, fi, fmt.Errorf("%w: %s", ErrNotNumber, quoteShort(fields[fi])))
		}
		col := lay.cols[fi]
		v, ok = col.convert(v)
		if !ok {
			return cp.fieldErr(lineNo, fi, col.convFailure(v))
		}
		if err := checkRange(lay.qs[j], v); err != nil {
			return cp.fieldErr(lineNo, fi, err)
		}
		job.vals = append(job.vals, v)
	}
	job.arena = append(job.arena, pf...)
	job.portEnd = append(job.portEnd, int32(len(job.arena)))
	job.times = append(job.times, t)
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

// readCSV reads one CSV stream into res. r delivers the decompressed bytes without BOM.
func readCSV(res *fileResult, r io.Reader, opt Options) {
	file := res.stats.File
	// Read until the header line is complete.
	buf := make([]byte, 0, 64*1024)
	line := 1
	var readErr error
	eof := false
	var header []byte
	for header == nil {
		if nl := bytes.IndexByte(buf, '\n'); nl >= 0 || eof {
			var ln []byte
			if nl >= 0 {
				ln = buf[:nl]
			} else {
				ln = buf
			}
			rest := len(ln) + 1
			if nl < 0 {
				rest = len(ln)
			}
			trimmed := bytes.TrimRight(ln, "\r")
			if isBlank(trimmed) {
				if nl < 0 { // nothing but blank lines
					res.fail(&ParseError{File: file, Line: line, Err: ErrNoHeader}, readErr)
					return
				}
				buf = buf[rest:]
				line++
				continue
			}
			header = append([]byte(nil), trimmed...)
			buf = buf[rest:]
			line++
			break
		}
		if len(buf) == cap(buf) {
			nb := make([]byte, len(buf), 2*cap(buf))
			copy(nb, buf)
			buf = nb
		}
		n, err := r.Read(buf[len(buf):cap(buf)])
		buf = buf[:len(buf)+n]
		if err != nil {
			eof = true
			if err != io.EOF {
				readErr = err
			}
		}
	}
	lay, notes, err := parseHeader(file, line-1, header)
	if err != nil {
		res.fail(err, readErr)
		return
	}
	res.stats.Notes = append(res.stats.Notes, notes...)
	res.lay = lay
	carry := buf // bytes after the header, not yet parsed

	workers := opt.workers()
	var stop atomic.Bool
	order := make(chan *csvJob, 2*workers)
	jobs := make(chan *csvJob, workers)
	go func() { // producer: cut the stream into jobs of whole lines
		defer close(order)
		defer close(jobs)
		for !stop.Load() {
			bp := chunkPool.Get().(*[]byte)
			b := (*bp)[:0]
			if len(carry) > cap(b) {
				b = make([]byte, 0, 2*len(carry))
			}
			b = append(b, carry...)
			carry = nil
			for !eof {
				if len(b) == cap(b) {
					if bytes.IndexByte(b, '\n') >= 0 {
						break
					}
					nb := make([]byte, len(b), 2*cap(b)) // a line longer than the block
					copy(nb, b)
					b = nb
				}
				n, err := r.Read(b[len(b):cap(b)])
				b = b[:len(b)+n]
				if err != nil {
					eof = true
					if err != io.EOF {
						readErr = err
					}
				}
			}
			job := newJob(bp, line)
			if eof {
				job.data = b
				job.cutTail = readErr != nil && len(b) > 0 && b[len(b)-1] != '\n'
			} else {
				nl := bytes.LastIndexByte(b, '\n')
				job.data = b[:nl+1]
				carry = append([]byte(nil), b[nl+1:]...)
			}
			line += bytes.Count(job.data, []byte{'\n'})
			order <- job
			jobs <- job
			if eof {
				return
			}
		}
	}()
	var wg sync.WaitGroup
	for range workers {
		wg.Add(1)
		go func() {
			defer wg.Done()
			cp := &csvParser{file: file, lay: lay}
			for job := range jobs {
				if !stop.Load() {
					cp.parse(job)
				}
				chunkPool.Put(job.buf)
				job.buf, job.data = nil, nil
				close(job.done)
			}
		}()
	}
	for job := range order {
		<-job.done
		if stop.Load() {
			continue
		}
		res.mergeCSV(job, opt.Strict)
		if res.strictErr != nil {
			stop.Store(true)
		}
		job.rejects = nil
		jobPool.Put(job)
	}
	wg.Wait()
	if readErr != nil {
		res.fail(&ParseError{File: file, Line: line, Err: fmt.Errorf("%w: %v", ErrTruncated, readErr)}, nil)
	}
}

// mergeCSV adds a parsed job's rows and rejections to the file's builder, in input order.
func (res *fileResult) mergeCSV(job *csvJob, strict bool) {
	lay := res.lay
	k := len(lay.qs)
	res.stats.RowsRead += job.rowsRead
	if strict && len(job.rejects) > 0 {
		res.strictErr = job.rejects[0]
		// Rows after the first bad one are not taken; account for what was read up to it.
		res.stats.RowsRead -= job.rowsRead
		return
	}
	res.stats.RowsRejected += job.nReject
	res.stats.RowsUsed += len(job.times)
	for _, pe := range job.rejects {
		res.addRejection(pe.rejection())
	}
	start := int32(0)
	for i, t := range job.times {
		end := job.portEnd[i]
		p := res.fb.port(job.arena[start:end])
		start = end
		p.addDense(t, lay.qs, job.vals[i*k:(i+1)*k], lay.qmask)
	}
}
