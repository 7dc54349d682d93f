package series

import (
	"cmp"
	"math"
	"math/rand/v2"
	"slices"
	"sort"
	"strconv"
	"testing"
)

// radixInputs are value sets that stress the radix sort: every sign, ±0, ±Inf, subnormals,
// heavy ties, already sorted and reversed input, all keys equal, and lengths around the
// comparison-sort cut-off.
func radixInputs() map[string][]float64 {
	rng := rand.New(rand.NewPCG(3, 4))
	in := map[string][]float64{}
	for _, n := range []int{0, 1, 2, smallSort - 1, smallSort, smallSort + 1, 1440, floatRadixMin + 7} {
		mixed := make([]float64, n)
		ties := make([]float64, n)
		for i := range mixed {
			switch i % 9 {
			case 0:
				mixed[i] = math.Copysign(0, -1)
			case 1:
				mixed[i] = 0
			case 2:
				mixed[i] = math.Inf(1 - 2*(i%2))
			case 3:
				mixed[i] = 5e-324 * float64(i%5-2)
			default:
				mixed[i] = rng.NormFloat64() * math.Pow(10, float64(rng.IntN(40)-20))
			}
			ties[i] = float64(rng.IntN(7)) / 4
		}
		up := make([]float64, n)
		for i := range up {
			up[i] = float64(i) * 0.01
		}
		down := slices.Clone(up)
		slices.Reverse(down)
		same := make([]float64, n)
		for i := range same {
			same[i] = -3.25
		}
		// Values one ulp apart: the packed ordering of Ranks cannot tell them apart and must
		// fall back to the exact sort.
		close := make([]float64, n)
		for i := range close {
			close[i] = 1 + float64(rng.IntN(5))*0x1p-52
		}
		// All −0: a constant series whose summary must keep the sign of its zero.
		negZero := make([]float64, n)
		for i := range negZero {
			negZero[i] = math.Copysign(0, -1)
		}
		for name, v := range map[string][]float64{"mixed": mixed, "ties": ties, "up": up, "down": down, "same": same, "close": close, "negzero": negZero} {
			in[name+"/"+itoa(n)] = v
		}
	}
	return in
}

func itoa(n int) string { return strconv.Itoa(n) }

// The radix sort agrees with the standard library's comparison sort (sort.Float64s), bit for
// bit, once ±0 are ordered −0 first.
func TestSortAscMatchesSortFloat64s(t *testing.T) {
	var scratch []float64
	for name, v := range radixInputs() {
		got := slices.Clone(v)
		scratch = sortAsc(got, scratch)
		want := slices.Clone(v)
		sort.Float64s(want)
		zerosNegativeFirst(want)
		for i := range want {
			if math.Float64bits(got[i]) != math.Float64bits(want[i]) {
				t.Fatalf("%s: position %d: got %v, want %v", name, i, got[i], want[i])
			}
		}
	}
}

// Ranks agree with the definition computed the slow way: rank = 1 + (number of values below)
// + (number of other values equal)/2.
func TestRanksMatchDefinition(t *testing.T) {
	for name, v := range radixInputs() {
		if len(v) > 1500 {
			continue // the definition is quadratic
		}
		r := Ranks(v)
		for i, x := range v {
			below, equal := 0, 0
			for _, y := range v {
				switch cmp.Compare(y, x) {
				case -1:
					below++
				case 0:
					equal++
				}
			}
			if want := 1 + float64(below) + float64(equal-1)/2; r[i] != want {
				t.Fatalf("%s: rank of v[%d] = %v: got %v, want %v", name, i, x, r[i], want)
			}
		}
	}
}

func BenchmarkRanks(b *testing.B) {
	v := benchData()
	b.ReportAllocs()
	for b.Loop() {
		Ranks(v)
	}
}

func BenchmarkSortAsc(b *testing.B) {
	v := benchData()
	w := make([]float64, len(v))
	var scratch []float64
	b.ReportAllocs()
	for b.Loop() {
		copy(w, v)
		scratch = sortAsc(w, scratch)
	}
}

// Summarize equals Quantile on the sorted finite values (−0 before +0), bit for bit, on the
// radix inputs with NaN sprinkled in — the selection and tail paths as well as the sort path.
func TestSummarizeMatchesSortedBitForBit(t *testing.T) {
	for name, v := range radixInputs() {
		v = slices.Clone(v)
		for i := 5; i < len(v); i += 11 {
			v[i] = math.NaN()
		}
		got := Summarize(v)
		f := Finite(v)
		sort.Float64s(f)
		zerosNegativeFirst(f)
		if got.N != len(f) {
			t.Fatalf("%s: N %d, want %d", name, got.N, len(f))
		}
		if len(f) == 0 {
			continue
		}
		exact := func(p float64) float64 { // Quantile, an exact order statistic kept as it is
			h := float64(len(f)-1) * p
			if k := int(math.Floor(h)); h == float64(k) {
				return f[k]
			}
			return Quantile(f, p)
		}
		for _, c := range []struct {
			stat      string
			got, want float64
		}{{"min", got.Min, f[0]}, {"p01", got.P01, exact(0.01)}, {"p50", got.P50, exact(0.5)},
			{"p99", got.P99, exact(0.99)}, {"max", got.Max, f[len(f)-1]}} {
			if math.Float64bits(c.got) != math.Float64bits(c.want) {
				t.Errorf("%s: %s = %v, want %v", name, c.stat, c.got, c.want)
			}
		}
	}
}

// selectMedian equals Quantile(sorted, 0.5) on every radix input (finite values).
func TestSelectMedianMatchesSortedQuantile(t *testing.T) {
	for name, v := range radixInputs() {
		f := Finite(v)
		if len(f) == 0 {
			continue
		}
		s := slices.Clone(f)
		sort.Float64s(s)
		want := Quantile(s, 0.5)
		if got := selectMedian(slices.Clone(f)); got != want && !(got == 0 && want == 0) {
			t.Errorf("%s: median %v, want %v", name, got, want)
		}
	}
}

func BenchmarkRanks200(b *testing.B) {
	v := benchData()[:200]
	b.ReportAllocs()
	for b.Loop() {
		Ranks(v)
	}
}

func BenchmarkRanksConstant(b *testing.B) {
	v := make([]float64, 1440)
	b.ReportAllocs()
	for b.Loop() {
		Ranks(v)
	}
}
