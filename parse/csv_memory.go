package parse

import "sync"

// capacityHint pre-sizes the columns of the ports seen in an input's first block, when the
// input's size is known: a port with c rows in a first block of b bytes is expected to have
// about c·size/b rows in all. Regular telemetry (every port every interval) then fills exactly
// one allocation per column, which finish hands over without copying; a wrong guess only
// costs extra segments. All the hinted columns (narrow values, see colBuf) are cut from one
// slab; times need none (see timeCol).
//
// Only ports whose rows are spread over most of the block are hinted: in a file sorted by
// port the first block holds a few ports end to end, and scaling their counts up would
// reserve far too much.
type capacityHint struct {
	rows []int   // expected rows of each group (port) of the block; 0: not hinted
	voff []int   // first value of each group in vals
	vals []int16 // group g, column j: vals[voff[g] + j*rows[g] : … + rows[g]]
}

// newCapacityHint hints the groups of job; cols(g) is the number of columns of group g.
//
// A block in which (nearly) every port is spread over the block or seen once holds the fleet's
// ports one sample time after another; with thousands of ports it sees each only once or twice,
// too few to scale up port by port (a port seen twice would get twice the room of one seen
// once), so each port seen fewer than 8 times is expected to have the block's mean rows per port.
func newCapacityHint(job *csvJob, ratio float64, cols func(g int) int) *capacityHint {
	np := len(job.names)
	h := &capacityHint{rows: make([]int, np), voff: make([]int, np)}
	blockRows := len(job.times)
	count := func(g int) int32 {
		if g == 0 {
			return job.groupEnd[0]
		}
		return job.groupEnd[g] - job.groupEnd[g-1]
	}
	spreadOrOnce := 0
	for g := range np {
		if count(g) == 1 || 2*int(job.spread[g]) >= blockRows {
			spreadOrOnce++
		}
	}
	timeMajor := spreadOrOnce*10 >= np*9
	mean := float64(blockRows) / float64(np)
	total, nvals := 0, 0
	for g := range np {
		h.voff[g] = nvals
		var expect float64
		switch c := count(g); {
		case timeMajor && c < 8:
			expect = mean
		case 2*int(job.spread[g]) >= blockRows:
			// +1 row: the first block sees each port a few dozen times, so its count is
			// easily off by one.
			expect = float64(c + 1)
		default:
			continue
		}
		// 5 % and 16 rows of slack: capacity never written costs only address space.
		h.rows[g] = int(expect*ratio*1.05) + 16
		total += h.rows[g]
		nvals += h.rows[g] * cols(g)
	}
	if total == 0 {
		return nil
	}
	h.vals = make([]int16, nvals)
	return h
}

// exactHint sizes the columns of every port of a whole-input job to its rows in the job, cut
// from one slab for the file: the ports' columns are then filled without growing and handed
// over by finish without a copy.
func exactHint(job *csvJob, k int, arena *slabArena) *capacityHint {
	if len(job.names) == 0 {
		return nil
	}
	h := &capacityHint{rows: make([]int, len(job.names)), voff: make([]int, len(job.names))}
	start, total := int32(0), 0
	for g := range job.names {
		end := job.groupEnd[g]
		h.voff[g], h.rows[g] = total*k, int(end-start)
		total += h.rows[g]
		start = end
	}
	h.vals = arena.values(total * k)
	return h
}

// slabArena cuts the columns of many small inputs from a few large chunks: thousands of files'
// columns allocated one by one would each be allocated, cleared and faulted in on their own.
// A nil arena allocates plainly. Safe for concurrent use.
type slabArena struct {
	mu sync.Mutex
	c  []int16
}

// arenaChunk is the number of values in one chunk (2 MiB).
const arenaChunk = 1 << 20

// values cuts n narrow values from the current chunk, starting a new chunk when it is full;
// requests above a quarter chunk get their own allocation.
func (a *slabArena) values(n int) []int16 {
	if a == nil || n > arenaChunk/4 {
		return make([]int16, n)
	}
	a.mu.Lock()
	defer a.mu.Unlock()
	if cap(a.c)-len(a.c) < n {
		a.c = make([]int16, 0, arenaChunk)
	}
	m := len(a.c)
	a.c = a.c[:m+n]
	return a.c[m : m+n : m+n]
}

// apply gives port p (group g of the hinted block) its pre-sized columns.
func (h *capacityHint) apply(p *portBuf, g int, qs []Quantity) {
	n := h.rows[g]
	if n == 0 {
		return
	}
	p.hint = n
	for j, q := range qs {
		a := h.voff[g] + j*n
		p.vals[q] = &colBuf{narrow: segs[int16]{hint: n, s: [][]int16{h.vals[a : a : a+n]}}}
		p.mask |= 1 << q
	}
}
