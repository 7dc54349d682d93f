package series

import (
	"math"
	"slices"
	"unsafe"
)

// Sorting by keys. The engine sorts many series of a few thousand values per port (quantiles,
// ranks, the noise estimate, the Maxwellian fit); a least-significant-digit radix sort on the
// IEEE-754 bits does it in a fixed number of passes, with no comparisons to mispredict. Method:
// D. E. Knuth, The Art of Computer Programming vol. 3, §5.2.5 ("sorting by distribution").

// floatRadixMin is the length from which sortAsc uses the radix sort: the standard library's
// pattern-defeating quicksort on plain floats wins below (measured, BenchmarkSortAsc).
const floatRadixMin = 1 << 14

// smallSort is the length below which a comparison sort is faster than eight radix passes.
const smallSort = 256

// floatKey maps a float64 to a uint64 whose unsigned order is the numeric order of the floats
// (−0 just before +0; not for NaN): flip every bit of a negative, only the sign bit of a positive.
func floatKey(x float64) uint64 {
	b := math.Float64bits(x)
	return b ^ (uint64(int64(b)>>63) | 1<<63) // no branch: the mask is all ones for a negative
}

func keyFloat(k uint64) float64 {
	if k>>63 != 0 {
		return math.Float64frombits(k &^ (1 << 63))
	}
	return math.Float64frombits(^k)
}

// asKeys views a float64 slice as uint64 (same size, same alignment) for use as key scratch.
func asKeys(v []float64) []uint64 {
	if len(v) == 0 {
		return nil
	}
	return unsafe.Slice((*uint64)(unsafe.Pointer(&v[0])), len(v))
}

// radixSort sorts keys ascending, moving idx (when not nil) along with them; tk and ti are
// scratch of the same lengths. Byte positions where every key agrees are skipped. Stable.
func radixSort(keys, tk []uint64, idx, ti []int32) {
	n := len(keys)
	var cnt [8][256]int32
	for _, k := range keys {
		for d := range 8 {
			cnt[d][byte(k>>(8*d))]++
		}
	}
	src, dst := keys, tk[:n]
	isrc, idst := idx, ti
	for d := range 8 {
		c := &cnt[d]
		if c[byte(keys[0]>>(8*d))] == int32(n) {
			continue // every key has this byte: the pass would not move anything
		}
		sum := int32(0)
		for b := range c {
			c[b], sum = sum, sum+c[b]
		}
		shift := uint(8 * d)
		if isrc == nil {
			for _, k := range src {
				b := byte(k >> shift)
				dst[c[b]] = k
				c[b]++
			}
		} else {
			for i, k := range src {
				b := byte(k >> shift)
				dst[c[b]] = k
				idst[c[b]] = isrc[i]
				c[b]++
			}
			isrc, idst = idst, isrc
		}
		src, dst = dst, src
	}
	if &src[0] != &keys[0] {
		copy(keys, src)
		if isrc != nil {
			copy(idx, isrc)
		}
	}
}

// sortAsc sorts v (no NaN) ascending in place; scratch is grown to len(v) and returned.
// The result equals sort.Float64s except that −0 always precedes +0.
func sortAsc(v []float64, scratch []float64) []float64 {
	n := len(v)
	if n < floatRadixMin {
		slices.Sort(v)
		zerosNegativeFirst(v)
		return scratch
	}
	scratch = slices.Grow(scratch[:0], n)[:n]
	keys := asKeys(v)
	for i, x := range v {
		keys[i] = floatKey(x)
	}
	radixSort(keys, asKeys(scratch), nil, nil)
	for i, k := range keys {
		v[i] = keyFloat(k)
	}
	return scratch
}

// zerosNegativeFirst puts the −0s of sorted v before its +0s (slices.Sort leaves equal values
// in any order), so that small and large inputs sort alike.
func zerosNegativeFirst(v []float64) {
	lo, _ := slices.BinarySearch(v, 0)
	neg := 0
	hi := lo
	for ; hi < len(v) && v[hi] == 0; hi++ {
		if math.Signbit(v[hi]) {
			neg++
		}
	}
	for i := lo; i < hi; i++ {
		v[i] = math.Copysign(0, float64(i-lo-neg)) // −0 while i < lo+neg
	}
}
