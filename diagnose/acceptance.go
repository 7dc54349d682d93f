package diagnose

import (
	"fmt"
	"math"
	"time"

	"github.com/beatnote/beatnote/diagnose/errperf"
	"github.com/beatnote/beatnote/diagnose/series"
	"github.com/beatnote/beatnote/diagnose/soak"
	"github.com/beatnote/beatnote/parse"
	"github.com/beatnote/beatnote/rules"
)

// AcceptanceTest asks, besides the limits, what an acceptance needs of each port: a test period
// covered by the log, and error performance within its objectives (rules acceptance.*).
type AcceptanceTest struct {
	// Period overrides the test period of every port; 0 takes the plan's soak, else the rules'
	// acceptance.test_period_h.
	Period time.Duration
	// Rejected is the number of rows rejected in the run. A rejected row names no port for
	// sure, so each counts against the coverage of every port judged.
	Rejected int
	// RejectedByPort, when it lists a port, replaces Rejected for that port: the rows rejected
	// in the inputs its rows came from (parse.Series.Inputs) and in the inputs no port's rows
	// came from, so a log of another circuit does not count against it.
	RejectedByPort map[string]int
}

// ErrorPerformance is a port's error performance in the ITU-T G.826 / G.8201 way
// (diagnose/errperf), with the objectives it was judged against.
type ErrorPerformance struct {
	// Basis names the column the errored blocks come from: uncorrected_blocks or post_fec_ber.
	Basis string `json:"basis"`
	From  string `json:"from"`
	To    string `json:"to"`

	// The events and ratios; the ratios are over the available time, null when there was none.
	errperf.Events

	Objectives ErrorObjectives `json:"objectives"`
}

// ErrorObjectives are the figures error performance is judged by, with their sources.
type ErrorObjectives struct {
	SESFraction     float64           `json:"ses_errored_block_fraction"`
	SESR            float64           `json:"sesr"`
	BBER            float64           `json:"bber"`
	MaxUnavailableS float64           `json:"max_unavailable_s"`
	Sources         map[string]string `json:"sources"`
}

// judgeAcceptance adds the test-period coverage and the error performance to a judged port:
// error-performance criteria join the criteria table (and may worsen the verdict), and a pass
// over a period too short or too sparse becomes Incomplete.
func judgeAcceptance(p *PortResult, s *parse.Series, st Setup, r rules.Rules, t AcceptanceTest) {
	a := r.Acceptance
	period := t.Period
	if period == 0 && st.Plan != nil && st.Plan.Soak != "" {
		period, _ = rules.ParseTestPeriod(st.Plan.Soak) // validated when the plan was loaded
	}
	if period == 0 {
		period = time.Duration(a.TestPeriodH * float64(time.Hour))
	}
	rejected := t.Rejected
	if n, ok := t.RejectedByPort[s.Port]; ok {
		rejected = n
	}
	cov := soak.Assess(s.TimesMs, rejected, period, a.MinCoverage)
	p.TestPeriod = &cov

	if ep, note := errorPerformance(s, st.Profile, r); ep != nil {
		p.ErrorPerformance = ep
		worst := NoData
		for _, c := range errorCriteria(ep) {
			p.Criteria = append(p.Criteria, c)
			if c.Verdict.Severity() > worst.Severity() || worst == NoData {
				worst = c.Verdict
			}
		}
		if p.Verdict == NoData || worst.Severity() > p.Verdict.Severity() {
			p.Verdict = worst
		}
	} else if note != "" {
		p.NotJudged = append(p.NotJudged, note)
	}
	if p.Verdict == Pass && !cov.Complete {
		p.Verdict = Incomplete
	}
}

// errorPerformance counts the port's error-performance events, or says why it cannot.
func errorPerformance(s *parse.Series, prof rules.Profile, r rules.Rules) (*ErrorPerformance, string) {
	ub, pf := s.Values[parse.UncorrectedBlocks], s.Values[parse.PostFECBER]
	basis := parse.UncorrectedBlocks.Column()
	if ub == nil {
		basis = parse.PostFECBER.Column()
	}
	if ub == nil && pf == nil {
		return nil, "Error performance (ITU-T G.8201): the log has neither uncorrected FEC blocks nor post-FEC BER."
	}
	a := r.Acceptance
	if !(prof.LineRateGbps > 0) {
		return nil, fmt.Sprintf("Error performance (ITU-T G.8201): profile %s gives no line rate, so the block rate is unknown.", prof.ID)
	}
	lineBitsPerS := prof.LineRateGbps * 1e9
	blocksPerS := lineBitsPerS / a.BlockBits
	step := series.MedianStepMs(s.TimesMs)
	pw, ber := s.Values[parse.RxPowerDBm], s.Values[parse.PreFECBER]
	iv := make([]errperf.Interval, s.Len())
	for i := range iv {
		dt := step
		if i > 0 && s.TimesMs[i]-s.TimesMs[i-1] <= 2*step {
			dt = s.TimesMs[i] - s.TimesMs[i-1]
		}
		sec := max(int64(math.Round(float64(dt)/1000)), 1)
		n := math.NaN()
		switch {
		case ub != nil:
			n = ub[i]
		case !math.IsNaN(pf[i]):
			// Each errored bit in a block of its own: the most errored blocks the ratio allows.
			n = math.Min(pf[i]*lineBitsPerS*float64(sec), blocksPerS*float64(sec))
		}
		defect := (pw != nil && pw[i] <= r.SignalLossFloorDBm) || (ber != nil && ber[i] >= noLockBER)
		iv[i] = errperf.Interval{Seconds: sec, ErroredBlocks: n, Defect: defect}
	}
	e := errperf.Count(iv, blocksPerS, a.SESErroredBlockFraction, int64(a.UnavailableAfterSES))
	ep := &ErrorPerformance{Basis: basis, Events: e,
		Objectives: ErrorObjectives{SESFraction: a.SESErroredBlockFraction, SESR: a.SESRObjective, BBER: a.BBERObjective, MaxUnavailableS: a.MaxUnavailableS,
			Sources: map[string]string{}}}
	for _, k := range []string{"ses_errored_block_fraction", "sesr_objective", "bber_objective", "max_unavailable_s", "block_bits", "unavailable_after_ses_s"} {
		ep.Objectives.Sources[k] = r.Sources["acceptance."+k]
	}
	if s.Len() > 0 {
		ep.From, ep.To = rfc3339(s.TimesMs[0]), rfc3339(s.TimesMs[s.Len()-1])
	}
	return ep, ""
}

// errorCriteria turns the objectives into criteria rows: each ratio objective times the
// available time (or blocks) gives the count allowed in this period.
func errorCriteria(ep *ErrorPerformance) []Criterion {
	o := ep.Objectives
	verdict := func(margin float64) Verdict {
		if margin < 0 {
			return Fail
		}
		return Pass
	}
	sesLimit := o.SESR * float64(ep.AvailableS)
	bbeLimit := o.BBER * ep.BlocksPerSecond * float64(ep.AvailableS-ep.SES)
	src := func(key, what string) string {
		return fmt.Sprintf("rules acceptance.%s %s: %s", key, what, o.Sources[key])
	}
	return []Criterion{
		{Name: "Unavailable time", Metric: "unavailable_s", Statistic: "sum", Measured: float64(ep.UnavailableS), Limit: o.MaxUnavailableS,
			Margin: o.MaxUnavailableS - float64(ep.UnavailableS), Unit: "s", Verdict: verdict(o.MaxUnavailableS - float64(ep.UnavailableS)),
			Source: src("max_unavailable_s", fmt.Sprintf("%g s", o.MaxUnavailableS))},
		{Name: "Severely errored seconds", Metric: "severely_errored_seconds", Statistic: "sum", Measured: float64(ep.SES), Limit: sesLimit,
			Margin: sesLimit - float64(ep.SES), Unit: "s", Verdict: verdict(sesLimit - float64(ep.SES)),
			Source: src("sesr_objective", fmt.Sprintf("%g of %d s available", o.SESR, ep.AvailableS))},
		{Name: "Background block errors", Metric: "background_block_errors", Statistic: "sum", Measured: ep.BBE, Limit: bbeLimit,
			Margin: bbeLimit - ep.BBE, Unit: "blocks", Verdict: verdict(bbeLimit - ep.BBE),
			Source: src("bber_objective", fmt.Sprintf("%g of the blocks of the available non-SES seconds", o.BBER))},
	}
}
