package main

import "errors"

// CalcCmd is not built yet; its issue builds it.
type CalcCmd struct{}

// Run reports that the command is not built yet.
func (c *CalcCmd) Run(g *Globals, pr *printer) error {
	return &exitError{code: 2, err: errors.New("calc: not built yet")}
}
