package acceptance

import (
	"fmt"
	"math"

	"github.com/beatnote/beatnote/diagnose"
	"github.com/beatnote/beatnote/diagnose/optics"
)

// ksRejectP is the significance level at which the Kolmogorov–Smirnov test rejects the
// Maxwellian shape of the DGD samples: the conventional 5 % (common practice).
const ksRejectP = 0.05

// MarksFromAnalysis turns the engine's per-port findings into chart annotations. It computes
// nothing new: the Maxwellian curve is optics.MaxwellPDF at the engine's fitted mean.
func MarksFromAnalysis(an *diagnose.PortAnalysis) ChartMarks {
	var m ChartMarks
	if an == nil {
		return m
	}
	for _, cp := range an.PowerSteps {
		m.RxPowerChanges = append(m.RxPowerChanges, cp.TimeMs)
	}
	for _, cp := range an.OSNRSteps {
		m.OSNRChanges = append(m.OSNRChanges, cp.TimeMs)
	}
	for _, b := range an.BERBursts {
		m.BERBursts = append(m.BERBursts, TimeSpan{FromMs: b.FromMs, ToMs: b.ToMs})
	}
	for _, s := range an.SOPSpikes {
		m.SOPSpikes = append(m.SOPSpikes, s.FromMs)
	}
	if tr := an.LOTrend; tr != nil && !math.IsNaN(tr.Slope) && !math.IsNaN(tr.Intercept) {
		m.LOTrend = &LinearTrend{
			OriginMs: tr.StartMs, Intercept: tr.Intercept, SlopePerHour: tr.Slope,
			Label: fmt.Sprintf("trend %+.3g MHz/h (%s)", tr.Slope, tr.Method),
		}
	}
	if f := an.DGDFit; f != nil && f.MeanPs > 0 {
		mean := f.MeanPs
		m.DGDFit = &DensityCurve{
			PDF:   func(x float64) float64 { return optics.MaxwellPDF(x, mean) },
			Label: fmt.Sprintf("Maxwellian fit, mean %.2f ps (KS p = %.2g)", mean, f.KSPValue),
			Note:  fmt.Sprintf("The Kolmogorov–Smirnov test does not reject the Maxwellian shape at the 5 %% level (p = %.2g).", f.KSPValue),
		}
		if !(f.KSPValue >= ksRejectP) {
			m.DGDFit.Label = fmt.Sprintf("Maxwellian of the same mean, %.2f ps: not a fit", mean)
			m.DGDFit.Note = fmt.Sprintf("The Kolmogorov–Smirnov test rejects the Maxwellian shape at the 5 %% level (p = %.2g): the curve is drawn for comparison only, and the DGD spread of this log is not Maxwellian.", f.KSPValue)
		}
	}
	if an.FECLimitQdB > 0 && !math.IsInf(an.FECLimitQdB, 0) {
		q := an.FECLimitQdB
		m.QLimitDB = &q
	}
	return m
}
