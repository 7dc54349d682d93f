package report

import (
	"encoding/json"
	"fmt"
	"github.com/beatnote/beatnote/report/words"
	"io"
	"text/tabwriter"

	"github.com/beatnote/beatnote/diagnose"
	"github.com/beatnote/beatnote/parse"
)

// This file compares two periods of the same ports criterion by criterion: an earlier one (the
// baseline, e.g. before cleaning a connector) with the current one.

// Baseline is the comparison of a check with an earlier period.
type Baseline struct {
	Inputs []parse.InputStats `json:"inputs"`
	Ports  []BaselinePort     `json:"ports"`
	// Unmatched lists the ports of either period the other lacks.
	Unmatched []string `json:"unmatched,omitempty"`
}

// BaselinePort compares one port's two periods.
type BaselinePort struct {
	Port          string             `json:"port"`
	VerdictBefore diagnose.Verdict   `json:"verdict_before"`
	VerdictAfter  diagnose.Verdict   `json:"verdict_after"`
	Criteria      []CriterionChanged `json:"criteria"`
}

// CriterionChanged is one criterion in both periods. Before or After is nil when that period
// did not judge it; Change is After − Before in the criterion's unit (nil unless both).
type CriterionChanged struct {
	Name          string           `json:"name"`
	Statistic     string           `json:"statistic"`
	Unit          string           `json:"unit"`
	Before        *float64         `json:"before"`
	After         *float64         `json:"after"`
	Change        *float64         `json:"change"`
	VerdictBefore diagnose.Verdict `json:"verdict_before,omitempty"`
	VerdictAfter  diagnose.Verdict `json:"verdict_after,omitempty"`
}

// CompareBaseline pairs the ports of before and after by id and their criteria by name and
// statistic, in the order after gives them (criteria only before judged come last).
func CompareBaseline(before, after *diagnose.Result) *Baseline {
	b := &Baseline{Inputs: before.Inputs, Ports: []BaselinePort{}}
	old := map[string]*diagnose.PortResult{}
	for i := range before.Ports {
		old[before.Ports[i].Port] = &before.Ports[i]
	}
	seen := map[string]bool{}
	for i := range after.Ports {
		p := &after.Ports[i]
		o := old[p.Port]
		if o == nil {
			b.Unmatched = append(b.Unmatched, p.Port+" (current period only)")
			continue
		}
		seen[p.Port] = true
		bp := BaselinePort{Port: p.Port, VerdictBefore: o.Verdict, VerdictAfter: p.Verdict}
		key := func(c diagnose.Criterion) string { return c.Name + "\x00" + c.Statistic }
		prev := map[string]diagnose.Criterion{}
		for _, c := range o.Criteria {
			prev[key(c)] = c
		}
		for _, c := range p.Criteria {
			cc := CriterionChanged{Name: c.Name, Statistic: c.Statistic, Unit: c.Unit, After: num(c.Measured), VerdictAfter: c.Verdict}
			if pc, ok := prev[key(c)]; ok {
				cc.Before, cc.VerdictBefore = num(pc.Measured), pc.Verdict
				if cc.Before != nil && cc.After != nil {
					cc.Change = num(*cc.After - *cc.Before)
				}
				delete(prev, key(c))
			}
			bp.Criteria = append(bp.Criteria, cc)
		}
		for _, c := range o.Criteria {
			if _, left := prev[key(c)]; left {
				bp.Criteria = append(bp.Criteria, CriterionChanged{Name: c.Name, Statistic: c.Statistic, Unit: c.Unit, Before: num(c.Measured), VerdictBefore: c.Verdict})
			}
		}
		b.Ports = append(b.Ports, bp)
	}
	for _, p := range before.Ports {
		if !seen[p.Port] {
			b.Unmatched = append(b.Unmatched, p.Port+" (baseline only)")
		}
	}
	return b
}

// num is v as a JSON-safe pointer: nil for NaN and infinities.
func num(v float64) *float64 {
	if v != v || v > 1e308 || v < -1e308 {
		return nil
	}
	return &v
}

// WriteBaselineText writes the comparison for a terminal.
func WriteBaselineText(w io.Writer, b *Baseline) error {
	fmt.Fprintln(w, "\nCompared with the baseline period")
	for _, in := range b.Inputs {
		fmt.Fprintf(w, "  baseline input %s (%s used)\n", in.File, words.Plural(in.RowsUsed, "row", "rows"))
	}
	for _, p := range b.Ports {
		fmt.Fprintf(w, "\n  Port %s: %s before, %s now\n", p.Port, verdictWord(p.VerdictBefore), verdictWord(p.VerdictAfter))
		tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
		fmt.Fprintln(tw, "  criterion\tstatistic\tbefore\tnow\tchange\tverdict\t")
		for _, c := range p.Criteria {
			val := func(v *float64) string {
				if v == nil {
					return "not judged"
				}
				return FormatValue(*v, c.Unit)
			}
			change := ""
			if c.Change != nil {
				change = FormatMargin(*c.Change, c.Unit)
			}
			verdict := verdictWord(c.VerdictAfter)
			switch {
			case c.VerdictBefore == "":
				verdict += " (new)"
			case c.VerdictAfter == "":
				verdict = verdictWord(c.VerdictBefore) + " → not judged"
			case c.VerdictBefore != c.VerdictAfter:
				verdict = verdictWord(c.VerdictBefore) + " → " + verdict
			}
			fmt.Fprintf(tw, "  %s\t%s\t%s\t%s\t%s\t%s\t\n", c.Name, c.Statistic, val(c.Before), val(c.After), change, verdict)
		}
		if err := tw.Flush(); err != nil {
			return err
		}
	}
	for _, u := range b.Unmatched {
		fmt.Fprintf(w, "  not compared: %s\n", u)
	}
	return nil
}

// WriteResultWithBaselineJSON writes the design contract's object with a "baseline" member.
func WriteResultWithBaselineJSON(w io.Writer, res *diagnose.Result, b *Baseline) error {
	doc := struct {
		*diagnose.Result
		Baseline *Baseline `json:"baseline"`
	}{res, b}
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	return enc.Encode(doc)
}
