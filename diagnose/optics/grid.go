package optics

import "math"

// SpeedOfLightMPerS is c in vacuum, exact by the SI definition of the metre.
const SpeedOfLightMPerS = 299_792_458.0

// GridAnchorTHz is the anchor of the ITU-T G.694.1 DWDM frequency grid.
const GridAnchorTHz = 193.1

// FlexGridGranularityGHz is the central-frequency granularity of the ITU-T G.694.1 flexible grid
// (clause 7: 193.1 THz + n × 6.25 GHz).
const FlexGridGranularityGHz = 6.25

// WavelengthNmFromTHz returns the vacuum wavelength λ = c/f in nm of a frequency in THz.
// Source: ITU-T G.694.1 (the grid is defined in frequency; wavelengths use c = 299 792 458 m/s).
// Domain f > 0; NaN otherwise.
func WavelengthNmFromTHz(fTHz float64) float64 {
	if !(fTHz > 0) {
		return math.NaN()
	}
	return SpeedOfLightMPerS / (fTHz * 1e12) * 1e9
}

// THzFromWavelengthNm returns f = c/λ in THz of a vacuum wavelength in nm. Domain λ > 0.
func THzFromWavelengthNm(nm float64) float64 {
	if !(nm > 0) {
		return math.NaN()
	}
	return SpeedOfLightMPerS / (nm * 1e-9) / 1e12
}

// NearestGridTHz returns the grid point nearest to fTHz on the ITU-T G.694.1 grid with the given
// granularity: f_n = 193.1 THz + n × granularity, and n. Granularity 6.25 GHz is the flexible
// grid (clause 7); 12.5, 25, 50 and 100 GHz are the fixed grids (clause 6, Table 1).
// NaN and 0 for f ≤ 0 or granularity ≤ 0.
func NearestGridTHz(fTHz, granularityGHz float64) (gridTHz float64, n int) {
	if !(fTHz > 0) || !(granularityGHz > 0) {
		return math.NaN(), 0
	}
	step := granularityGHz / 1000
	k := math.Round((fTHz - GridAnchorTHz) / step)
	return GridAnchorTHz + k*step, int(k)
}

// ChannelOffsetGHz returns f − f_grid in GHz: how far fTHz sits from the nearest grid point of the
// given granularity (see NearestGridTHz).
func ChannelOffsetGHz(fTHz, granularityGHz float64) float64 {
	g, _ := NearestGridTHz(fTHz, granularityGHz)
	return (fTHz - g) * 1000
}
