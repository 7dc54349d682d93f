package series

import (
	"math/rand/v2"
	"slices"
	"testing"
)

// selectKey leaves the k-th smallest key at k (as slices.Sort would), none larger before it and
// none smaller after, on random keys with few or many distinct values, sorted, reversed,
// organ-pipe and constant inputs, every k of short inputs and random k of long ones.
func TestSelectKeyPartitions(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 6))
	for it := 0; it < 3000; it++ {
		n := 1 + rng.IntN(200)
		if it%20 == 0 {
			n = 1 + rng.IntN(20000)
		}
		v := make([]uint64, n)
		distinct := 1 + rng.IntN(n)
		for i := range v {
			switch it % 5 {
			case 0:
				v[i] = uint64(rng.IntN(distinct))
			case 1:
				v[i] = uint64(i)
			case 2:
				v[i] = uint64(n - i)
			case 3:
				v[i] = uint64(min(i, n-i))
			default:
				v[i] = rng.Uint64()
			}
		}
		sorted := slices.Clone(v)
		slices.Sort(sorted)
		ks := []int{rng.IntN(n), 0, n - 1, n / 2}
		for _, k := range ks {
			w := slices.Clone(v)
			selectKey(w, k)
			if w[k] != sorted[k] {
				t.Fatalf("case %d n=%d k=%d: got %d, want %d", it%5, n, k, w[k], sorted[k])
			}
			for i := range w {
				if i < k && w[i] > w[k] || i > k && w[i] < w[k] {
					t.Fatalf("case %d n=%d k=%d: w[%d]=%d on the wrong side of %d", it%5, n, k, i, w[i], w[k])
				}
			}
			slices.Sort(w)
			if !slices.Equal(w, sorted) {
				t.Fatalf("case %d n=%d: selectKey lost or made keys", it%5, n)
			}
		}
	}
}
