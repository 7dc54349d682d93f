package report

import (
	"fmt"
	"github.com/beatnote/beatnote/report/words"
	"strconv"
	"strings"

	"github.com/beatnote/beatnote/diagnose"
	"github.com/beatnote/beatnote/diagnose/soak"
	"github.com/beatnote/beatnote/parse"
)

// This file words the acceptance-test parts of a port's judgement — the test period and the
// error performance — for the console, the Markdown and the PDF alike.

// TestPeriodText says how the log covers the test period, e.g. "Test period 24 h: the log
// covers 10 h at 1 min per sample; 600 of 600 sample slots hold a used row (100.0 %, at least
// 95 % needed). Incomplete: the log covers 10 h of the 24 h test period."
func TestPeriodText(c *soak.Coverage) string {
	if c == nil {
		return ""
	}
	s := fmt.Sprintf("Test period %s: the log covers %s", soak.Duration(c.RequiredS), soak.Duration(c.ObservedS))
	if c.IntervalS > 0 {
		s += " at " + soak.Duration(c.IntervalS) + " per sample"
	}
	s += fmt.Sprintf("; %s of %s sample slots hold a used row (%.1f %%, at least %.0f %% needed)",
		words.Group(c.Samples), words.Group(c.Slots), 100*c.Fraction, 100*c.MinCoverage)
	if c.RejectedRows > 0 {
		s += fmt.Sprintf(", %s counted against it", words.Plural(c.RejectedRows, "rejected row", "rejected rows"))
	}
	if c.Complete {
		return s + "."
	}
	return s + ". Incomplete: " + c.Shortfall + "."
}

// ratio prints an error-performance ratio ("0", "2.3e-04"; "n/a" without available time).
func ratio(v *float64) string {
	switch {
	case v == nil:
		return "n/a"
	case *v == 0:
		return "0"
	}
	return strconv.FormatFloat(*v, 'e', 1, 64)
}

// ErrorPerformanceText words the error-performance events and ratios with their objectives.
func ErrorPerformanceText(ep *diagnose.ErrorPerformance) string {
	if ep == nil {
		return ""
	}
	basis := "uncorrected FEC blocks"
	if ep.Basis == parse.PostFECBER.Column() {
		basis = "the post-FEC BER"
	}
	o := ep.Objectives
	return fmt.Sprintf("Error performance (ITU-T G.826 / G.8201 events from %s over %s): %s, %s, %s, %s unavailable. "+
		"ESR %s; SESR %s (objective %g); BBER %s (objective %g).",
		basis, soak.Duration(float64(ep.EvaluatedS)),
		words.Plural(int(ep.ES), "errored second", "errored seconds"), words.Plural(int(ep.SES), "severely errored second", "severely errored seconds"),
		words.Plural(int(ep.BBE+0.5), "background block error", "background block errors"), soak.Duration(float64(ep.UnavailableS)),
		ratio(ep.ESR), ratio(ep.SESR), o.SESR, ratio(ep.BBER), o.BBER)
}

// VerdictSentence states a port's verdict in words with what decided it: for a fail or a
// marginal, the first criterion (in the engine's order, most telling first) with that verdict
// and how many share it; for a pass, the first criterion, the Q-factor margin when the log has
// one; for an incomplete, the test-period shortfall.
func VerdictSentence(p *diagnose.PortResult) string {
	switch p.Verdict {
	case diagnose.NoData:
		return "No verdict: the log holds nothing that can be judged."
	case diagnose.Incomplete:
		short := "the test period is not covered"
		if p.TestPeriod != nil && p.TestPeriod.Shortfall != "" {
			short = p.TestPeriod.Shortfall
		}
		return "Incomplete: every judged limit is met, but " + short + "; the link cannot be accepted on this log."
	}
	var decide *diagnose.Criterion
	n := 0
	for i := range p.Criteria {
		if c := &p.Criteria[i]; c.Verdict == p.Verdict {
			if decide == nil {
				decide = c
			}
			n++
		}
	}
	word := map[diagnose.Verdict]string{diagnose.Pass: "Passes", diagnose.Marginal: "Marginal", diagnose.Fail: "Fails"}[p.Verdict]
	if decide == nil {
		if len(p.Causes) > 0 {
			return word + ": every limit is met, but the log shows " + string(p.Causes[0].ID) + " (see the likely causes)."
		}
		return word + "."
	}
	lead := word + " on " + lowerFirst(decide.Name)
	switch {
	case p.Verdict == diagnose.Pass:
		lead = fmt.Sprintf("Passes all %d criteria; %s", n, lowerFirst(decide.Name))
	case n > 1:
		lead += fmt.Sprintf(" (and %d more)", n-1)
	}
	return fmt.Sprintf("%s: %s against a limit of %s, margin %s.", lead,
		FormatValue(decide.Measured, decide.Unit), FormatValue(decide.Limit, decide.Unit), CriterionMargin(*decide))
}

func lowerFirst(s string) string {
	for _, keep := range []string{"Q", "OSNR", "PDL", "DGD", "SOP", "LO", "CD", "|", "Post-FEC", "Mean DGD"} {
		if strings.HasPrefix(s, keep) {
			return s
		}
	}
	if s == "" {
		return s
	}
	return strings.ToLower(s[:1]) + s[1:]
}

// quantityLabels name the canonical columns and derived quantities for people.
var quantityLabels = func() map[string]string {
	m := map[string]string{
		diagnose.PlanMeanDGDPs: "mean DGD", diagnose.PlanRouteLengthKm: "route length",
		diagnose.PlanImpliedOSNRdB: "OSNR implied by the eSNR",
	}
	for q, l := range [parse.NumQuantities]string{
		parse.PreFECBER: "pre-FEC BER", parse.PostFECBER: "post-FEC BER", parse.UncorrectedBlocks: "uncorrected FEC blocks",
		parse.QdB: "Q-factor", parse.ESNRdB: "eSNR", parse.OSNRdB: "OSNR", parse.CDpsPerNm: "CD", parse.DGDps: "DGD",
		parse.PDLdB: "PDL", parse.SOPRateKradPerS: "SOP rate", parse.LOOffsetMHz: "LO offset", parse.RxPowerDBm: "Rx power",
		parse.TxPowerDBm: "Tx power", parse.FrequencyTHz: "channel frequency",
	} {
		m[parse.Quantity(q).Column()] = l
	}
	return m
}()

// QuantityLabel names a quantity key (a canonical column or a derived quantity) for people:
// "cd_ps_nm" → "CD"; an unknown key with its underscores as spaces.
func QuantityLabel(key string) string {
	if l, ok := quantityLabels[key]; ok {
		return l
	}
	return strings.ReplaceAll(key, "_", " ")
}

// The source classes of a limit, from the firmest to the loosest claim.
const (
	SourceContract  = "contract value"
	SourceStandard  = "standard"
	SourceAgreement = "implementation agreement"
	SourcePlan      = "link plan"
	SourceDerived   = "derived"
	SourcePractice  = "common practice"
	SourceMemory    = "from memory"
)

// SourceClass sorts a limit's source text into a short class for people: a value from the
// user's rules file is a contract value; a source recalled and not confirmed, or confirmed only
// in a secondary text, is "from memory" whatever it cites; then link plan, common practice,
// implementation agreement (OIF, MSA), standard (ITU-T, IEC, IEEE), derived.
func SourceClass(src string) string {
	s := strings.ToLower(src)
	has := func(words ...string) bool {
		for _, w := range words {
			if strings.Contains(s, w) {
				return true
			}
		}
		return false
	}
	switch {
	case has("user rules file"):
		return SourceContract
	case has("from memory", "secondary source"):
		return SourceMemory
	case strings.HasPrefix(s, "plan "):
		return SourcePlan
	case has("common practice"):
		return SourcePractice
	case has("oif", "implementation agreement", "msa"):
		return SourceAgreement
	case has("itu-t", "iec ", "ieee", "iso "):
		return SourceStandard
	case has("derived"):
		return SourceDerived
	}
	return "stated"
}

// Footnotes numbers distinct source texts in the order first met, for a table that shows only
// each limit's class with a note number.
type Footnotes struct {
	texts []string
	index map[string]int
}

// Note returns the number (from 1) of text, adding it when new.
func (f *Footnotes) Note(text string) int {
	if f.index == nil {
		f.index = map[string]int{}
	}
	if n, ok := f.index[text]; ok {
		return n
	}
	f.texts = append(f.texts, text)
	f.index[text] = len(f.texts)
	return len(f.texts)
}

// Texts are the noted texts; note n is Texts()[n-1].
func (f *Footnotes) Texts() []string { return f.texts }
