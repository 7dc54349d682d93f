package main

import (
	"fmt"
	"slices"

	"github.com/beatnote/beatnote/diagnose"
	"github.com/beatnote/beatnote/report"
)

// CheckCmd judges one circuit at turn-up or acceptance.
type CheckCmd struct {
	Logs []string `arg:"" optional:"" name:"log" help:"Telemetry exports of the circuit: files, folders or - for standard input (or --prometheus URL)."`
	judgeFlags
	soakFlag
	Port   string `help:"Judge only this port of the logs (and its peer, with a port map)." placeholder:"PORT"`
	Map    string `help:"Port map (YAML): plans, profiles, lines and each port's far-end peer; a port and its peer are judged as the two directions of one circuit (see docs/rules.md)." type:"existingfile" placeholder:"PORTMAP.yaml"`
	Format string `help:"Output format: text or json." enum:"text,json" default:"text"`
	// Baseline compares with an earlier period.
	Baseline []string `help:"Logs of an earlier period of the same ports (e.g. before cleaning) to compare with, criterion by criterion; judged the same way." placeholder:"OLD_LOG"`
}

// Help is the long help of the command.
func (c *CheckCmd) Help() string {
	return `Prints, per port, the verdict (pass, marginal, fail, incomplete or no-data), the criteria table
(measured value, limit, margin, verdict and where the limit comes from), the plan's expected
values next to the measured ones (with --plan), the likely causes with their evidence and what
to do on site, and what could not be judged and why. docs/diagnosis.md explains the method.

Both directions: given both ends' logs (two logs of one port each), or a port map naming each
port's peer, check judges the circuit both ways — each port receives what the other sends — and
says where a fault seen in one direction only lies: on that direction's path. With a map that
names lines, the line findings come first.

Acceptance test: the log must cover the test period (--soak, the plan's soak, else 24 h) with
at least 95 % of its sample slots used, or a port that meets every limit is incomplete, not a
pass. Error performance (ITU-T G.826 / G.8201) is judged from uncorrected blocks or post-FEC
BER. --baseline OLD_LOG... compares an earlier period criterion by criterion.

Exit status: 0 every port passes; 1 some port is marginal, failing, incomplete or could not be judged;
2 the run could not complete.`
}

// Run reads, judges and prints.
func (c *CheckCmd) Run(g *Globals, pr *printer) error {
	acc, err := c.acceptanceTest()
	if err != nil {
		return &exitError{code: 2, err: err}
	}
	a, err := analyze(c.Logs, c.judgeFlags, c.Map, false, acc, pr)
	if err != nil {
		return &exitError{code: 2, err: err}
	}
	res := a.Result
	pairs := directionPairs(a)
	if c.Port != "" {
		var keep []diagnose.PortResult
		peer := ""
		for _, p := range res.Ports {
			if p.Port == c.Port {
				peer = p.Peer
			}
		}
		for _, p := range res.Ports {
			if p.Port == c.Port || (peer != "" && p.Port == peer) {
				keep = append(keep, p)
			}
		}
		if keep == nil {
			return &exitError{code: 2, err: fmt.Errorf("--port %q: the logs have no such port (%d ports read; 'beatnote scan' lists them)", c.Port, len(res.Ports))}
		}
		res.Ports = keep
		var lines []diagnose.LineResult // only the lines of the ports shown
		for _, l := range res.Lines {
			if slices.ContainsFunc(keep, func(p diagnose.PortResult) bool { return p.Line == l.Line }) {
				lines = append(lines, l)
			}
		}
		res.Lines = lines
	}
	diagnose.PairDirections(res, pairs)
	var base *report.Baseline
	if len(c.Baseline) > 0 {
		acc, _ := c.acceptanceTest() // checked above
		b, err := analyze(c.Baseline, c.judgeFlags, c.Map, false, acc, pr)
		if err != nil {
			return &exitError{code: 2, err: fmt.Errorf("--baseline: %w", err)}
		}
		if b.ReadErr != nil {
			return &exitError{code: 2, err: fmt.Errorf("--baseline: %w", b.ReadErr)}
		}
		base = report.CompareBaseline(b.Result, res)
	}
	switch {
	case c.Format == "json" && base != nil:
		err = report.WriteResultWithBaselineJSON(pr.Out(), res, base)
	case c.Format == "json":
		err = report.WriteResultJSON(pr.Out(), res)
	default:
		err = report.WriteCheckText(pr.Out(), res)
		if err == nil && base != nil {
			err = report.WriteBaselineText(pr.Out(), base)
		}
	}
	if err != nil {
		return &exitError{code: 2, err: err}
	}
	return exitFor(a, allPass(res.Ports))
}

// directionPairs pairs the ports that are the two directions of one circuit: each port with the
// peer the port map gives it (once per pair), or, without peers, the two ports of two logs of
// one port each (both ends' logs) unless their plans name different circuits.
func directionPairs(a *analysis) [][2]string {
	ports := a.Result.Ports
	var pairs [][2]string
	seen := map[string]bool{}
	for _, p := range ports {
		if p.Peer != "" && !seen[p.Port] && !seen[p.Peer] {
			pairs = append(pairs, [2]string{p.Port, p.Peer})
			seen[p.Port], seen[p.Peer] = true, true
		}
	}
	if len(pairs) == 0 && len(ports) == 2 && len(a.DS.Inputs) == 2 &&
		(ports[0].Circuit == "" || ports[1].Circuit == "" || ports[0].Circuit == ports[1].Circuit) {
		pairs = append(pairs, [2]string{ports[0].Port, ports[1].Port})
	}
	return pairs
}
