package acceptance

import (
	"fmt"
	"math"

	"github.com/beatnote/beatnote/diagnose"
	"github.com/beatnote/beatnote/diagnose/optics"
)

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
			Label: fmt.Sprintf("Maxwellian, mean %.2f ps (KS p = %.2g)", mean, f.KSPValue),
		}
	}
	if an.FECLimitQdB > 0 && !math.IsInf(an.FECLimitQdB, 0) {
		q := an.FECLimitQdB
		m.QLimitDB = &q
	}
	return m
}
