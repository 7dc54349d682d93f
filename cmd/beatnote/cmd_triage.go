package main

import (
	"slices"

	"github.com/beatnote/beatnote/diagnose"
	"github.com/beatnote/beatnote/report"
)

// TriageCmd ranks many ports worst first, each with its likely cause.
type TriageCmd struct {
	Paths []string `arg:"" optional:"" name:"path" help:"Telemetry exports: files, folders (read recursively) or - for standard input (or --prometheus URL)."`
	judgeFlags
	Map     string   `help:"Port map (YAML) giving ports their link plan and profile (see docs/rules.md)." type:"existingfile" placeholder:"PORTMAP.yaml"`
	Format  string   `help:"Output format: text, json, csv or markdown." enum:"text,json,csv,markdown" default:"text"`
	Sort    string   `help:"Order: impact (service impact, the default), margin (Q margin, smallest first) or port (port id)." enum:"impact,margin,port" default:"impact"`
	Top     int      `help:"Show only the N first ports of that order (0: all)." placeholder:"N" default:"0"`
	Verdict []string `help:"Show only ports with these verdicts (comma-separated: fail, marginal, pass, no-data)." placeholder:"LIST"`
	Cause   []string `help:"Show only ports listing one of these cause ids (comma-separated)." placeholder:"LIST"`
	// PortByPort: see triage_byport.go.
	PortByPort string `name:"port-by-port" help:"Read and judge a part of the fleet at a time, each port's telemetry dropped once judged, so memory does not grow with the fleet: files of one port each 256 at a time, and a large CSV or JSON Lines file (4 MiB or more, gzip 256 KiB) whose rows are grouped by port about 1,000 ports at a time. auto (the default): so unless the first batch shows a port in two files; always: so; either reads the inputs whole instead, having printed nothing, when a port turns up in two batches or parts. never: read every input, then judge. Standard input is read whole. The output is the same." enum:"auto,always,never" default:"auto"`
}

// Help is the long help of the command.
func (c *TriageCmd) Help() string {
	return `Reads every export given (files and folders), judges every port and prints them ranked by
service impact, with the top cause, the other causes, the Q margin and the received power, then
how many ports each cause affects. The impact order: ports with samples without signal (dark,
or loss of frame), most dark samples first; then ports with uncorrected FEC blocks, most first;
then Q below the FEC threshold, most negative margin first; then ports whose trend reaches a
module limit within the forecast horizon, soonest first; then the other failing ports, the
marginal ones, those with no data and the passing ones. --sort margin orders by Q margin
instead, --sort port by port id. Filters (--verdict, --cause) apply before --top; the count per
cause covers the filtered ports. A port map gives each port its link plan and profile.

Exit status: 0 every shown port passes; 1 some shown port is marginal, failing or could not be
judged; 2 the run could not complete.`
}

// validate checks flag values before any input is read.
func (c *TriageCmd) validate() error {
	if c.Top < 0 {
		return usageErrorf("--top %d: give a positive number of ports, or 0 for all", c.Top)
	}
	for _, v := range c.Verdict {
		switch diagnose.Verdict(v) {
		case diagnose.Pass, diagnose.Marginal, diagnose.Fail, diagnose.NoData:
		default:
			return usageErrorf("--verdict %q: use pass, marginal, fail or no-data", v)
		}
	}
	for _, id := range c.Cause {
		if !slices.Contains(diagnose.AllCauses, diagnose.CauseID(id)) {
			return usageErrorf("--cause %q: unknown cause id (known: %s)", id, report.JoinIDs(diagnose.AllCauses, ", "))
		}
	}
	return nil
}

func (c *TriageCmd) keep(r *report.TriageRow) bool {
	if len(c.Verdict) > 0 && !slices.Contains(c.Verdict, string(r.Verdict)) {
		return false
	}
	if len(c.Cause) > 0 {
		for _, id := range r.Causes() {
			if slices.Contains(c.Cause, string(id)) {
				return true
			}
		}
		return false
	}
	return true
}

// Run reads, judges, filters, ranks and prints. Each port is kept only as its rank key and
// table row while the others are judged, its JSON waiting in a temporary file (triageRun). Files
// whose ports lie in one file each, and large files whose rows are grouped by port, are read and
// judged port by port (byPort); other inputs are read whole first (whole).
func (c *TriageCmd) Run(g *Globals, pr *printer) error {
	if err := c.validate(); err != nil {
		return err
	}
	var j *judged
	var err error
	if c.PortByPort != "never" && !c.active() && !slices.Contains(c.Paths, "-") {
		j, err = c.byPort(pr)
	}
	if err == nil && j == nil {
		j, err = c.whole(pr)
	}
	if err != nil {
		return &exitError{code: 2, err: err}
	}
	defer j.t.close()
	if j.res.Lines, err = j.t.lines(j.ports); err != nil {
		return &exitError{code: 2, err: err}
	}
	shown, err := c.write(pr.Out(), j.t, j.res, c.rank(j.ports))
	if err != nil {
		return &exitError{code: 2, err: err}
	}
	pass := true
	for i := range shown {
		pass = pass && shown[i].Verdict == diagnose.Pass
	}
	return exitFor(j.a, pass)
}

// judged is what a triage has judged: every port kept by t (in port-id order, as a Dataset's),
// and the result without its ports and lines.
type judged struct {
	a     *analysis
	t     *triageRun
	ports []triagePort
	res   *diagnose.Result
}

// whole reads every input, then judges the ports (as analyze does), each port's series
// released once it is judged.
func (c *TriageCmd) whole(pr *printer) (*judged, error) {
	a, cfg, err := prepare(c.Paths, c.judgeFlags, c.Map, true, nil, pr)
	if err != nil {
		return nil, err
	}
	t := newTriageRun(cfg, c.Format == "json")
	ds := a.DS
	ports := make([]triagePort, len(ds.Series))
	err = diagnose.NewJudge(cfg).Each(ds.Series, nil, func(i int, p *diagnose.PortResult) {
		ports[i] = t.take(p)
		ds.Series[i] = nil // judged: its series is not needed any more
	})
	if err != nil {
		t.close()
		return nil, err
	}
	a.DS = nil
	return &judged{a: a, t: t, ports: ports, res: diagnose.NewResult(ds, cfg.Version)}, nil
}
