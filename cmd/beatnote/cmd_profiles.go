package main

import (
	"github.com/beatnote/beatnote/report"
	"github.com/beatnote/beatnote/rules"
)

// ProfilesCmd lists the module profiles: the built-in ones, plus or overridden by a user file.
type ProfilesCmd struct {
	Profiles string `help:"YAML file of profiles that add to or override the built-in ones (by id)." type:"existingfile" placeholder:"FILE"`
	Format   string `help:"Output format: text or json." enum:"text,json" default:"text"`
}

// Help is the long help of the command.
func (c *ProfilesCmd) Help() string {
	return `Lists each module profile with its modulation, symbol rate, FEC threshold and receiver
tolerances, and where every figure comes from (a standard, "from memory", "common practice" or
"derived: <formula>"). The file format is described in docs/rules.md.`
}

// Run prints the profiles.
func (c *ProfilesCmd) Run(g *Globals, pr *printer) error {
	var (
		profiles []rules.Profile
		err      error
	)
	if c.Profiles != "" {
		profiles, err = rules.LoadProfiles(c.Profiles)
	} else {
		profiles, err = rules.BuiltinProfiles()
	}
	if err != nil {
		return &exitError{code: 2, err: err}
	}
	if c.Format == "json" {
		return report.WriteProfilesJSON(pr.Out(), profiles)
	}
	return report.WriteProfilesText(pr.Out(), profiles)
}
