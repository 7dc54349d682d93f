package main

import "errors"

// ScanCmd is not built yet; its issue builds it.
type ScanCmd struct{}

// Run reports that the command is not built yet.
func (c *ScanCmd) Run(g *Globals, pr *printer) error {
	return &exitError{code: 2, err: errors.New("scan: not built yet")}
}
