package main

import (
	"encoding/json"
	"errors"
	"fmt"

	"github.com/beatnote/beatnote/report/sign"
)

// VerifyCmd checks a signed report against its detached signature and its inputs.
type VerifyCmd struct {
	Report  string `arg:"" name:"report" help:"The report file (PDF, Markdown or JSON) to check." type:"path"`
	Sig     string `help:"Signature file (default: REPORT.sig)." placeholder:"FILE.sig" type:"path"`
	Pub     string `help:"Public key the report must be signed with (PEM, from beatnote keygen)." placeholder:"PREFIX.pub" type:"path"`
	Trusted string `help:"Trusted-keys file: one line per key, its fingerprint (SHA256:…) and its holder's name; the report must be signed with one of them." placeholder:"FILE" type:"path"`
	Format  string `help:"Output format: text or json." enum:"text,json" default:"text"`
}

// Help is the long help of the command.
func (c *VerifyCmd) Help() string {
	return `Checks the Ed25519 signature of the signature file, the report's SHA-256 and the SHA-256
of every signed input that is still present (inputs are looked for at the paths stored in
the signature, relative to its folder). A missing input is a warning; a changed one, or one
that is no longer a readable regular file, is a failure.

Who signed is known only from a key you trust: give it with --pub (the signer's .pub file)
or --trusted (a file listing the fingerprints of the keys you trust, one per line with the
holder's name; see docs/report.md). Without either, the files can be intact but the signer's
name is only what the signature file claims: the headline then says UNAUTHENTICATED SIGNER.

Exit status: 0 verified with a trusted key; 1 something changed or does not match (the
message says what), or no trusted key was given (UNAUTHENTICATED SIGNER); 2 the check could
not be done (file unreadable or not a regular file, unknown signature format).`
}

// Run verifies and prints the outcome.
func (c *VerifyCmd) Run(g *Globals, pr *printer) error {
	sig := c.Sig
	if sig == "" {
		sig = sign.SignaturePath(c.Report)
	}
	var trusted []sign.TrustedKey
	if c.Pub != "" {
		k, err := sign.TrustPublicKey(c.Pub)
		if err != nil {
			return &exitError{code: 2, err: err}
		}
		trusted = append(trusted, k)
	}
	if c.Trusted != "" {
		ks, err := sign.LoadTrustedKeys(c.Trusted)
		if err != nil {
			return &exitError{code: 2, err: err}
		}
		trusted = append(trusted, ks...)
	}
	v, err := sign.Verify(c.Report, sig, trusted)
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
		}{v.Verified(), v}
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
		writeVerification(pr, c.Report, v)
	}
	if !v.Verified() {
		return &exitError{code: 1}
	}
	return nil
}

// writeVerification prints the outcome: the headline says VERIFIED only when the files are
// intact and the key is trusted. Every string from the signature file goes through the
// printer, which escapes it.
func writeVerification(pr *printer, report string, v *sign.Verification) {
	switch {
	case v.Verified():
		who := fmt.Sprintf("%q", v.Signer)
		if v.TrustedName != "" {
			who = fmt.Sprintf("%q (trusted as %q)", v.Signer, v.TrustedName)
		}
		pr.Printf("VERIFIED: %s is unchanged since %s signed it at %s\n", report, who, v.SignedAt)
	case v.OK():
		pr.Printf("UNAUTHENTICATED SIGNER: %s matches its signature, but no trusted key was given, so nothing shows who signed it (the name %q is only what the signature file claims)\n",
			report, v.Signer)
	default:
		pr.Printf("NOT VERIFIED: %s\n", report)
	}
	if v.KeyFingerprint != "" {
		switch {
		case v.KeyPinned:
			pr.Printf("  signing key %s (matches %s)\n", v.KeyFingerprint, v.PinnedBy)
		case v.OK():
			pr.Printf("  signing key %s (not pinned: compare it with the signer's own, or give --pub KEY.pub or --trusted FILE)\n", v.KeyFingerprint)
		default:
			pr.Printf("  signing key %s\n", v.KeyFingerprint)
		}
	}
	if v.Document.Status != "" {
		pr.Printf("  report  %-10s %s\n", v.Document.Status, report)
	}
	for _, in := range v.Inputs {
		pr.Printf("  input   %-10s %s\n", in.Status, in.Resolved)
	}
	for _, f := range v.Failures {
		pr.Printf("  FAILED: %s\n", f)
	}
	for _, w := range v.Warnings {
		pr.Printf("  warning: %s\n", w)
	}
}
