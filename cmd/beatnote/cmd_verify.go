package main

import "errors"

// VerifyCmd is not built yet; its issue builds it.
type VerifyCmd struct{}

// Run reports that the command is not built yet.
func (c *VerifyCmd) Run(g *Globals, pr *printer) error {
	return &exitError{code: 2, err: errors.New("verify: not built yet")}
}
