package series

import "math"

// LineFit is an ordinary-least-squares straight line y = Intercept + Slope·x with the standard
// error of the slope.
type LineFit struct {
	N         int
	Slope     float64
	Intercept float64
	// SlopeSE is the standard error of the slope, s/√Sxx with s² = Σ residual²/(n−2).
	SlopeSE float64
	// Residual standard deviation s.
	ResidualSD float64
}

// FitLine fits y = a + b·x by ordinary least squares over the pairs where both are finite:
// b = Sxy/Sxx, a = ȳ − b·x̄, SE(b) = s/√Sxx, s² = Σ(y − a − b·x)²/(n − 2).
// Source: D. C. Montgomery, E. A. Peck, G. G. Vining, Introduction to Linear Regression
// Analysis, 5th ed., Wiley 2012, §2.2–2.3. Fewer than 3 pairs or constant x give NaN fields.
// x and y must have equal length.
func FitLine(x, y []float64) LineFit {
	if len(x) != len(y) {
		panic("series: FitLine: x and y differ in length")
	}
	var n int
	var mx, my float64
	for i := range x {
		if ok(x[i]) && ok(y[i]) {
			n++
			mx += x[i]
			my += y[i]
		}
	}
	nan := math.NaN()
	fit := LineFit{N: n, Slope: nan, Intercept: nan, SlopeSE: nan, ResidualSD: nan}
	if n < 3 {
		return fit
	}
	mx /= float64(n)
	my /= float64(n)
	var sxx, sxy float64
	for i := range x {
		if ok(x[i]) && ok(y[i]) {
			dx := x[i] - mx
			sxx += dx * dx
			sxy += dx * (y[i] - my)
		}
	}
	if sxx == 0 {
		return fit
	}
	b := sxy / sxx
	a := my - b*mx
	var sse float64
	for i := range x {
		if ok(x[i]) && ok(y[i]) {
			r := y[i] - a - b*x[i]
			sse += r * r
		}
	}
	s := math.Sqrt(sse / float64(n-2))
	fit.Slope, fit.Intercept, fit.ResidualSD = b, a, s
	fit.SlopeSE = s / math.Sqrt(sxx)
	return fit
}

// FitTrendPerHour fits values against time (Unix ms) by FitLine with x in hours since
// timesMs[0]; the slope is per hour and the intercept the fitted value at timesMs[0].
func FitTrendPerHour(timesMs []int64, values []float64) LineFit {
	if len(timesMs) != len(values) {
		panic("series: FitTrendPerHour: times and values differ in length")
	}
	if len(timesMs) == 0 {
		return FitLine(nil, nil)
	}
	x := make([]float64, len(timesMs))
	for i, t := range timesMs {
		x[i] = float64(t-timesMs[0]) / 3.6e6
	}
	return FitLine(x, values)
}

// HoursToReach projects a straight line from value `at` moving at `slopePerH` (per hour) to
// `limit`: (limit − at)/slope hours when the line moves toward the limit, 0 when at equals it,
// +Inf when the line is flat or moves away. NaN inputs give NaN. Whether `at` is already beyond
// a limit is the caller's question.
func HoursToReach(at, slopePerH, limit float64) float64 {
	if math.IsNaN(at) || math.IsNaN(slopePerH) || math.IsNaN(limit) {
		return math.NaN()
	}
	gap := limit - at
	switch {
	case gap == 0:
		return 0
	case slopePerH == 0 || (gap > 0) != (slopePerH > 0):
		return math.Inf(1)
	}
	return gap / slopePerH
}

func ok(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }
