package main

import "errors"

// KeygenCmd is not built yet; its issue builds it.
type KeygenCmd struct{}

// Run reports that the command is not built yet.
func (c *KeygenCmd) Run(g *Globals, pr *printer) error {
	return &exitError{code: 2, err: errors.New("keygen: not built yet")}
}
