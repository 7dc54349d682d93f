package optics

import (
	"math"
	"math/rand/v2"
	"testing"
)

// cross32 lists the cross 32QAM points (odd coordinates −5…5 without the four corners), mean
// energy 20 (d = 1).
func cross32() [][2]float64 {
	var pts [][2]float64
	for x := -5; x <= 5; x += 2 {
		for y := -5; y <= 5; y += 2 {
			if (x == 5 || x == -5) && (y == 5 || y == -5) {
				continue
			}
			pts = append(pts, [2]float64{float64(x), float64(y)})
		}
	}
	return pts
}

func TestCross32Approximation(t *testing.T) {
	// Independent check of the named 32QAM approximation by simulation, free of any labeling:
	// draw symbols of the true cross constellation with AWGN, decide by minimum distance and count
	// symbol errors. Every symbol error costs at least one bit and, with a quasi-Gray labeling,
	// almost always exactly one, so BER ≈ SER/5 (slightly above). The model must sit within
	// −3 %…+8 % of SER/5 at the BERs where FEC thresholds live. 400 000 symbols give about 1 %
	// statistical error at BER 1e-2; the seed fixes the draw.
	pts := cross32()
	if len(pts) != 32 {
		t.Fatalf("%d points", len(pts))
	}
	es := 0.0
	for _, p := range pts {
		es += p[0]*p[0] + p[1]*p[1]
	}
	es /= 32
	if es != 20 {
		t.Fatalf("mean energy %g, want 20", es)
	}
	rng := rand.New(rand.NewPCG(32, 32))
	for _, ber := range []float64{2e-2, 1e-2} {
		snrDB := SNRdBFromBER(DP32QAM, ber)
		sigma := math.Sqrt(es / DBToLinear(snrDB) / 2) // per dimension, N0/2
		const n = 400000
		errs := 0
		for i := range n {
			s := pts[i%32]
			rx, ry := s[0]+sigma*rng.NormFloat64(), s[1]+sigma*rng.NormFloat64()
			best, bd := -1, math.Inf(1)
			for j, p := range pts {
				if d := (rx-p[0])*(rx-p[0]) + (ry-p[1])*(ry-p[1]); d < bd {
					best, bd = j, d
				}
			}
			if best != i%32 {
				errs++
			}
		}
		lower := float64(errs) / n / 5
		if r := ber / lower; !(r > 0.97 && r < 1.08) {
			t.Errorf("BER %g at %.3f dB: simulated SER/5 = %.4g (model/sim = %.3f)", ber, snrDB, lower, r)
		} else {
			t.Logf("BER %g at %.3f dB: simulated SER/5 = %.4g (model/sim = %.3f)", ber, snrDB, lower, r)
		}
	}
}
