package series

import (
	"math"
	"slices"
)

// Step is a change point in the mean of a series: the samples from Index on have mean After,
// the segment before it mean Before. Index refers to the slice given to ChangePoints.
type Step struct {
	Index  int
	Before float64
	After  float64
	// Stat is the standardised CUSUM statistic of the split, |After − Before|·√(n₁n₂/n)/σ.
	Stat float64
}

// Size is After − Before.
func (s Step) Size() float64 { return s.After - s.Before }

// ChangePointOptions tunes ChangePoints.
type ChangePointOptions struct {
	// MinStep is the smallest |After − Before| reported, in the series' unit (e.g. 1 dB).
	MinStep float64
	// MinSegment is the fewest samples allowed on either side of a change (default 3).
	MinSegment int
	// MaxSteps bounds the number of change points (default 8).
	MaxSteps int
	// ThresholdFactor C scales the detection threshold C·√(2·ln n) on the standardised statistic
	// (default 1.3, the value recommended by Fryzlewicz 2014, §3).
	ThresholdFactor float64
}

// countOK is the number of finite values of v.
func countOK(v []float64) int {
	n := 0
	for _, y := range v {
		if ok(y) {
			n++
		}
	}
	return n
}

// ChangePoints finds shifts in the mean of v by binary segmentation with the CUSUM statistic:
// in a segment of n samples, the split k maximising T(k) = |x̄(k+1..n) − x̄(1..k)|·√(k(n−k)/n)/σ
// is accepted when T exceeds C·√(2·ln n) and the step is at least MinStep; both halves are then
// searched again. σ is the noise level from NoiseSigma (floored to keep T finite on noiseless
// data). Sources: L. Yu. Vostrikova, "Detecting 'disorder' in multidimensional random
// processes", Soviet Math. Dokl. 24, 1981 (binary segmentation); P. Fryzlewicz, Ann. Statist.
// 42(6), 2014 (threshold and σ estimate). NaN samples are skipped; indexes refer to v.
// Steps are returned in index order, Before/After being the means of the final neighbouring
// segments. Cost is O(n log n) for few steps.
func ChangePoints(v []float64, opt ChangePointOptions) []Step {
	if opt.MinSegment <= 0 {
		opt.MinSegment = 3
	}
	if opt.MaxSteps <= 0 {
		opt.MaxSteps = 8
	}
	if opt.ThresholdFactor <= 0 {
		opt.ThresholdFactor = 1.3
	}
	// x: the finite samples; idx[k] is the index in v of x[k] (nil when every sample is
	// finite: x is v itself then and idx[k] = k).
	var idx []int
	x := v
	if countOK(v) < len(v) {
		x = make([]float64, 0, len(v))
		idx = make([]int, 0, len(v))
		for i, y := range v {
			if ok(y) {
				idx = append(idx, i)
				x = append(x, y)
			}
		}
	}
	n := len(x)
	if n < 2*opt.MinSegment {
		return nil
	}
	sigma := noiseSigmaFinite(x) // = NoiseSigma(x): x is all finite
	scale := 0.0
	for _, y := range x {
		scale = math.Max(scale, math.Abs(y))
	}
	if floor := 1e-9 * math.Max(scale, 1); !(sigma > floor) {
		sigma = floor
	}
	pp := diffPool.Get().(*[]float64)
	defer diffPool.Put(pp)
	*pp = slices.Grow((*pp)[:0], n+1)[:n+1]
	prefix := *pp
	prefix[0] = 0
	for i, y := range x {
		prefix[i+1] = prefix[i] + y
	}
	mean := func(a, b int) float64 { return (prefix[b] - prefix[a]) / float64(b-a) }

	// The accepted splits with their statistics (at most MaxSteps: a list, not a map).
	type split struct {
		k int
		t float64
	}
	var splits []split
	var search func(lo, hi int)
	search = func(lo, hi int) {
		if len(splits) >= opt.MaxSteps || hi-lo < 2*opt.MinSegment {
			return
		}
		m := hi - lo
		best, bestT := -1, 0.0
		for k := lo + opt.MinSegment; k <= hi-opt.MinSegment; k++ {
			n1, n2 := float64(k-lo), float64(hi-k)
			t := math.Abs(mean(k, hi)-mean(lo, k)) * math.Sqrt(n1*n2/float64(m)) / sigma
			if t > bestT {
				best, bestT = k, t
			}
		}
		if best < 0 || bestT <= opt.ThresholdFactor*math.Sqrt(2*math.Log(float64(m))) {
			return
		}
		if math.Abs(mean(best, hi)-mean(lo, best)) < opt.MinStep {
			return
		}
		splits = append(splits, split{best, bestT})
		search(lo, best)
		search(best, hi)
	}
	search(0, n)
	if len(splits) == 0 {
		return []Step{}
	}
	slices.SortFunc(splits, func(a, b split) int { return a.k - b.k }) // distinct indexes
	steps := make([]Step, 0, len(splits))
	for i, sp := range splits {
		k := sp.k
		lo, hi := 0, n
		if i > 0 {
			lo = splits[i-1].k
		}
		if i+1 < len(splits) {
			hi = splits[i+1].k
		}
		before, after := mean(lo, k), mean(k, hi)
		if math.Abs(after-before) < opt.MinStep {
			continue // neighbours moved after later splits; the step no longer counts
		}
		at := k
		if idx != nil {
			at = idx[k]
		}
		steps = append(steps, Step{Index: at, Before: before, After: after, Stat: sp.t})
	}
	return steps
}
