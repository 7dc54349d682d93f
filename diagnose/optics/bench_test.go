package optics

import "testing"

// The diagnosis engine may invert BER → eSNR for every port of a large fleet.
func BenchmarkSNRdBFromBER(b *testing.B) {
	for i := 0; b.Loop(); i++ {
		SNRdBFromBER(Modulations()[i%5], 1e-3*float64(1+i%10))
	}
}

func BenchmarkQdBFromBER(b *testing.B) {
	for i := 0; b.Loop(); i++ {
		QdBFromBER(1e-4 * float64(1+i%100))
	}
}
