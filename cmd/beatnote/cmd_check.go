package main

import "errors"

// CheckCmd is not built yet; its issue builds it.
type CheckCmd struct{}

// Run reports that the command is not built yet.
func (c *CheckCmd) Run(g *Globals, pr *printer) error {
	return &exitError{code: 2, err: errors.New("check: not built yet")}
}
