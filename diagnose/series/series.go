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
	"sort"
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
// 0 and every statistic NaN. The quantiles are those of Quantile (Hyndman–Fan definition 7),
// found by selection rather than a full sort.
func Summarize(v []float64) Summary {
	s, _ := SummarizeInto(v, nil)
	return s
}

// SummarizeInto is Summarize using scratch (grown as needed and returned) for its working copy,
// so that a caller summarising many series allocates once.
func SummarizeInto(v, scratch []float64) (Summary, []float64) {
	f := scratch[:0]
	sum := 0.0
	for _, x := range v {
		if ok(x) {
			f = append(f, x)
			sum += x
		}
	}
	n := len(f)
	if n == 0 {
		nan := math.NaN()
		return Summary{Min: nan, P01: nan, P50: nan, P99: nan, Max: nan, Mean: nan}, f
	}
	out := Summary{N: n, Mean: sum / float64(n)}
	// quant is Quantile at p when f[lo:hi] holds exactly the order statistics lo…hi−1 (and
	// f[hi:] the larger ones): select the one at ⌊h⌋, then the next is the smallest above it.
	quant := func(p float64, lo, hi int) float64 {
		h := float64(n-1) * p
		k := int(math.Floor(h))
		selectKth(f, lo, hi, k)
		x := f[k]
		if h == float64(k) {
			return x
		}
		var next float64
		if k+1 < hi {
			next = minOf(f[k+1 : hi])
		} else {
			next = minOf(f[hi:]) // k+1 == hi < n, as h < n−1
		}
		return x + (h-float64(k))*(next-x)
	}
	mid := int(math.Floor(float64(n-1) * 0.5))
	out.P50 = quant(0.5, 0, n) // now f[:mid] ≤ f[mid] ≤ f[mid+1:]
	if k := int(math.Floor(float64(n-1) * 0.01)); k == mid {
		out.P01 = quant(0.01, mid, mid+1)
	} else {
		out.P01 = quant(0.01, 0, mid)
	}
	if k := int(math.Floor(float64(n-1) * 0.99)); k == mid {
		out.P99 = quant(0.99, mid, mid+1)
	} else {
		out.P99 = quant(0.99, mid+1, n)
	}
	out.Min = minOf(f[:mid+1])
	out.Max = maxOf(f[mid:])
	return out, f
}

func minOf(v []float64) float64 {
	m := v[0]
	for _, x := range v[1:] {
		m = math.Min(m, x)
	}
	return m
}

func maxOf(v []float64) float64 {
	m := v[0]
	for _, x := range v[1:] {
		m = math.Max(m, x)
	}
	return m
}

// selectKth rearranges v[lo:hi] so that v[k] holds the value it would have if v[lo:hi] were
// sorted, smaller or equal values before it and larger or equal after (Hoare's quickselect with
// median-of-three pivots; C. A. R. Hoare, "Algorithm 65: Find", Commun. ACM 4(7), 1961). The
// part outside lo:hi must already be partitioned around that range.
func selectKth(v []float64, lo, hi, k int) {
	hi--
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
	f := Finite(v)
	if len(f) < 3 {
		return math.NaN()
	}
	d := make([]float64, len(f)-1)
	for i := 1; i < len(f); i++ {
		d[i-1] = f[i] - f[i-1]
	}
	sort.Float64s(d)
	med := Quantile(d, 0.5)
	for i := range d {
		d[i] = math.Abs(d[i] - med)
	}
	sort.Float64s(d)
	return 1.4826 * Quantile(d, 0.5) / math.Sqrt2
}
