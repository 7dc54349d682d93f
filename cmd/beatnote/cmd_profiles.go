package main

import "errors"

// ProfilesCmd is not built yet; its issue builds it.
type ProfilesCmd struct{}

// Run reports that the command is not built yet.
func (c *ProfilesCmd) Run(g *Globals, pr *printer) error {
	return &exitError{code: 2, err: errors.New("profiles: not built yet")}
}
