package diagnose

import (
	"fmt"
	"math"

	"github.com/beatnote/beatnote/parse"
)

// The dispersion family: cd-mismatch (measured CD against the plan: another route) and
// cd-over-limit (CD beyond the module's compensation range).

// cdMismatch: measured CD disagrees with the plan; the implied route length says by how much.
func (pc *portCtx) cdMismatch(nj *notes) *score {
	s := &score{id: CauseCDMismatch}
	if pc.exp == nil {
		nj.add("%s: no link plan, so there is no expected CD to compare with", CauseCDMismatch)
		return nil
	}
	if !pc.present(nj, CauseCDMismatch, parse.CDpsPerNm) {
		return nil
	}
	// Magnitudes are compared: DSPs differ in the sign they report CD with.
	r := pc.r
	exp := math.Abs(pc.exp.CDPsNm)
	cs := pc.absSum[parse.CDpsPerNm]
	meas := cs.P50
	diff := meas - exp
	tol := math.Max(r.CDMismatchRelativeTolerance*math.Abs(exp), r.CDMismatchFloorPsNm)
	if math.Abs(diff) <= tol {
		return s
	}
	rel := math.Abs(diff) / math.Max(math.Abs(exp), 1)
	d := exp / pc.exp.RouteLengthKm // route-average |D|
	implied := ""
	if finite(d) && d != 0 {
		implied = fmt.Sprintf(" At the plan's average %.2f ps/(nm·km) it implies a route of about %.0f km against %.0f km planned (%+.0f %%).",
			d, meas/d, pc.exp.RouteLengthKm, 100*(meas/d-pc.exp.RouteLengthKm)/pc.exp.RouteLengthKm)
	}
	switch {
	case rel >= 2*r.CDMismatchRelativeTolerance:
		s.add(llrCDMismatch2, "Measured CD %.0f ps/nm differs from the planned %.0f ps/nm by %+.0f ps/nm (%s, tolerance ±%.0f ps/nm).%s", meas, exp, diff, pct(rel), tol, implied)
	default:
		s.add(llrCDMismatch, "Measured CD %.0f ps/nm differs from the planned %.0f ps/nm by %+.0f ps/nm (%s, tolerance ±%.0f ps/nm).%s", meas, exp, diff, pct(rel), tol, implied)
	}
	spread := (cs.P99 - cs.Min) / 2
	if spread < cdSteadyShare*math.Abs(diff) {
		s.add(llrWeak, "The CD estimate is steady (half-range %.0f ps/nm against a %.0f ps/nm difference), so estimator noise does not explain it.", spread, math.Abs(diff))
	}
	return s
}

// cdOverLimit: |CD| beyond the module's compensation range.
func (pc *portCtx) cdOverLimit(nj *notes) *score {
	s := &score{id: CauseCDOverLimit}
	if !pc.present(nj, CauseCDOverLimit, parse.CDpsPerNm) {
		return nil
	}
	tol := pc.prof.CDTolerancePsNm
	if !(tol > 0) {
		return nil
	}
	a := pc.absSum[parse.CDpsPerNm]
	switch {
	case a.P50 > tol:
		s.add(llrDecisive, "Measured |CD| %.0f ps/nm (median) exceeds the module's %.0f ps/nm compensation range by %.0f ps/nm (%s).", a.P50, tol, a.P50-tol, pct((a.P50-tol)/tol))
	case a.P99 > tol:
		s.add(llrStrong, "Measured |CD| reaches %.0f ps/nm (p99), beyond the module's %.0f ps/nm compensation range.", a.P99, tol)
	case a.P50 > pc.r.CDMarginalFraction*tol:
		s.add(llrModerate, "Measured |CD| %.0f ps/nm (median) uses %s of the module's %.0f ps/nm compensation range.", a.P50, pct(a.P50/tol), tol)
	}
	if s.supported() {
		if pc.exp != nil && math.Abs(pc.exp.CDPsNm) > tol {
			s.add(llrFirm, "The link plan itself expects %.0f ps/nm: the route is longer than this module can compensate.", pc.exp.CDPsNm)
		}
		if qm := pc.qMarginP50(); finite(qm) && qm < pc.r.QMarginalMarginDB {
			s.add(llrWeak, "The Q margin is %.1f dB (median) with CD at the edge of the range.", qm)
		}
	}
	return s
}

// routeRatio is the route length the measured CD implies over the planned length (CD scales
// with length for a given fibre), by magnitude; NaN without a plan or CD. Only a ratio outside
// the cd-mismatch tolerance is returned; 1 otherwise.
func (pc *portCtx) routeRatio() float64 {
	if pc.exp == nil || !pc.has(parse.CDpsPerNm) || pc.exp.CDPsNm == 0 {
		return math.NaN()
	}
	meas, exp := pc.absSum[parse.CDpsPerNm].P50, math.Abs(pc.exp.CDPsNm)
	tol := math.Max(pc.r.CDMismatchRelativeTolerance*exp, pc.r.CDMismatchFloorPsNm)
	if math.Abs(meas-exp) <= tol {
		return 1
	}
	return meas / exp
}
