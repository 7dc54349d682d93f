package parse

import (
	"math"
	"slices"
	"sort"
	"sync"
	"sync/atomic"
)

// colBuf is a column of values growing in segments, so that appending never copies what is
// already stored; flatten makes the one contiguous slice at the end. Segments start small (a
// port with few rows costs little) and grow to maxSeg values.
type colBuf struct {
	segs [][]float64
	n    int
	hint int // expected length: the size of the first segment when > 0
}

func (c *colBuf) newSeg(k int) []float64 { return make([]float64, 0, c.segSize(k)) }

// segSize is the capacity of segment number k.
func (c *colBuf) segSize(k int) int {
	if k == 0 && c.hint > 0 {
		return c.hint
	}
	size := maxSeg
	if k < 10 {
		size = min(minSeg<<k, maxSeg)
	}
	return max(size, c.hint/8)
}

const (
	minSeg = 16
	maxSeg = 8192
)

func (c *colBuf) push(v float64) {
	k := len(c.segs)
	if k == 0 || len(c.segs[k-1]) == cap(c.segs[k-1]) {
		c.segs = append(c.segs, c.newSeg(k))
		k++
	}
	c.segs[k-1] = append(c.segs[k-1], v)
	c.n++
}

// pushSlice appends vs, filling the last segment and adding segments as needed.
func (c *colBuf) pushSlice(vs []float64) {
	for len(vs) > 0 {
		k := len(c.segs)
		if k == 0 || len(c.segs[k-1]) == cap(c.segs[k-1]) {
			c.segs = append(c.segs, c.newSeg(k))
			k++
		}
		last := c.segs[k-1]
		m := min(cap(last)-len(last), len(vs))
		c.segs[k-1] = append(last, vs[:m]...)
		c.n += m
		vs = vs[m:]
	}
}

func (c *colBuf) pushNaN(n int) {
	nan := math.NaN()
	for range n {
		c.push(nan)
	}
}

// set overwrites value number i, looking from the newest segment (a repeat is usually recent).
func (c *colBuf) set(i int, v float64) {
	end := c.n
	for k := len(c.segs) - 1; k >= 0; k-- {
		start := end - len(c.segs[k])
		if i >= start {
			c.segs[k][i-start] = v
			return
		}
		end = start
	}
}

// flatten returns the values as one slice and empties c.
func (c *colBuf) flatten() []float64 {
	if len(c.segs) == 1 {
		out := c.segs[0]
		c.segs, c.n = nil, 0
		return out
	}
	out := make([]float64, 0, c.n)
	for i, sg := range c.segs {
		out = append(out, sg...)
		c.segs[i] = nil // let the segment go as soon as it is copied
	}
	c.segs, c.n = nil, 0
	return out
}

// portBuf collects one port's rows in arrival order before sorting.
type portBuf struct {
	name     string
	times    []int64
	vals     [NumQuantities]*colBuf // nil until the port has a column for q
	mask     uint32                 // bit q set when vals[q] != nil
	hint     int                    // expected row count, 0 when unknown
	last     int64
	unsorted bool // some time is smaller than its predecessor
	ties     bool // some time equals its predecessor
	runs     []fileRun
	merged   int // rows that repeated a time of the port and replaced that row as they arrived
	// rowOf maps each time to its row once the port's times have gone backwards (nil before):
	// a repeat of any earlier time is then found and merged as it arrives.
	rowOf map[int64]int32
}

// fileRun says that rows from start on came from input file (index into Dataset.Inputs).
type fileRun struct {
	start int
	file  int
}

func (p *portBuf) noteTime(t int64) {
	if len(p.times) > 0 {
		if t < p.last {
			p.unsorted = true
		} else if t == p.last {
			p.ties = true
		}
	}
	p.last = t
}

// ensure gives the port a column for q, padded with NaN for the rows it already has.
func (p *portBuf) ensure(q Quantity) {
	if p.mask&(1<<q) != 0 {
		return
	}
	col := &colBuf{hint: p.hint}
	nan := math.NaN()
	for range len(p.times) {
		col.push(nan)
	}
	p.vals[q] = col
	p.mask |= 1 << q
}

// replaceRow overwrites row i of the port with a row of the same time that came later (the
// later row wins, docs/formats.md): duplicates are merged as they arrive, so an input that
// repeats rows does not grow memory. vals[j] belongs to qs[j]; quantities the port has that the
// row lacks become NaN, as the whole row is replaced.
func (p *portBuf) replaceRow(i int, qs []Quantity, vals []float64, qmask uint32) {
	for q := Quantity(0); q < NumQuantities; q++ {
		if p.mask&(1<<q) != 0 && qmask&(1<<q) == 0 {
			p.vals[q].set(i, math.NaN())
		}
	}
	for j, q := range qs {
		p.ensure(q)
		p.vals[q].set(i, vals[j])
	}
	p.merged++
}

// repeatOf returns the row that already holds time t, if any: the last row when t is the last
// time; otherwise, once times have gone backwards, through rowOf (built on first need).
func (p *portBuf) repeatOf(t int64) (int, bool) {
	n := len(p.times)
	switch {
	case n == 0:
		return 0, false
	case t == p.last:
		return n - 1, true
	case p.rowOf == nil && t > p.last:
		return 0, false // still in time order: no earlier row can hold t
	}
	if p.rowOf == nil {
		p.rowOf = make(map[int64]int32, n)
		for i, x := range p.times {
			p.rowOf[x] = int32(i) // a time can appear once only: repeats were merged
		}
	}
	i, ok := p.rowOf[t]
	return int(i), ok
}

// addDense appends one row whose values vals[j] belong to qs[j]; every quantity the port has
// that is not in qs gets NaN. The per-file CSV path always passes the file's full column set.
// A row with a time the port already has replaces that row instead.
func (p *portBuf) addDense(t int64, qs []Quantity, vals []float64, qmask uint32) {
	if i, ok := p.repeatOf(t); ok {
		p.replaceRow(i, qs, vals, qmask)
		return
	}
	if p.rowOf != nil {
		p.rowOf[t] = int32(len(p.times))
	}
	p.noteTime(t)
	if p.mask&^qmask != 0 || qmask&^p.mask != 0 {
		for _, q := range qs {
			p.ensure(q)
		}
		for q := Quantity(0); q < NumQuantities; q++ {
			if p.mask&(1<<q) != 0 && qmask&(1<<q) == 0 {
				p.vals[q].push(math.NaN())
			}
		}
	}
	p.times = append(p.times, t)
	for j, q := range qs {
		p.vals[q].push(vals[j])
	}
}

// addBlock appends a run of rows: times[i] with, for quantity qs[j], the value
// vals[j*len(times)+i] (column after column). Quantities the port has that qs lacks get NaN.
func (p *portBuf) addBlock(times []int64, qs []Quantity, vals []float64, qmask uint32) {
	n := len(times)
	prev, have := p.last, len(p.times) > 0
	for i, t := range times {
		if have && t <= prev || p.rowOf != nil {
			// A row repeats or goes back in time: merge row by row from here on.
			p.addBlockRows(times, i, qs, vals, qmask)
			return
		}
		prev, have = t, true
	}
	for _, t := range times {
		p.noteTime(t)
		p.times = append(p.times, t)
	}
	if qmask&^p.mask != 0 {
		for _, q := range qs {
			if p.mask&(1<<q) == 0 {
				p.vals[q] = &colBuf{hint: p.hint}
				p.vals[q].pushNaN(len(p.times) - n)
				p.mask |= 1 << q
			}
		}
	}
	for j, q := range qs {
		p.vals[q].pushSlice(vals[j*n : (j+1)*n])
	}
	if p.mask&^qmask != 0 {
		for q := Quantity(0); q < NumQuantities; q++ {
			if p.mask&(1<<q) != 0 && qmask&(1<<q) == 0 {
				p.vals[q].pushNaN(n)
			}
		}
	}
}

// addBlockRows is addBlock's careful path, for a run whose row i repeats or precedes a time
// before it: rows before i are appended as a block, the rest one by one with addDense, which
// merges each repeat into the row it repeats.
func (p *portBuf) addBlockRows(times []int64, i int, qs []Quantity, vals []float64, qmask uint32) {
	n := len(times)
	if i > 0 {
		head := make([]float64, i*len(qs))
		for j := range qs {
			copy(head[j*i:(j+1)*i], vals[j*n:j*n+i])
		}
		p.addBlock(times[:i], qs, head, qmask)
	}
	row := make([]float64, len(qs))
	for ; i < n; i++ {
		for j := range qs {
			row[j] = vals[j*n+i]
		}
		p.addDense(times[i], qs, row, qmask)
	}
}

// fileBuilder gathers the rows of one input.
type fileBuilder struct {
	ports map[string]*portBuf
	order []*portBuf
	lastP *portBuf
}

func newFileBuilder() *fileBuilder { return &fileBuilder{ports: map[string]*portBuf{}} }

// port returns the buffer of the port named by b, interning the name on first sight.
func (fb *fileBuilder) port(b []byte) *portBuf {
	if fb.lastP != nil && fb.lastP.name == bytesString(b) {
		return fb.lastP
	}
	p := fb.ports[string(b)] // no allocation for the lookup
	if p == nil {
		p = &portBuf{name: string(b)}
		fb.ports[p.name] = p
		fb.order = append(fb.order, p)
	}
	fb.lastP = p
	return p
}

// datasetBuilder merges the files' builders in input order.
type datasetBuilder struct {
	ports map[string]*portBuf
}

// absorb moves the ports of file number fileIdx into the dataset and returns how many of the
// file's rows were merged into an earlier row of the file as they arrived.
func (db *datasetBuilder) absorb(fb *fileBuilder, fileIdx int) (merged int) {
	for _, p := range fb.order {
		merged += p.merged
		p.merged, p.rowOf = 0, nil
		g := db.ports[p.name]
		if g == nil {
			p.runs = []fileRun{{0, fileIdx}}
			db.ports[p.name] = p
			continue
		}
		g.runs = append(g.runs, fileRun{len(g.times), fileIdx})
		if len(p.times) > 0 && len(g.times) > 0 {
			if p.times[0] < g.last {
				g.unsorted = true
			} else if p.times[0] == g.last {
				g.ties = true
			}
		}
		g.unsorted = g.unsorted || p.unsorted
		g.ties = g.ties || p.ties
		if len(p.times) > 0 {
			g.last = p.last
		}
		for q := Quantity(0); q < NumQuantities; q++ {
			if p.mask&(1<<q) != 0 {
				g.ensure(q)
			}
		}
		g.times = append(g.times, p.times...)
		for q := Quantity(0); q < NumQuantities; q++ {
			if g.mask&(1<<q) == 0 {
				continue
			}
			if p.mask&(1<<q) != 0 {
				for _, sg := range p.vals[q].segs {
					for _, v := range sg {
						g.vals[q].push(v)
					}
				}
				p.vals[q] = nil
			} else {
				for range len(p.times) {
					g.vals[q].push(math.NaN())
				}
			}
		}
	}
	return merged
}

// finish sorts every port by time (stably), keeps the last row of each run of equal times,
// counts the replaced rows against the file of the row that replaced them, and returns the
// series sorted by port name. Ports are finished in parallel on up to workers goroutines.
func (db *datasetBuilder) finish(inputs []InputStats, workers int) []*Series {
	ports := make([]*portBuf, 0, len(db.ports))
	for _, p := range db.ports {
		ports = append(ports, p)
	}
	sort.Slice(ports, func(i, j int) bool { return ports[i].name < ports[j].name })
	out := make([]*Series, len(ports))
	// Each series' Inputs is a piece of one slice: absorb added one run per input, in order.
	fileOf := make([]int, 0, len(ports))
	for _, p := range ports {
		for _, r := range p.runs {
			fileOf = append(fileOf, r.file)
		}
	}
	inputsAt := make([]int, len(ports)+1)
	for i, p := range ports {
		inputsAt[i+1] = inputsAt[i] + len(p.runs)
	}
	var (
		mu   sync.Mutex
		next atomic.Int64
		wg   sync.WaitGroup
	)
	for range max(1, min(workers, len(ports))) {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for {
				i := int(next.Add(1) - 1)
				if i >= len(ports) {
					return
				}
				p := ports[i]
				s := &Series{Port: p.name, TimesMs: p.times, Inputs: fileOf[inputsAt[i]:inputsAt[i+1]:inputsAt[i+1]]}
				for q := Quantity(0); q < NumQuantities; q++ {
					if p.mask&(1<<q) != 0 {
						s.Values[q] = p.vals[q].flatten()
						p.vals[q] = nil
					}
				}
				if p.unsorted || p.ties {
					dups := sortDedupe(s, p.runs, p.unsorted)
					mu.Lock()
					for f, c := range dups {
						inputs[f].Duplicates += c
					}
					mu.Unlock()
				}
				out[i] = s
			}
		}()
	}
	wg.Wait()
	return out
}

// sortDedupe sorts s by time (stably) and keeps the last of each run of equal times; runs say
// which input each arrival-order row came from, to charge it the replaced rows.
func sortDedupe(s *Series, runs []fileRun, unsorted bool) (dupsByFile map[int]int) {
	dupsByFile = map[int]int{}
	p := struct {
		times []int64
		runs  []fileRun
	}{s.TimesMs, runs}
	n := len(p.times)
	perm := make([]int32, n)
	for i := range perm {
		perm[i] = int32(i)
	}
	if unsorted {
		slices.SortStableFunc(perm, func(a, b int32) int {
			ta, tb := p.times[a], p.times[b]
			switch {
			case ta < tb:
				return -1
			case ta > tb:
				return 1
			}
			return 0
		})
	}
	fileOf := func(row int32) int {
		k := sort.Search(len(p.runs), func(i int) bool { return p.runs[i].start > int(row) }) - 1
		if k < 0 {
			k = 0
		}
		return p.runs[k].file
	}
	keep := make([]int32, 0, n)
	for i := 0; i < n; i++ {
		if i+1 < n && p.times[perm[i+1]] == p.times[perm[i]] {
			// perm[i] is replaced by the later row perm[i+1].
			if len(p.runs) > 0 {
				dupsByFile[fileOf(perm[i+1])]++
			}
			continue
		}
		keep = append(keep, perm[i])
	}
	times := make([]int64, len(keep))
	for i, r := range keep {
		times[i] = p.times[r]
	}
	s.TimesMs = times
	for q := Quantity(0); q < NumQuantities; q++ {
		if s.Values[q] == nil {
			continue
		}
		col := make([]float64, len(keep))
		for i, r := range keep {
			col[i] = s.Values[q][r]
		}
		s.Values[q] = col
	}
	return dupsByFile
}
