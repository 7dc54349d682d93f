package main

import "errors"

// ReportCmd is not built yet; its issue builds it.
type ReportCmd struct{}

// Run reports that the command is not built yet.
func (c *ReportCmd) Run(g *Globals, pr *printer) error {
	return &exitError{code: 2, err: errors.New("report: not built yet")}
}
