package parse

import (
	"math"
	"slices"
	"sort"
	"sync"
	"sync/atomic"
)

// portBuf collects one port's rows in arrival order before sorting.
type portBuf struct {
	name     string
	times    timeCol
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
	if p.times.n > 0 {
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
	col := newColBuf(p.hint)
	col.pushNaN(p.times.n)
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
	n := p.times.n
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
		for i, x := range p.times.decode(make([]int64, 0, n)) {
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
		p.rowOf[t] = int32(p.times.n)
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
	p.times.push(t)
	for j, q := range qs {
		p.vals[q].push(vals[j])
	}
}

// addBlock appends a run of rows: times[i] with, for quantity qs[j], the value
// vals[j*len(times)+i] (column after column). codes, when not nil, holds the same values as
// codes at the same places, but for the columns j whose bit is set in wide (values without a
// code). Quantities the port has that qs lacks get NaN.
func (p *portBuf) addBlock(times []int64, qs []Quantity, vals []float64, codes []uint32, wide uint32, qmask uint32) {
	n := len(times)
	prev, have := p.last, p.times.n > 0
	for i, t := range times {
		if have && t <= prev || p.rowOf != nil {
			// A row repeats or goes back in time: merge row by row from here on.
			p.addBlockRows(times, i, qs, vals, codes, wide, qmask)
			return
		}
		prev, have = t, true
	}
	if n > 0 {
		p.noteTime(times[0])
		p.last = times[n-1]
	}
	p.times.pushSlice(times)
	if qmask&^p.mask != 0 {
		for _, q := range qs {
			if p.mask&(1<<q) == 0 {
				p.vals[q] = newColBuf(p.hint)
				p.vals[q].pushNaN(p.times.n - n)
				p.mask |= 1 << q
			}
		}
	}
	for j, q := range qs {
		if codes != nil && wide&(1<<j) == 0 {
			p.vals[q].pushCodes(codes[j*n : (j+1)*n])
		} else {
			p.vals[q].pushSlice(vals[j*n : (j+1)*n])
		}
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
// merges each repeat into the row it repeats. vals, codes and wide are addBlock's.
func (p *portBuf) addBlockRows(times []int64, i int, qs []Quantity, vals []float64, codes []uint32, wide uint32, qmask uint32) {
	n := len(times)
	value := func(j, r int) float64 {
		if codes != nil && wide&(1<<j) == 0 {
			return unpackValue(codes[j*n+r])
		}
		return vals[j*n+r]
	}
	if i > 0 {
		head := make([]float64, i*len(qs))
		for j := range qs {
			for r := range i {
				head[j*i+r] = value(j, r)
			}
		}
		p.addBlock(times[:i], qs, head, nil, 0, qmask)
	}
	row := make([]float64, len(qs))
	for ; i < n; i++ {
		for j := range qs {
			row[j] = value(j, i)
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
		g.runs = append(g.runs, fileRun{g.times.n, fileIdx})
		if p.times.n > 0 && g.times.n > 0 {
			if first := p.times.first(); first < g.last {
				g.unsorted = true
			} else if first == g.last {
				g.ties = true
			}
		}
		g.unsorted = g.unsorted || p.unsorted
		g.ties = g.ties || p.ties
		if p.times.n > 0 {
			g.last = p.last
		}
		for q := Quantity(0); q < NumQuantities; q++ {
			if p.mask&(1<<q) != 0 {
				g.ensure(q)
			}
		}
		g.times.append(&p.times)
		for q := Quantity(0); q < NumQuantities; q++ {
			if g.mask&(1<<q) == 0 {
				continue
			}
			if p.mask&(1<<q) != 0 {
				g.vals[q].appendCol(p.vals[q])
				p.vals[q] = nil
			} else {
				g.vals[q].pushNaN(p.times.n)
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
				s := &Series{Port: p.name, Inputs: fileOf[inputsAt[i]:inputsAt[i+1]:inputsAt[i+1]]}
				ps := &packedSeries{times: p.times, has: p.mask, cols: make([]packedCol, 0, popcount(p.mask))}
				for q := Quantity(0); q < NumQuantities; q++ {
					if p.mask&(1<<q) != 0 {
						ps.cols = append(ps.cols, p.vals[q].finish())
						p.vals[q] = nil
					}
				}
				p.times = timeCol{}
				if p.unsorted || p.ties {
					dups := sortDedupe(ps, p.runs, p.unsorted)
					mu.Lock()
					for f, c := range dups {
						inputs[f].Duplicates += c
					}
					mu.Unlock()
				}
				for q := Quantity(0); q < NumQuantities; q++ {
					if p.mask&(1<<q) != 0 && ps.col(q).anyFinite() {
						ps.finite |= 1 << q
					}
				}
				s.packed = ps
				out[i] = s
			}
		}()
	}
	wg.Wait()
	return out
}

// sortDedupe sorts s by time (stably) and keeps the last of each run of equal times; runs say
// which input each arrival-order row came from, to charge it the replaced rows.
func sortDedupe(s *packedSeries, runs []fileRun, unsorted bool) (dupsByFile map[int]int) {
	dupsByFile = map[int]int{}
	times := s.times.decode(make([]int64, 0, s.times.n))
	n := len(times)
	perm := make([]int32, n)
	for i := range perm {
		perm[i] = int32(i)
	}
	if unsorted {
		slices.SortStableFunc(perm, func(a, b int32) int {
			ta, tb := times[a], times[b]
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
		k := sort.Search(len(runs), func(i int) bool { return runs[i].start > int(row) }) - 1
		if k < 0 {
			k = 0
		}
		return runs[k].file
	}
	keep := make([]int32, 0, n)
	for i := 0; i < n; i++ {
		if i+1 < n && times[perm[i+1]] == times[perm[i]] {
			// perm[i] is replaced by the later row perm[i+1].
			if len(runs) > 0 {
				dupsByFile[fileOf(perm[i+1])]++
			}
			continue
		}
		keep = append(keep, perm[i])
	}
	kept := make([]int64, len(keep))
	for i, r := range keep {
		kept[i] = times[r]
	}
	s.times = timesOf(kept)
	for i := range s.cols {
		s.cols[i] = s.cols[i].pick(keep)
	}
	return dupsByFile
}
