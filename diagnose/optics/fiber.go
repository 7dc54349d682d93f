package optics

import (
	"fmt"
	"math"
	"strings"
)

// NonlinearIndexM2PerW is a typical nonlinear refractive index n2 of silica fibre, 2.6e-20 m²/W.
// Source: G. P. Agrawal, Nonlinear Fiber Optics (section on the nonlinear parameter γ; from memory).
const NonlinearIndexM2PerW = 2.6e-20

// Fiber holds the figures of one fibre type at C-band wavelengths. Dispersion follows one of two
// models: the G.652 zero-dispersion form when ZeroDispersionNm > 0, otherwise a straight line
// through DispersionRefPsNmKm at RefWavelengthNm with slope SlopeRefPsNm2Km.
type Fiber struct {
	Name string
	// ZeroDispersionNm (λ0) and ZeroSlopePsNm2Km (S0) define D(λ) = S0/4·(λ − λ0⁴/λ³).
	ZeroDispersionNm float64
	ZeroSlopePsNm2Km float64
	// Linear model: D(λ) = DispersionRefPsNmKm + SlopeRefPsNm2Km·(λ − RefWavelengthNm).
	RefWavelengthNm     float64
	DispersionRefPsNmKm float64
	SlopeRefPsNm2Km     float64
	// AttenuationDBPerKm is the cabled attenuation near 1550 nm.
	AttenuationDBPerKm float64
	// PMDCoefficientPsSqrtKm is the PMD coefficient used for the expected mean DGD.
	PMDCoefficientPsSqrtKm float64
	// EffectiveAreaUm2 is the mode effective area, for the nonlinear coefficient γ.
	EffectiveAreaUm2 float64
	// Sources says where each figure comes from.
	Sources string
}

// The fibre types beatnote knows. Typical figures, not specification limits: the plan can
// override D, slope, attenuation and PMD per span.
var (
	// FiberG652 is standard single-mode fibre (ITU-T G.652.D). λ0 = 1310 nm and S0 = 0.088
	// ps/(nm²·km) give D(1550 nm) = 16.70 ps/(nm·km), in the 16.5–17 typical of G.652.D (typical
	// figures from memory; the standard bounds them by λ0 1300–1324 nm and S0 ≤ 0.092). Attenuation
	// 0.20 dB/km and PMD 0.10 ps/√km are typical of modern cabled fibre (common practice; the
	// G.652.D limits are 0.3 dB/km and PMDQ 0.20 ps/√km, from memory). Aeff 80 µm² (from memory).
	FiberG652 = Fiber{Name: "g652", ZeroDispersionNm: 1310, ZeroSlopePsNm2Km: 0.088,
		AttenuationDBPerKm: 0.20, PMDCoefficientPsSqrtKm: 0.10, EffectiveAreaUm2: 80,
		Sources: "ITU-T G.652 (bounds, from memory); typical λ0/S0/α/PMD common practice"}
	// FiberG652Bound is G.652 at the standard's dispersion upper bound (λ0 = 1300 nm, S0 = 0.092),
	// giving D(1550 nm) = 18.010 ps/(nm·km); for tests and worst-case planning.
	FiberG652Bound = Fiber{Name: "g652-bound", ZeroDispersionNm: 1300, ZeroSlopePsNm2Km: 0.092,
		AttenuationDBPerKm: 0.30, PMDCoefficientPsSqrtKm: 0.20, EffectiveAreaUm2: 80,
		Sources: "ITU-T G.652 (11/2016) G.652.D limits, from memory"}
	// FiberG655 is non-zero dispersion-shifted fibre (ITU-T G.655.D/E): D(1550) = 4.5 ps/(nm·km)
	// within the G.655.D range 2.80–6.2 (confirmed), slope 0.05 ps/(nm²·km), 0.21 dB/km,
	// 0.10 ps/√km, Aeff 72 µm² (typical, from memory).
	FiberG655 = Fiber{Name: "g655", RefWavelengthNm: 1550, DispersionRefPsNmKm: 4.5, SlopeRefPsNm2Km: 0.05,
		AttenuationDBPerKm: 0.21, PMDCoefficientPsSqrtKm: 0.10, EffectiveAreaUm2: 72,
		Sources: "ITU-T G.655 (D range confirmed); typical slope/α/PMD/Aeff from memory"}
	// FiberG654E is cut-off-shifted large-area fibre (ITU-T G.654.E): D(1550) = 20.5 ps/(nm·km)
	// within the 17–23 range, slope 0.06, 0.17 dB/km, 0.10 ps/√km, Aeff 125 µm² (from memory).
	FiberG654E = Fiber{Name: "g654e", RefWavelengthNm: 1550, DispersionRefPsNmKm: 20.5, SlopeRefPsNm2Km: 0.06,
		AttenuationDBPerKm: 0.17, PMDCoefficientPsSqrtKm: 0.10, EffectiveAreaUm2: 125,
		Sources: "ITU-T G.654 (from memory); typical figures from memory"}
)

// FiberByName returns a known fibre type: "g652" (also "g652d", "smf"), "g652-bound",
// "g655", "g654e". Case, dots, dashes and spaces are ignored ("G.652.D" works).
func FiberByName(name string) (Fiber, error) {
	k := nameSeparators.Replace(strings.ToLower(name))
	switch k {
	case "g652", "g652d", "smf", "":
		return FiberG652, nil
	case "g652bound":
		return FiberG652Bound, nil
	case "g655", "g655d", "g655e", "nzdsf":
		return FiberG655, nil
	case "g654e", "g654":
		return FiberG654E, nil
	}
	return Fiber{}, fmt.Errorf("optics: unknown fibre type %q (want g652, g655, g654e, or custom figures)", name)
}

// CustomFiber is a fibre given by its dispersion and slope at a reference wavelength, starting
// from base (usually FiberG652) for attenuation, PMD and effective area.
func CustomFiber(base Fiber, refNm, dPsNmKm, slopePsNm2Km float64) Fiber {
	f := base
	f.Name = "custom"
	f.ZeroDispersionNm, f.ZeroSlopePsNm2Km = 0, 0
	f.RefWavelengthNm, f.DispersionRefPsNmKm, f.SlopeRefPsNm2Km = refNm, dPsNmKm, slopePsNm2Km
	f.Sources = "user-given"
	return f
}

// DispersionPsNmKm returns the chromatic dispersion coefficient D in ps/(nm·km) at wavelength λ
// in nm. G.652 form (ITU-T G.652, the fit used to specify λ0 and S0):
//
//	D(λ) = S0/4·(λ − λ0⁴/λ³)
//
// otherwise the linear form D(λ) = D_ref + S_ref·(λ − λ_ref). Domain λ > 0, valid in practice
// over 1260–1625 nm; NaN for λ ≤ 0.
func (f Fiber) DispersionPsNmKm(lambdaNm float64) float64 {
	if !(lambdaNm > 0) {
		return math.NaN()
	}
	if f.ZeroDispersionNm > 0 {
		l0 := f.ZeroDispersionNm
		return f.ZeroSlopePsNm2Km / 4 * (lambdaNm - l0*l0*l0*l0/(lambdaNm*lambdaNm*lambdaNm))
	}
	return f.DispersionRefPsNmKm + f.SlopeRefPsNm2Km*(lambdaNm-f.RefWavelengthNm)
}

// SlopePsNm2Km returns the dispersion slope dD/dλ in ps/(nm²·km) at λ in nm: for the G.652 form
// S(λ) = S0/4·(1 + 3·λ0⁴/λ⁴) (derivative of DispersionPsNmKm), otherwise the constant slope.
func (f Fiber) SlopePsNm2Km(lambdaNm float64) float64 {
	if !(lambdaNm > 0) {
		return math.NaN()
	}
	if f.ZeroDispersionNm > 0 {
		r := f.ZeroDispersionNm / lambdaNm
		return f.ZeroSlopePsNm2Km / 4 * (1 + 3*r*r*r*r)
	}
	return f.SlopeRefPsNm2Km
}

// Beta2Ps2PerKm returns the group-velocity dispersion β2 = −D·λ²/(2π·c) in ps²/km at λ in nm.
// Source: G. P. Agrawal, Fiber-Optic Communication Systems, relation between D and β2.
func (f Fiber) Beta2Ps2PerKm(lambdaNm float64) float64 {
	d := f.DispersionPsNmKm(lambdaNm) // ps/(nm·km)
	lm := lambdaNm * 1e-9
	// D in s/m² = d·1e-12/(1e-9·1e3) = d·1e-6; β2 in s²/m → ps²/km: ×1e24·1e3.
	beta2 := -(d * 1e-6) * lm * lm / (2 * math.Pi * SpeedOfLightMPerS)
	return beta2 * 1e27
}

// GammaPerWKm returns the nonlinear coefficient γ = 2π·n2/(λ·Aeff) in 1/(W·km) at λ in nm, with
// n2 = NonlinearIndexM2PerW. Source: G. P. Agrawal, Nonlinear Fiber Optics, definition of γ.
// NaN when the effective area is not set.
func (f Fiber) GammaPerWKm(lambdaNm float64) float64 {
	if !(f.EffectiveAreaUm2 > 0) || !(lambdaNm > 0) {
		return math.NaN()
	}
	return 2 * math.Pi * NonlinearIndexM2PerW / (lambdaNm * 1e-9 * f.EffectiveAreaUm2 * 1e-12) * 1e3
}

// FiberSpan is a length of one fibre type.
type FiberSpan struct {
	Fiber    Fiber
	LengthKm float64
}

// RouteCDPsNm returns the accumulated chromatic dispersion Σ D_i(λ)·L_i in ps/nm of a route at
// λ in nm (dispersion adds linearly along the path; no compensating modules assumed).
func RouteCDPsNm(spans []FiberSpan, lambdaNm float64) float64 {
	cd := 0.0
	for _, s := range spans {
		cd += s.Fiber.DispersionPsNmKm(lambdaNm) * s.LengthKm
	}
	return cd
}

// ImpliedLengthKm returns the fibre length L = CD/D(λ) in km that accounts for a measured
// accumulated dispersion cdPsNm (ps/nm) on fibre f at λ in nm. NaN when D(λ) is 0 or NaN; the
// sign is kept, so a negative result means the dispersion has the opposite sign to the fibre's.
func ImpliedLengthKm(cdPsNm float64, f Fiber, lambdaNm float64) float64 {
	d := f.DispersionPsNmKm(lambdaNm)
	if d == 0 || math.IsNaN(d) {
		return math.NaN()
	}
	return cdPsNm / d
}
