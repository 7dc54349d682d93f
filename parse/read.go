package parse

import (
	"bufio"
	"bytes"
	"compress/gzip"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"math"
	"os"
	"path/filepath"
	"runtime"
	"slices"
	"strings"
	"sync"
	"sync/atomic"
)

// Options control reading. The zero value reads leniently with instant OpenConfig statistics.
type Options struct {
	// Strict makes the first rejected row of an input an error: reading of that input stops
	// there. The row is counted as read and rejected, the rows before it as read and used, and
	// InputStats.Error says where reading stopped.
	Strict bool
	// Statistic selects the OpenConfig statistic: "instant" (default, also ""), "avg", "min" or
	// "max". When the selected one is absent the instant value is used.
	Statistic string
	// Progress, when set, is called now and then with the input bytes read so far (compressed
	// bytes for gzip) and the total size of the inputs (-1 when unknown, e.g. stdin). Calls are
	// serialised.
	Progress func(done, total int64)
	// Workers bounds the goroutines parsing one CSV input; 0 means GOMAXPROCS.
	Workers int
	// MaxRows bounds the data records read over all inputs (0: DefaultMaxRows), and so the
	// memory a run takes: reading stops with an ErrTooLarge error at the block that would pass
	// it. Unpacked input bytes are bounded too, at MaxRows × 1 KiB, so that a small gzip of
	// blank lines or of one endless line ends as well.
	MaxRows int
	// TimeFormat reads every time with this layout: a Go layout ("02.01.2006 15:04") or a
	// strftime-like format ("%d.%m.%Y %H:%M"); "" reads the built-in formats.
	TimeFormat string
	// DayFirst reads DD.MM.YYYY, DD/MM/YYYY and DD-MM-YYYY dates besides the built-in formats.
	DayFirst bool
	// TimeZone is the zone of times written without one (IANA name such as "Europe/Berlin",
	// or "+01:00"); "" is UTC. Times that carry a zone keep it.
	TimeZone string

	// PortParts makes ReadEach hand a large CSV or JSON Lines input (a named file of 4 MiB or
	// more, 256 KiB when named .gz) over in parts as its ports complete, assuming its rows come grouped by
	// port (each port's rows together, ports in any order), so that only a part's telemetry is
	// held: see partReader. Such an input is read alone, not in a batch with others. Where its
	// first blocks show it is not grouped it is read whole; where a later block does, after
	// parts were handed over, ReadEach stops with ErrNotGrouped.
	PortParts bool

	arena  *slabArena  // set by ReadPaths: where small files' columns are cut from
	times  *timeReader // from TimeFormat, DayFirst and TimeZone (nil: the built-in formats in UTC)
	budget *readBudget // rows and bytes left for the run
	part   *partReader // set by ReadEach for an input read in parts
	// treeOnly reads every OpenConfig document with the tree reader (tests compare it with the
	// one-pass reader)
	treeOnly bool
}

// DefaultMaxRows is the row limit when Options.MaxRows is 0: ten million rows, about 2 GB of
// memory at the current store (docs/formats.md, "Limits").
const DefaultMaxRows = 10_000_000

// bytesPerRow is the unpacked input allowed per row of MaxRows: a canonical row with every
// column is about 250 bytes, so 1 KiB leaves room for wide exports with many unknown columns.
const bytesPerRow = 1024

// prepare checks the options a caller set and fills in the derived ones.
func (o *Options) prepare() error {
	if _, err := o.statistic(); err != nil {
		return optionError{err}
	}
	if o.MaxRows < 0 {
		return optionError{fmt.Errorf("--max-rows %d: the row limit must be positive", o.MaxRows)}
	}
	tr, err := newTimeReader(o.TimeFormat, o.DayFirst, o.TimeZone)
	if err != nil {
		return optionError{err}
	}
	o.times = tr
	rows := int64(o.MaxRows)
	if rows == 0 {
		rows = DefaultMaxRows
	}
	o.budget = &readBudget{maxRows: rows}
	o.budget.rows.Store(rows)
	o.budget.bytes.Store(rows * bytesPerRow)
	return nil
}

// PortRows is what one port costs against the row limit beyond its rows: a port's own state
// (buffers, series, summary, judgement) takes about as much memory as 64 rows. Measured with
// triage (/usr/bin/time -f %M) on 100 000 one-row ports: 298 MB, about 3 KB a port, against
// about 45 bytes a row of all fourteen quantities (10,080,000 rows: 476 MB). Without it a file
// of one row per port would pass the memory ceiling sixty times over.
const PortRows = 64

// readBudget is what is left of the run's row and byte limits, shared by concurrent readers.
type readBudget struct {
	maxRows int64
	rows    atomic.Int64
	bytes   atomic.Int64
}

// takeRows takes n rows from the budget; false when fewer are left (the budget is then spent).
func (b *readBudget) takeRows(n int) bool {
	if b == nil {
		return true
	}
	if b.rows.Add(-int64(n)) < 0 {
		b.rows.Store(-1 << 62)
		return false
	}
	return true
}

// overRowLimit takes a parsed block's rows from the run's row limit. When the limit is passed it
// stops the input like a strict rejection — the block is neither counted nor merged (no port
// group left to apply) — and reports true.
// A port the input has not named before also counts as PortRows rows.
func (res *fileResult) overRowLimit(job *csvJob) bool {
	b := res.budget
	if b == nil {
		return false
	}
	if res.ports == nil {
		res.ports = map[string]struct{}{}
	}
	n := job.rowsRead
	for _, name := range job.names {
		if _, seen := res.ports[name]; !seen {
			res.ports[name] = struct{}{}
			n += PortRows
		}
	}
	if b.takeRows(n) {
		return false
	}
	job.names = job.names[:0]
	res.strictErr = &ParseError{File: res.stats.File, Line: job.firstLine, Err: fmt.Errorf("%w: more than %d rows in all inputs, each port counting as %d rows more (the --max-rows limit, which bounds memory); this input was not read from line %d on", ErrTooLarge, b.maxRows, PortRows, job.firstLine)}
	res.stats.Error = res.strictErr.Error()
	return true
}

// budgetReader stops a stream with ErrTooLarge once the run's unpacked-byte budget is spent.
type budgetReader struct {
	r io.Reader
	b *readBudget
}

func (br budgetReader) Read(p []byte) (int, error) {
	n, err := br.r.Read(p)
	if left := br.b.bytes.Add(-int64(n)); left < 0 {
		return n, fmt.Errorf("%w: more than %d MiB of unpacked input in all (1 KiB per row of the --max-rows limit)", ErrTooLarge, br.b.maxRows*bytesPerRow>>20)
	}
	return n, err
}

func (o Options) workers() int {
	if o.Workers > 0 {
		return o.Workers
	}
	return runtime.GOMAXPROCS(0)
}

func (o Options) statistic() (string, error) {
	switch strings.ToLower(o.Statistic) {
	case "", "instant":
		return "instant", nil
	case "avg", "min", "max":
		return strings.ToLower(o.Statistic), nil
	}
	return "", fmt.Errorf("parse: unknown statistic %q (want instant, avg, min or max)", o.Statistic)
}

// fileResult is what reading one input produced.
type fileResult struct {
	sizeHint  int64 // bytes the input is expected to hold once unpacked (0: unknown)
	hinted    bool
	stats     InputStats
	fb        *fileBuilder
	lay       *csvLayout
	rejects   []Rejection
	times     *timeReader                 // how times are read (nil: built-in formats, UTC)
	budget    *readBudget                 // the run's row and byte limits (nil: none)
	ports     map[string]struct{}         // ports counted against the row limit (see overRowLimit)
	bins      *binRows                    // bin companions of the accepted rows (nil: no bin columns)
	profiles  map[string][]ProfileMention // profiles the accepted rows name, by port (nil: none)
	strictErr error                       // first bad row in strict mode, or the row limit reached
	fileErr   error                       // input not read completely
	part      *partReader                 // hands the input over in parts (nil: read whole)
	inParts   bool                        // not read yet: to be read alone, in parts (see readNamed)
	rejTaken  int                         // rejections handed over with parts already
}

func (res *fileResult) addRejection(r Rejection) {
	if len(res.rejects)+res.rejTaken < MaxRejectionsKept {
		res.rejects = append(res.rejects, r)
	}
}

// stopStrict records the rejected row at which a strict read of the input stops. The row is
// counted as read and rejected like any other; the input's Error says reading stopped there.
func (res *fileResult) stopStrict(pe *ParseError) {
	if res.strictErr == nil {
		res.strictErr = pe
		res.stats.Error = pe.Error() + " (strict reading stops at the first rejected row)"
	}
}

// fail records that the input could not be read completely. extra is a read error met on the
// way, reported alongside.
func (res *fileResult) fail(err error, extra error) {
	if extra != nil {
		err = fmt.Errorf("%w (and %v)", err, extra)
	}
	if res.fileErr == nil {
		res.fileErr = err
		res.stats.Error = err.Error()
	}
}

// telemetryExts are the file name endings read when walking folders (each also with ".gz").
var telemetryExts = []string{".csv", ".tsv", ".txt", ".jsonl", ".ndjson", ".json"}

// isTelemetryName reports whether a file found in a folder should be read.
func isTelemetryName(name string) bool {
	n := strings.ToLower(name)
	n = strings.TrimSuffix(n, ".gz")
	for _, e := range telemetryExts {
		if strings.HasSuffix(n, e) {
			return true
		}
	}
	return false
}

// Reasons a file found in a folder is skipped by name.
const (
	skipHidden = "hidden"
	skipName   = "not a telemetry file name"
)

// expandPaths turns files, folders and "-" into the list of inputs, in order: folders are
// walked recursively in lexical order, skipping hidden entries and non-telemetry names.
// walked[i] tells that files[i] was found in a folder rather than named. "-" may be given once:
// standard input cannot be read twice.
func expandPaths(paths []string) (files []string, walked []bool, skipped []Skip, err error) {
	stdin := false
	for _, p := range paths {
		if p == "-" {
			if stdin {
				return nil, nil, nil, optionError{errors.New(`"-" (standard input) is given twice; it can be read only once`)}
			}
			stdin = true
			files, walked = append(files, p), append(walked, false)
			continue
		}
		fi, err := os.Stat(p)
		if err != nil {
			return nil, nil, nil, err
		}
		if !fi.IsDir() {
			files, walked = append(files, p), append(walked, false)
			continue
		}
		err = filepath.WalkDir(p, func(path string, d fs.DirEntry, err error) error {
			if err != nil {
				return err
			}
			if path != p && strings.HasPrefix(d.Name(), ".") {
				if d.IsDir() {
					return filepath.SkipDir
				}
				skipped = append(skipped, Skip{path, skipHidden})
				return nil
			}
			if d.IsDir() {
				return nil
			}
			if d.Type().IsRegular() && isTelemetryName(d.Name()) {
				files, walked = append(files, path), append(walked, true)
			} else {
				skipped = append(skipped, Skip{path, skipName})
			}
			return nil
		})
		if err != nil {
			return nil, nil, nil, err
		}
	}
	return files, walked, skipped, nil
}

// notTelemetry reports why a file found in a folder is not telemetry at all — nothing read
// from it and its content not a log (empty, not text, no header or document of ours) — so that
// it is skipped with a note instead of failing the run. A damaged log (truncated, or a row
// limit) is not skipped: it stays an input error.
func notTelemetry(res *fileResult) (string, bool) {
	if res.stats.RowsRead > 0 || res.fileErr == nil {
		return "", false
	}
	for _, e := range []error{ErrEmpty, ErrNotText, ErrNoHeader, ErrMissingColumn, ErrDuplicateColumn, ErrJSON} {
		if !errors.Is(res.fileErr, e) {
			continue
		}
		var pe *ParseError
		if errors.As(res.fileErr, &pe) && pe.Line > 0 {
			return fmt.Sprintf("line %d: %v", pe.Line, pe.Err), true
		}
		if pe != nil {
			return pe.Err.Error(), true
		}
		return res.fileErr.Error(), true
	}
	return "", false
}

// progressMeter serialises progress reports from concurrent readers.
type progressMeter struct {
	mu          sync.Mutex
	fn          func(done, total int64)
	done, total int64
	last        int64
}

func (m *progressMeter) add(n int64) {
	if m == nil || m.fn == nil {
		return
	}
	m.mu.Lock()
	m.done += n
	if m.done-m.last >= 1<<20 || n == 0 {
		m.last = m.done
		m.fn(m.done, m.total)
	}
	m.mu.Unlock()
}

type countingReader struct {
	r io.Reader
	m *progressMeter
}

func (c countingReader) Read(p []byte) (int, error) {
	n, err := c.r.Read(p)
	c.m.add(int64(n))
	return n, err
}

// ReadPaths reads every input named in paths — files, folders (recursively) and "-" for
// standard input — and merges them into one Dataset. Files are read in parallel and merged in
// the order given, so that of two rows with the same port and time the later one wins.
//
// The Dataset holds everything that could be read. err is non-nil when some input could not be
// read completely (it joins one *ParseError per such input; InputStats.Error says the same) or,
// with Options.Strict, at the first rejected row. A path that does not exist is an error before
// anything is read.
func ReadPaths(paths []string, opt Options) (*Dataset, error) {
	var ds *Dataset
	var err error
	if perr := ReadEach(paths, opt, 0, func(d *Dataset, e error) error { ds, err = d, e; return nil }); perr != nil {
		return nil, perr
	}
	return ds, err
}

// ReadEach reads the inputs of paths as ReadPaths does, but batch files at a time (all at once
// when batch ≤ 0), handing each batch's Dataset to fn, in input order, before the next batch is
// read: fn may drop it. A batch's Dataset holds the batch's inputs, rejections (at most
// MaxRejectionsKept) and series (their Inputs index the batch's Inputs), and in Skipped the
// batch's files found not to be telemetry, after (in the first batch) those the walk of the
// folders skipped by name: joined in order, the batches' lists are ReadPaths'. err is the
// batch's as ReadPaths gives it (so far, for a part); the row limit is the whole run's. A port
// whose rows lie in two batches has a series in each.
//
// With Options.PortParts a large input is a batch of its own, handed over in parts as its ports
// complete (Dataset.Continued): the joined parts are that batch's Dataset, but for the
// accounting, which the last part gives whole. fn's error stops the reading and is returned, as
// are ErrNotGrouped and an error of the options or the paths (before anything is read).
func ReadEach(paths []string, opt Options, batch int, fn func(ds *Dataset, err error) error) error {
	if err := opt.prepare(); err != nil {
		return err
	}
	files, walked, skipped, err := expandPaths(paths)
	if err != nil {
		return err
	}
	meter := &progressMeter{fn: opt.Progress}
	for _, f := range files {
		if opt.Progress == nil {
			break // the total only serves progress reports: no stat per file otherwise
		}
		if f == "-" {
			meter.total = -1
			break
		}
		if fi, err := os.Stat(f); err == nil && meter.total >= 0 {
			meter.total += fi.Size()
		}
	}
	if batch <= 0 {
		batch = max(len(files), 1)
	}
	// hand gives fn the Dataset of results (inputs from on), with the skipped files not
	// given yet; part is the reader of the one input in results when it was read in parts.
	hand := func(results []*fileResult, from int, part *partReader) error {
		kept := results[:0]
		for i, res := range results {
			if why, skip := notTelemetry(res); skip && walked[from+i] {
				skipped = append(skipped, Skip{files[from+i], why})
				continue
			}
			kept = append(kept, res)
		}
		ds, err := assemble(kept, opt.workers())
		if part != nil && part.parts > 0 {
			ds.Continued = true
			ds.Inputs[0].Duplicates += part.dups
		}
		ds.Skipped, skipped = skipped, nil
		return fn(ds, err)
	}
	handPart := func(ds *Dataset, err error) error {
		ds.Skipped, skipped = skipped, nil
		return fn(ds, err)
	}
	for from := 0; ; from += batch {
		to := min(from+batch, len(files))
		opt.arena = &slabArena{} // a batch's small files' columns go with it
		results := make([]*fileResult, to-from)
		sem := make(chan struct{}, opt.workers())
		var wg sync.WaitGroup
		for i, f := range files[from:to] {
			wg.Add(1)
			sem <- struct{}{}
			go func() {
				defer wg.Done()
				defer func() { <-sem }()
				results[i] = readNamed(f, opt, meter)
			}()
		}
		wg.Wait()
		// The results in order; an input left for reading in parts is read alone, in its place.
		start := 0
		for i := 0; i <= len(results); i++ {
			if i < len(results) && !results[i].inParts {
				continue
			}
			if i > start || len(results) == 0 {
				if err := hand(results[start:i], from+start, nil); err != nil {
					return err
				}
			}
			if i < len(results) {
				o := opt
				o.part = newPartReader(handPart, opt.workers())
				res := readNamed(files[from+i], o, meter)
				if o.part.err != nil {
					return o.part.err
				}
				if err := hand([]*fileResult{res}, from+i, o.part); err != nil {
					return err
				}
			}
			start = i + 1
		}
		if to == len(files) {
			meter.add(0)
			return nil
		}
	}
}

// readNamed opens and reads one named input ("-" is standard input). With Options.PortParts,
// a large file met in a batch (opt.part nil) is left unread, marked inParts.
func readNamed(name string, opt Options, meter *progressMeter) *fileResult {
	if name == "-" {
		return readInput(name, countingReader{os.Stdin, meter}, opt, sizeOf(os.Stdin))
	}
	f, err := os.Open(name)
	if err != nil {
		res := &fileResult{stats: InputStats{File: name}, fb: newFileBuilder()}
		res.fail(&ParseError{File: name, Err: err}, nil)
		return res
	}
	defer f.Close()
	size := sizeOf(f)
	if opt.PortParts && opt.part == nil && readInParts(name, size) {
		return &fileResult{inParts: true}
	}
	return readInput(name, countingReader{f, meter}, opt, size)
}

// ReadFile reads one input from r; name is used in messages and in the accounting. Gzip is
// recognised by its magic bytes, the format by content (see docs/formats.md). The error rules
// are those of ReadPaths.
func ReadFile(name string, r io.Reader, opt Options) (*Dataset, error) {
	if err := opt.prepare(); err != nil {
		return nil, err
	}
	return assemble([]*fileResult{readInput(name, r, opt, sizeOf(r))}, opt.workers())
}

// assemble merges per-file results, in order, into a Dataset.
func assemble(results []*fileResult, workers int) (*Dataset, error) {
	ds := &Dataset{}
	db := &datasetBuilder{ports: map[string]*portBuf{}}
	var errs []error
	bins := make([]*binRows, len(results))
	for i, res := range results {
		bins[i] = res.bins
		ds.Inputs = append(ds.Inputs, res.stats)
		for _, r := range res.rejects {
			if len(ds.Rejected) < MaxRejectionsKept {
				ds.Rejected = append(ds.Rejected, r)
			}
		}
		ds.Inputs[len(ds.Inputs)-1].Duplicates += db.absorb(res.fb, i)
		if res.strictErr != nil {
			errs = append(errs, res.strictErr)
		}
		if res.fileErr != nil {
			errs = append(errs, res.fileErr)
		}
	}
	ds.Series = db.finish(ds.Inputs, workers)
	attachBins(ds.Series, bins)
	attachProfiles(ds.Series, results)
	return ds, errors.Join(errs...)
}

var gzipMagic = []byte{0x1f, 0x8b}

// readInput hashes the raw bytes, unpacks gzip, drops a BOM and dispatches on content.
func readInput(name string, raw io.Reader, opt Options, size int64) *fileResult {
	res := &fileResult{stats: InputStats{File: name}, fb: newFileBuilder(), sizeHint: size,
		times: opt.times, budget: opt.budget, part: opt.part}
	h := sha256.New()
	br := readerPool.Get().(*bufio.Reader)
	src := &endReader{r: raw}
	var limited io.Reader = src
	if opt.budget != nil {
		limited = budgetReader{src, opt.budget}
	}
	br.Reset(io.TeeReader(limited, h))
	defer func() {
		// Hash what is left so the digest covers the whole input even after an early stop:
		// the rest of a regular file, at most maxDrain bytes of a stream (a device such as
		// /dev/zero never ends). What br buffered is hashed already; an input read to its
		// end has nothing left. An input whose reading in parts was stopped is dropped: not
		// hashed.
		if res.part != nil && res.part.err != nil {
			br.Reset(nil)
			readerPool.Put(br)
			return
		}
		limit := int64(maxDrain)
		if size > 0 {
			limit = math.MaxInt64 - 1
		}
		var n int64
		if !src.ended {
			bp := getBytes(32 << 10)
			n, _ = io.CopyBuffer(h, io.LimitReader(src, limit+1), (*bp)[:cap(*bp)])
			bytesPool.Put(bp)
		}
		if n > limit {
			res.stats.Notes = append(res.stats.Notes, fmt.Sprintf("no SHA-256: the stream went on for more than %d MiB after reading stopped", maxDrain>>20))
		} else {
			res.stats.SHA256 = hex.EncodeToString(h.Sum(nil))
		}
		br.Reset(nil)
		readerPool.Put(br)
	}()
	var r io.Reader = br
	gz := false
	if magic, _ := br.Peek(2); bytes.Equal(magic, gzipMagic) {
		zr, err := gzip.NewReader(br)
		if err != nil {
			res.stats.Format = "gzip"
			res.fail(&ParseError{File: name, Err: fmt.Errorf("%w: gzip header: %v", ErrTruncated, err)}, nil)
			return res
		}
		var unpacked io.Reader = zr
		if opt.budget != nil {
			unpacked = budgetReader{zr, opt.budget}
		}
		r = bufio.NewReaderSize(unpacked, 64*1024)
		gz = true
		res.sizeHint = 0 // the unpacked size is not known
	}
	cr := r.(*bufio.Reader)
	if bom, _ := cr.Peek(3); bytes.Equal(bom, []byte{0xef, 0xbb, 0xbf}) {
		_, _ = cr.Discard(3)
	}
	suffix := ""
	if gz {
		suffix = "+gzip"
	}
	if why := notText(cr); why != "" {
		res.stats.Format = "binary" + suffix
		res.fail(&ParseError{File: name, Err: fmt.Errorf("%w: %s", ErrNotText, why)}, nil)
		return res
	}
	first := firstNonSpace(cr)
	switch first {
	case 0:
		res.stats.Format = "empty" + suffix
		_, err := cr.Peek(1)
		if err != nil && err != io.EOF {
			res.fail(&ParseError{File: name, Err: fmt.Errorf("%w: %v", ErrTruncated, err)}, nil)
		} else {
			res.fail(&ParseError{File: name, Err: ErrEmpty}, nil)
		}
	case '{', '[':
		res.stats.Format = "json" + suffix
		readJSON(res, cr, opt)
	default:
		res.stats.Format = "csv" + suffix
		readCSV(res, cr, opt)
	}
	return res
}

// endReader tells whether its reader has said that it ended (io.EOF).
type endReader struct {
	r     io.Reader
	ended bool
}

func (e *endReader) Read(p []byte) (int, error) {
	n, err := e.r.Read(p)
	if err == io.EOF {
		e.ended = true
	}
	return n, err
}

// maxDrain bounds what is read of a stream of unknown size, only to hash it, after reading
// stopped early.
const maxDrain = 64 << 20

// notText looks at the first 512 bytes of an input and says why it is not text ("" when it
// is): a NUL byte or many control characters mean binary data (an image, an archive, a
// spreadsheet workbook, /dev/zero); a UTF-16 byte-order mark means text in an encoding we do
// not read.
func notText(br *bufio.Reader) string {
	b, _ := br.Peek(512)
	if len(b) >= 2 && (b[0] == 0xff && b[1] == 0xfe || b[0] == 0xfe && b[1] == 0xff) {
		return "UTF-16 text; save the export as UTF-8 (or plain CSV)"
	}
	controls := 0
	for i, c := range b {
		switch {
		case c == 0:
			return fmt.Sprintf("binary data (a NUL byte at offset %d)", i)
		case c < 0x20 && c != '\t' && c != '\n' && c != '\r' && c != '\f' || c == 0x7f:
			controls++
		}
	}
	if controls*10 > len(b) {
		return fmt.Sprintf("binary data (%d control characters in the first %d bytes)", controls, len(b))
	}
	return ""
}

// readerPool recycles the 64 KiB input readers: a folder of thousands of small files would
// otherwise allocate and clear one per file.
var readerPool = sync.Pool{New: func() any { return bufio.NewReaderSize(nil, 64*1024) }}

// bytesPool recycles the byte buffers of small inputs (readCSV's header buffer, readCSVWhole's
// block).
var bytesPool = sync.Pool{New: func() any { return new([]byte) }}

// getBytes returns a pooled buffer of length 0 and capacity at least n.
func getBytes(n int) *[]byte {
	bp := bytesPool.Get().(*[]byte)
	*bp = slices.Grow((*bp)[:0], n)
	return bp
}

// bufferSize is the read buffer for an input of size bytes (0: unknown): 64 KiB, or the size
// of a smaller file, so that thousands of small files do not each allocate and clear 64 KiB.
func bufferSize(size int64) int {
	const full = 64 * 1024
	if size > 0 && size < full {
		return max(int(size)+1, 512)
	}
	return full
}

// firstNonSpace peeks at the first byte that is not white space, or 0 when there is none.
func firstNonSpace(br *bufio.Reader) byte {
	for n := 64; ; n *= 2 {
		b, err := br.Peek(n)
		for _, c := range b {
			if c != ' ' && c != '\t' && c != '\r' && c != '\n' {
				return c
			}
		}
		if err != nil || n >= br.Size() {
			if len(b) == br.Size() { // a buffer full of blanks: let the reader decide
				return ' '
			}
			return 0
		}
	}
}

// sizeOf tells the remaining size of r when r can say (a regular file, a bytes or strings
// reader), else 0.
func sizeOf(r io.Reader) int64 {
	switch x := r.(type) {
	case *os.File:
		if fi, err := x.Stat(); err == nil && fi.Mode().IsRegular() {
			return fi.Size()
		}
	case interface{ Len() int }:
		return int64(x.Len())
	}
	return 0
}
