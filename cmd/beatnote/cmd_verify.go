package main

import (
	"crypto/ed25519"
	"encoding/json"
	"errors"
	"fmt"

	"github.com/beatnote/beatnote/report/sign"
)

// VerifyCmd checks a signed report against its detached signature and its inputs.
type VerifyCmd struct {
	Report string `arg:"" name:"report" help:"The report file (PDF, Markdown or JSON) to check." type:"path"`
	Sig    string `help:"Signature file (default: REPORT.sig)." placeholder:"FILE.sig" type:"path"`
	Pub    string `help:"Public key the report must be signed with (PEM, from beatnote keygen)." placeholder:"PREFIX.pub" type:"path"`
	Format string `help:"Output format: text or json." enum:"text,json" default:"text"`
}

// Help is the long help of the command.
func (c *VerifyCmd) Help() string {
	return `Checks the Ed25519 signature of the signature file, the report's SHA-256 and the SHA-256
of every signed input that is still present (inputs are looked for at the paths stored in
the signature, relative to its folder). A missing input is a warning; a changed one is a
failure. With --pub the signature must have been made with that key; without it, the
signature only proves the files are unchanged since someone holding the printed key signed
them, so compare the fingerprint with one you trust.

Exit status: 0 verified; 1 something changed or does not match (the message says what);
2 the check could not be done (file unreadable, unknown signature format).`
}

// Run verifies and prints the outcome.
func (c *VerifyCmd) Run(g *Globals, pr *printer) error {
	sig := c.Sig
	if sig == "" {
		sig = sign.SignaturePath(c.Report)
	}
	var pin ed25519.PublicKey
	if c.Pub != "" {
		k, err := sign.LoadPublicKey(c.Pub)
		if err != nil {
			return &exitError{code: 2, err: err}
		}
		pin = k
	}
	v, err := sign.Verify(c.Report, sig, pin)
	if err != nil {
		var ve *sign.VerifyError
		if errors.As(err, &ve) {
			return &exitError{code: 2, err: fmt.Errorf("cannot verify: %w", err)}
		}
		return &exitError{code: 2, err: err}
	}
	if c.Format == "json" {
		enc := json.NewEncoder(pr.Out())
		enc.SetIndent("", "  ")
		out := struct {
			Verified bool `json:"verified"`
			*sign.Verification
		}{v.OK(), v}
		if out.Failures == nil {
			out.Failures = []string{}
		}
		if out.Warnings == nil {
			out.Warnings = []string{}
		}
		if err := enc.Encode(out); err != nil {
			return err
		}
	} else {
		if v.OK() {
			pr.Printf("VERIFIED: %s is unchanged since %q signed it at %s\n", c.Report, v.Signer, v.SignedAt)
		} else {
			pr.Printf("NOT VERIFIED: %s\n", c.Report)
		}
		if v.KeyFingerprint != "" {
			pr.Printf("  signing key %s", v.KeyFingerprint)
			if pin != nil {
				if v.OK() {
					pr.Printf(" (matches %s)", c.Pub)
				}
			} else {
				pr.Printf(" (not pinned: use --pub to require a known key)")
			}
			pr.Printf("\n")
		}
		if v.Document.Status != "" {
			pr.Printf("  report  %-7s %s\n", v.Document.Status, c.Report)
		}
		for _, in := range v.Inputs {
			pr.Printf("  input   %-7s %s\n", in.Status, in.Resolved)
		}
		for _, f := range v.Failures {
			pr.Printf("  FAILED: %s\n", f)
		}
		for _, w := range v.Warnings {
			pr.Printf("  warning: %s\n", w)
		}
	}
	if !v.OK() {
		return &exitError{code: 1}
	}
	return nil
}
