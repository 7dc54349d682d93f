package main

import "errors"

// TriageCmd is not built yet; its issue builds it.
type TriageCmd struct{}

// Run reports that the command is not built yet.
func (c *TriageCmd) Run(g *Globals, pr *printer) error {
	return &exitError{code: 2, err: errors.New("triage: not built yet")}
}
