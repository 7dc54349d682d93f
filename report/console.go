package report

import (
	"encoding/csv"
	"fmt"
	"github.com/beatnote/beatnote/report/words"
	"io"
	"math"
	"slices"
	"sort"
	"strconv"
	"strings"
	"text/tabwriter"

	"github.com/beatnote/beatnote/diagnose"
	"github.com/beatnote/beatnote/parse"
	"github.com/beatnote/beatnote/report/escape"
)

// This file holds the console writers of the check and triage commands: text for a terminal,
// the JSON of the design contract, CSV and Markdown. Every number printed carries its unit.
// Every string that may have come from an input (port and file names, plan and profile fields,
// rejected values quoted back, and the sentences that quote them) is escaped for its sink with
// package escape: Visible for text, CSVCell for CSV text cells, Markdown for Markdown.

// FormatValue prints a value in its unit with a precision that suits the unit, e.g.
// "−8.42 dBm", "2400 ps/nm", "3.10e-03" (a ratio has no unit).
func FormatValue(v float64, unit string) string {
	if math.IsNaN(v) {
		return "n/a"
	}
	if math.IsInf(v, 0) {
		if v > 0 {
			return "∞"
		}
		return "−∞"
	}
	var s string
	switch unit {
	case "":
		if v == 0 {
			return "0" // a ratio of exactly zero (error-free) reads better than "0.00e+00"
		}
		s = strconv.FormatFloat(v, 'e', 2, 64)
		return s
	case "dB", "dBm":
		s = strconv.FormatFloat(v, 'f', 2, 64)
	case "blocks", "samples":
		// Counts are grouped by thousands for reading: "69 706 560 000 blocks".
		if r := math.Round(v); math.Abs(r) < 1e15 {
			s = words.Group(int(r))
		} else {
			s = strconv.FormatFloat(v, 'e', 2, 64)
		}
	case "ps/nm", "MHz", "km", "s":
		s = strconv.FormatFloat(v, 'f', 0, 64)
	case "ps", "krad/s", "h", "decades":
		s = strconv.FormatFloat(v, 'f', 1, 64)
	case "THz":
		// Five decimals: the ITU-T G.694.1 grid steps by 6.25 GHz (e.g. 193.10625 THz).
		s = strconv.FormatFloat(v, 'f', 5, 64)
	default:
		s = strconv.FormatFloat(v, 'g', 4, 64)
	}
	if strings.Trim(s, "-0.") == "" {
		s = strings.TrimPrefix(s, "-") // a value that rounds to zero prints without a sign
	}
	if one, ok := countUnitOne[unit]; ok && (s == "1" || s == "-1") {
		unit = one
	}
	return s + " " + unit
}

// countUnitOne is the singular of the count units: "1 block", not "1 blocks".
var countUnitOne = map[string]string{"blocks": "block", "samples": "sample"}

// CriterionMargin prints a criterion's margin in its own unit: MarginUnit where the margin is
// not in the measured quantity's unit (decades for the post-FEC BER).
func CriterionMargin(c diagnose.Criterion) string {
	if c.MarginUnit != "" {
		return FormatMargin(c.Margin, c.MarginUnit)
	}
	return FormatMargin(c.Margin, c.Unit)
}

// FormatMargin prints a margin (a difference) with its sign and unit. A difference of two
// levels in dBm is a ratio, so it prints in dB.
func FormatMargin(v float64, unit string) string {
	if unit == "dBm" {
		unit = "dB"
	}
	s := FormatValue(v, unit)
	if v >= 0 && !strings.HasPrefix(s, "n/a") && unit != "" {
		s = "+" + s
	}
	return s
}

func verdictWord(v diagnose.Verdict) string { return strings.ToUpper(string(v)) }

// wrap breaks text into lines of at most width runes, on spaces.
func wrap(text string, width int) []string {
	var lines []string
	var cur strings.Builder
	n := 0
	for _, word := range strings.Fields(text) {
		wl := len([]rune(word))
		if n > 0 && n+1+wl > width {
			lines = append(lines, cur.String())
			cur.Reset()
			n = 0
		}
		if n > 0 {
			cur.WriteByte(' ')
			n++
		}
		cur.WriteString(word)
		n += wl
	}
	if n > 0 {
		lines = append(lines, cur.String())
	}
	return lines
}

// writeWrapped writes text, escaped for a terminal, wrapped to width after the prefix first
// (then rest).
func writeWrapped(w io.Writer, first, rest string, text string, width int) {
	for i, l := range wrap(escape.Visible(text), width) {
		if i == 0 {
			fmt.Fprintf(w, "%s%s\n", first, l)
		} else {
			fmt.Fprintf(w, "%s%s\n", rest, l)
		}
	}
}

// WriteCheckText writes the turn-up view of every port in res: verdict, criteria table, plan vs
// measured, likely causes with evidence and actions, and what could not be judged; then the
// inputs and the first rejected rows.
func WriteCheckText(w io.Writer, res *diagnose.Result) error {
	writeLinesText(w, res.Lines)
	writeDirectionsText(w, res.Directions)
	for i, p := range res.Ports {
		if i > 0 {
			fmt.Fprintln(w)
			fmt.Fprintln(w, strings.Repeat("─", 100))
			fmt.Fprintln(w)
		}
		writeCheckPort(w, &p)
	}
	fmt.Fprintln(w)
	writeInputsText(w, res)
	return nil
}

func writeCheckPort(w io.Writer, p *diagnose.PortResult) {
	title := "Port " + p.Port
	if p.Circuit != "" {
		title = "Circuit " + p.Circuit + ", port " + p.Port
	}
	fmt.Fprintf(w, "%s\n", escape.Visible(title))
	fmt.Fprintf(w, "Profile %s · %d samples · %s to %s\n", escape.Visible(ProfileText(p)), p.Samples, p.From, p.To)
	fmt.Fprintf(w, "VERDICT: %s\n", verdictWord(p.Verdict))
	writeWrapped(w, "  ", "  ", VerdictSentence(p), 96)
	if p.TestPeriod != nil {
		writeWrapped(w, "  ", "  ", TestPeriodText(p.TestPeriod), 96)
	}
	if p.ErrorPerformance != nil {
		writeWrapped(w, "  ", "  ", ErrorPerformanceText(p.ErrorPerformance), 96)
	}

	if len(p.Criteria) > 0 {
		fmt.Fprintln(w, "\nCriteria")
		tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
		fmt.Fprintln(tw, "  criterion\tstatistic\tmeasured\tlimit\tmargin\tverdict\t")
		for _, c := range p.Criteria {
			fmt.Fprintf(tw, "  %s\t%s\t%s\t%s\t%s\t%s\t\n", escape.Visible(c.Name), escape.Visible(c.Statistic), FormatValue(c.Measured, c.Unit),
				FormatValue(c.Limit, c.Unit), CriterionMargin(c), verdictWord(c.Verdict))
		}
		tw.Flush()
	}
	if len(p.PlanVsMeasured) > 0 {
		fmt.Fprintln(w, "\nPlan vs measured")
		tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
		fmt.Fprintln(tw, "  quantity\texpected\tmeasured\tdifference\tnote\t")
		for _, c := range p.PlanVsMeasured {
			diff := c.Measured - c.Expected
			fmt.Fprintf(tw, "  %s\t%s\t%s\t%s\t%s\t\n", escape.Visible(QuantityLabel(c.Quantity)), FormatValue(c.Expected, c.Unit), FormatValue(c.Measured, c.Unit),
				FormatMargin(diff, c.Unit), escape.Visible(c.Note))
		}
		tw.Flush()
	}
	fmt.Fprintln(w, "\nLikely causes")
	if len(p.Causes) == 0 {
		writeWrapped(w, "  ", "  ", noCauseText(p), 96)
	}
	for i, c := range p.Causes {
		fmt.Fprintf(w, "  %d. %s  (confidence %.2f)\n", i+1, escape.Visible(string(c.ID)), c.Confidence)
		for _, e := range c.Evidence {
			writeWrapped(w, "     - ", "       ", e, 92)
		}
		if len(c.Actions) > 0 {
			fmt.Fprintln(w, "     What to do on site:")
			for j, a := range c.Actions {
				writeWrapped(w, "     * ", "       ", a, 92)
				if j < len(c.Cautions) && c.Cautions[j] != "" {
					writeWrapped(w, "       ", "       ", c.Cautions[j], 90)
				}
			}
		}
	}
	if p.NextTest != "" {
		fmt.Fprintln(w, "\nNext test")
		writeWrapped(w, "  ", "  ", p.NextTest, 96)
	}
	if len(p.Risks) > 0 {
		fmt.Fprintln(w, "\nRisks (inside the limits, close to them)")
		for _, r := range p.Risks {
			writeWrapped(w, "  - ", "    ", r, 96)
		}
	}
	if lines := BudgetLines(p.Budget); len(lines) > 0 {
		fmt.Fprintln(w, "\nSNR budget (what each mechanism costs the eSNR)")
		for _, l := range lines {
			writeWrapped(w, "  - ", "    ", l, 96)
		}
	}
	if len(p.NotJudged) > 0 {
		fmt.Fprintln(w, "\nNot judged")
		for _, n := range p.NotJudged {
			writeWrapped(w, "  - ", "    ", n, 96)
		}
	}
}

// ProfileText is the port's profile id, with the assumption spelled out when nothing named it
// and the data named when it did.
func ProfileText(p *diagnose.PortResult) string {
	switch p.ProfileSource {
	case diagnose.ProfileAssumed:
		return p.Profile + " (assumed: no --profile, plan, port map or profile column names it)"
	case diagnose.ProfileFromColumn:
		return p.Profile + " (named by the telemetry's profile column)"
	}
	return p.Profile
}

// noCauseText says in plain words why no cause is listed, and what to do next.
func noCauseText(p *diagnose.PortResult) string {
	switch p.Verdict {
	case diagnose.Pass, diagnose.Incomplete:
		return "none: every judged limit is met and no physical cause shows in the log."
	case diagnose.NoData:
		return "none: the log holds nothing that can be judged (see Not judged)."
	}
	return "No single physical cause can be named from this log. Next step: look at the criteria " +
		"above that are not PASS, read the notes under Not judged, check the module's alarm log for the " +
		"same times, and re-run with a link plan (--plan) or a log that has OSNR, received power, CD, " +
		"DGD, PDL, SOP rate and LO offset, so the causes can be told apart."
}

func writeInputsText(w io.Writer, res *diagnose.Result) {
	fmt.Fprintln(w, "Inputs")
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	fmt.Fprintln(tw, "  file\trows read\tused\trejected\tsha256\t")
	for _, in := range res.Inputs {
		sum := in.SHA256
		if len(sum) > 16 {
			sum = sum[:16] + "…"
		}
		fmt.Fprintf(tw, "  %s\t%d\t%d\t%d\t%s\t\n", escape.Visible(in.File), in.RowsRead, in.RowsUsed, in.RowsRejected, escape.Visible(sum))
	}
	tw.Flush()
	if len(res.Rejected) > 0 {
		const show = 20
		total := 0
		for _, in := range res.Inputs {
			total += in.RowsRejected
		}
		fmt.Fprintf(w, "\nRejected rows (%d in all; the first %d):\n", total, min(show, len(res.Rejected)))
		for i, r := range res.Rejected {
			if i == show {
				break
			}
			fmt.Fprintf(w, "  %s\n", escape.Visible(consoleRejection(r)))
		}
	}
}

// consoleRejection prints a rejection as file:line[:column]: reason. The reason already names
// the field, so it is not repeated.
func consoleRejection(r parse.Rejection) string {
	loc := fmt.Sprintf("%s:%d", r.File, r.Line)
	if r.Column > 0 {
		loc += fmt.Sprintf(":%d", r.Column)
	}
	if r.Field != "" && !strings.HasPrefix(r.Reason, r.Field+":") {
		loc += " " + r.Field
	}
	return loc + ": " + r.Reason
}

// TriageRow is one line of the triage table.
type TriageRow struct {
	Rank    int
	Port    string
	Circuit string
	Profile string
	// ProfileSource says what chose Profile (map, column, flag or default).
	ProfileSource string
	Verdict       diagnose.Verdict
	Cause         diagnose.CauseID // top cause id, "" when none
	Confidence    float64
	Others        []diagnose.CauseID // further cause ids
	QMarginDB     *float64
	RxPowerDBm    *float64
	Samples       int
	Dark          int    // samples without signal (their Q and power are left out of the figures)
	Summary       string // first evidence sentence of the top cause
	Impact        string // the service-impact rung and its figure (ImpactText)
	// LineFindings are the ids of the line findings the port points at; LineRefs the pointers
	// themselves (SetLineRefs sets both).
	LineFindings []diagnose.LineFindingID
	LineRefs     []diagnose.LineRef
}

// ImpactText says in a few words why a port ranks where it does (diagnose.SortByImpact).
func ImpactText(im diagnose.Impact) string {
	switch im.Tier {
	case diagnose.TierDark:
		return "dark " + words.Plural(im.DarkSamples, "sample", "samples")
	case diagnose.TierBlocks:
		if im.UncorrectedBlocks == 1 {
			return "1 uncorrected block"
		}
		if im.UncorrectedBlocks < 1e6 {
			return fmt.Sprintf("%.0f uncorrected blocks", im.UncorrectedBlocks)
		}
		return fmt.Sprintf("%.2g uncorrected blocks", im.UncorrectedBlocks)
	case diagnose.TierQBelow:
		return "Q " + FormatMargin(im.QMarginDB, "dB") + " to FEC limit"
	case diagnose.TierForecast:
		return fmt.Sprintf("limit in %.1f h", im.HoursToLimit)
	}
	return im.Tier.String()
}

// TriageRows turns ranked ports into table rows, ranked 1, 2, … in their order.
func TriageRows(ports []diagnose.PortResult) []TriageRow {
	rows := make([]TriageRow, len(ports))
	for i := range ports {
		rows[i] = TriageRowOf(&ports[i])
		rows[i].Rank = i + 1
	}
	return rows
}

// TriageRowOf is port p's row of the triage table, without its rank: everything the triage
// table, its CSV and Markdown, the count per cause and the filters need of the port.
func TriageRowOf(p *diagnose.PortResult) TriageRow {
	r := TriageRow{Port: p.Port, Circuit: p.Circuit, Profile: p.Profile, ProfileSource: p.ProfileSource, Verdict: p.Verdict, Samples: p.Samples,
		Impact: ImpactText(diagnose.ImpactOf(p))}
	if len(p.Causes) > 0 {
		r.Cause, r.Confidence = p.Causes[0].ID, p.Causes[0].Confidence
		if len(p.Causes[0].Evidence) > 0 {
			r.Summary = p.Causes[0].Evidence[0]
		}
		for _, c := range p.Causes[1:] {
			r.Others = append(r.Others, c.ID)
		}
	}
	r.SetLineRefs(p.LineFindings)
	if m, ok := p.Metrics[parse.QdB.Column()]; ok {
		r.QMarginDB = m.Margin
	}
	for _, c := range p.Criteria {
		if c.Statistic == "count" && c.Unit == "samples" {
			r.Dark = int(c.Measured)
		}
	}
	if m, ok := p.Metrics[parse.RxPowerDBm.Column()]; ok {
		v := m.P50
		r.RxPowerDBm = &v
	}
	return r
}

// SetLineRefs gives the row the port's pointers to line findings (PortResult.LineFindings).
func (r *TriageRow) SetLineRefs(refs []diagnose.LineRef) {
	r.LineRefs, r.LineFindings = refs, nil
	for _, lf := range refs {
		if !slices.Contains(r.LineFindings, lf.ID) {
			r.LineFindings = append(r.LineFindings, lf.ID)
		}
	}
}

// Causes are the ids of every cause the port lists, the top one first.
func (r *TriageRow) Causes() []diagnose.CauseID {
	if r.Cause == "" {
		return nil
	}
	return append([]diagnose.CauseID{r.Cause}, r.Others...)
}

// JoinIDs joins cause or line finding ids with sep.
func JoinIDs[ID ~string](ids []ID, sep string) string {
	s := make([]string, len(ids))
	for i, id := range ids {
		s[i] = string(id)
	}
	return strings.Join(s, sep)
}

// CauseCount is how many ports list a cause (anywhere) and how many have it on top.
type CauseCount struct {
	ID    string `json:"id"`
	Top   int    `json:"top"`
	Ports int    `json:"ports"`
}

// CountCauses counts each cause over the ports' rows, most frequent on top first. A cause that
// a line finding explains on the port is counted under the line finding's id: one line event,
// not N port causes.
func CountCauses(rows []TriageRow) []CauseCount {
	m := map[string]*CauseCount{}
	for k := range rows {
		r := &rows[k]
		for i, c := range r.Causes() {
			id := string(c)
			for _, lf := range r.LineRefs {
				if lf.Explains == c {
					id = string(lf.ID)
				}
			}
			cc := m[id]
			if cc == nil {
				cc = &CauseCount{ID: id}
				m[id] = cc
			}
			cc.Ports++
			if i == 0 {
				cc.Top++
			}
		}
	}
	out := make([]CauseCount, 0, len(m))
	for _, c := range m {
		out = append(out, *c)
	}
	sort.Slice(out, func(i, j int) bool {
		if out[i].Top != out[j].Top {
			return out[i].Top > out[j].Top
		}
		if out[i].Ports != out[j].Ports {
			return out[i].Ports > out[j].Ports
		}
		return out[i].ID < out[j].ID
	})
	return out
}

func optValue(v *float64, unit string, signed bool) string {
	if v == nil {
		return "n/a"
	}
	if signed {
		return FormatMargin(*v, unit)
	}
	return FormatValue(*v, unit)
}

// TriageSummary counts ports per verdict.
func TriageSummary(rows []TriageRow) map[diagnose.Verdict]int {
	m := map[diagnose.Verdict]int{}
	for i := range rows {
		m[rows[i].Verdict]++
	}
	return m
}

// WriteTriageText writes the ranked table of shown (already filtered, ranked and cut to the top
// N), the count per cause over all (the filtered set before the cut), and the lines, inputs and
// rejections of res (its Ports are not read).
func WriteTriageText(w io.Writer, res *diagnose.Result, shown, all []TriageRow) error {
	v := TriageSummary(all)
	fmt.Fprintf(w, "%d ports: %d fail, %d marginal, %d pass, %d no data", len(all), v[diagnose.Fail], v[diagnose.Marginal], v[diagnose.Pass], v[diagnose.NoData])
	if len(shown) < len(all) {
		fmt.Fprintf(w, " (showing the first %d)", len(shown))
	}
	fmt.Fprintln(w)
	fmt.Fprintln(w)
	writeLinesText(w, res.Lines)
	rows := shown
	withLines := slices.ContainsFunc(rows, func(r TriageRow) bool { return len(r.LineFindings) > 0 })
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	lineHead := ""
	if withLines {
		lineHead = "line finding\t"
	}
	fmt.Fprintln(tw, "  #\tport\tverdict\timpact\ttop cause\tconfidence\talso\t"+lineHead+"Q margin\trx power\tsamples\t")
	for _, r := range rows {
		cause, conf := "—", ""
		if r.Cause != "" {
			cause, conf = escape.Visible(string(r.Cause)), fmt.Sprintf("%.2f", r.Confidence)
		}
		also := escape.Visible(JoinIDs(r.Others, ", "))
		qm, samples := optValue(r.QMarginDB, "dB", true), strconv.Itoa(r.Samples)
		if r.Dark > 0 {
			// The Q figures come from the samples with signal: say so, and show the dark time.
			qm += " (lit)"
			samples += fmt.Sprintf(", %d dark", r.Dark)
		}
		if withLines {
			also += "\t" + escape.Visible(JoinIDs(r.LineFindings, ", "))
		}
		fmt.Fprintf(tw, "  %d\t%s\t%s\t%s\t%s\t%s\t%s\t%s\t%s\t%s\t\n", r.Rank, escape.Visible(r.Port), verdictWord(r.Verdict), r.Impact, cause, conf, also,
			qm, optValue(r.RxPowerDBm, "dBm", false), samples)
	}
	tw.Flush()
	counts := CountCauses(all)
	fmt.Fprintln(w, "\nPorts per cause")
	if len(counts) == 0 {
		fmt.Fprintln(w, "  none: no port shows a likely cause.")
	} else {
		tw = tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
		fmt.Fprintln(tw, "  cause\ttop cause of\tlisted on\t")
		for _, c := range counts {
			fmt.Fprintf(tw, "  %s\t%s\t%s\t\n", escape.Visible(c.ID), words.Plural(c.Top, "port", "ports"), words.Plural(c.Ports, "port", "ports"))
		}
		tw.Flush()
	}
	fmt.Fprintln(w)
	writeInputsText(w, res)
	return nil
}

// WriteTriageCSV writes one row per shown port: rank, port, circuit, profile and what chose it,
// verdict, impact,
// top cause, confidence, other causes (separated by "|"), Q margin (dB), median rx power (dBm),
// samples, and the top cause's first evidence sentence.
func WriteTriageCSV(w io.Writer, shown []TriageRow) error {
	cw := csv.NewWriter(w)
	_ = cw.Write([]string{"rank", "port", "circuit", "profile", "profile_source", "verdict", "impact", "top_cause", "confidence", "other_causes", "q_margin_db", "rx_power_p50_dbm", "samples", "evidence"})
	f := func(v *float64) string {
		if v == nil {
			return ""
		}
		return strconv.FormatFloat(*v, 'f', 2, 64)
	}
	for _, r := range shown {
		conf := ""
		if r.Cause != "" {
			conf = strconv.FormatFloat(r.Confidence, 'f', 3, 64)
		}
		// Text cells through CSVCell; the numbers are this program's own and stay numbers.
		if err := cw.Write([]string{strconv.Itoa(r.Rank), escape.CSVCell(r.Port), escape.CSVCell(r.Circuit), escape.CSVCell(r.Profile),
			r.ProfileSource, string(r.Verdict), r.Impact, escape.CSVCell(string(r.Cause)), conf, escape.CSVCell(JoinIDs(r.Others, "|")),
			f(r.QMarginDB), f(r.RxPowerDBm), strconv.Itoa(r.Samples), escape.CSVCell(r.Summary)}); err != nil {
			return err
		}
	}
	cw.Flush()
	return cw.Error()
}

// WriteTriageMarkdown writes the ranked table and the count per cause as Markdown, for tickets.
func WriteTriageMarkdown(w io.Writer, lines []diagnose.LineResult, shown, all []TriageRow) error {
	v := TriageSummary(all)
	fmt.Fprintf(w, "## Triage: %d ports — %d fail, %d marginal, %d pass, %d no data\n\n", len(all), v[diagnose.Fail], v[diagnose.Marginal], v[diagnose.Pass], v[diagnose.NoData])
	writeLinesMarkdown(w, lines)
	fmt.Fprintln(w, "| # | port | verdict | impact | top cause | confidence | also | line finding | Q margin | rx power (p50) | evidence |")
	fmt.Fprintln(w, "|---:|---|---|---|---|---:|---|---|---:|---:|---|")
	for _, r := range shown {
		conf := ""
		if r.Cause != "" {
			conf = fmt.Sprintf("%.2f", r.Confidence)
		}
		qm := optValue(r.QMarginDB, "dB", true)
		if r.Dark > 0 {
			qm += " (lit; " + words.Plural(r.Dark, "sample", "samples") + " dark)"
		}
		fmt.Fprintf(w, "| %d | %s | %s | %s | %s | %s | %s | %s | %s | %s | %s |\n", r.Rank, escape.Markdown(r.Port), verdictWord(r.Verdict), r.Impact,
			escape.Markdown(string(r.Cause)), conf, escape.Markdown(JoinIDs(r.Others, ", ")), escape.Markdown(JoinIDs(r.LineFindings, ", ")), qm, optValue(r.RxPowerDBm, "dBm", false), escape.Markdown(r.Summary))
	}
	fmt.Fprintln(w, "\n### Ports per cause")
	fmt.Fprintln(w)
	fmt.Fprintln(w, "| cause | top cause of | listed on |")
	fmt.Fprintln(w, "|---|---:|---:|")
	for _, c := range CountCauses(all) {
		fmt.Fprintf(w, "| %s | %d | %d |\n", escape.Markdown(c.ID), c.Top, c.Ports)
	}
	return nil
}
