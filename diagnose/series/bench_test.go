package series

import (
	"math/rand/v2"
	"sort"
	"testing"
)

func benchData() []float64 {
	rng := rand.New(rand.NewPCG(1, 2))
	v := make([]float64, 1440)
	for i := range v {
		v[i] = float64(int(rng.NormFloat64()*100)) / 100
	}
	return v
}

// BenchmarkSummarize: one day of one-minute samples.
func BenchmarkSummarize(b *testing.B) {
	v := benchData()
	var scratch []float64
	b.ReportAllocs()
	for b.Loop() {
		_, scratch = SummarizeInto(v, scratch)
	}
}

// BenchmarkSortQuantiles is the plain way, for comparison.
func BenchmarkSortQuantiles(b *testing.B) {
	v := benchData()
	b.ReportAllocs()
	for b.Loop() {
		f := append([]float64(nil), v...)
		sort.Float64s(f)
		_ = Quantile(f, 0.5) + Quantile(f, 0.01) + Quantile(f, 0.99)
	}
}

// BenchmarkSummarize50: the 50 samples of a port in a folder of small files.
func BenchmarkSummarize50(b *testing.B) {
	v := benchData()[:50]
	var scratch []float64
	b.ReportAllocs()
	for b.Loop() {
		_, scratch = SummarizeInto(v, scratch)
	}
}

// BenchmarkNoiseSigma: the change-point search's noise estimate on a day of samples.
func BenchmarkNoiseSigma(b *testing.B) {
	v := benchData()
	b.ReportAllocs()
	for b.Loop() {
		noiseSigmaFinite(v)
	}
}
