package parse

import (
	"errors"
	"slices"
	"strings"
	"sync"
	"sync/atomic"
)

// ErrNotGrouped stops a reading in parts (Options.PortParts) when a port's rows turn out not to
// lie together after some of the input's ports were handed over: the caller that needs every
// port whole reads the inputs again, whole.
var ErrNotGrouped = errors.New("parse: the input's rows are not grouped by port")

// partMinBytes is the size from which ReadEach reads an input in parts (Options.PortParts),
// partMinGzip that of a file named .gz: smaller inputs are read whole, in batches with their
// neighbours. A part is handed over once its ports hold partRows rows or partPorts ports: some
// tens of MB of telemetry, and enough ports to keep every core busy judging them. (Variables
// for the tests.)
var (
	partMinBytes int64 = 4 * chunkSize
	partMinGzip  int64 = chunkSize / 4
	partRows           = 1 << 19
	partPorts          = 1024
)

// readInParts reports whether the file name of size bytes is read in parts.
func readInParts(name string, size int64) bool {
	if strings.HasSuffix(strings.ToLower(name), ".gz") {
		return size >= partMinGzip
	}
	return size >= partMinBytes
}

// partReader hands over the ports of one input, a part at a time, as they complete, for an
// input whose rows come grouped by port (each port's rows one run, in any port order): while
// the input is read, a port is complete once a row of another port follows its run. runBlocks'
// merge checks every block (take): a block in which a port's rows are not one run, or that names
// a port seen before other than the one still open, shows the input is not grouped. Before the
// first part is handed over the input is then simply read whole (off); after, the reading stops
// with ErrNotGrouped, as parts already handed over would be incomplete.
//
// What is handed over equals what reading whole gives, split by port: each port's series (its
// rows, merged duplicates, bins and profiles), the rejections in input order, and the input's
// accounting so far, which the last part's replaces (Dataset.Continued).
type partReader struct {
	hand    func(ds *Dataset, err error) error // the consumer (ReadEach's fn)
	workers int

	// mu guards the input's accounting (fileResult's stats, rejections, bins, profiles and
	// errors), which the blocks' accounting updates while a part takes its share.
	mu sync.Mutex

	// off: not grouped, found before any part was handed over: read whole (set by the merge
	// goroutine, read by the one that cuts the blocks).
	off atomic.Bool

	// Used by the merge goroutine only:
	handed  map[string]struct{} // the ports handed over
	open    *portBuf            // the port whose run the last block ended in
	pending int                 // rows applied to the ports not handed over yet
	parts   int                 // parts handed over
	dups    int                 // duplicates replaced in the ports handed over
	err     error               // why reading stopped: ErrNotGrouped, or the consumer's error
}

func newPartReader(hand func(*Dataset, error) error, workers int) *partReader {
	return &partReader{hand: hand, workers: workers, handed: map[string]struct{}{}}
}

// grouped reports whether job continues an input grouped by port: each of its ports' rows one
// run, and each port new but for the first, which may continue the open port.
func (pr *partReader) grouped(fb *fileBuilder, job *csvJob) bool {
	start := int32(0)
	for g, name := range job.names {
		end := job.groupEnd[g]
		if job.spread[g] != end-start-1 {
			return false
		}
		start = end
		if _, ok := pr.handed[name]; ok {
			return false
		}
		if p := fb.ports[name]; p != nil && (g > 0 || p != pr.open) {
			return false
		}
	}
	return true
}

// take applies a parsed, accounted job to res.fb and hands over a part when enough ports are
// complete; false stops the input (pr.err says why).
func (pr *partReader) take(res *fileResult, job *csvJob, apply func(*fileBuilder, *csvJob)) bool {
	fb := res.fb
	if pr.off.Load() {
		apply(fb, job)
		return true
	}
	if !pr.grouped(fb, job) {
		if pr.parts > 0 {
			pr.err = ErrNotGrouped
			return false
		}
		pr.off.Store(true)
		apply(fb, job)
		return true
	}
	apply(fb, job)
	if len(job.names) == 0 {
		return true
	}
	pr.pending += len(job.times)
	pr.open = fb.ports[job.names[len(job.names)-1]]
	closed := len(fb.order) - 1 // the open port is the last seen
	if closed == 0 || closed < partPorts && pr.pending-pr.open.times.n < partRows {
		return true
	}
	ports := slices.Clone(fb.order[:closed])
	clear(fb.order[:closed])
	fb.order[0] = pr.open
	fb.order = fb.order[:1]
	fb.lastP = pr.open
	for _, p := range ports {
		delete(fb.ports, p.name)
		pr.handed[p.name] = struct{}{}
	}
	pr.pending = pr.open.times.n
	return pr.handOver(res, ports)
}

// handOver builds the Dataset of the complete ports and hands it over with the input's
// accounting so far; false when the consumer's error stops the input.
func (pr *partReader) handOver(res *fileResult, ports []*portBuf) bool {
	db := &datasetBuilder{ports: make(map[string]*portBuf, len(ports))}
	in := []InputStats{{}}
	dups := db.absorb(&fileBuilder{order: ports}, 0)
	series := db.finish(in, pr.workers)
	pr.dups += dups + in[0].Duplicates
	names := make(map[string]struct{}, len(ports))
	for _, p := range ports {
		names[p.name] = struct{}{}
	}

	pr.mu.Lock()
	stats := res.stats
	stats.Notes = slices.Clone(stats.Notes)
	stats.Duplicates = pr.dups
	ds := &Dataset{Series: series, Inputs: []InputStats{stats}, Rejected: res.rejects, Continued: pr.parts > 0}
	res.rejTaken += len(res.rejects)
	res.rejects = nil
	bins := res.bins.split(names)
	var profiles map[string][]ProfileMention
	for name := range names {
		if ms, ok := res.profiles[name]; ok {
			if profiles == nil {
				profiles = map[string][]ProfileMention{}
			}
			profiles[name] = ms
			delete(res.profiles, name)
		}
	}
	err := errors.Join(res.strictErr, res.fileErr)
	pr.mu.Unlock()

	attachBins(series, []*binRows{bins})
	for _, s := range series {
		s.Profiles = profiles[s.Port]
	}
	pr.parts++
	if e := pr.hand(ds, err); e != nil {
		pr.err = e
		return false
	}
	return true
}

// split moves the rows of the ports in names to a new binRows (nil when br is).
func (br *binRows) split(names map[string]struct{}) *binRows {
	if br == nil {
		return nil
	}
	out := &binRows{lay: br.lay}
	nl, nh := len(br.lay.lowQs), len(br.lay.highQs)
	kept := 0
	for i, p := range br.ports {
		if _, ok := names[p]; ok {
			out.ports = append(out.ports, p)
			out.times = append(out.times, br.times[i])
			out.lengthMs = append(out.lengthMs, br.lengthMs[i])
			out.low = append(out.low, br.low[i*nl:(i+1)*nl]...)
			out.high = append(out.high, br.high[i*nh:(i+1)*nh]...)
			continue
		}
		br.ports[kept], br.times[kept], br.lengthMs[kept] = p, br.times[i], br.lengthMs[i]
		copy(br.low[kept*nl:(kept+1)*nl], br.low[i*nl:(i+1)*nl])
		copy(br.high[kept*nh:(kept+1)*nh], br.high[i*nh:(i+1)*nh])
		kept++
	}
	br.ports, br.times, br.lengthMs = br.ports[:kept], br.times[:kept], br.lengthMs[:kept]
	br.low, br.high = br.low[:kept*nl], br.high[:kept*nh]
	return out
}
