package parse

import "math"

// The compact column store. A series read by this package keeps its columns packed until a
// consumer asks for them (Series.Decoded), so that a fleet's rows cost about 4 bytes per value
// instead of 8, and regular sample times cost nothing per row:
//
//   - A value is stored as a 32-bit code m·10^-k, with m a signed 27-bit integer and
//     k ∈ [-8, 22], whenever decoding gives back exactly the float64 read. Decoding is one
//     correctly rounded IEEE 754 operation on two exact operands (m and 10^|k| are both exact
//     in float64 for |m| < 2^53, |k| ≤ 22), the fast path of Clinger (1990) that parseFloat
//     also takes: the decoded value is the same float64, bit for bit, not an approximation.
//     Telemetry exports write at most 7 significant digits (a BER as 1.25E-03, a power as
//     -5.04, a frequency as 191.7125), which always fit. A port's column holding a value
//     that has no code (more digits, or a value computed by a unit conversion such as mW →
//     dBm) is stored as plain float64 instead, for that port only.
//   - Times are stored as runs of equal steps (start, step, count): a port sampled every
//     interval is one run whatever its length. A port whose times are irregular (more than
//     one run per three rows) keeps plain int64 milliseconds.

const (
	codeKBias    = 8         // k is stored as k + codeKBias in the low 5 bits
	codeKMask    = 1<<5 - 1  // the k field
	codeKSpecial = codeKMask // the k field of the NaN code
	codeMaxMant  = 1<<26 - 1 // |m| ≤ codeMaxMant
	codeMaxK     = 22        // 10^22 is the largest power of ten exact in float64
	codeMinK     = -codeKBias
	nanCode      = uint32(codeKSpecial) // the code of NaN (a missing value)
	// wideMark stands for a value without a code in a CSV block's codes (csvJob.codes); it
	// is never stored.
	wideMark = uint32(1<<5 | codeKSpecial)
)

// unpackValue decodes a value code.
func unpackValue(c uint32) float64 {
	kf := c & codeKMask
	if kf == codeKSpecial {
		return math.NaN()
	}
	return valueOf(codeParts(c))
}

// codeOf is the code of m·10^-k (|m| ≤ codeMaxMant, k in range).
func codeOf(m int32, k int) uint32 { return uint32(m)<<5 | uint32(k+codeKBias) }

// packValue returns the code of v when one decodes to exactly v; hint is the k to try first
// (the column's previous one) and is updated to the k found. NaN packs; -0 does not (its sign
// would be lost).
//
// Any k at which v has a code will do; the one tried after the hint is the largest k at which
// |m| still fits, which has a code whenever any k has: a decimal d·10^-j read correctly rounded
// is m·10^-k exactly for every k ≥ j, and the rounding of v·10^k to m is off by far less than
// one half for |m| < 2^26.
func packValue(v float64, hint *int8) (uint32, bool) {
	if v != v {
		return nanCode, true
	}
	if v == 0 {
		if math.Signbit(v) {
			return 0, false
		}
		return codeOf(0, 0), true
	}
	if c, ok := tryCode(v, int(*hint)); ok {
		return c, true
	}
	a := math.Abs(v)
	// a is in [2^e, 2^(e+1)): a·10^k ≤ 2^26 - 1 for k about (25 - e)·log10(2).
	e := int(math.Float64bits(a)>>52&0x7ff) - 1023
	k := min(max(int(math.Floor(float64(25-e)*log10Of2)), codeMinK), codeMaxK)
	for k < codeMaxK && scale10(a, k+1) <= codeMaxMant {
		k++
	}
	for k > codeMinK && scale10(a, k) > codeMaxMant {
		k--
	}
	c, ok := tryCode(v, k)
	if !ok {
		return 0, false
	}
	// The fewest decimals: neighbouring values of a column then share their exponent, which
	// the narrow column store needs (see colBuf).
	m := int32(c) >> 5
	for k > codeMinK && m%10 == 0 {
		m /= 10
		k--
	}
	*hint = int8(k)
	return codeOf(m, k), true
}

// codeParts splits a code (not NaN) into its mantissa and exponent.
func codeParts(c uint32) (m int64, k int) {
	return int64(int32(c) >> 5), int(c&codeKMask) - codeKBias
}

// valueOf is m·10^-k, m and 10^|k| being exact in float64 (|m| < 2^53, |k| ≤ 22): the same
// float64 as the code of any m'·10^-k' equal to it, one correctly rounded operation either way.
func valueOf(m int64, k int) float64 {
	if k >= 0 {
		return float64(m) / exactPow10[k]
	}
	return float64(m) * exactPow10[-k]
}

// log10Of2 is log10(2).
const log10Of2 = 0.301029995663981195213738894724493026768189881462108541310

// scale10 is a·10^k, rounded (for a comparison of magnitudes only).
func scale10(a float64, k int) float64 {
	if k >= 0 {
		return a * exactPow10[k]
	}
	return a / exactPow10[-k]
}

// tryCode returns the code of v at exponent k when that code decodes to exactly v.
func tryCode(v float64, k int) (uint32, bool) {
	if k < codeMinK || k > codeMaxK {
		return 0, false
	}
	x := scale10(v, k)
	if !(x > -codeMaxMant-0.5 && x < codeMaxMant+0.5) { // NaN fails too
		return 0, false
	}
	m := int64(x + math.Copysign(0.5, x)) // rounded half away from zero; checked below
	if valueOf(m, k) != v {
		return 0, false
	}
	return codeOf(int32(m), k), true
}

// segs is a column growing in segments, so that appending never copies what is already
// stored; flatten makes the one contiguous slice at the end. Segments start small (a port with
// few rows costs little) and grow to maxSeg values; the first has hint values when hint > 0.
type segs[T int16 | uint32 | float64] struct {
	s    [][]T
	n    int
	hint int
}

// segSize is the capacity of segment number k.
func (c *segs[T]) segSize(k int) int {
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

func (c *segs[T]) push(v T) {
	k := len(c.s)
	if k == 0 || len(c.s[k-1]) == cap(c.s[k-1]) {
		c.s = append(c.s, make([]T, 0, c.segSize(k)))
		k++
	}
	c.s[k-1] = append(c.s[k-1], v)
	c.n++
}

// pushSlice appends vs, filling the last segment and adding segments as needed.
func (c *segs[T]) pushSlice(vs []T) {
	for len(vs) > 0 {
		k := len(c.s)
		if k == 0 || len(c.s[k-1]) == cap(c.s[k-1]) {
			c.s = append(c.s, make([]T, 0, c.segSize(k)))
			k++
		}
		last := c.s[k-1]
		m := min(cap(last)-len(last), len(vs))
		c.s[k-1] = append(last, vs[:m]...)
		c.n += m
		vs = vs[m:]
	}
}

// room returns the last segment, with spare capacity (a new segment when it is full).
func (c *segs[T]) room() []T {
	k := len(c.s)
	if k == 0 || len(c.s[k-1]) == cap(c.s[k-1]) {
		c.s = append(c.s, make([]T, 0, c.segSize(k)))
		k++
	}
	return c.s[k-1]
}

// set overwrites value number i, looking from the newest segment (a repeat is usually recent).
func (c *segs[T]) set(i int, v T) {
	end := c.n
	for k := len(c.s) - 1; k >= 0; k-- {
		start := end - len(c.s[k])
		if i >= start {
			c.s[k][i-start] = v
			return
		}
		end = start
	}
}

// flatten returns the values as one slice and empties c.
func (c *segs[T]) flatten() []T {
	if len(c.s) == 1 {
		out := c.s[0]
		c.s, c.n = nil, 0
		return out
	}
	out := make([]T, 0, c.n)
	for i, sg := range c.s {
		out = append(out, sg...)
		c.s[i] = nil // let the segment go as soon as it is copied
	}
	c.s, c.n = nil, 0
	return out
}

// colBuf is one quantity's column of a port while it is read, in the narrowest of three forms
// that holds every value exactly:
//
//   - narrow: 2 bytes a value, m = base + d at one exponent k (value m·10^-k), d an int16
//     (narrowNaN for a missing value). A port's column of a day's samples stays within a few
//     thousand units of its first value at the resolution the export writes (0.01 dB, 1 ps/nm,
//     1e-6 of BER), so most columns are narrow. A value with more decimals than k multiplies
//     every d by the power of ten between (when they still fit);
//   - codes: 4 bytes a value (see packValue), once a value is too far from base;
//   - wide: plain float64, once a value has no code.
type colBuf struct {
	narrow segs[int16]
	codes  segs[uint32]   // used once the column left narrow (narrow is empty then)
	wide   *segs[float64] // non-nil once the column is plain (narrow and codes are empty)
	tier   uint8          // tierNarrow, tierCodes or tierWide
	base   int64          // narrow: the mantissa d is relative to
	nk     int8           // narrow: the exponent
	set0   bool           // narrow: base and nk are set (by the first value that is not NaN)
	k      int8           // the exponent of the last value packed: the first one tried next
}

const (
	tierNarrow = iota
	tierCodes
	tierWide
)

// narrowMaxShift bounds the decimals a narrow column's exponent may have above a value's own
// (so that m·10^shift cannot overflow: |m| < 2^26, 10^10 < 2^34).
const narrowMaxShift = 10

// exactPow10Int is 10^i for i ≤ narrowMaxShift.
var exactPow10Int = [narrowMaxShift + 1]int64{1, 10, 100, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10}

// narrowNaN is the narrow form of a missing value.
const narrowNaN = math.MinInt16

func newColBuf(hint int) *colBuf { return &colBuf{narrow: segs[int16]{hint: hint}} }

// narrowCode returns the code of narrow value d.
func (c *colBuf) narrowCode(d int16) uint32 {
	if d == narrowNaN {
		return nanCode
	}
	m, k := c.base+int64(d), int(c.nk)
	for m > codeMaxMant || m < -codeMaxMant {
		m /= 10 // trailing zeros a rescale appended: exact
		k--
	}
	return codeOf(int32(m), k)
}

// toCodes moves a narrow column to codes.
func (c *colBuf) toCodes() {
	cs := segs[uint32]{hint: max(c.narrow.hint, c.narrow.n)}
	for _, sg := range c.narrow.s {
		for _, d := range sg {
			cs.push(c.narrowCode(d))
		}
	}
	c.codes, c.narrow, c.tier = cs, segs[int16]{}, tierCodes
}

// widen moves the column to plain float64 values.
func (c *colBuf) widen() {
	if c.tier == tierNarrow {
		c.toCodes()
	}
	w := &segs[float64]{hint: max(c.codes.hint, c.codes.n)}
	for _, sg := range c.codes.s {
		for _, code := range sg {
			w.push(unpackValue(code))
		}
	}
	c.wide, c.codes, c.tier = w, segs[uint32]{}, tierWide
}

// narrowOf returns the narrow form of code cd, rescaling the column to a finer exponent when
// cd needs it; ok is false when cd does not fit the narrow column.
func (c *colBuf) narrowOf(cd uint32) (int16, bool) {
	if cd == nanCode {
		return narrowNaN, true
	}
	m, k := codeParts(cd)
	if !c.set0 {
		c.base, c.nk, c.set0 = m, int8(k), true
		return 0, true
	}
	if k > int(c.nk) && !c.rescale(k) || int(c.nk)-k > narrowMaxShift {
		return 0, false
	}
	m *= exactPow10Int[int(c.nk)-k]
	d := m - c.base
	if d < -math.MaxInt16 || d > math.MaxInt16 {
		return 0, false
	}
	return int16(d), true
}

// rescale moves a narrow column to exponent k > nk (every d and base times 10^(k-nk)) when
// every value still fits.
func (c *colBuf) rescale(k int) bool {
	f := int64(1)
	for range k - int(c.nk) {
		f *= 10
	}
	if k > codeMaxK || c.base*f/f != c.base || math.Abs(float64(c.base*f)) >= 1<<53 {
		return false
	}
	for _, sg := range c.narrow.s {
		for _, d := range sg {
			if d != narrowNaN && (int64(d)*f < -math.MaxInt16 || int64(d)*f > math.MaxInt16) {
				return false
			}
		}
	}
	for _, sg := range c.narrow.s {
		for i, d := range sg {
			if d != narrowNaN {
				sg[i] = int16(int64(d) * f)
			}
		}
	}
	c.base, c.nk = c.base*f, int8(k)
	return true
}

// pushCode appends a value given as its code.
func (c *colBuf) pushCode(cd uint32) {
	switch c.tier {
	case tierNarrow:
		if d, ok := c.narrowOf(cd); ok {
			c.narrow.push(d)
			return
		}
		c.toCodes()
		fallthrough
	case tierCodes:
		c.codes.push(cd)
	default:
		c.wide.push(unpackValue(cd))
	}
}

func (c *colBuf) push(v float64) {
	if c.tier != tierWide {
		if code, ok := packValue(v, &c.k); ok {
			c.pushCode(code)
			return
		}
		c.widen()
	}
	c.wide.push(v)
}

func (c *colBuf) pushSlice(vs []float64) {
	for _, v := range vs {
		c.push(v)
	}
}

// pushCodes appends values given as codes. A narrow column converts them in one loop into
// its last segment while they share its exponent (the common case), value by value otherwise.
func (c *colBuf) pushCodes(cs []uint32) {
	for len(cs) > 0 {
		switch c.tier {
		case tierCodes:
			c.codes.pushSlice(cs)
			return
		case tierWide:
			for _, cd := range cs {
				c.wide.push(unpackValue(cd))
			}
			return
		}
		if !c.set0 {
			c.pushCode(cs[0])
			cs = cs[1:]
			continue
		}
		seg := c.narrow.room()
		kf, base := uint32(int(c.nk)+codeKBias), c.base
		n := min(cap(seg)-len(seg), len(cs))
		i := 0
		for ; i < n; i++ {
			cd := cs[i]
			m := int64(int32(cd) >> 5)
			if kc := cd & codeKMask; kc != kf {
				// Fewer decimals than the column's (a code has the fewest): m at the
				// column's exponent, as narrowOf does.
				if kc > kf || kf-kc > narrowMaxShift {
					break
				}
				m *= exactPow10Int[kf-kc]
			}
			d := m - base
			if d < -math.MaxInt16 || d > math.MaxInt16 {
				break
			}
			seg = append(seg, int16(d))
		}
		c.narrow.s[len(c.narrow.s)-1] = seg
		c.narrow.n += i
		cs = cs[i:]
		if i < n {
			c.pushCode(cs[0]) // NaN, another exponent, or too far: the careful path
			cs = cs[1:]
		}
	}
}

func (c *colBuf) pushNaN(n int) {
	for range n {
		c.pushCode(nanCode)
	}
}

// set overwrites value number i.
func (c *colBuf) set(i int, v float64) {
	if c.tier != tierWide {
		code, ok := packValue(v, &c.k)
		if !ok {
			c.widen()
		} else if c.tier == tierNarrow {
			if d, ok := c.narrowOf(code); ok {
				c.narrow.set(i, d)
				return
			}
			c.toCodes()
		}
		if ok {
			c.codes.set(i, code)
			return
		}
	}
	c.wide.set(i, v)
}

// appendCol appends the values of o (emptied).
func (c *colBuf) appendCol(o *colBuf) {
	switch o.tier {
	case tierWide:
		for _, sg := range o.wide.s {
			c.pushSlice(sg)
		}
	case tierCodes:
		for _, sg := range o.codes.s {
			c.pushCodes(sg)
		}
	default:
		for _, sg := range o.narrow.s {
			for _, d := range sg {
				c.pushCode(o.narrowCode(d))
			}
		}
	}
	*o = colBuf{}
}

// finish returns the column as stored in a series, emptying c.
func (c *colBuf) finish() packedCol {
	switch c.tier {
	case tierWide:
		return packedCol{wide: c.wide.flatten()}
	case tierCodes:
		return packedCol{codes: c.codes.flatten()}
	}
	return packedCol{narrow: c.narrow.flatten(), base: c.base, nk: c.nk}
}

// packedCol is one quantity's column of a stored series, in one of colBuf's forms: narrow
// (with base and nk), codes, or wide.
type packedCol struct {
	narrow []int16
	base   int64
	nk     int8
	codes  []uint32
	wide   []float64
}

// decode writes the column's values into dst (of the column's length).
func (c packedCol) decode(dst []float64) {
	switch {
	case c.wide != nil:
		copy(dst, c.wide)
	case c.codes != nil:
		for i, code := range c.codes {
			dst[i] = unpackValue(code)
		}
	default:
		nan, k := math.NaN(), int(c.nk)
		for i, d := range c.narrow {
			if d == narrowNaN {
				dst[i] = nan
			} else {
				dst[i] = valueOf(c.base+int64(d), k)
			}
		}
	}
}

// pick returns the column holding rows rows of c, in that order.
func (c packedCol) pick(rows []int32) packedCol {
	switch {
	case c.wide != nil:
		return packedCol{wide: pickRows(c.wide, rows)}
	case c.codes != nil:
		return packedCol{codes: pickRows(c.codes, rows)}
	}
	return packedCol{narrow: pickRows(c.narrow, rows), base: c.base, nk: c.nk}
}

func pickRows[T any](xs []T, rows []int32) []T {
	out := make([]T, len(rows))
	for i, r := range rows {
		out[i] = xs[r]
	}
	return out
}

// anyFinite reports whether some value of the column is finite.
func (c packedCol) anyFinite() bool {
	switch {
	case c.wide != nil:
		for _, v := range c.wide {
			if !math.IsNaN(v) {
				return true
			}
		}
	case c.codes != nil:
		for _, code := range c.codes {
			if code != nanCode {
				return true
			}
		}
	default:
		for _, d := range c.narrow {
			if d != narrowNaN {
				return true
			}
		}
	}
	return false
}

// timeCol is a port's sample times (Unix ms) in arrival order: runs of equal steps while
// they are few, plain values once there would be more than one run per three rows.
type timeCol struct {
	runs []timeRun
	raw  []int64 // non-nil once the times are plain; runs is nil then
	n    int
}

// timeRun is n times start, start+step, …, start+(n-1)·step.
type timeRun struct {
	start, step int64
	n           int
}

func (t *timeCol) push(x int64) {
	t.n++
	if t.raw != nil {
		t.raw = append(t.raw, x)
		return
	}
	if k := len(t.runs); k > 0 {
		r := &t.runs[k-1]
		if r.n == 1 {
			r.step, r.n = x-r.start, 2
			return
		}
		if x == r.start+r.step*int64(r.n) {
			r.n++
			return
		}
		if 3*(k+1) > t.n && k >= 4 {
			t.raw = t.decode(make([]int64, 0, 2*t.n))[:t.n-1]
			t.raw = append(t.raw, x)
			t.runs = nil
			return
		}
	}
	t.runs = append(t.runs, timeRun{start: x, n: 1})
}

func (t *timeCol) pushSlice(xs []int64) {
	for _, x := range xs {
		t.push(x)
	}
}

// decode appends the times to dst.
func (t *timeCol) decode(dst []int64) []int64 {
	if t.raw != nil {
		return append(dst, t.raw...)
	}
	for _, r := range t.runs {
		for i := range r.n {
			dst = append(dst, r.start+int64(i)*r.step)
		}
	}
	return dst
}

// timesOf is a time column holding xs.
func timesOf(xs []int64) timeCol {
	var t timeCol
	t.pushSlice(xs)
	return t
}

// packedSeries is the compact store of a series read by this package (see Series.Decoded).
type packedSeries struct {
	times  timeCol
	cols   []packedCol // the port's columns, in quantity order (see col)
	has    uint32      // bit q: the port has a column for q
	finite uint32      // bit q: the column has a finite value
}

// col is the column of q, which the port has.
func (p *packedSeries) col(q Quantity) *packedCol {
	return &p.cols[popcount(p.has&(1<<q-1))]
}

// Decoded returns the series with its times and values in TimesMs and Values: s itself when
// it holds them, else a new Series decoded from the compact store that this package keeps a
// series read from input in (the caller may keep it, change it or let it go; s is unchanged).
// Everything but TimesMs and Values is shared with s.
func (s *Series) Decoded() *Series {
	p := s.packed
	if p == nil {
		return s
	}
	d := &Series{Port: s.Port, Bins: s.Bins, Profiles: s.Profiles, Inputs: s.Inputs}
	n := p.times.n
	d.TimesMs = p.times.decode(make([]int64, 0, n))
	vals := make([]float64, n*popcount(p.has))
	for q := Quantity(0); q < NumQuantities; q++ {
		if p.has&(1<<q) == 0 {
			continue
		}
		col := vals[:n:n]
		vals = vals[n:]
		p.col(q).decode(col)
		d.Values[q] = col
	}
	return d
}

// Times returns the sample times (Unix ms): TimesMs, or the times decoded from the compact
// store without its values.
func (s *Series) Times() []int64 {
	if s.packed == nil {
		return s.TimesMs
	}
	return s.packed.times.decode(make([]int64, 0, s.packed.times.n))
}

func popcount(m uint32) int {
	n := 0
	for ; m != 0; m &= m - 1 {
		n++
	}
	return n
}

// first is the oldest-arrived time; t must not be empty.
func (t *timeCol) first() int64 {
	if t.raw != nil {
		return t.raw[0]
	}
	return t.runs[0].start
}

// append appends the times of o.
func (t *timeCol) append(o *timeCol) {
	if o.raw != nil {
		t.pushSlice(o.raw)
		return
	}
	for _, r := range o.runs {
		for i := range r.n {
			t.push(r.start + int64(i)*r.step)
		}
	}
}
