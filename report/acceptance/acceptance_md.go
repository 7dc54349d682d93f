package acceptance

import (
	"bufio"
	"fmt"
	"github.com/beatnote/beatnote/report/words"
	"io"
	"strings"

	"github.com/beatnote/beatnote/diagnose"
	"github.com/beatnote/beatnote/report"
	"github.com/beatnote/beatnote/report/escape"
)

// VerdictWords is how a verdict is written out in a report, never by colour alone.
func VerdictWords(v diagnose.Verdict) string {
	switch v {
	case diagnose.Pass:
		return "PASS"
	case diagnose.Marginal:
		return "MARGINAL"
	case diagnose.Fail:
		return "FAIL"
	case diagnose.NoData:
		return "NO DATA"
	}
	return strings.ToUpper(string(v))
}

// verdictMeaning is the one-line explanation printed under the overall verdict.
func verdictMeaning(v diagnose.Verdict) string {
	switch v {
	case diagnose.Pass:
		return "Every judged criterion is inside its limit with the required margin."
	case diagnose.Marginal:
		return "No limit is exceeded, but at least one criterion has less margin than required."
	case diagnose.Fail:
		return "At least one criterion exceeds its limit."
	case diagnose.NoData:
		return "The telemetry did not allow any criterion to be judged."
	case diagnose.Incomplete:
		return "Every judged limit is met, but the log does not cover the required test period: the link cannot be accepted on it."
	}
	return ""
}

// headline is the report's verdict as a sentence naming what decided it: the sentence of the
// first port (ports run worst first) whose verdict is the report's.
func headline(a *Report) string {
	for i := range a.Ports {
		if p := &a.Ports[i]; p.Verdict == a.Verdict {
			s := report.VerdictSentence(p)
			if len(a.Ports) > 1 {
				s = "Port " + p.Port + ": " + s
			}
			return s
		}
	}
	return verdictMeaning(a.Verdict)
}

// portFacts are the sentences under a port's heading: its verdict with what decided it, the
// module's identity when known, the test period it covers and its error performance.
func portFacts(p *diagnose.PortResult) []string {
	out := []string{report.VerdictSentence(p)}
	if m := p.Module; m != nil {
		out = append(out, fmt.Sprintf("Module: part number %s, serial %s, firmware %s (from the port map).",
			orBlank(m.PartNumber, "not stated"), orBlank(m.Serial, "not stated"), orBlank(m.Firmware, "not stated")))
	}
	if s := report.TestPeriodText(p.TestPeriod); s != "" {
		out = append(out, s)
	}
	if s := report.ErrorPerformanceText(p.ErrorPerformance); s != "" {
		out = append(out, s)
	}
	return out
}

func orBlank(s, blank string) string {
	if strings.TrimSpace(s) == "" {
		return blank
	}
	return s
}

// mdLines escapes text typed on several lines (the sign-off notes) for a Markdown table cell:
// each line escaped with escape.Markdown, the lines joined by <br>.
func mdLines(s string) string {
	lines := strings.Split(s, "\n")
	for i, l := range lines {
		lines[i] = escape.Markdown(strings.TrimSuffix(l, "\r"))
	}
	return strings.Join(lines, "<br>")
}

// WriteMarkdown writes the report as Markdown for tickets: the same content as the PDF, less
// the charts. Every text that may come from an input or a flag goes through escape.Markdown, so
// that it renders as the text it is: no forged row, heading, link or HTML.
func (a *Report) WriteMarkdown(w io.Writer) error {
	b := bufio.NewWriter(w)
	p := func(format string, args ...any) { fmt.Fprintf(b, format, args...) }

	p("# Coherent link acceptance report — %s\n\n", escape.Markdown(a.Circuit))
	p("**Verdict: %s** — %s", VerdictWords(a.Verdict), escape.Markdown(headline(a)))
	if tally := criteriaTally(a); tally != "" {
		p(" %s", tally)
	}
	p("\n\n")
	p("| | |\n| --- | --- |\n")
	p("| Circuit | %s |\n", escape.Markdown(a.Circuit))
	p("| End A | %s |\n", escape.Markdown(orBlank(a.EndA, "not stated")))
	p("| End Z | %s |\n", escape.Markdown(orBlank(a.EndZ, "not stated")))
	p("| Period (UTC) | %s to %s |\n", escape.Markdown(a.From), escape.Markdown(a.To))
	if a.Profile != nil {
		p("| Module profile | %s |\n", escape.Markdown(profileLine(a.Profile)))
	} else {
		p("| Module profile | not stated |\n")
	}
	p("| Report id | %s |\n", a.ReportID)
	p("| Report time | %s |\n", a.GeneratedAt)
	if a.Signing != nil {
		p("| Signer | %s |\n", escape.Markdown(a.Signing.Signer))
		p("| Signing key | `%s` |\n", a.Signing.KeyFingerprint)
	} else {
		p("| Signing key | not signed |\n")
	}
	p("\n")

	if a.Plan != nil {
		p("## Link plan\n\n%s: %s, %.1f km, %s", escape.Markdown(a.Plan.Circuit), words.Plural(a.Plan.Spans, "span", "spans"), a.Plan.LengthKm, words.Plural(a.Plan.Amplifiers, "amplifier", "amplifiers"))
		if a.Plan.FrequencyTHz > 0 {
			p(", channel %.5f THz", a.Plan.FrequencyTHz)
		}
		p(".")
		if a.Plan.Description != "" {
			p(" %s", escape.Markdown(a.Plan.Description))
		}
		p("\n\n")
		if len(a.Plan.Instruments) > 0 || len(a.Plan.PowerReadings) > 0 {
			p("## Field measurements\n\n")
			if rows := instrumentRows(a.Plan.Instruments); len(rows) > 0 {
				p("| instrument | model | serial | calibrated on | calibration due |\n| --- | --- | --- | --- | --- |\n")
				for _, r := range rows {
					p("| %s | %s | %s | %s | %s |\n", escape.Markdown(r[0]), escape.Markdown(r[1]), escape.Markdown(r[2]), escape.Markdown(r[3]), escape.Markdown(r[4]))
				}
				p("\n")
			}
			if rows := readingRows(a.Plan.PowerReadings, a.Plan.Instruments); len(rows) > 0 {
				p("Hand power-meter readings:\n\n| where | power | wavelength | instrument | taken | note |\n| --- | ---: | ---: | --- | --- | --- |\n")
				for _, r := range rows {
					p("| %s | %s | %s | %s | %s | %s |\n", escape.Markdown(r[0]), r[1], r[2], escape.Markdown(r[3]), escape.Markdown(r[4]), escape.Markdown(r[5]))
				}
				p("\n")
			}
		}
	}

	if len(a.Directions) > 0 {
		p("## Both directions\n\n| from | received at | line | verdict | causes and line findings |\n| --- | --- | --- | --- | --- |\n")
		for _, dp := range a.Directions {
			for _, d := range dp.Directions {
				p("| %s | %s | %s | %s | %s |\n", escape.Markdown(d.From), escape.Markdown(d.ReceivedAt), escape.Markdown(orBlank(d.Line, "—")), VerdictWords(d.Verdict),
					escape.Markdown(orBlank(d.Findings(), "none")))
			}
			p("\n%s\n\n", escape.Markdown(dp.Finding))
		}
	}

	for _, port := range a.Ports {
		p("## Port %s — %s\n\n", escape.Markdown(port.Port), VerdictWords(port.Verdict))
		p("Profile %s; %s from %s to %s.\n\n", escape.Markdown(orBlank(report.ProfileText(&port), "not stated")), words.Plural(port.Samples, "sample", "samples"), port.From, port.To)
		for _, f := range portFacts(&port) {
			p("%s\n\n", escape.Markdown(f))
		}
		if len(port.Criteria) > 0 {
			p("### Criteria\n\n| criterion | statistic | measured | limit | margin | verdict | limit source |\n| --- | --- | ---: | ---: | ---: | --- | --- |\n")
			var notes report.Footnotes
			for _, c := range port.Criteria {
				src := ""
				if c.Source != "" {
					src = fmt.Sprintf("%s [%d]", report.SourceClass(c.Source), notes.Note(c.Source))
				}
				p("| %s | %s | %s | %s | %s | %s | %s |\n", escape.Markdown(c.Name), escape.Markdown(c.Statistic), report.FormatValue(c.Measured, c.Unit),
					report.FormatValue(c.Limit, c.Unit), report.CriterionMargin(c), strings.ToLower(VerdictWords(c.Verdict)), src)
			}
			p("\n")
			for i, t := range notes.Texts() {
				p("[%d] %s  \n", i+1, escape.Markdown(t))
			}
			p("\n")
		}
		if len(port.PlanVsMeasured) > 0 {
			p("### Plan vs measured\n\n| quantity | planned | measured | difference | note |\n| --- | ---: | ---: | ---: | --- |\n")
			for _, pc := range port.PlanVsMeasured {
				p("| %s | %s | %s | %s | %s |\n", escape.Markdown(report.QuantityLabel(pc.Quantity)), report.FormatValue(pc.Expected, pc.Unit), report.FormatValue(pc.Measured, pc.Unit),
					report.FormatMargin(pc.Measured-pc.Expected, pc.Unit), escape.Markdown(pc.Note))
			}
			p("\n")
		}
		p("### Likely causes\n\n")
		if len(port.Causes) == 0 {
			p("None: nothing in the telemetry points at a physical fault.\n\n")
		}
		for i, c := range port.Causes {
			p("%d. **%s** (confidence %.0f %%)\n", i+1, escape.Markdown(string(c.ID)), 100*c.Confidence)
			for _, e := range c.Evidence {
				p("   - evidence: %s\n", escape.Markdown(e))
			}
			for j, act := range c.Actions {
				p("   - action: %s\n", escape.Markdown(act))
				if j < len(c.Cautions) && c.Cautions[j] != "" {
					p("     *%s*\n", escape.Markdown(c.Cautions[j]))
				}
			}
		}
		p("\n")
		if port.NextTest != "" {
			p("Next test: %s\n\n", escape.Markdown(port.NextTest))
		}
		for _, r := range port.Risks {
			p("- risk: %s\n", escape.Markdown(r))
		}
		if len(port.Risks) > 0 {
			p("\n")
		}
		if lines := report.BudgetLines(port.Budget); len(lines) > 0 {
			p("### SNR budget\n\n")
			for _, l := range lines {
				p("- %s\n", escape.Markdown(l))
			}
			p("\n")
		}
		if len(port.NotJudged) > 0 {
			p("Not judged:\n\n")
			for _, n := range port.NotJudged {
				p("- %s\n", escape.Markdown(n))
			}
			p("\n")
		}
		if rows := metricRows(port.Metrics); len(rows) > 0 {
			p("### Measurements\n\n| quantity | min | median | p99 | max |\n| --- | ---: | ---: | ---: | ---: |\n")
			for _, r := range rows {
				p("| %s | %s | %s | %s | %s |\n", escape.Markdown(r[0]), r[1], r[2], r[3], r[4])
			}
			p("\n")
		}
	}

	p("## Inputs\n\n| file | SHA-256 | rows read | used | rejected |\n| --- | --- | ---: | ---: | ---: |\n")
	for _, in := range a.Inputs {
		p("| %s | `%s` | %d | %d | %d |\n", escape.Markdown(in.File), in.SHA256, in.RowsRead, in.RowsUsed, in.RowsRejected)
	}
	p("\n")
	if len(a.Settings) > 0 {
		p("| judged with | file | SHA-256 |\n| --- | --- | --- |\n")
		for _, f := range a.Settings {
			p("| %s | %s | `%s` |\n", f.Role, escape.Markdown(f.File), f.SHA256)
		}
		p("\n")
	}
	if a.Rejected.Total > 0 {
		p("%s rejected; the first %d:\n\n", words.Plural(a.Rejected.Total, "row", "rows"), len(a.Rejected.First))
		for _, r := range a.Rejected.First {
			p("- %s\n", escape.Markdown(rejectionLine(r.File, r.Line, r.Field, r.Reason)))
		}
		p("\n")
	} else {
		p("No row was rejected.\n\n")
	}

	p("## Laser safety\n\n")
	for _, c := range a.Safety.Cautions {
		p("- %s\n", c)
	}
	p("\n## Sign-off\n\n| | |\n| --- | --- |\n")
	p("| Technician | %s |\n", escape.Markdown(a.SignOff.Technician))
	p("| Organisation | %s |\n", escape.Markdown(a.SignOff.Organisation))
	p("| Accepting party | %s |\n", escape.Markdown(a.SignOff.AcceptingParty))
	p("| End A | %s |\n", escape.Markdown(a.SignOff.EndA))
	p("| End Z | %s |\n", escape.Markdown(a.SignOff.EndZ))
	p("| Notes | %s |\n", mdLines(a.SignOff.Notes))
	p("\nHanded over by: ______________________  date: ____________\n\n")
	p("Accepted by: ______________________  date: ____________\n")
	return b.Flush()
}

func profileLine(ps *ProfileSummary) string {
	s := ps.ID
	if ps.Name != "" {
		s += " (" + ps.Name + ")"
	}
	var parts []string
	if ps.Modulation != "" {
		parts = append(parts, ps.Modulation)
	}
	if ps.BaudGBd > 0 {
		parts = append(parts, fmt.Sprintf("%.5g GBd", ps.BaudGBd))
	}
	if ps.FEC != "" {
		parts = append(parts, ps.FEC)
	}
	if ps.FECThresholdBER > 0 {
		parts = append(parts, fmt.Sprintf("FEC threshold BER %.3g", ps.FECThresholdBER))
	}
	if len(parts) > 0 {
		s += ": " + strings.Join(parts, ", ")
	}
	if ps.Assumed {
		s += ". ASSUMED: no --profile, plan or port map names the module's profile; the built-in default was used"
	}
	return s
}

func rejectionLine(file string, line int, field, reason string) string {
	s := fmt.Sprintf("%s:%d", file, line)
	if field != "" {
		s += " [" + field + "]"
	}
	return s + ": " + reason
}
