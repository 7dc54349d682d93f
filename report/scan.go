package report

import (
	"encoding/json"
	"fmt"
	"github.com/beatnote/beatnote/report/words"
	"io"
	"slices"
	"strings"
	"text/tabwriter"
	"time"

	"github.com/beatnote/beatnote/parse"
	"github.com/beatnote/beatnote/report/escape"
)

// This file holds the writers of the scan command: what was read, per file and per port, and
// every row that was not.

// Bounds of the scan output: the text lists at most maxTextPorts ports and maxTextRejections
// rejected rows; the JSON lists every port and at most maxJSONRejections rejected rows.
const (
	maxTextPorts      = 50
	maxTextRejections = 20
	maxJSONRejections = 1000
)

// ScanPort is one port's summary.
type ScanPort struct {
	Port       string   `json:"port"`
	Samples    int      `json:"samples"`
	From       string   `json:"from"`
	To         string   `json:"to"`
	IntervalS  *float64 `json:"interval_s"` // median spacing of samples; null with fewer than 2
	Quantities []string `json:"quantities"`
	// BinExtremes lists the bin minima and maxima of a performance-monitoring export
	// ("q_db_min", "dgd_ps_max"), which the criteria judge; empty for plain samples.
	BinExtremes []string `json:"bin_extremes,omitempty"`
	// Profiles are the module profiles the port's rows name (a profile column), each with
	// where it is first named; two mean the rows disagree. Not checked against the profiles.
	Profiles []parse.ProfileMention `json:"profiles,omitempty"`
}

// SummarizePorts lists every port of ds with its time span, sample interval and quantities.
func SummarizePorts(ds *parse.Dataset) []ScanPort {
	out := make([]ScanPort, 0, len(ds.Series))
	for _, s := range ds.Series {
		times := s.Times()
		sp := ScanPort{Port: s.Port, Samples: len(times), Quantities: []string{}, Profiles: s.Profiles}
		if len(times) > 0 {
			sp.From = fmtTime(times[0])
			sp.To = fmtTime(times[len(times)-1])
		}
		if len(times) > 1 {
			d := make([]int64, len(times)-1)
			for i := range d {
				d[i] = times[i+1] - times[i]
			}
			slices.Sort(d)
			v := float64(d[len(d)/2]) / 1000
			sp.IntervalS = &v
		}
		for q := parse.Quantity(0); q < parse.NumQuantities; q++ {
			if s.Has(q) {
				sp.Quantities = append(sp.Quantities, q.Column())
			}
			if b := s.Bins; b != nil {
				if b.Low[q] != nil {
					sp.BinExtremes = append(sp.BinExtremes, q.Column()+"_min")
				}
				if b.High[q] != nil {
					sp.BinExtremes = append(sp.BinExtremes, q.Column()+"_max")
				}
			}
		}
		out = append(out, sp)
	}
	return out
}

func fmtTime(ms int64) string {
	t := time.UnixMilli(ms).UTC()
	if ms%1000 == 0 {
		return t.Format(time.RFC3339)
	}
	return t.Format("2006-01-02T15:04:05.000Z07:00")
}

// inputErrors lists, in input order, why each input that was not read completely stopped.
func inputErrors(ds *parse.Dataset) []string {
	var errs []string
	for _, in := range ds.Inputs {
		if in.Error != "" {
			errs = append(errs, in.Error)
		}
	}
	return errs
}

// WriteScanJSON writes the scan result: the inputs and rejected rows of the design contract, the
// ports, the files skipped in folders and why any input was not read completely.
func WriteScanJSON(w io.Writer, version string, ds *parse.Dataset, ports []ScanPort, readErr error) error {
	rej := ds.Rejected
	if len(rej) > maxJSONRejections {
		rej = rej[:maxJSONRejections]
	}
	errs := inputErrors(ds)
	if readErr != nil && len(errs) == 0 {
		errs = append(errs, readErr.Error())
	}
	doc := struct {
		Tool     string             `json:"tool"`
		Version  string             `json:"version"`
		Inputs   []parse.InputStats `json:"inputs"`
		Ports    []ScanPort         `json:"ports"`
		Rejected []parse.Rejection  `json:"rejected"`
		Skipped  []parse.Skip       `json:"skipped"`
		Errors   []string           `json:"errors"`
	}{"beatnote", version, ds.Inputs, ports, rej, ds.Skipped, errs}
	if doc.Inputs == nil {
		doc.Inputs = []parse.InputStats{}
	}
	if doc.Rejected == nil {
		doc.Rejected = []parse.Rejection{}
	}
	if doc.Skipped == nil {
		doc.Skipped = []parse.Skip{}
	}
	if doc.Errors == nil {
		doc.Errors = []string{}
	}
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	return enc.Encode(doc)
}

// WriteScanText writes the scan result for a terminal.
func WriteScanText(w io.Writer, ds *parse.Dataset, ports []ScanPort) error {
	var read, used, rejected, dups int
	for _, in := range ds.Inputs {
		read += in.RowsRead
		used += in.RowsUsed
		rejected += in.RowsRejected
		dups += in.Duplicates
	}
	fmt.Fprintf(w, "Read %s: %s, %s used, %s rejected; %s.\n", words.Plural(len(ds.Inputs), "file", "files"),
		words.Plural(read, "row", "rows"), words.Group(used), words.Group(rejected), words.Plural(len(ports), "port", "ports"))
	if dups > 0 {
		fmt.Fprintf(w, "%s repeated an earlier port and time; the later row was kept.\n", words.Plural(dups, "row", "rows"))
	}

	fmt.Fprintln(w)
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	fmt.Fprintln(tw, "FILE\tFORMAT\tROWS\tUSED\tREJECTED\tSTATUS")
	for _, in := range ds.Inputs {
		status := "ok"
		if in.Error != "" {
			status = "NOT READ COMPLETELY"
		} else if in.RowsRejected > 0 {
			status = "some rows rejected"
		}
		fmt.Fprintf(tw, "%s\t%s\t%s\t%s\t%s\t%s\n", escape.Visible(in.File), in.Format, words.Group(in.RowsRead), words.Group(in.RowsUsed), words.Group(in.RowsRejected), status)
	}
	if err := tw.Flush(); err != nil {
		return err
	}

	if len(ports) > 0 {
		fmt.Fprintln(w)
		tw = tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
		fmt.Fprintln(tw, "PORT\tSAMPLES\tFROM (UTC)\tTO (UTC)\tEVERY\tQUANTITIES")
		for i, p := range ports {
			if i == maxTextPorts {
				break
			}
			every := "-"
			if p.IntervalS != nil {
				every = fmtInterval(*p.IntervalS)
			}
			q := strings.Join(p.Quantities, " ")
			switch len(p.Quantities) {
			case 0:
				q = "(no values)"
			case int(parse.NumQuantities):
				q = fmt.Sprintf("all %d (every canonical column)", len(p.Quantities))
			}
			if len(p.BinExtremes) > 0 {
				q += "; bins with " + strings.Join(p.BinExtremes, " ")
			}
			switch len(p.Profiles) {
			case 1:
				q += "; profile " + escape.Visible(p.Profiles[0].ID)
			case 2:
				a, b := p.Profiles[0], p.Profiles[1]
				q += fmt.Sprintf("; rows name two profiles, %s (%s line %d) and %s (%s line %d)",
					escape.Visible(a.ID), escape.Visible(a.File), a.Line, escape.Visible(b.ID), escape.Visible(b.File), b.Line)
			}
			fmt.Fprintf(tw, "%s\t%s\t%s\t%s\t%s\t%s\n", escape.Visible(p.Port), words.Group(p.Samples), p.From, p.To, every, q)
		}
		if err := tw.Flush(); err != nil {
			return err
		}
		if len(ports) > maxTextPorts {
			fmt.Fprintf(w, "… and %s more ports (--format json lists them all)\n", words.Group(len(ports)-maxTextPorts))
		}
	}

	if rejected > 0 {
		shown := min(len(ds.Rejected), maxTextRejections)
		fmt.Fprintf(w, "\nRejected rows (first %d of %s; --format json lists up to %d):\n", shown, words.Group(rejected), maxJSONRejections)
		for _, r := range ds.Rejected[:shown] {
			loc := fmt.Sprintf("%s line %d", r.File, r.Line)
			if r.Column > 0 {
				loc += fmt.Sprintf(" column %d", r.Column)
			}
			fmt.Fprintf(w, "  %s: %s\n", escape.Visible(loc), escape.Visible(r.Reason))
		}
	}
	var notes []string
	for _, in := range ds.Inputs {
		for _, n := range in.Notes {
			notes = append(notes, in.File+": "+n)
		}
	}
	if len(notes) > 0 {
		fmt.Fprintln(w, "\nNotes:")
		for _, n := range notes {
			fmt.Fprintln(w, "  "+escape.Visible(n))
		}
	}
	errs := inputErrors(ds)
	if len(errs) > 0 {
		fmt.Fprintln(w, "\nInputs not read completely (rows before the problem were used):")
		for _, e := range errs {
			fmt.Fprintln(w, "  "+escape.Visible(e))
		}
	}
	if len(ds.Skipped) > 0 {
		fmt.Fprintf(w, "\nSkipped %s in folders (not telemetry):\n", words.Plural(len(ds.Skipped), "file", "files"))
		for i, s := range ds.Skipped {
			if i == 10 {
				fmt.Fprintf(w, "  … %d more\n", len(ds.Skipped)-10)
				break
			}
			fmt.Fprintln(w, "  "+escape.Visible(s.File+": "+s.Reason))
		}
	}
	return nil
}

func fmtInterval(s float64) string {
	switch {
	case s >= 3600 && s == float64(int64(s)) && int64(s)%3600 == 0:
		return fmt.Sprintf("%d h", int64(s)/3600)
	case s >= 60 && s == float64(int64(s)) && int64(s)%60 == 0:
		return fmt.Sprintf("%d min", int64(s)/60)
	}
	return fmt.Sprintf("%g s", s)
}
