package parse

import (
	"bytes"
	"io"
	"math/bits"
	"slices"
	"sync"
	"sync/atomic"
)

// chunkSize is the size of the blocks a CSV input is cut into (at line ends) for parallel parsing.
const chunkSize = 1 << 20

// blockSize is the smallest block: chunkSize, but for the tests, which cut inputs of a few lines
// into many blocks.
var blockSize = chunkSize

// recycler hands back the blocks and jobs of one input once merged, so that a long input
// allocates them only for the few blocks in flight (a sync.Pool would drop them at every GC).
type recycler struct {
	bufs chan *[]byte
	jobs chan *csvJob
	size int // bytes of a new block buffer
}

// newRecycler keeps up to n blocks of block bytes; size is the input's size when known (0:
// unknown), so that a small file gets a block its size rather than a whole block to allocate and
// clear.
func newRecycler(n int, size int64, block int) *recycler {
	r := &recycler{bufs: make(chan *[]byte, n), jobs: make(chan *csvJob, n), size: block}
	if size > 0 && size < int64(block) {
		r.size = int(size) + 1 // + 1: room to see the end of the input without growing
	}
	return r
}

func (r *recycler) buf() *[]byte {
	select {
	case b := <-r.bufs:
		if cap(*b) >= r.size {
			return b
		}
	default:
	}
	b := make([]byte, r.size)
	return &b
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
		codes: j.codes[:0], wideAt: j.wideAt[:0], wideVals: j.wideVals[:0],
		groupEnd: j.groupEnd[:0], spread: j.spread[:0], gTimes: j.gTimes[:0], gVals: j.gVals[:0],
		gCodes: j.gCodes[:0], gWide: j.gWide[:0],
		rowMask: j.rowMask[:0], gMask: j.gMask[:0], gOff: j.gOff[:0]}
	return j
}

func (r *recycler) putJob(j *csvJob) {
	j.rejects = nil
	select {
	case r.jobs <- j:
	default:
	}
}

// csvJob is one block of complete lines and, once parsed, its rows.
type csvJob struct {
	buf       *[]byte
	data      []byte
	firstLine int
	cutTail   bool          // the last line has no line end because the stream broke off
	last      bool          // the last block of the input
	broken    bool          // the stream broke off (read error or a limit) after this block
	closed    bool          // the input's syntax ends in this block (JSON: the array closed)
	seq       int           // the block's number in the input, from 0
	dataLen   int           // len(data), kept after data is released
	hint      *capacityHint // set on the first block with rows when the input size is known
	done      chan struct{}

	rowsRead int
	names    []string  // the job's distinct port names, in order of first sight
	rowPort  []int32   // index into names of each accepted row
	times    []int64   // time of each accepted row
	vals     []float64 // JSON: NumQuantities values per accepted row, row after row
	// CSV: len(qs) value codes per accepted row, row after row (see packValue); a value
	// without a code is wideMark there, its index in wideAt and its value in wideVals.
	codes    []uint32
	wideAt   []int32
	wideVals []float64
	rejects  []*ParseError
	nReject  int

	// The accepted rows regrouped by port (see group), so that the merge appends whole runs.
	groupEnd []int32   // end (in rows) of each port's group
	spread   []int32   // rows between each port's first and last row in the block
	gTimes   []int64   // times, port group after port group, arrival order inside a group
	gVals    []float64 // per group: len(qs) columns of the group's length, one after the other
	gCodes   []uint32  // gVals as value codes (see packValue), but for the columns in gWide
	gWide    []uint32  // per group: bit j set when column j has a value without a code (CSV: only those columns are in gVals)

	// Profile names of the accepted rows (see markProfile); empty without a profile column.
	profMarks []profileMark
	profLast  []string // per port of the block: the profile its last row named

	// Bin companions of the accepted rows, row after row (see binRows); empty without bins.
	binLow, binHigh []float64
	binLen          []int64

	// JSON blocks: the rows carry different quantities (see groupSparse).
	rowMask    []uint32    // quantities present in each accepted row
	gMask      []uint32    // quantities of each port's group
	gOff       []int32     // start of each group in gVals
	unknown    []string    // unknown member names met
	moreNotes  bool        // notes past MaxNotesListed were met (see noteOnce)
	notes      []string    // notes, each once
	sawOC      bool        // an OpenConfig document was met
	stopErr    *ParseError // the input stops here (syntax error, or a strict rejection)
	stopStrict bool        // stopErr is a strict rejection
}

// group reorders the accepted rows of a CSV block by port, stably, with each port's value
// codes column by column: the merge can then append a port's run of each quantity in one copy.
// A group's column holding a value without a code is also laid out as float64 in gVals, and
// its bit set in gWide. It runs on the worker.
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
	job.gCodes = slices.Grow(job.gCodes[:0], n*k)[:n*k]
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
		row := job.codes[r*k : (r+1)*k]
		for j, c := range row {
			job.gCodes[base+j*cnt+off] = c
		}
		counts[pi]++
	}
	job.gWide = slices.Grow(job.gWide[:0], np)[:np]
	clear(job.gWide)
	job.gVals = job.gVals[:0]
	if len(job.wideAt) > 0 {
		job.groupWide(k, starts, sizes)
	}
	for i := range counts {
		counts[i] = starts[i] + sizes[i]
	}
}

// groupWide lays out as float64 in gVals every group's column that holds a value without a
// code (group's helper; starts and sizes are each group's first row and rows).
func (job *csvJob) groupWide(k int, starts, sizes []int32) {
	for _, at := range job.wideAt {
		job.gWide[job.rowPort[int(at)/k]] |= 1 << (int(at) % k)
	}
	n := len(job.gCodes)
	job.gVals = slices.Grow(job.gVals[:0], n)[:n]
	for g, wide := range job.gWide {
		for ; wide != 0; wide &= wide - 1 {
			j := bits.TrailingZeros32(wide)
			a := int(starts[g])*k + j*int(sizes[g])
			for i := a; i < a+int(sizes[g]); i++ {
				job.gVals[i] = unpackValue(job.gCodes[i]) // the wideMarks are set below
			}
		}
	}
	cur := make([]int32, len(sizes))
	w := 0
	for r, pi := range job.rowPort {
		off := cur[pi]
		cur[pi]++
		for ; w < len(job.wideAt) && int(job.wideAt[w])/k == r; w++ {
			j := int(job.wideAt[w]) % k
			job.gVals[int(starts[pi])*k+j*int(sizes[pi])+int(off)] = job.wideVals[w]
		}
	}
}

// packGroups fills gCodes and gWide from gVals (JSON blocks), on the worker, so that the merge copies codes;
// cols(g) is the number of columns of group g.
func (job *csvJob) packGroups(cols func(g int) int) {
	np := len(job.names)
	job.gCodes = slices.Grow(job.gCodes[:0], len(job.gVals))[:len(job.gVals)]
	job.gWide = slices.Grow(job.gWide[:0], np)[:np]
	start, off := int32(0), 0
	for g := range np {
		n := int(job.groupEnd[g] - start)
		start = job.groupEnd[g]
		var wide uint32
		for j := range cols(g) {
			col := job.gVals[off : off+n]
			codes := job.gCodes[off : off+n]
			var hint int8
			for i, v := range col {
				c, ok := packValue(v, &hint)
				if !ok {
					wide |= 1 << j
					break
				}
				codes[i] = c
			}
			off += n
		}
		job.gWide[g] = wide
	}
}

// readCSV reads one CSV stream into res. r delivers the decompressed bytes without BOM.
func readCSV(res *fileResult, r io.Reader, opt Options) {
	file := res.stats.File
	hb := getBytes(bufferSize(res.sizeHint))
	defer func() { bytesPool.Put(hb) }()
	st, ok := readCSVHeader(res, r, hb)
	if !ok {
		return
	}
	lay := res.lay
	carry, line, eof, readErr := st.carry, st.line, st.eof, st.readErr
	if res.sizeHint > 0 && res.sizeHint <= int64(blockSize) {
		readCSVWhole(res, r, opt, carry, line, eof, readErr)
		return
	}

	block, whole := csvBlockSize(res.sizeHint), 0
	if res.part != nil && block > blockSize {
		// Grouped by port, a block holds a few ports end to end and larger blocks save
		// nothing but hold more in flight; the large blocks once the input is read whole.
		block, whole = blockSize, block
	}
	runBlocks(res, r, opt, blockFormat{
		block:     block,
		whole:     whole,
		cut:       cutLines,
		maxRecord: maxLineBytes,
		tooLong:   lineTooLong,
		parser: func() func(*csvJob) {
			cp := &csvParser{file: file, lay: lay, strict: opt.Strict}
			return cp.parse
		},
		reserve: func(job *csvJob, rows int) {
			job.rowPort = slices.Grow(job.rowPort, rows)
			job.times = slices.Grow(job.times, rows)
			job.codes = slices.Grow(job.codes, rows*len(lay.qs))
		},
		account: func(job *csvJob) bool {
			res.accountCSV(job, opt.Strict)
			return res.strictErr == nil // a strict stop still takes the rows before the bad one
		},
		apply: func(fb *fileBuilder, job *csvJob) { applyCSV(fb, lay, job) },
	}, carry, line, eof, readErr)
}

// csvBlockSize is the block size for a CSV input of size bytes (0: unknown): chunkSize, or
// larger for a large input, so that it is cut into about largeBlocks blocks, up to
// maxBlockSize. The merge takes each block's rows port by port, and each port of a block costs
// a look-up and a visit to each of its columns; a large fleet exported one sample time after
// another (7,000 ports, 10 million rows) has only one or two rows of each port in a block of
// chunkSize, and these visits then take most of the merge's time. The blocks in flight grow
// with the block size, by a small share of the input's own size.
func csvBlockSize(size int64) int {
	return int(min(max(size/largeBlocks, int64(blockSize)), maxBlockSize))
}

const (
	largeBlocks  = 256
	maxBlockSize = 4 * chunkSize
)

// blockFormat is what runBlocks needs to know of one input format.
type blockFormat struct {
	// block is the size of a block (0: blockSize); whole, when not 0, that of the blocks cut
	// once an input read in parts is found not grouped by port, and read whole.
	block, whole int
	// cut returns the length of the longest prefix of b made of whole records (0: none);
	// final says that the input ends there (what follows is not read).
	cut func(b []byte) (n int, final bool)
	// maxRecord bounds one record: a longer one stops the input with the error tooLong(line),
	// line being the line the record starts at or after.
	maxRecord int
	tooLong   func(line int) error
	// parser returns the parse function of one worker goroutine.
	parser func() func(*csvJob)
	// reserve makes room in a new job for rows rows (an upper bound from its line count).
	reserve func(job *csvJob, rows int)
	// account takes a parsed job's counts, in input order; false stops the input after this
	// job. A job whose rows must not be taken is left with no port groups (job.names empty).
	account func(job *csvJob) bool
	// apply appends the block's rows to fb.
	apply func(fb *fileBuilder, job *csvJob)
}

// cutLines cuts at the last line end.
func cutLines(b []byte) (int, bool) { return bytes.LastIndexByte(b, '\n') + 1, false }

// runBlocks reads the rest of a stream (carry, then r, the first byte of carry being on line
// line) in blocks of whole records: one goroutine cuts the stream, workers parse the blocks in
// parallel, and the blocks are accounted and merged in input order, so line numbers and "last
// row wins" stay exact.
func runBlocks(res *fileResult, r io.Reader, opt Options, f blockFormat, carry []byte, line int, eof bool, readErr error) {
	workers := opt.workers()
	if f.block == 0 {
		f.block = blockSize
	}
	rec := newRecycler(4*workers+4, res.sizeHint, f.block)
	var stop atomic.Bool
	order := make(chan *csvJob, workers)
	jobs := make(chan *csvJob, workers)
	go func() { // producer: cut the stream into jobs of whole records
		seq := 0
		var spare []byte // the rest after a block's last record, until the next block takes it
		defer close(order)
		defer close(jobs)
		for !stop.Load() {
			if f.whole > 0 && res.part.off.Load() {
				rec.size, f.whole = f.whole, 0
			}
			bp := rec.buf()
			b := (*bp)[:0]
			if len(carry) > cap(b) {
				b = make([]byte, 0, 2*len(carry))
			}
			b = append(b, carry...)
			carry = nil
			n, final := 0, false
			for !eof {
				if len(b) == cap(b) {
					if n, final = f.cut(b); n > 0 || final {
						break
					}
					if len(b) >= f.maxRecord {
						readErr, eof = f.tooLong(line), true
						break
					}
					nb := make([]byte, len(b), 2*cap(b)) // a record longer than the block
					copy(nb, b)
					b = nb
				}
				b = readMore(r, b, &eof, &readErr)
			}
			job := rec.job(bp, line)
			job.seq = seq
			seq++
			if eof {
				if n, final = f.cut(b); !final {
					n = len(b)
				}
				job.last, job.broken = true, readErr != nil
				job.cutTail = readErr != nil && len(b) > 0 && b[len(b)-1] != '\n'
			}
			job.data = b[:n]
			if final {
				job.last, job.closed, job.broken, job.cutTail = true, true, false, false
			} else if !eof {
				spare = append(spare[:0], b[n:]...) // copied into the next block before reuse
				carry = spare
			}
			lines := bytes.Count(job.data, []byte{'\n'})
			line += lines
			// Room for every row of the block, so that parsing never grows (and copies) them.
			f.reserve(job, lines+1)
			order <- job
			jobs <- job
			if job.last {
				return
			}
		}
	}()
	var wg sync.WaitGroup
	for range workers {
		wg.Add(1)
		go func() {
			defer wg.Done()
			parse := f.parser()
			for job := range jobs {
				if !stop.Load() {
					parse(job)
				}
				rec.putBuf(job.buf)
				job.dataLen = len(job.data)
				job.buf, job.data = nil, nil
				close(job.done)
			}
		}()
	}
	// One goroutine merges the blocks in input order, so each port's rows keep their order.
	merge := make(chan *csvJob, 1)
	merged := make(chan struct{})
	go func() {
		defer close(merged)
		for job := range merge {
			switch {
			case res.part == nil:
				f.apply(res.fb, job)
			case res.part.err == nil && !res.part.take(res, job, f.apply):
				stop.Store(true)
			}
			rec.putJob(job)
		}
	}()
	for job := range order {
		<-job.done
		if stop.Load() {
			continue
		}
		if !res.accountLocked(f.account, job) {
			stop.Store(true)
		}
		merge <- job
	}
	close(merge)
	<-merged
	wg.Wait()
	if readErr != nil {
		res.fail(&ParseError{File: res.stats.File, Line: line, Err: truncated(readErr)}, nil)
	}
}

// accountLocked runs account on job, holding the part reader's lock when the input is read in
// parts (a part takes its share of the accounting on the merge goroutine).
func (res *fileResult) accountLocked(account func(*csvJob) bool, job *csvJob) bool {
	if res.part == nil {
		return account(job)
	}
	res.part.mu.Lock()
	defer res.part.mu.Unlock()
	return account(job)
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
		names: job.names[:0], groupEnd: job.groupEnd[:0], spread: job.spread[:0], gTimes: job.gTimes[:0], gVals: job.gVals[:0],
		gCodes: job.gCodes[:0], gWide: job.gWide[:0], wideAt: job.wideAt[:0], wideVals: job.wideVals[:0]}
	job.cutTail = readErr != nil && len(b) > 0 && b[len(b)-1] != '\n'
	lines := bytes.Count(b, []byte{'\n'})
	line += lines
	k := len(res.lay.qs)
	rows := lines + 1 // at most
	job.rowPort = slices.Grow(w.rowPort[:0], rows)
	job.times = slices.Grow(w.times[:0], rows)
	job.codes = slices.Grow(w.codes[:0], rows*k)
	defer func() { w.rowPort, w.times, w.codes = job.rowPort, job.times, job.codes }()
	cp := &w.cp
	cp.file, cp.lay, cp.strict, cp.lastTime = res.stats.File, res.lay, opt.Strict, cp.lastTime[:0]
	cp.parse(job)
	job.dataLen = len(job.data)
	job.data = nil
	res.accountCSV(job, opt.Strict)
	job.hint = exactHint(job, k, opt.arena)
	applyCSV(res.fb, res.lay, job)
	if readErr != nil {
		res.fail(&ParseError{File: res.stats.File, Line: line, Err: truncated(readErr)}, nil)
	}
}

// accountCSV adds a parsed job's counts and rejections to the file's accounting, in input
// order. In strict mode a job's parse stopped at its first rejected row, which stops the file:
// the counts then cover every row up to and including it.
func (res *fileResult) accountCSV(job *csvJob, strict bool) {
	if res.overRowLimit(job) {
		return
	}
	res.stats.RowsRead += job.rowsRead
	if strict && len(job.rejects) > 0 {
		res.stopStrict(job.rejects[0])
	}
	res.stats.RowsRejected += job.nReject
	res.stats.RowsUsed += len(job.times)
	if res.bins != nil {
		res.bins.addJob(job)
	}
	res.takeProfiles(job)
	for _, pe := range job.rejects {
		res.addRejection(pe.rejection())
	}
	k := len(res.lay.qs)
	res.hintFirst(job, func(int) int { return k })
}

// hintFirst gives the input's first block with rows a capacityHint when the input's size is
// known; cols(g) is the number of columns of the block's group g.
func (res *fileResult) hintFirst(job *csvJob, cols func(g int) int) {
	if res.hinted || len(job.times) == 0 {
		return
	}
	res.hinted = true
	if res.sizeHint > 0 && job.dataLen > 0 {
		if ratio := float64(res.sizeHint) / float64(job.dataLen); ratio >= 1.5 {
			job.hint = newCapacityHint(job, ratio, cols)
		}
	}
}

// wholeScratch is the reusable working space of readCSVWhole (one per concurrent reader).
type wholeScratch struct {
	job     csvJob
	cp      csvParser
	rowPort []int32
	times   []int64
	codes   []uint32
}

var wholePool = sync.Pool{New: func() any { return new(wholeScratch) }}

// applyCSV appends the rows of a parsed job.
func applyCSV(fb *fileBuilder, lay *csvLayout, job *csvJob) {
	k := len(lay.qs)
	start := int32(0)
	for g, name := range job.names {
		end := job.groupEnd[g]
		p := fb.port([]byte(name))
		if job.hint != nil && p.times.n == 0 && p.mask == 0 {
			job.hint.apply(p, g, lay.qs)
		}
		a, b := int(start)*k, int(end)*k
		var vals []float64
		if job.gWide[g] != 0 {
			vals = job.gVals[a:b]
		}
		p.addBlock(job.gTimes[start:end], lay.qs, vals, job.gCodes[a:b], job.gWide[g], lay.qmask)
		start = end
	}
}
