package main

import (
	"bytes"
	"crypto/ed25519"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"time"

	"github.com/beatnote/beatnote/diagnose"
	"github.com/beatnote/beatnote/parse"
	"github.com/beatnote/beatnote/report"
	"github.com/beatnote/beatnote/rules"
)

// ReportCmd writes an acceptance report for one circuit, optionally signed.
type ReportCmd struct {
	Logs     []string `arg:"" name:"log" help:"Telemetry exports of the circuit (files or folders)." type:"path"`
	Plan     string   `help:"Link plan of the circuit (YAML, docs/plan.md)." placeholder:"PLAN.yaml" type:"path"`
	Profile  string   `help:"Module profile id (see beatnote profiles); default: the plan's." placeholder:"ID"`
	Profiles string   `help:"Your own profiles file, added to the built-in ones." placeholder:"FILE.yaml" type:"path"`
	Out      string   `required:"" help:"Report file to write." placeholder:"FILE.pdf" type:"path"`
	Format   string   `help:"Report format: pdf, markdown or json." enum:"pdf,markdown,json" default:"pdf"`
	Paper    string   `help:"Paper size of the PDF: a4 or letter." enum:"a4,letter" default:"a4"`

	Technician     string `help:"Technician who carried out the acceptance." placeholder:"NAME"`
	Organisation   string `help:"Organisation handing the link over." placeholder:"NAME"`
	AcceptingParty string `name:"accepting-party" help:"Party accepting the link." placeholder:"NAME"`
	EndA           string `name:"end-a" help:"Site at end A (default: the plan's)." placeholder:"SITE"`
	EndZ           string `name:"end-z" help:"Site at end Z (default: the plan's)." placeholder:"SITE"`
	Notes          string `help:"Free notes printed in the sign-off block." placeholder:"TEXT"`
	Time           string `help:"Report time, RFC 3339 (default: now). The same inputs, fields and time give the same bytes." placeholder:"TIME"`

	SignKey string `name:"sign-key" help:"Private key (from beatnote keygen) to sign the report with; writes FILE.sig beside it." placeholder:"PREFIX.key" type:"path"`
	Signer  string `help:"Name of the signer, stored in the signature and printed in the report." placeholder:"NAME"`
}

// Help is the long help of the command.
func (c *ReportCmd) Help() string {
	return `Reads the circuit's telemetry, judges it like check does, and writes an acceptance report:
summary and verdict, criteria with margins, plan vs measured, likely causes with evidence and
recommended actions, charts (PDF), inputs with SHA-256 and row accounting, laser-safety
cautions and a sign-off block. Markdown and JSON carry the same content for tickets.

With --sign-key the report prints the key's fingerprint and a detached signature FILE.sig is
written beside it, covering the report and every input file; check it with beatnote verify.
See docs/report.md.

Exit status: 0 report written and every port passes; 1 report written and some port is
marginal or failing; 2 no report (usage, unreadable input, nothing usable).`
}

// Run writes the report (and its signature).
func (c *ReportCmd) Run(g *Globals, pr *printer) error {
	if err := c.validate(); err != nil {
		return &exitError{code: 2, err: err}
	}
	when := time.Now().UTC().Truncate(time.Second)
	if c.Time != "" {
		t, err := time.Parse(time.RFC3339, c.Time)
		if err != nil {
			return &exitError{code: 2, err: fmt.Errorf("--time %q: want RFC 3339, e.g. 2026-03-02T10:30:00Z", c.Time)}
		}
		when = t.UTC()
	}

	// Load the key first: a report must not be written when it cannot be signed.
	var priv ed25519.PrivateKey
	var signing *report.Signing
	if c.SignKey != "" {
		k, err := report.LoadPrivateKey(c.SignKey)
		if err != nil {
			return &exitError{code: 2, err: err}
		}
		if st, err := os.Stat(c.SignKey); err == nil && st.Mode().Perm()&0o077 != 0 {
			pr.Notef("note: %s is readable by others (mode %v); keep private keys to yourself (chmod 600)", c.SignKey, st.Mode().Perm())
		}
		fp, err := report.KeyFingerprint(k.Public().(ed25519.PublicKey))
		if err != nil {
			return &exitError{code: 2, err: err}
		}
		priv, signing = k, &report.Signing{Signer: c.Signer, KeyFingerprint: fp}
	}

	in, err := c.load(pr)
	if err != nil {
		return err
	}
	in.Fields = report.SignOff{
		Technician: c.Technician, Organisation: c.Organisation, AcceptingParty: c.AcceptingParty,
		EndA: c.EndA, EndZ: c.EndZ, Notes: c.Notes,
	}
	in.Time, in.Signing = when, signing
	acc, err := report.NewAcceptance(in.AcceptanceInput)
	if err != nil {
		return &exitError{code: 2, err: err}
	}

	var buf bytes.Buffer
	switch c.Format {
	case "markdown":
		err = acc.WriteMarkdown(&buf)
	case "json":
		err = acc.WriteJSON(&buf)
	default:
		err = acc.WritePDF(&buf, report.PDFOptions{Paper: report.Paper(c.Paper)})
	}
	if err != nil {
		return &exitError{code: 2, err: err}
	}
	if err := writeFileAtomic(c.Out, buf.Bytes()); err != nil {
		return &exitError{code: 2, err: err}
	}
	pr.Printf("%s: %s (report %s)\n", c.Out, report.VerdictWords(acc.Verdict), acc.ReportID)

	if priv != nil {
		sigPath := report.SignaturePath(c.Out)
		if _, err := report.Sign(priv, c.Signer, when, c.Out, in.files, sigPath); err != nil {
			return &exitError{code: 2, err: fmt.Errorf("signing: %w", err)}
		}
		pr.Printf("%s: signed with key %s\n", sigPath, signing.KeyFingerprint)
	}
	if acc.Verdict != diagnose.Pass {
		return errNotPassing
	}
	return nil
}

func (c *ReportCmd) validate() error {
	if c.SignKey != "" && c.Signer == "" {
		return errors.New("--sign-key needs --signer NAME: a signature says who signed")
	}
	if c.Signer != "" && c.SignKey == "" {
		return errors.New("--signer is only used with --sign-key")
	}
	for _, l := range c.Logs {
		if l == "-" && c.SignKey != "" {
			return errors.New("a signed report needs its inputs as files (not standard input) so that verify can check them")
		}
	}
	if c.Format != "pdf" && c.Paper != "a4" {
		return errors.New("--paper applies to PDF reports only")
	}
	return nil
}

// reportInput is what the report is made from, plus the input files the signature covers.
type reportInput struct {
	report.AcceptanceInput
	files []string
}

// load reads the telemetry, the profile and the plan and runs the engine.
func (c *ReportCmd) load(pr *printer) (*reportInput, error) {
	var profiles []rules.Profile
	var err error
	if c.Profiles != "" {
		profiles, err = rules.LoadProfiles(c.Profiles)
	} else {
		profiles, err = rules.BuiltinProfiles()
	}
	if err != nil {
		return nil, &exitError{code: 2, err: err}
	}
	var plan *rules.Plan
	if c.Plan != "" {
		p, err := rules.LoadPlan(c.Plan, profiles...)
		if err != nil {
			return nil, &exitError{code: 2, err: err}
		}
		plan = &p
	}
	id := c.Profile
	if id == "" && plan != nil {
		id = plan.Profile
	}
	if id == "" {
		return nil, &exitError{code: 2, err: errors.New("name the module profile with --profile ID or in the link plan (beatnote profiles lists them)")}
	}
	prof, err := rules.ProfileByID(profiles, id)
	if err != nil {
		return nil, &exitError{code: 2, err: err}
	}
	rs, err := rules.DefaultRules()
	if err != nil {
		return nil, &exitError{code: 2, err: err}
	}

	ds, err := parse.ReadPaths(c.Logs, parse.Options{})
	if err != nil {
		return nil, &exitError{code: 2, err: err}
	}
	if plan != nil && len(plan.Ports) > 0 {
		ds = onlyPorts(ds, plan.Ports)
	}
	if len(ds.Series) == 0 {
		what := "the inputs hold no usable sample"
		if plan != nil && len(plan.Ports) > 0 {
			what = fmt.Sprintf("the inputs hold no sample of the plan's ports %v", plan.Ports)
		}
		return nil, &exitError{code: 2, err: errors.New(what)}
	}
	res, err := diagnose.Analyze(ds, diagnose.Config{Version: version, Rules: rs, Default: diagnose.Setup{Profile: prof, Plan: plan}})
	if err != nil {
		return nil, &exitError{code: 2, err: err}
	}
	ri := &reportInput{AcceptanceInput: report.AcceptanceInput{Result: res, Dataset: ds, Profile: &prof, Plan: plan}}
	for _, st := range ds.Inputs {
		ri.files = append(ri.files, st.File)
	}
	for _, extra := range []string{c.Plan, c.Profiles} {
		if extra != "" {
			ri.files = append(ri.files, extra)
		}
	}
	return ri, nil
}

// onlyPorts keeps the series of the listed ports; the input accounting stays whole.
func onlyPorts(ds *parse.Dataset, ports []string) *parse.Dataset {
	want := map[string]bool{}
	for _, p := range ports {
		want[p] = true
	}
	out := *ds
	out.Series = nil
	for _, s := range ds.Series {
		if want[s.Port] {
			out.Series = append(out.Series, s)
		}
	}
	return &out
}

// writeFileAtomic writes data to a temporary file beside path and renames it into place, so a
// reader never sees half a report.
func writeFileAtomic(path string, data []byte) error {
	f, err := os.CreateTemp(filepath.Dir(path), "."+filepath.Base(path)+".*")
	if err != nil {
		return err
	}
	if _, err := f.Write(data); err != nil {
		f.Close()
		os.Remove(f.Name())
		return err
	}
	if err := f.Chmod(0o644); err != nil {
		f.Close()
		os.Remove(f.Name())
		return err
	}
	if err := f.Close(); err != nil {
		os.Remove(f.Name())
		return err
	}
	return os.Rename(f.Name(), path)
}
