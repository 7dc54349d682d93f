// Package series holds the time-series statistics the diagnosis engine uses: order statistics,
// straight-line trends with their standard error, change points in the mean, runs above a
// threshold and their coincidence across two series, and Spearman rank correlation. (The
// Maxwellian goodness-of-fit of DGD samples lives with the PMD model, optics.FitMaxwell.)
//
// Conventions: values are float64 with NaN meaning "missing"; functions that summarise a series
// skip NaN and return NaN when nothing finite is left. Times are Unix milliseconds (UTC), in
// ascending order. Misuse (slices of different lengths) panics with a "series:" message.
package series

import (
	"math"
	"slices"
	"sort"
	"sync"
)

// Finite returns the finite values of v in order (a new slice).
func Finite(v []float64) []float64 {
	out := make([]float64, 0, len(v))
	for _, x := range v {
		if !math.IsNaN(x) && !math.IsInf(x, 0) {
			out = append(out, x)
		}
	}
	return out
}

// Quantile returns the p-quantile (0 ≤ p ≤ 1) of sorted, an ascending slice without NaN, by
// linear interpolation between order statistics: with h = (n−1)·p, Q = x[⌊h⌋] + (h−⌊h⌋)·(x[⌊h⌋+1] − x[⌊h⌋]).
// This is definition 7 of R. J. Hyndman and Y. Fan, "Sample quantiles in statistical packages",
// The American Statistician 50(4), 1996 — the default of R and of numpy.percentile.
// Empty input or p outside [0, 1] gives NaN.
func Quantile(sorted []float64, p float64) float64 {
	n := len(sorted)
	if n == 0 || !(p >= 0 && p <= 1) {
		return math.NaN()
	}
	h := float64(n-1) * p
	lo := int(math.Floor(h))
	if lo >= n-1 {
		return sorted[n-1]
	}
	return sorted[lo] + (h-float64(lo))*(sorted[lo+1]-sorted[lo])
}

// Summary holds order statistics of a series (quantiles by Hyndman–Fan definition 7).
type Summary struct {
	N                  int
	Min, P01, P50, P99 float64
	Max, Mean          float64
}

// Summarize returns the order statistics and mean of the finite values of v; with none, N is
// 0 and every statistic NaN. The quantiles are those of Quantile (Hyndman–Fan definition 7) on
// the sorted finite values.
func Summarize(v []float64) Summary {
	s, _ := SummarizeInto(v, nil)
	return s
}

// SummarizeInto is Summarize using scratch (grown as needed and returned) for its working
// copy, so that a caller summarising many series allocates once.
//
// It works on the order-preserving integer keys of the values (floatKey: a total order with −0
// before +0, so the result is that of the sorted values, bit for bit). The extreme order
// statistics (min, the two around p01, the two around p99, max) come from one pass that keeps
// the few smallest and largest keys; the median from Hoare's selection; long series whose 1 %
// tails exceed that pass are sorted instead.
func SummarizeInto(v, scratch []float64) (Summary, []float64) {
	scratch = slices.Grow(scratch[:0], len(v))[:len(v)]
	keys := asKeys(scratch)[:0]
	sum := 0.0
	for _, x := range v {
		if ok(x) {
			keys = append(keys, floatKey(x))
			sum += x
		}
	}
	n := len(keys)
	if n == 0 {
		nan := math.NaN()
		return Summary{Min: nan, P01: nan, P50: nan, P99: nan, Max: nan, Mean: nan}, scratch
	}
	// m order statistics from each end cover p01 and p99: ⌊0.01·(n−1)⌋ + 1 < m, and
	// n−1−⌊0.99·(n−1)⌋ = ⌈0.01·(n−1)⌉ < m.
	m := int(math.Floor(float64(n-1)*0.01)) + 2
	mid := (n - 1) / 2 // ⌊0.5·(n−1)⌋
	var stat func(j int) uint64
	if m > maxTail || n < 4*m {
		slices.Sort(keys)
		stat = func(j int) uint64 { return keys[j] }
	} else {
		var loBuf, hiBuf [maxTail]uint64
		lo, hi := tails(keys, m, &loBuf, &hiBuf)
		if lo[0] == hi[0] { // smallest key = largest: every order statistic is that key
			c := lo[0]
			stat = func(int) uint64 { return c }
		} else {
			selectKey(keys, mid)
			stat = func(j int) uint64 {
				switch {
				case j < m:
					return lo[j]
				case n-1-j < m:
					return hi[n-1-j]
				case j == mid:
					return keys[mid]
				}
				// j == mid+1: the smallest above the selected median
				next := keys[mid+1]
				for _, k := range keys[mid+2:] {
					next = min(next, k)
				}
				return next
			}
		}
	}
	quant := func(p float64) float64 {
		h := float64(n-1) * p
		k := int(math.Floor(h))
		x := keyFloat(stat(k))
		if h == float64(k) {
			return x
		}
		next := keyFloat(stat(k + 1))
		return x + (h-float64(k))*(next-x)
	}
	return Summary{N: n, Mean: sum / float64(n), Min: keyFloat(stat(0)), Max: keyFloat(stat(n - 1)),
		P01: quant(0.01), P50: quant(0.5), P99: quant(0.99)}, scratch
}

// maxTail bounds the order statistics tails keeps from each end (series up to about 6,000
// values); longer series are sorted.
const maxTail = 64

// tails returns the m smallest keys ascending and the m largest descending (m ≤ len(keys),
// m ≤ maxTail), by insertion into two short sorted buffers: after the first few hundred keys
// almost every key fails both comparisons, so the pass costs little more than reading.
func tails(keys []uint64, m int, loBuf, hiBuf *[maxTail]uint64) (lo, hi []uint64) {
	lo, hi = loBuf[:0], hiBuf[:0]
	for _, k := range keys {
		if len(lo) < m || k < lo[m-1] {
			i := len(lo)
			if i < m {
				lo = lo[:i+1]
			} else {
				i = m - 1
			}
			for ; i > 0 && lo[i-1] > k; i-- {
				lo[i] = lo[i-1]
			}
			lo[i] = k
		}
		if len(hi) < m || k > hi[m-1] {
			i := len(hi)
			if i < m {
				hi = hi[:i+1]
			} else {
				i = m - 1
			}
			for ; i > 0 && hi[i-1] < k; i-- {
				hi[i] = hi[i-1]
			}
			hi[i] = k
		}
	}
	return lo, hi
}

// selectKey rearranges v so that v[k] holds the value it would have if v were sorted, smaller
// or equal values before it and larger or equal after (Hoare's quickselect with median-of-three
// pivots; C. A. R. Hoare, "Algorithm 65: Find", Commun. ACM 4(7), 1961).
func selectKey(v []uint64, k int) {
	lo, hi := 0, len(v)-1
	for hi > lo {
		if hi-lo < 16 {
			for i := lo + 1; i <= hi; i++ {
				for j := i; j > lo && v[j] < v[j-1]; j-- {
					v[j], v[j-1] = v[j-1], v[j]
				}
			}
			return
		}
		m := lo + (hi-lo)/2
		if v[m] < v[lo] {
			v[m], v[lo] = v[lo], v[m]
		}
		if v[hi] < v[lo] {
			v[hi], v[lo] = v[lo], v[hi]
		}
		if v[hi] < v[m] {
			v[hi], v[m] = v[m], v[hi]
		}
		pivot := v[m]
		i, j := lo, hi
		for i <= j {
			for v[i] < pivot {
				i++
			}
			for v[j] > pivot {
				j--
			}
			if i <= j {
				v[i], v[j] = v[j], v[i]
				i++
				j--
			}
		}
		switch {
		case k <= j:
			hi = j
		case k >= i:
			lo = i
		default:
			return
		}
	}
}

// MedianAbsDev returns the median absolute deviation from the median of the finite values of v
// (unscaled; multiply by 1.4826 for a consistent estimate of a Gaussian σ — F. R. Hampel,
// J. Amer. Statist. Assoc. 69(346), 1974). NaN when v has no finite value.
func MedianAbsDev(v []float64) float64 {
	f := Finite(v)
	if len(f) == 0 {
		return math.NaN()
	}
	sort.Float64s(f)
	med := Quantile(f, 0.5)
	d := make([]float64, len(f))
	for i, x := range f {
		d[i] = math.Abs(x - med)
	}
	sort.Float64s(d)
	return Quantile(d, 0.5)
}

// NoiseSigma estimates the standard deviation of the white noise on a piecewise-constant or
// slowly varying series from its first differences: σ ≈ 1.4826·MAD(Δx)/√2. Steps and trends
// barely affect it because they touch few differences. Source: the estimator used for change-point
// thresholds in P. Fryzlewicz, "Wild binary segmentation for multiple change-point detection",
// Ann. Statist. 42(6), 2014, §3. NaN with fewer than 3 finite values.
func NoiseSigma(v []float64) float64 {
	return noiseSigmaFinite(Finite(v))
}

// noiseSigmaFinite is NoiseSigma of f, whose values are all finite (f is not changed).
func noiseSigmaFinite(f []float64) float64 {
	if len(f) < 3 {
		return math.NaN()
	}
	dp := diffPool.Get().(*[]float64)
	defer diffPool.Put(dp)
	*dp = slices.Grow((*dp)[:0], len(f)-1)[:len(f)-1]
	d := *dp
	for i := 1; i < len(f); i++ {
		d[i-1] = f[i] - f[i-1]
	}
	med := selectMedian(d)
	for i := range d {
		d[i] = math.Abs(d[i] - med)
	}
	return 1.4826 * selectMedian(d) / math.Sqrt2
}

// diffPool holds the differences noiseSigmaFinite works on and the prefix sums of
// ChangePoints: the change-point search runs on several series of every port.
var diffPool = sync.Pool{New: func() any { return new([]float64) }}

// selectMedian is Quantile(sorted v, 0.5) found by selection instead of a sort; v (no NaN, not
// empty) is left in another order.
func selectMedian(v []float64) float64 {
	n := len(v)
	h := float64(n-1) * 0.5
	lo := int(math.Floor(h))
	keys := asKeys(v)
	for i, x := range v {
		keys[i] = floatKey(x)
	}
	selectKey(keys, lo)
	x := keyFloat(keys[lo])
	var out float64
	if lo >= n-1 {
		out = x
	} else {
		next := keys[lo+1]
		for _, k := range keys[lo+2:] {
			next = min(next, k)
		}
		out = x + (h-float64(lo))*(keyFloat(next)-x)
	}
	for i, k := range keys {
		v[i] = keyFloat(k)
	}
	return out
}
