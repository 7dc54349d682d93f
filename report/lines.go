package report

import (
	"fmt"
	"github.com/beatnote/beatnote/report/words"
	"io"
	"strings"

	"github.com/beatnote/beatnote/diagnose"
	"github.com/beatnote/beatnote/report/escape"
)

// lineHeadline is one line's summary: its ports, its events and the fibre's pooled mean DGD.
func lineHeadline(l diagnose.LineResult) string {
	ev := "no line event"
	if n := len(l.Findings); n == 1 {
		ev = "1 line event"
	} else if n > 1 {
		ev = fmt.Sprintf("%d line events", n)
	}
	s := fmt.Sprintf("%s · %s · %s", escape.Visible(l.Line), words.Plural(len(l.Ports), "port", "ports"), ev)
	if p := l.PMD; p != nil {
		s += fmt.Sprintf(" · fibre mean DGD %s from %d channels (%d samples; channel means %s to %s)",
			FormatValue(p.MeanDGDPs, "ps"), p.Channels, p.Samples, FormatValue(p.ChannelMeanMinPs, "ps"), FormatValue(p.ChannelMeanMaxPs, "ps"))
		switch {
		case p.TolerancePs > 0 && p.ExceedProbability > 0:
			s += fmt.Sprintf(", P(DGD > %s) = %.2g (Maxwellian)", FormatValue(p.TolerancePs, "ps"), p.ExceedProbability)
		case p.TolerancePs > 0:
			s += fmt.Sprintf(", P(DGD > %s) below 1e-300 (Maxwellian)", FormatValue(p.TolerancePs, "ps"))
		}
	}
	return s
}

// writeLinesText writes the lines section of check and triage: each line with its findings,
// their confidence, time, ports and evidence. Nothing when no port names a line.
func writeLinesText(w io.Writer, lines []diagnose.LineResult) {
	if len(lines) == 0 {
		return
	}
	fmt.Fprintln(w, "Lines (channels sharing a fibre line; one finding per event of the line)")
	for _, l := range lines {
		writeWrapped(w, "  ", "    ", lineHeadline(l), 96)
		for _, f := range l.Findings {
			fmt.Fprintf(w, "    %s  (confidence %.2f)  %s → %s  on %s\n", f.ID, f.Confidence, f.From, f.To, escape.Visible(strings.Join(f.PortsAffected, ", ")))
			for _, e := range f.Evidence {
				writeWrapped(w, "      - ", "        ", escape.Visible(e), 90)
			}
		}
	}
	fmt.Fprintln(w)
}

// writeLinesMarkdown is writeLinesText for tickets.
func writeLinesMarkdown(w io.Writer, lines []diagnose.LineResult) {
	if len(lines) == 0 {
		return
	}
	fmt.Fprintln(w, "### Lines")
	fmt.Fprintln(w)
	for _, l := range lines {
		fmt.Fprintf(w, "- **%s**\n", escape.Markdown(lineHeadline(l)))
		for _, f := range l.Findings {
			fmt.Fprintf(w, "  - `%s` (confidence %.2f) %s → %s on %s\n", f.ID, f.Confidence, f.From, f.To, escape.Markdown(strings.Join(f.PortsAffected, ", ")))
			for _, e := range f.Evidence {
				fmt.Fprintf(w, "    - %s\n", escape.Markdown(e))
			}
		}
	}
	fmt.Fprintln(w)
}

// writeDirectionsText writes the circuits judged in both directions: each direction's verdict
// and causes, and where the pair points.
func writeDirectionsText(w io.Writer, pairs []diagnose.DirectionPair) {
	if len(pairs) == 0 {
		return
	}
	fmt.Fprintln(w, "Both directions")
	for _, p := range pairs {
		title := "circuit " + escape.Visible(p.Circuit)
		if p.Circuit == "" {
			title = "circuit (unnamed)"
		}
		fmt.Fprintf(w, "  %s\n", title)
		for _, d := range p.Directions {
			what := d.Findings()
			if what == "" {
				what = "no cause"
			}
			via := ""
			if d.Line != "" {
				via = " via line " + escape.Visible(d.Line)
			}
			fmt.Fprintf(w, "    %s → %s%s: %s, %s\n", escape.Visible(d.From), escape.Visible(d.ReceivedAt), via, verdictWord(d.Verdict), escape.Visible(what))
		}
		writeWrapped(w, "    ", "    ", escape.Visible(p.Finding), 96)
	}
	fmt.Fprintln(w)
}
