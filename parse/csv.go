package parse

import (
	"bytes"
	"fmt"
	"io"
	"math"
	"slices"
	"strings"
	"sync"
	"sync/atomic"
	"unicode/utf8"
)

// chunkSize is the size of the blocks a CSV input is cut into (at line ends) for parallel parsing.
const chunkSize = 1 << 20

// recycler hands back the blocks and jobs of one input once merged, so that a long input
// allocates them only for the few blocks in flight (a sync.Pool would drop them at every GC).
type recycler struct {
	bufs chan *[]byte
	jobs chan *csvJob
	size int // bytes of a new block buffer
}

// newRecycler keeps up to n blocks; size is the input's size when known (0: unknown), so that a
// small file gets a block its size rather than a whole chunkSize to allocate and clear.
func newRecycler(n int, size int64) *recycler {
	r := &recycler{bufs: make(chan *[]byte, n), jobs: make(chan *csvJob, n), size: chunkSize}
	if size > 0 && size < chunkSize {
		r.size = int(size) + 1 // + 1: room to see the end of the input without growing
	}
	return r
}

func (r *recycler) buf() *[]byte {
	select {
	case b := <-r.bufs:
		return b
	default:
		b := make([]byte, r.size)
		return &b
	}
}

func (r *recycler) putBuf(b *[]byte) {
	select {
	case r.bufs <- b:
	default:
	}
}

// job takes a recycled job, reset, or a new one.
func (r *recycler) job(bp *[]byte, firstLine int) *csvJob {
	var j *csvJob
	select {
	case j = <-r.jobs:
	default:
		j = new(csvJob)
	}
	*j = csvJob{buf: bp, firstLine: firstLine, done: make(chan struct{}),
		names: j.names[:0], rowPort: j.rowPort[:0], times: j.times[:0], vals: j.vals[:0],
		groupEnd: j.groupEnd[:0], spread: j.spread[:0], gTimes: j.gTimes[:0], gVals: j.gVals[:0]}
	return j
}

func (r *recycler) putJob(j *csvJob) {
	j.rejects = nil
	select {
	case r.jobs <- j:
	default:
	}
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

// csvJob is one block of complete lines and, once parsed, its rows.
type csvJob struct {
	buf       *[]byte
	data      []byte
	firstLine int
	cutTail   bool          // the last line has no line end because the stream broke off
	dataLen   int           // len(data), kept after data is released
	hint      *capacityHint // set on the first block with rows when the input size is known
	pending   atomic.Int32  // merge shards still to take this job
	done      chan struct{}

	rowsRead int
	names    []string  // the job's distinct port names, in order of first sight
	rowPort  []int32   // index into names of each accepted row
	times    []int64   // time of each accepted row
	vals     []float64 // len(qs) values per accepted row, row after row
	rejects  []*ParseError
	nReject  int

	// The accepted rows regrouped by port (see group), so that the merge appends whole runs.
	groupEnd []int32   // end (in rows) of each port's group
	spread   []int32   // rows between each port's first and last row in the block
	gTimes   []int64   // times, port group after port group, arrival order inside a group
	gVals    []float64 // per group: len(qs) columns of the group's length, one after the other
}

// group reorders the accepted rows by port, stably, with each port's values column by column:
// the merge can then append a port's run of each quantity in one copy. It runs on the worker.
func (job *csvJob) group(k int) {
	np := len(job.names)
	n := len(job.times)
	job.groupEnd = slices.Grow(job.groupEnd[:0], np)[:np]
	counts := job.groupEnd
	clear(counts)
	for _, pi := range job.rowPort {
		counts[pi]++
	}
	// start of each group, in rows; counts becomes the running cursor
	starts := make([]int32, np)
	sum := int32(0)
	for i := range counts {
		starts[i] = sum
		sum += counts[i]
		counts[i] = 0
	}
	job.gTimes = slices.Grow(job.gTimes[:0], n)[:n]
	job.gVals = slices.Grow(job.gVals[:0], n*k)[:n*k]
	sizes := make([]int32, np)
	job.spread = slices.Grow(job.spread[:0], np)[:np]
	first := make([]int32, np)
	for r, pi := range job.rowPort {
		if sizes[pi] == 0 {
			first[pi] = int32(r)
		}
		sizes[pi]++
		job.spread[pi] = int32(r) - first[pi]
	}
	for r, pi := range job.rowPort {
		at := starts[pi] + counts[pi]
		job.gTimes[at] = job.times[r]
		base := int(starts[pi]) * k
		cnt := int(sizes[pi])
		off := int(counts[pi])
		row := job.vals[r*k : (r+1)*k]
		for j, v := range row {
			job.gVals[base+j*cnt+off] = v
		}
		counts[pi]++
	}
	for i := range counts {
		counts[i] = starts[i] + sizes[i]
	}
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
	portIdx    map[string]int32 // port name → index into the current job's names
}

func (cp *csvParser) parse(job *csvJob) {
	if cp.portIdx == nil {
		cp.portIdx = map[string]int32{}
	}
	clear(cp.portIdx)
	defer job.group(len(cp.lay.qs))
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
	pi, known := cp.portIdx[bytesString(pf)]
	if !known && !utf8.Valid(pf) { // a name seen before in this block was valid then
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
		if q := lay.qs[j]; !(v >= plainLo[q] && v <= plainHi[q]) { // else surely in range
			if err := checkRange(q, v); err != nil {
				return cp.fieldErr(lineNo, fi, err)
			}
		}
		job.vals = append(job.vals, v)
	}
	if !known {
		pi = int32(len(job.names))
		name := string(pf)
		job.names = append(job.names, name)
		cp.portIdx[name] = pi
	}
	job.rowPort = append(job.rowPort, pi)
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
	hb := getBytes(bufferSize(res.sizeHint))
	defer func() { bytesPool.Put(hb) }()
	buf := *hb
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
			buf = slices.Grow(buf, cap(buf))
			*hb = buf
		}
		buf = readMore(r, buf, &eof, &readErr)
	}
	lay, notes, err := parseHeader(file, line-1, header)
	if err != nil {
		res.fail(err, readErr)
		return
	}
	res.stats.Notes = append(res.stats.Notes, notes...)
	res.lay = lay
	carry := buf // bytes after the header, not yet parsed
	if res.sizeHint > 0 && res.sizeHint <= chunkSize {
		readCSVWhole(res, r, opt, carry, line, eof, readErr)
		return
	}

	workers := opt.workers()
	rec := newRecycler(4*workers+4, res.sizeHint)
	var stop atomic.Bool
	order := make(chan *csvJob, workers)
	jobs := make(chan *csvJob, workers)
	go func() { // producer: cut the stream into jobs of whole lines
		defer close(order)
		defer close(jobs)
		for !stop.Load() {
			bp := rec.buf()
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
				b = readMore(r, b, &eof, &readErr)
			}
			job := rec.job(bp, line)
			if eof {
				job.data = b
				job.cutTail = readErr != nil && len(b) > 0 && b[len(b)-1] != '\n'
			} else {
				nl := bytes.LastIndexByte(b, '\n')
				job.data = b[:nl+1]
				carry = append([]byte(nil), b[nl+1:]...)
			}
			lines := bytes.Count(job.data, []byte{'\n'})
			line += lines
			// Room for every row of the block, so that parsing never grows (and copies) them.
			rows := lines + 1
			job.rowPort = slices.Grow(job.rowPort, rows)
			job.times = slices.Grow(job.times, rows)
			job.vals = slices.Grow(job.vals, rows*len(lay.qs))
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
				rec.putBuf(job.buf)
				job.dataLen = len(job.data)
				job.buf, job.data = nil, nil
				close(job.done)
			}
		}()
	}
	// The merge is sharded by port: shard i appends the ports whose name hashes to i, every
	// shard taking the jobs in input order, so each port's rows keep their order while
	// several goroutines fill (and fault in) the columns.
	shards := workers
	builders := make([]*fileBuilder, shards)
	chans := make([]chan *csvJob, shards)
	var swg sync.WaitGroup
	for i := range shards {
		builders[i] = newFileBuilder()
		chans[i] = make(chan *csvJob, 1)
		swg.Add(1)
		go func() {
			defer swg.Done()
			for job := range chans[i] {
				applyCSV(builders[i], lay, job, i, shards)
				if job.pending.Add(-1) == 0 {
					rec.putJob(job)
				}
			}
		}()
	}
	for job := range order {
		<-job.done
		if stop.Load() {
			continue
		}
		res.accountCSV(job, opt.Strict)
		if res.strictErr != nil {
			stop.Store(true)
			continue
		}
		job.pending.Store(int32(shards))
		for _, ch := range chans {
			ch <- job
		}
	}
	for _, ch := range chans {
		close(ch)
	}
	swg.Wait()
	wg.Wait()
	for _, b := range builders {
		for _, p := range b.order {
			res.fb.ports[p.name] = p
			res.fb.order = append(res.fb.order, p)
		}
	}
	if readErr != nil {
		res.fail(&ParseError{File: file, Line: line, Err: fmt.Errorf("%w: %v", ErrTruncated, readErr)}, nil)
	}
}

// readMore reads into the spare capacity of b and returns b extended by what was read. At the end
// of the stream it sets *eof, and it keeps a read error other than io.EOF in *readErr.
func readMore(r io.Reader, b []byte, eof *bool, readErr *error) []byte {
	n, err := r.Read(b[len(b):cap(b)])
	if err != nil {
		*eof = true
		if err != io.EOF {
			*readErr = err
		}
	}
	return b[:len(b)+n]
}

// readCSVWhole reads the rest of a small input (known to fit one block) as one block on this
// goroutine: the same steps as the parallel path of readCSV with one block, without its
// goroutines and channels, which cost more than parsing a file of a few hundred rows (folders
// of many small files are read in parallel one file per goroutine instead, by ReadPaths).
func readCSVWhole(res *fileResult, r io.Reader, opt Options, carry []byte, line int, eof bool, readErr error) {
	bp := getBytes(max(int(res.sizeHint)+1, len(carry)+512))
	defer func() { bytesPool.Put(bp) }()
	b := append(*bp, carry...)
	for !eof {
		if len(b) == cap(b) {
			b = slices.Grow(b, cap(b)) // larger than announced (a file still growing)
			*bp = b
		}
		b = readMore(r, b, &eof, &readErr)
	}
	*bp = b
	w := wholePool.Get().(*wholeScratch)
	defer wholePool.Put(w)
	job := &w.job
	*job = csvJob{data: b, firstLine: line,
		names: job.names[:0], groupEnd: job.groupEnd[:0], spread: job.spread[:0], gTimes: job.gTimes[:0], gVals: job.gVals[:0]}
	job.cutTail = readErr != nil && len(b) > 0 && b[len(b)-1] != '\n'
	lines := bytes.Count(b, []byte{'\n'})
	line += lines
	k := len(res.lay.qs)
	rows := lines + 1 // at most
	job.rowPort = slices.Grow(w.rowPort[:0], rows)
	job.times = slices.Grow(w.times[:0], rows)
	job.vals = slices.Grow(w.vals[:0], rows*k)
	defer func() { w.rowPort, w.times, w.vals = job.rowPort, job.times, job.vals }()
	cp := &w.cp
	cp.file, cp.lay, cp.lastTime = res.stats.File, res.lay, cp.lastTime[:0]
	cp.parse(job)
	job.dataLen = len(job.data)
	job.data = nil
	res.accountCSV(job, opt.Strict)
	if res.strictErr == nil {
		job.hint = exactHint(job, k, opt.arena)
		applyCSV(res.fb, res.lay, job, 0, 1)
	}
	if readErr != nil {
		res.fail(&ParseError{File: res.stats.File, Line: line, Err: fmt.Errorf("%w: %v", ErrTruncated, readErr)}, nil)
	}
}

// accountCSV adds a parsed job's counts and rejections to the file's accounting, in input
// order; in strict mode the first rejection stops the file instead.
func (res *fileResult) accountCSV(job *csvJob, strict bool) {
	res.stats.RowsRead += job.rowsRead
	if strict && len(job.rejects) > 0 {
		res.strictErr = job.rejects[0]
		// The block with the bad row is not taken: the counts cover the blocks before it.
		res.stats.RowsRead -= job.rowsRead
		return
	}
	res.stats.RowsRejected += job.nReject
	res.stats.RowsUsed += len(job.times)
	for _, pe := range job.rejects {
		res.addRejection(pe.rejection())
	}
	if !res.hinted && len(job.times) > 0 {
		res.hinted = true
		if res.sizeHint > 0 && job.dataLen > 0 {
			if ratio := float64(res.sizeHint) / float64(job.dataLen); ratio >= 1.5 {
				job.hint = newCapacityHint(job, ratio, len(res.lay.qs))
			}
		}
	}
}

// capacityHint pre-sizes the columns of the ports seen in an input's first block, when the
// input's size is known: a port with c rows in a first block of b bytes is expected to have
// about c·size/b rows in all. Regular telemetry (every port every interval) then fills exactly
// one allocation per column, which finish hands over without copying; a wrong guess only
// costs extra segments. All the hinted columns are cut from two slabs, so that the kernel can
// back them with huge pages (see adviseHuge).
//
// Only ports whose rows are spread over most of the block are hinted: in a file sorted by
// port the first block holds a few ports end to end, and scaling their counts up would
// reserve far too much.
type capacityHint struct {
	rows  []int // expected rows of each group (port) of the block; 0: not hinted
	off   []int // first row of each group in the slabs
	times []int64
	vals  []float64 // group g, column j: vals[off[g]*k + j*rows[g] : … + rows[g]]
}

func newCapacityHint(job *csvJob, ratio float64, k int) *capacityHint {
	h := &capacityHint{rows: make([]int, len(job.names)), off: make([]int, len(job.names))}
	start, total := int32(0), 0
	blockRows := len(job.times)
	for g := range job.names {
		end := job.groupEnd[g]
		h.off[g] = total
		if 2*int(job.spread[g]) >= blockRows {
			// +1 row and 5 %: the first block sees each port a few dozen times, so its
			// count is easily off by one; capacity never written costs address space.
			h.rows[g] = int(float64(end-start+1)*ratio*1.05) + 16
			total += h.rows[g]
		}
		start = end
	}
	if total == 0 {
		return nil
	}
	h.times = make([]int64, total)
	h.vals = make([]float64, total*k)
	adviseHuge(h.times)
	adviseHuge(h.vals)
	return h
}

// wholeScratch is the reusable working space of readCSVWhole (one per concurrent reader).
type wholeScratch struct {
	job     csvJob
	cp      csvParser
	rowPort []int32
	times   []int64
	vals    []float64
}

var wholePool = sync.Pool{New: func() any { return new(wholeScratch) }}

// exactHint sizes the columns of every port of a whole-input job to its rows in the job, cut
// from one slab for the file: the ports' columns are then filled without growing and handed
// over by finish without a copy.
func exactHint(job *csvJob, k int, arena *slabArena) *capacityHint {
	if len(job.names) == 0 {
		return nil
	}
	h := &capacityHint{rows: make([]int, len(job.names)), off: make([]int, len(job.names))}
	start, total := int32(0), 0
	for g := range job.names {
		end := job.groupEnd[g]
		h.off[g], h.rows[g] = total, int(end-start)
		total += h.rows[g]
		start = end
	}
	h.times, h.vals = arena.times(total), arena.floats(total*k)
	return h
}

// slabArena cuts the columns of many small inputs from a few large chunks advised for huge
// pages (adviseHuge): thousands of files' columns allocated one by one would each be faulted in
// page by page, which on a virtual machine costs more than parsing them. A nil arena allocates
// plainly. Safe for concurrent use.
type slabArena struct {
	mu sync.Mutex
	f  []float64
	t  []int64
}

// arenaChunk is the number of values in one chunk (8 MiB).
const arenaChunk = 1 << 20

func (a *slabArena) floats(n int) []float64 {
	if a == nil {
		return make([]float64, n)
	}
	return carve(&a.mu, &a.f, n)
}

func (a *slabArena) times(n int) []int64 {
	if a == nil {
		return make([]int64, n)
	}
	return carve(&a.mu, &a.t, n)
}

// carve cuts n values from the arena chunk *chunk, starting a new chunk (advised for huge pages)
// when the current one is full; requests above a quarter chunk get their own allocation.
func carve[T float64 | int64](mu *sync.Mutex, chunk *[]T, n int) []T {
	if n > arenaChunk/4 {
		return make([]T, n)
	}
	mu.Lock()
	defer mu.Unlock()
	if cap(*chunk)-len(*chunk) < n {
		*chunk = make([]T, 0, arenaChunk)
		adviseHuge(*chunk)
	}
	m := len(*chunk)
	*chunk = (*chunk)[:m+n]
	return (*chunk)[m : m+n : m+n]
}

// apply gives port p (group g of the hinted block) its pre-sized columns.
func (h *capacityHint) apply(p *portBuf, g int, qs []Quantity) {
	n, o := h.rows[g], h.off[g]
	if n == 0 {
		return
	}
	p.hint = n
	p.times = h.times[o : o : o+n]
	k := len(qs)
	for j, q := range qs {
		a := o*k + j*n
		p.vals[q] = &colBuf{hint: n, segs: [][]float64{h.vals[a : a : a+n]}}
		p.mask |= 1 << q
	}
}

// applyCSV appends the rows of the ports of shard (of shards) from a parsed job.
func applyCSV(fb *fileBuilder, lay *csvLayout, job *csvJob, shard, shards int) {
	k := len(lay.qs)
	start := int32(0)
	for g, name := range job.names {
		end := job.groupEnd[g]
		if shards == 1 || shardOf(name, shards) == shard {
			p := fb.port([]byte(name))
			if job.hint != nil && len(p.times) == 0 && p.mask == 0 {
				job.hint.apply(p, g, lay.qs)
			}
			p.addBlock(job.gTimes[start:end], lay.qs, job.gVals[int(start)*k:int(end)*k], lay.qmask)
		}
		start = end
	}
}

// shardOf hashes a port name (FNV-1a) to one of n shards.
func shardOf(name string, n int) int {
	h := uint32(2166136261)
	for i := 0; i < len(name); i++ {
		h ^= uint32(name[i])
		h *= 16777619
	}
	return int(h % uint32(n))
}
