package series

import (
	"cmp"
	"math"
	"math/bits"
	"slices"
	"sync"

	"gonum.org/v1/gonum/stat/distuv"
)

// Ranks returns the 1-based ranks of v, ties given their average rank (the "fractional" ranking
// Spearman's coefficient needs). v must not hold NaN.
func Ranks(v []float64) []float64 { return RanksInto(v, nil) }

// rankScratch is the working space of RanksInto, pooled: the engine ranks several series of
// every port on every worker.
type rankScratch struct {
	keys []uint64
	idx  []int32
}

var rankPool = sync.Pool{New: func() any { return new(rankScratch) }}

// RanksInto is Ranks writing into r (grown as needed and returned).
func RanksInto(v, r []float64) []float64 {
	n := len(v)
	r = slices.Grow(r[:0], n)[:n]
	if n == 0 {
		return r
	}
	// Sort the positions by value (radixSort on the order-preserving keys); ties get their
	// average rank, so the order among equal values does not matter.
	sc := rankPool.Get().(*rankScratch)
	defer rankPool.Put(sc)
	sc.keys = slices.Grow(sc.keys[:0], 2*n)[:2*n]
	sc.idx = slices.Grow(sc.idx[:0], 2*n)[:2*n]
	keys, idx := sc.keys, sc.idx
	if packedOrder(v, keys, idx) {
		idx = idx[:n]
	} else if n < smallSort {
		for i, x := range v {
			keys[i] = floatKey(x)
			idx[i] = int32(i)
		}
		idx = idx[:n]
		slices.SortFunc(idx, func(a, b int32) int { return cmp.Compare(keys[a], keys[b]) })
	} else {
		for i, x := range v {
			keys[i] = floatKey(x)
			idx[i] = int32(i)
		}
		radixSort(keys[:n], keys[n:], idx[:n], idx[n:])
	}
	for i := 0; i < n; {
		j := i
		for j+1 < n && v[idx[j+1]] == v[idx[i]] {
			j++
		}
		avg := float64(i+j)/2 + 1
		for k := i; k <= j; k++ {
			r[idx[k]] = avg
		}
		i = j + 1
	}
	return r
}

// packedOrder puts into idx[:len(v)] the positions of v in ascending order of value, by sorting
// single integers: each value's order-preserving key with its low bits replaced by its position.
// That orders by value unless two different values share the kept high bits (they differ only
// in the last bits of the mantissa); it checks for that and reports false, leaving the work to
// the exact sort. keys needs room for 2·len(v) values.
func packedOrder(v []float64, keys []uint64, idx []int32) bool {
	n := len(v)
	b := uint(bits.Len(uint(n - 1)))
	if b > 24 {
		return false
	}
	mask := uint64(1)<<b - 1
	p := keys[:n]
	for i, x := range v {
		p[i] = floatKey(x)&^mask | uint64(i)
	}
	if n < 64 {
		slices.Sort(p)
	} else {
		radixSort(p, keys[n:2*n], nil, nil)
	}
	for i := 1; i < n; i++ {
		if p[i-1]&^mask == p[i]&^mask && v[p[i-1]&mask] != v[p[i]&mask] {
			return false
		}
	}
	for i, k := range p {
		idx[i] = int32(k & mask)
	}
	return true
}

// Spearman returns Spearman's rank correlation ρ of the pairs where x and y are both finite —
// Pearson's correlation of their fractional ranks, which handles ties — with the number of pairs
// and the two-sided p-value of ρ = 0 from the approximation t = ρ·√((n−2)/(1−ρ²)) with Student's t
// on n−2 degrees of freedom. Sources: C. Spearman, Amer. J. Psychol. 15(1), 1904; J. H. Zar,
// Biostatistical Analysis, 5th ed., §19.9 (the t approximation; the method of scipy.stats.spearmanr).
// ρ is NaN with fewer than 3 pairs or when either side is constant; p is NaN with fewer than 4 pairs.
func Spearman(x, y []float64) (rho float64, n int, p float64) {
	if len(x) != len(y) {
		panic("series: Spearman: x and y differ in length")
	}
	var xs, ys []float64
	for i := range x {
		if ok(x[i]) && ok(y[i]) {
			xs = append(xs, x[i])
			ys = append(ys, y[i])
		}
	}
	n = len(xs)
	if n < 3 {
		return math.NaN(), n, math.NaN()
	}
	rho, p = RankCorrelation(Ranks(xs), Ranks(ys))
	return rho, n, p
}

// RankCorrelation is Spearman's ρ and its p-value (as Spearman) from the ranks of two samples
// of equal length, for callers that rank one sample once and correlate it with several others.
func RankCorrelation(rx, ry []float64) (rho, p float64) {
	if len(rx) != len(ry) {
		panic("series: RankCorrelation: ranks differ in length")
	}
	n := len(rx)
	if n < 3 {
		return math.NaN(), math.NaN()
	}
	mean := float64(n+1) / 2
	var sxy, sxx, syy float64
	for i := range rx {
		dx, dy := rx[i]-mean, ry[i]-mean
		sxy += dx * dy
		sxx += dx * dx
		syy += dy * dy
	}
	if sxx == 0 || syy == 0 {
		return math.NaN(), math.NaN()
	}
	rho = math.Max(-1, math.Min(1, sxy/math.Sqrt(sxx*syy)))
	if n < 4 {
		return rho, math.NaN()
	}
	if math.Abs(rho) == 1 {
		return rho, 0
	}
	t := rho * math.Sqrt(float64(n-2)/(1-rho*rho))
	st := distuv.StudentsT{Mu: 0, Sigma: 1, Nu: float64(n - 2)}
	return rho, 2 * st.Survival(math.Abs(t))
}
