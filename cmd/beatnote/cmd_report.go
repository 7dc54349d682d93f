package main

import (
	"bytes"
	"crypto/ed25519"
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"github.com/beatnote/beatnote/report/words"
	"os"
	"path/filepath"
	"strings"
	"time"

	"github.com/beatnote/beatnote/diagnose"
	"github.com/beatnote/beatnote/report/acceptance"
	"github.com/beatnote/beatnote/report/sign"
	"github.com/beatnote/beatnote/rules"
)

// ReportCmd writes an acceptance report for one circuit, optionally signed.
type ReportCmd struct {
	// Logs stay as typed (no type:"path"): the report prints them, and absolute paths would
	// make it depend on the folder it was made in.
	Logs []string `arg:"" optional:"" name:"log" help:"Telemetry exports of the circuit (files or folders; or --prometheus URL)."`
	judgeFlags
	soakFlag
	Out    string `required:"" help:"Report file to write." placeholder:"FILE.pdf" type:"path"`
	Format string `help:"Report format: pdf, markdown or json." enum:"pdf,markdown,json" default:"pdf"`
	Paper  string `help:"Paper size of the PDF: a4 or letter." enum:"a4,letter" default:"a4"`
	Map    string `help:"Port map (YAML): plans, profiles, lines and each port's far-end peer; a port and its peer are reported as the two directions of the circuit (see docs/rules.md)." type:"existingfile" placeholder:"PORTMAP.yaml"`
	// ByCircuit splits a folder of circuits into one report each.
	ByCircuit bool `name:"by-circuit" help:"Write one report per circuit, each judged on its own plan and profile (from --map), into the folder --out names: FOLDER/CIRCUIT.pdf (.md, .json)."`

	Technician     string `help:"Technician who carried out the acceptance." placeholder:"NAME"`
	Organisation   string `help:"Organisation handing the link over." placeholder:"NAME"`
	AcceptingParty string `name:"accepting-party" help:"Party accepting the link." placeholder:"NAME"`
	EndA           string `name:"end-a" help:"Site at end A (default: the plan's)." placeholder:"SITE"`
	EndZ           string `name:"end-z" help:"Site at end Z (default: the plan's)." placeholder:"SITE"`
	Notes          string `help:"Free notes printed in the sign-off block." placeholder:"TEXT"`
	Time           string `help:"Report time, RFC 3339 (default: now). The same inputs, fields and time give the same bytes." placeholder:"TIME"`

	SignKey string `name:"sign-key" help:"Private key (from beatnote keygen) to sign the report with; writes FILE.sig beside it." placeholder:"PREFIX.key" type:"path"`
	Signer  string `help:"Name of the signer, stored in the signature and printed in the report (default: --technician)." placeholder:"NAME"`
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
marginal, failing or incomplete (the log shorter or sparser than the test period, --soak);
2 no report (usage, unreadable input, nothing usable).`
}

// Run writes the report (and its signature).
func (c *ReportCmd) Run(g *Globals, pr *printer) error {
	if err := c.validate(); err != nil {
		return err
	}
	when := time.Now().UTC().Truncate(time.Second)
	if c.Time != "" {
		t, err := time.Parse(time.RFC3339, c.Time)
		if err != nil {
			return usageErrorf("--time %q: want RFC 3339, e.g. 2026-03-02T10:30:00Z", c.Time)
		}
		when = t.UTC()
	}

	// Load the key first: a report must not be written when it cannot be signed.
	var priv ed25519.PrivateKey
	var signing *acceptance.Signing
	if c.SignKey != "" {
		// Refused when others may read it (sign.ErrKeyExposed): an error, not a note.
		k, err := sign.LoadPrivateKey(c.SignKey)
		if err != nil {
			return &exitError{code: 2, err: err}
		}
		fp, err := sign.KeyFingerprint(k.Public().(ed25519.PublicKey))
		if err != nil {
			return &exitError{code: 2, err: err}
		}
		priv, signing = k, &acceptance.Signing{Signer: c.Signer, KeyFingerprint: fp}
	}

	in, err := c.load(pr)
	if err != nil {
		return err
	}
	if testHookAnalysed != nil {
		testHookAnalysed()
	}
	parts, outs := []*reportInput{in}, []string{c.Out}
	if c.ByCircuit {
		if parts, outs, err = c.splitByCircuit(in); err != nil {
			return err
		}
	}
	passing := true
	for i, part := range parts {
		v, err := c.write(part, outs[i], when, priv, signing, pr)
		if err != nil {
			return err
		}
		passing = passing && v == diagnose.Pass
	}
	if !passing {
		return errNotPassing
	}
	return nil
}

// write makes one report from in, writes it to out and signs it with priv when given; it
// returns the report's verdict.
func (c *ReportCmd) write(in *reportInput, out string, when time.Time, priv ed25519.PrivateKey, signing *acceptance.Signing, pr *printer) (diagnose.Verdict, error) {
	in.Fields = acceptance.SignOff{
		Technician: c.Technician, Organisation: c.Organisation, AcceptingParty: c.AcceptingParty,
		EndA: c.EndA, EndZ: c.EndZ, Notes: c.Notes,
	}
	in.Time, in.Signing = when, signing
	acc, err := acceptance.New(in.Input)
	if err != nil {
		return "", &exitError{code: 2, err: err}
	}

	var buf bytes.Buffer
	switch c.Format {
	case "markdown":
		err = acc.WriteMarkdown(&buf)
	case "json":
		err = acc.WriteJSON(&buf)
	default:
		err = acc.WritePDF(&buf, acceptance.PDFOptions{Paper: acceptance.Paper(c.Paper)})
	}
	if err != nil {
		return "", &exitError{code: 2, err: err}
	}
	// Neither the report nor its signature may replace an input or the key.
	sigPath := sign.SignaturePath(out)
	protected := make([]string, 0, len(in.signed)+1)
	for _, f := range in.signed {
		protected = append(protected, f.Path)
	}
	if c.SignKey != "" {
		protected = append(protected, c.SignKey)
	}
	written := []string{out}
	if priv != nil {
		written = append(written, sigPath)
	}
	for _, w := range written {
		for _, p := range protected {
			if sameFile(w, p) {
				what := w
				if wa, pa := absPath(w), absPath(p); wa != pa {
					what = fmt.Sprintf("%s (the same file as %s)", w, p)
				}
				return "", &exitError{code: 2, err: fmt.Errorf("%s is an input or the signing key: writing it would destroy it; choose another --out", what)}
			}
		}
	}

	// The signature covers the report's bytes as written and the inputs' bytes as analysed:
	// nothing is read again, so a file changed meanwhile cannot slip into the signature.
	var sigData []byte
	if priv != nil {
		sum := sha256.Sum256(buf.Bytes())
		doc := sign.SignedFile{Path: out, SHA256: hex.EncodeToString(sum[:])}
		if _, sigData, err = sign.Sign(priv, c.Signer, when, doc, in.signed, sigPath); err != nil {
			return "", &exitError{code: 2, err: fmt.Errorf("signing: %w", err)}
		}
	}
	if err := writeFileAtomic(out, buf.Bytes()); err != nil {
		return "", &exitError{code: 2, err: err}
	}
	pr.Printf("%s: %s (report %s)\n", out, acceptance.VerdictWords(acc.Verdict), acc.ReportID)
	if priv != nil {
		if err := writeFileAtomic(sigPath, sigData); err != nil {
			return "", &exitError{code: 2, err: fmt.Errorf("signing: %w", err)}
		}
		pr.Printf("%s: signed with key %s\n", sigPath, signing.KeyFingerprint)
	}
	if priv == nil {
		if _, err := os.Stat(sign.SignaturePath(out)); err == nil {
			pr.Notef("note: %s belongs to an earlier report and no longer matches this one; remove it or sign again", sign.SignaturePath(out))
		}
	}
	return acc.Verdict, nil
}

func (c *ReportCmd) validate() error {
	if c.SignKey != "" && c.Signer == "" {
		c.Signer = c.Technician
	}
	if c.SignKey != "" && c.Signer == "" {
		return usageErrorf("--sign-key needs --signer NAME (or --technician NAME): a signature says who signed")
	}
	if c.Signer != "" && c.SignKey == "" {
		return usageErrorf("--signer is only used with --sign-key")
	}
	for _, l := range c.Logs {
		if l == "-" && c.SignKey != "" {
			return usageErrorf("a signed report needs its inputs as files (not standard input) so that verify can check them")
		}
	}
	if c.active() && c.SignKey != "" {
		return usageErrorf("a signed report needs its inputs as files that verify can check: write the store's data with 'beatnote scan --prometheus URL … --export FILE.csv' and report that file")
	}
	if c.ByCircuit && c.Map == "" && c.Plan != "" {
		return usageErrorf("--by-circuit takes each circuit's plan from --map; with a single --plan there is one circuit")
	}
	if c.Format != "pdf" && c.Paper != "a4" {
		return usageErrorf("--paper applies to PDF reports only")
	}
	return nil
}

// maxReportPorts bounds the ports of one acceptance report: a circuit has a few (both ends,
// a protection pair); a fleet belongs in triage.
const maxReportPorts = 16

// reportInput is what the report is made from, plus the input files the signature covers,
// each with the SHA-256 of the bytes that were analysed.
type reportInput struct {
	acceptance.Input
	signed []sign.SignedFile
	// plans names the plan each link-plan file holds, by path, for reports split by circuit.
	plans map[string]*rules.Plan
}

// testHookAnalysed, when set by a test, runs after the inputs were read and judged and before
// the report is written and signed: where a file changed meanwhile would matter.
var testHookAnalysed func()

// load reads and judges the telemetry with the shared analysis (as check does) and gathers
// what the report shows. Only the plan's ports are reported when the plan lists them.
func (c *ReportCmd) load(pr *printer) (*reportInput, error) {
	acc, err := c.acceptanceTest()
	if err != nil {
		return nil, &exitError{code: 2, err: err}
	}
	a, err := analyze(c.Logs, c.judgeFlags, c.Map, false, acc, pr)
	if err != nil {
		return nil, &exitError{code: 2, err: err}
	}
	if a.ReadErr != nil {
		// An acceptance report over partly read inputs would misstate the evidence.
		return nil, &exitError{code: 2, err: fmt.Errorf("no report: %w", a.ReadErr)}
	}
	res := *a.Result
	in := &reportInput{Input: acceptance.Input{Result: &res, Dataset: a.DS}}
	for _, p := range res.Ports {
		if p.Analysis != nil {
			prof := p.Analysis.Profile
			in.Profile, in.Plan = &prof, p.Analysis.Plan
			break
		}
	}
	if in.Plan == nil {
		in.Plan = a.Plan
	}
	if in.Profile == nil {
		id := c.judgeFlags.Profile
		if id == "" && in.Plan != nil {
			id = in.Plan.Profile
		}
		if id == "" {
			id = defaultProfileID
		}
		prof, err := rules.ProfileByID(a.Profiles, id)
		if err != nil {
			return nil, &exitError{code: 2, err: err}
		}
		in.Profile = &prof
	}
	if in.Plan != nil && len(in.Plan.Ports) > 0 && !c.ByCircuit {
		want := map[string]bool{}
		for _, p := range in.Plan.Ports {
			want[p] = true
		}
		for _, p := range a.Result.Ports {
			if want[p.Port] && p.Peer != "" {
				want[p.Peer] = true // the other direction of the circuit
			}
		}
		res.Ports = nil
		for _, p := range a.Result.Ports {
			if want[p.Port] {
				res.Ports = append(res.Ports, p)
			}
		}
		if len(res.Ports) == 0 {
			return nil, &exitError{code: 2, err: fmt.Errorf("the inputs hold no sample of the plan's ports %v", in.Plan.Ports)}
		}
		if n := len(a.Result.Ports) - len(res.Ports); n > 0 {
			pr.Notef("note: %s left out of the report", words.Plural(n, "port not listed in the plan is", "ports not listed in the plan are"))
		}
	}
	diagnose.PairDirections(&res, directionPairs(a))
	if len(res.Ports) > maxReportPorts && !c.ByCircuit {
		return nil, &exitError{code: 2, err: fmt.Errorf("the inputs hold %d ports; an acceptance report covers one circuit (at most %d ports): list its ports in the plan (ports:) or use triage for a fleet", len(res.Ports), maxReportPorts)}
	}
	for _, st := range a.DS.Inputs {
		in.signed = append(in.signed, sign.SignedFile{Path: st.File, SHA256: st.SHA256})
	}
	in.plans = map[string]*rules.Plan{}
	for _, cf := range a.Configs {
		if cf.Plan != nil {
			in.plans[cf.Path] = cf.Plan
		}
		in.signed = append(in.signed, sign.SignedFile{Path: cf.Path, SHA256: cf.SHA256})
		in.Settings = append(in.Settings, acceptance.SettingsFile{Role: cf.Role, File: asTyped(cf.Path), SHA256: cf.SHA256})
	}
	return in, nil
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

// asTyped gives a path the command line made absolute back relative to the working folder, as
// the user most likely typed it (unchanged when it lies outside that folder).
func asTyped(path string) string {
	wd, err := os.Getwd()
	if err != nil {
		return path
	}
	if rel, err := filepath.Rel(wd, path); err == nil && !strings.HasPrefix(rel, "..") {
		return rel
	}
	return path
}

// absPath is path made absolute and clean (as given when that fails).
func absPath(path string) string {
	if abs, err := filepath.Abs(path); err == nil {
		return abs
	}
	return path
}

// sameFile reports whether two paths name the same file: the same path once made absolute
// and clean, or the same existing file (os.SameFile: through a link or another spelling).
func sameFile(a, b string) bool {
	if absPath(a) == absPath(b) {
		return true
	}
	sa, err := os.Stat(a)
	if err != nil {
		return false
	}
	sb, err := os.Stat(b)
	return err == nil && os.SameFile(sa, sb)
}
