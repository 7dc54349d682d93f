package series

import (
	"math"
	"sort"
)

// Run is a maximal run of consecutive samples above a threshold.
type Run struct {
	FromIdx, ToIdx int // inclusive sample indexes
	FromMs, ToMs   int64
	Peak           float64 // largest value in the run
	Samples        int     // samples above the threshold in the run
}

// Runs returns the runs of samples with v[i] > threshold, in time order. Up to `bridge`
// consecutive samples at or below the threshold (or NaN) inside a run do not end it, so a
// burst that flickers stays one burst. timesMs and v must have equal length.
func Runs(timesMs []int64, v []float64, threshold float64, bridge int) []Run {
	if len(timesMs) != len(v) {
		panic("series: Runs: times and values differ in length")
	}
	var out []Run
	var cur *Run
	gap := 0
	for i, x := range v {
		if x > threshold { // NaN compares false
			if cur == nil {
				out = append(out, Run{FromIdx: i, FromMs: timesMs[i], Peak: x})
				cur = &out[len(out)-1]
			}
			cur.ToIdx, cur.ToMs = i, timesMs[i]
			cur.Samples++
			cur.Peak = math.Max(cur.Peak, x)
			gap = 0
			continue
		}
		if cur != nil {
			gap++
			if gap > bridge {
				cur, gap = nil, 0
			}
		}
	}
	return out
}

// Pair is a burst matched to the nearest spike; LagMs is spike.FromMs − burst.FromMs.
type Pair struct {
	Burst, Spike Run
	LagMs        int64
}

// Coincide matches each burst to the spike nearest to it in time, when the gap between the two
// intervals (0 when they overlap) is at most windowMs. spikes must be in time order (as Runs
// returns them). The result has one Pair per matched burst, in burst order.
func Coincide(bursts, spikes []Run, windowMs int64) []Pair {
	var out []Pair
	for _, b := range bursts {
		// first spike that ends at or after the window start
		j := sort.Search(len(spikes), func(k int) bool { return spikes[k].ToMs >= b.FromMs-windowMs })
		best, bestGap := -1, int64(math.MaxInt64)
		for ; j < len(spikes) && spikes[j].FromMs <= b.ToMs+windowMs; j++ {
			g := intervalGap(b, spikes[j])
			if g < bestGap {
				best, bestGap = j, g
			}
		}
		if best >= 0 && bestGap <= windowMs {
			out = append(out, Pair{Burst: b, Spike: spikes[best], LagMs: spikes[best].FromMs - b.FromMs})
		}
	}
	return out
}

func intervalGap(a, b Run) int64 {
	switch {
	case b.FromMs > a.ToMs:
		return b.FromMs - a.ToMs
	case a.FromMs > b.ToMs:
		return a.FromMs - b.ToMs
	}
	return 0
}

// ChanceCoincidence is the probability that a burst starting at a uniformly random time in
// [fromMs, toMs] falls within windowMs of some spike: the fraction of the span covered by the
// spikes widened by windowMs on each side (overlaps merged). It is the null-hypothesis rate
// against which an observed coincidence fraction is compared (a Poisson/uniform-placement
// model, common practice for event coincidence analysis, e.g. J. F. Donges et al., Eur. Phys.
// J. Spec. Top. 225, 2016).
func ChanceCoincidence(spikes []Run, windowMs, fromMs, toMs int64) float64 {
	span := toMs - fromMs
	if span <= 0 {
		return math.NaN()
	}
	var covered int64
	curFrom, curTo := int64(math.MinInt64), int64(math.MinInt64)
	for _, s := range spikes {
		a, b := max(s.FromMs-windowMs, fromMs), min(s.ToMs+windowMs, toMs)
		if b < a {
			continue
		}
		if a > curTo {
			if curTo > curFrom {
				covered += curTo - curFrom
			}
			curFrom, curTo = a, b
		} else if b > curTo {
			curTo = b
		}
	}
	if curTo > curFrom {
		covered += curTo - curFrom
	}
	return math.Min(1, float64(covered)/float64(span))
}
