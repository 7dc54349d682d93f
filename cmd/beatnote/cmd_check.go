package main

import (
	"fmt"

	"github.com/beatnote/beatnote/diagnose"
	"github.com/beatnote/beatnote/report"
)

// CheckCmd judges one circuit at turn-up or acceptance.
type CheckCmd struct {
	Logs []string `arg:"" optional:"" name:"log" help:"Telemetry exports of the circuit: files, folders or - for standard input (or --prometheus URL)."`
	judgeFlags
	soakFlag
	Port   string `help:"Judge only this port of the logs." placeholder:"PORT"`
	Format string `help:"Output format: text or json." enum:"text,json" default:"text"`
}

// Help is the long help of the command.
func (c *CheckCmd) Help() string {
	return `Prints, per port, the verdict (pass, marginal, fail or no-data), the criteria table
(measured value, limit, margin, verdict and where the limit comes from), the plan's expected
values next to the measured ones (with --plan), the likely causes with their evidence and what
to do on site, and what could not be judged and why. docs/diagnosis.md explains the method.

Exit status: 0 every port passes; 1 some port is marginal, failing or could not be judged;
2 the run could not complete.`
}

// Run reads, judges and prints.
func (c *CheckCmd) Run(g *Globals, pr *printer) error {
	acc, err := c.acceptanceTest()
	if err != nil {
		return &exitError{code: 2, err: err}
	}
	a, err := analyze(c.Logs, c.judgeFlags, "", false, acc, pr)
	if err != nil {
		return &exitError{code: 2, err: err}
	}
	res := a.Result
	if c.Port != "" {
		var keep []diagnose.PortResult
		for _, p := range res.Ports {
			if p.Port == c.Port {
				keep = append(keep, p)
			}
		}
		if keep == nil {
			return &exitError{code: 2, err: fmt.Errorf("--port %q: the logs have no such port (%d ports read; 'beatnote scan' lists them)", c.Port, len(res.Ports))}
		}
		res.Ports = keep
	}
	if c.Format == "json" {
		err = report.WriteResultJSON(pr.Out(), res)
	} else {
		err = report.WriteCheckText(pr.Out(), res)
	}
	if err != nil {
		return &exitError{code: 2, err: err}
	}
	return exitFor(a, res.Ports)
}
