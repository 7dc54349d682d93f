package optics

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/integrate/quad"
)

func TestMaxwellTail(t *testing.T) {
	// P(τ > k·mean) = erfc(u/√2) + √(2/π)·u·exp(−u²/2), u = x/a (Karlsson, J. Lightwave Technol.
	// 19(3), 2001); values computed with Python's math.erfc. Relative 1e-3.
	cases := []struct{ k, p float64 }{
		{2, 1.705e-2}, {2.5, 1.180e-3}, {3, 4.200e-5}, {3.5, 7.736e-7}, {4, 7.411e-9},
	}
	for _, c := range cases {
		if got := MaxwellExceedProbability(c.k*7, 7); !relNear(got, c.p, 1e-3) {
			t.Errorf("P(τ > %g·mean) = %.5g, want %.4g", c.k, got, c.p)
		}
		if got := MaxwellCDF(c.k*7, 7); !near(got, 1-c.p, 1e-6) {
			t.Errorf("CDF(%g·mean) = %g", c.k, got)
		}
	}
	// The usual PMD design rule: P(DGD > 3 × mean) ≈ 4 × 10⁻⁵ (common practice; ITU-T G.650.2
	// from memory).
	if p := MaxwellExceedProbability(15, 5); !(p > 4.1e-5 && p < 4.3e-5) {
		t.Errorf("P(>3×mean) = %g", p)
	}
	// Computed with Python's math.erfc (Karlsson 2001 tail): a 28 ps limit on a 10 ps mean is exceeded with probability 1.7e-4.
	if p := MaxwellExceedProbability(28, 10); !relNear(p, 1.7e-4, 0.03) {
		t.Errorf("P(>28 ps | 10 ps) = %g, want 1.7e-4", p)
	}
}

func TestMaxwellQuantile(t *testing.T) {
	// Max/mean ratio for a given exceedance probability (Python bisection on the tail formula,
	// computed with Python's math library). Tolerance 1e-3.
	cases := []struct{ p, ratio float64 }{
		{1e-3, 2.527}, {1e-4, 2.879}, {1e-5, 3.189}, {1e-6, 3.470}, {1e-9, 4.196},
	}
	for _, c := range cases {
		if got := MaxwellQuantile(c.p, 1); !near(got, c.ratio, 1e-3) {
			t.Errorf("quantile(%g) = %.4f·mean, want %.3f", c.p, got, c.ratio)
		}
		if got := MaxwellExceedProbability(MaxwellQuantile(c.p, 4), 4); !relNear(got, c.p, 1e-8) {
			t.Errorf("quantile round trip %g → %g", c.p, got)
		}
	}
	for _, bad := range []float64{0, -1, 1.5, math.NaN()} {
		if q := MaxwellQuantile(bad, 1); !math.IsNaN(q) {
			t.Errorf("MaxwellQuantile(%g) = %g", bad, q)
		}
	}
}

func TestMaxwellPDFIntegrates(t *testing.T) {
	// ∫f = 1, ∫τ·f = mean and ∫τ²·f = mean²·3π/8 (rms/mean = √(3π/8) = 1.085, Karlsson 2001),
	// integrated with gonum's Gauss–Legendre quadrature over 0…12·mean (the tail beyond is
	// below 1e-30).
	const mean = 7.5
	for _, c := range []struct {
		name string
		f    func(float64) float64
		want float64
	}{
		{"mass", func(x float64) float64 { return MaxwellPDF(x, mean) }, 1},
		{"mean", func(x float64) float64 { return x * MaxwellPDF(x, mean) }, mean},
		{"second moment", func(x float64) float64 { return x * x * MaxwellPDF(x, mean) }, mean * mean * 3 * math.Pi / 8},
	} {
		got := quad.Fixed(c.f, 0, 12*mean, 200, nil, 0)
		if !relNear(got, c.want, 1e-9) {
			t.Errorf("%s: ∫ = %.12g, want %.12g", c.name, got, c.want)
		}
	}
	// The CDF is the integral of the pdf.
	for _, x := range []float64{2, 7.5, 15, 25} {
		got := quad.Fixed(func(t float64) float64 { return MaxwellPDF(t, mean) }, 0, x, 100, nil, 0)
		if !near(got, MaxwellCDF(x, mean), 1e-10) {
			t.Errorf("∫pdf to %g = %g, CDF %g", x, got, MaxwellCDF(x, mean))
		}
	}
	if MaxwellPDF(-1, mean) != 0 || !math.IsNaN(MaxwellPDF(1, 0)) {
		t.Error("pdf domain")
	}
}

func TestMaxwellSampleMoments(t *testing.T) {
	// Draws must have mean = 2a√(2/π) and variance a²(3 − 8/π) (Karlsson 2001). With n = 200 000
	// the standard error of the mean is 0.094 % of the mean (σ/mean = 0.422), so a 5σ band is
	// 0.5 %; the variance estimate is checked to 2 %. The seed fixes the draw.
	rng := rand.New(rand.NewPCG(3, 14))
	const mean, n = 10.0, 200000
	a := mean / (2 * math.Sqrt(2/math.Pi))
	s, s2 := 0.0, 0.0
	over := 0
	for range n {
		x := MaxwellSample(rng, mean)
		s += x
		s2 += x * x
		if x > 2*mean {
			over++
		}
	}
	m := s / n
	v := s2/n - m*m
	if !relNear(m, mean, 0.005) {
		t.Errorf("sample mean %g, want %g", m, mean)
	}
	if want := a * a * (3 - 8/math.Pi); !relNear(v, want, 0.02) {
		t.Errorf("sample variance %g, want %g", v, want)
	}
	// P(τ > 2·mean) = 1.705e-2: about 3410 of 200 000, binomial σ ≈ 58.
	if !(over > 3410-300 && over < 3410+300) {
		t.Errorf("%d draws above 2×mean, want about 3410", over)
	}
}

func TestFitMaxwell(t *testing.T) {
	// Kolmogorov–Smirnov: Q_KS(1.358) = 0.05 and Q_KS(1.628) = 0.01, the classic critical values
	// of the Kolmogorov distribution (Numerical Recipes §14.3; standard statistical tables).
	if p := kolmogorovQ(1.358); !near(p, 0.05, 5e-4) {
		t.Errorf("Q_KS(1.358) = %g", p)
	}
	if p := kolmogorovQ(1.628); !near(p, 0.01, 5e-4) {
		t.Errorf("Q_KS(1.628) = %g", p)
	}
	rng := rand.New(rand.NewPCG(1, 2))
	maxw := make([]float64, 2000)
	expo := make([]float64, 2000)
	for i := range maxw {
		maxw[i] = MaxwellSample(rng, 5)
		expo[i] = rng.ExpFloat64() * 5
	}
	fm := FitMaxwell(maxw)
	if !(fm.PValue > 0.01) || !relNear(fm.MeanPs, 5, 0.03) || fm.N != 2000 {
		t.Errorf("Maxwellian draws rejected: %+v", fm)
	}
	fe := FitMaxwell(expo)
	if !(fe.PValue < 1e-6) || !(fe.KS > fm.KS) {
		t.Errorf("exponential draws not rejected: %+v", fe)
	}
	if f := FitMaxwell([]float64{1}); !math.IsNaN(f.KS) {
		t.Errorf("one sample: %+v", f)
	}
}

func TestPMDRoute(t *testing.T) {
	// ⟨τ⟩ = PMD·√L; sections add in quadrature (ITU-T G.650.2 / G.652 PMDQ, from memory).
	if d := MeanDGDPs(0.1, 100); !near(d, 1.0, 1e-12) {
		t.Errorf("MeanDGDPs = %g", d)
	}
	f1, f2 := FiberG652, FiberG652
	f1.PMDCoefficientPsSqrtKm, f2.PMDCoefficientPsSqrtKm = 0.2, 0.1
	d := RouteMeanDGDPs([]FiberSpan{{f1, 100}, {f2, 400}})
	if want := math.Sqrt(2*2 + 2*2); !near(d, want, 1e-12) {
		t.Errorf("route DGD = %g, want %g", d, want)
	}
	if c := ImpliedPMDCoefficient(2, 400); !near(c, 0.1, 1e-12) {
		t.Errorf("implied PMD = %g", c)
	}
	if m := MeanDGDFromSamples([]float64{1, 2, 3}); m != 2 {
		t.Errorf("sample mean = %g", m)
	}
	if m := MeanDGDFromSamples([]float64{1, -2}); !math.IsNaN(m) {
		t.Errorf("negative sample accepted: %g", m)
	}
}
