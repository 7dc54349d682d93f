package series

import "slices"

// MedianStepMs is the median spacing of ascending times ts (ms): the nominal sample interval of
// a log, which gaps and the odd late sample do not move. It is 0 for fewer than two times.
func MedianStepMs(ts []int64) int64 {
	if len(ts) < 2 {
		return 0
	}
	d := make([]int64, len(ts)-1)
	for i := range d {
		d[i] = ts[i+1] - ts[i]
	}
	slices.Sort(d)
	return d[len(d)/2]
}
