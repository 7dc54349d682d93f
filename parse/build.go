package parse

import (
	"math"
	"slices"
	"sort"
)

// colBuf is a column of values growing in segments, so that appending never copies what is
// already stored; flatten makes the one contiguous slice at the end. Segments start small (a
// port with few rows costs little) and grow to maxSeg values.
type colBuf struct {
	segs [][]float64
	n    int
}

const (
	minSeg = 16
	maxSeg = 8192
)

func (c *colBuf) push(v float64) {
	k := len(c.segs)
	if k == 0 || len(c.segs[k-1]) == cap(c.segs[k-1]) {
		size := maxSeg
		if k < 10 {
			size = min(minSeg<<k, maxSeg)
		}
		c.segs = append(c.segs, make([]float64, 0, size))
		k++
	}
	c.segs[k-1] = append(c.segs[k-1], v)
	c.n++
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
	last     int64
	unsorted bool // some time is smaller than its predecessor
	ties     bool // some time equals its predecessor
	runs     []fileRun
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
	col := &colBuf{}
	nan := math.NaN()
	for range len(p.times) {
		col.push(nan)
	}
	p.vals[q] = col
	p.mask |= 1 << q
}

// addDense appends one row whose values vals[j] belong to qs[j]; every quantity the port has
// that is not in qs gets NaN. The per-file CSV path always passes the file's full column set.
func (p *portBuf) addDense(t int64, qs []Quantity, vals []float64, qmask uint32) {
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

// absorb moves the ports of file number fileIdx into the dataset.
func (db *datasetBuilder) absorb(fb *fileBuilder, fileIdx int) {
	for _, p := range fb.order {
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
}

// finish sorts every port by time (stably), keeps the last row of each run of equal times,
// counts the replaced rows against the file of the row that replaced them, and returns the
// series sorted by port name.
func (db *datasetBuilder) finish(inputs []InputStats) []*Series {
	out := make([]*Series, 0, len(db.ports))
	for _, p := range db.ports {
		s := &Series{Port: p.name}
		for q := Quantity(0); q < NumQuantities; q++ {
			if p.mask&(1<<q) != 0 {
				s.Values[q] = p.vals[q].flatten()
				p.vals[q] = nil
			}
		}
		s.TimesMs = p.times
		if p.unsorted || p.ties {
			sortDedupe(s, p.runs, p.unsorted, inputs)
		}
		out = append(out, s)
	}
	sort.Slice(out, func(i, j int) bool { return out[i].Port < out[j].Port })
	return out
}

// sortDedupe sorts s by time (stably) and keeps the last of each run of equal times; runs say
// which input each arrival-order row came from, to charge it the replaced rows.
func sortDedupe(s *Series, runs []fileRun, unsorted bool, inputs []InputStats) {
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
				inputs[fileOf(perm[i+1])].Duplicates++
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
}
