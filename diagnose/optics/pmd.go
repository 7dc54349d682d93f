package optics

import (
	"math"
	"sort"
)

// MeanDGDPs returns the expected mean DGD in ps of a fibre of lengthKm with PMD coefficient
// coeffPsSqrtKm (ps/√km): ⟨τ⟩ = PMD·√L (long-fibre, random-mode-coupling regime).
// Source: ITU-T G.650.2 (definition of the PMD coefficient, from memory); M. Karlsson,
// J. Lightwave Technol. 19(3), 2001. NaN for negative inputs.
func MeanDGDPs(coeffPsSqrtKm, lengthKm float64) float64 {
	if !(coeffPsSqrtKm >= 0) || !(lengthKm >= 0) {
		return math.NaN()
	}
	return coeffPsSqrtKm * math.Sqrt(lengthKm)
}

// RouteMeanDGDPs combines the mean DGD of concatenated sections in quadrature:
// ⟨τ⟩ = √(Σ ⟨τ_i⟩²) = √(Σ PMD_i²·L_i), ps. Source: ITU-T G.650.2 / G.652 (the PMDQ link design
// value is built this way; from memory).
func RouteMeanDGDPs(spans []FiberSpan) float64 {
	s := 0.0
	for _, sp := range spans {
		m := MeanDGDPs(sp.Fiber.PMDCoefficientPsSqrtKm, sp.LengthKm)
		s += m * m
	}
	return math.Sqrt(s)
}

// CombineMeanDGDPs combines mean DGDs (ps) of sections in quadrature: √(Σ τ_i²).
func CombineMeanDGDPs(meanPs ...float64) float64 {
	s := 0.0
	for _, m := range meanPs {
		s += m * m
	}
	return math.Sqrt(s)
}

// ImpliedPMDCoefficient returns the PMD coefficient ⟨τ⟩/√L in ps/√km implied by a measured mean
// DGD (ps) over a route of lengthKm. NaN for a non-positive length.
func ImpliedPMDCoefficient(meanDGDPs, lengthKm float64) float64 {
	if !(lengthKm > 0) || !(meanDGDPs >= 0) {
		return math.NaN()
	}
	return meanDGDPs / math.Sqrt(lengthKm)
}

// maxwellScale returns the Maxwellian scale a from the mean: mean = 2a·√(2/π).
func maxwellScale(meanPs float64) float64 { return meanPs / (2 * math.Sqrt(2/math.Pi)) }

// MaxwellPDF returns the Maxwellian probability density of the instantaneous DGD τ (ps) for a
// mean DGD meanPs (ps), in 1/ps:
//
//	f(τ) = √(2/π)·τ²/a³·exp(−τ²/(2a²)), a = mean/(2·√(2/π)).
//
// Source: M. Karlsson, "Probability density functions of the differential group delay in
// optical fiber communication systems", J. Lightwave Technol. 19(3), 2001. Domain τ ≥ 0 (0 for
// τ < 0), mean > 0 (NaN otherwise).
func MaxwellPDF(tauPs, meanPs float64) float64 {
	if !(meanPs > 0) || math.IsNaN(tauPs) {
		return math.NaN()
	}
	if tauPs < 0 {
		return 0
	}
	a := maxwellScale(meanPs)
	u := tauPs / a
	return math.Sqrt(2/math.Pi) * u * u / a * math.Exp(-u*u/2)
}

// MaxwellCDF returns P(τ ≤ x) = erf(u/√2) − √(2/π)·u·exp(−u²/2), u = x/a, for a Maxwellian DGD
// of mean meanPs (ps). Source: Karlsson 2001 (integral of MaxwellPDF). 0 for x ≤ 0.
func MaxwellCDF(xPs, meanPs float64) float64 {
	p := MaxwellExceedProbability(xPs, meanPs)
	return 1 - p
}

// MaxwellExceedProbability returns P(τ > x) = erfc(u/√2) + √(2/π)·u·exp(−u²/2), u = x/a, the
// probability that the instantaneous DGD exceeds xPs for a mean DGD meanPs, computed directly
// from the tail (no 1 − CDF cancellation), accurate far into the tail. P(τ > 3·mean) ≈ 4.2e-5,
// the usual PMD design rule. Source: Karlsson 2001; ITU-T G.650.2 (from memory).
// Domain mean > 0; 1 for x ≤ 0; NaN for NaN inputs.
func MaxwellExceedProbability(xPs, meanPs float64) float64 {
	if !(meanPs > 0) || math.IsNaN(xPs) {
		return math.NaN()
	}
	if xPs <= 0 {
		return 1
	}
	u := xPs / maxwellScale(meanPs)
	return math.Erfc(u/math.Sqrt2) + math.Sqrt(2/math.Pi)*u*math.Exp(-u*u/2)
}

// MaxwellQuantile returns the DGD x (ps) with P(τ > x) = exceedProb for a Maxwellian of mean
// meanPs: the numerical inverse of MaxwellExceedProbability, by bisection on x/mean to a relative
// 1e-12. Domain 0 < exceedProb ≤ 1 (0 at 1), mean > 0; NaN otherwise.
func MaxwellQuantile(exceedProb, meanPs float64) float64 {
	if !(exceedProb > 0 && exceedProb <= 1) || !(meanPs > 0) {
		return math.NaN()
	}
	if exceedProb == 1 {
		return 0
	}
	lo, hi := 0.0, 1.0
	for MaxwellExceedProbability(hi, 1) > exceedProb {
		hi *= 2
		if hi > 1e6 {
			return math.NaN()
		}
	}
	for hi-lo > 1e-12*hi {
		mid := 0.5 * (lo + hi)
		if MaxwellExceedProbability(mid, 1) > exceedProb {
			lo = mid
		} else {
			hi = mid
		}
	}
	return 0.5 * (lo + hi) * meanPs
}

// NormalSource is a source of standard Gaussian draws: *rand.Rand of math/rand and of
// math/rand/v2 both satisfy it.
type NormalSource interface{ NormFloat64() float64 }

// MaxwellSample draws one Maxwellian DGD (ps) of mean meanPs: τ = a·√(N1² + N2² + N3²) with three
// independent standard Gaussians (the length of a 3-D Gaussian PMD vector), a = mean/(2·√(2/π)).
// Variance a²·(3 − 8/π). Source: Karlsson 2001 (PMD vector components are Gaussian).
func MaxwellSample(rng NormalSource, meanPs float64) float64 {
	a := maxwellScale(meanPs)
	x, y, z := rng.NormFloat64(), rng.NormFloat64(), rng.NormFloat64()
	return a * math.Sqrt(x*x+y*y+z*z)
}

// MeanDGDFromSamples returns the arithmetic mean of DGD samples (ps), the estimator of mean DGD
// in ITU-T G.650.2 (averaging over time or wavelength, from memory). NaN for no samples or any
// NaN or negative sample.
func MeanDGDFromSamples(samplesPs []float64) float64 {
	if len(samplesPs) == 0 {
		return math.NaN()
	}
	s := 0.0
	for _, x := range samplesPs {
		if !(x >= 0) {
			return math.NaN()
		}
		s += x
	}
	return s / float64(len(samplesPs))
}

// MaxwellFit is the Kolmogorov–Smirnov goodness-of-fit of DGD samples against a Maxwellian.
type MaxwellFit struct {
	N int
	// MeanPs is the mean DGD the Maxwellian was given (estimated from the samples by FitMaxwell).
	MeanPs float64
	// KS is the Kolmogorov–Smirnov statistic D = sup |F_n(x) − F(x)|.
	KS float64
	// PValue is the asymptotic Kolmogorov p-value of D with Stephens' small-sample correction.
	// Because the mean was estimated from the same samples the true p-value is lower (Lilliefors
	// effect), so a small PValue is strong evidence against the Maxwellian while a large one is
	// weak evidence for it. Successive DSP samples are correlated in time, which shrinks the
	// effective N: read the p-value as a rough indicator.
	PValue float64
}

// FitMaxwell tests DGD samples (ps) against a Maxwellian whose mean is the sample mean, with the
// one-sample Kolmogorov–Smirnov statistic D = max_i max(i/n − F(x_(i)), F(x_(i)) − (i−1)/n) and
// the asymptotic p-value Q_KS(λ) = 2·Σ_{k≥1} (−1)^(k−1)·exp(−2k²λ²), λ = (√n + 0.12 + 0.11/√n)·D.
// Source: W. H. Press et al., Numerical Recipes, 3rd ed., §14.3.3 (Kolmogorov–Smirnov test and
// Stephens' approximation). Samples must be ≥ 0 and not NaN; fewer than 2 samples give NaNs.
// The input slice is not modified.
func FitMaxwell(samplesPs []float64) MaxwellFit {
	n := len(samplesPs)
	fit := MaxwellFit{N: n, MeanPs: MeanDGDFromSamples(samplesPs), KS: math.NaN(), PValue: math.NaN()}
	if n < 2 || !(fit.MeanPs > 0) {
		return fit
	}
	x := append([]float64(nil), samplesPs...)
	sort.Float64s(x)
	d := 0.0
	f := 0.0
	for i, v := range x {
		if i == 0 || v != x[i-1] { // DSPs report DGD to 0.1 ps: most samples repeat the previous
			f = MaxwellCDF(v, fit.MeanPs)
		}
		d = math.Max(d, math.Max(float64(i+1)/float64(n)-f, f-float64(i)/float64(n)))
	}
	fit.KS = d
	sn := math.Sqrt(float64(n))
	fit.PValue = kolmogorovQ((sn + 0.12 + 0.11/sn) * d)
	return fit
}

// kolmogorovQ is the Kolmogorov distribution's survival function Q_KS(λ) (Numerical Recipes
// §6.14); 1 for λ below 0.18 where the series converges too slowly and the value is 1 to 1e-10.
func kolmogorovQ(lambda float64) float64 {
	if lambda < 0.18 {
		return 1
	}
	s := 0.0
	for k := 1; k <= 200; k++ {
		term := math.Exp(-2 * float64(k*k) * lambda * lambda)
		if k%2 == 0 {
			s -= term
		} else {
			s += term
		}
		if term < 1e-16 {
			break
		}
	}
	return math.Min(1, math.Max(0, 2*s))
}
