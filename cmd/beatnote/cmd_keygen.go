package main

import "github.com/beatnote/beatnote/report/sign"

// KeygenCmd creates an Ed25519 key pair for signing acceptance reports.
type KeygenCmd struct {
	Out   string `required:"" help:"Path prefix: writes PREFIX.key (private, mode 0600) and PREFIX.pub." placeholder:"PREFIX" type:"path"`
	Force bool   `help:"Replace existing key files."`
}

// Help is the long help of the command.
func (c *KeygenCmd) Help() string {
	return `Writes an Ed25519 key pair: PREFIX.key holds the private key (PEM, PKCS #8, readable by
you only) and PREFIX.pub the public key (PEM, PKIX) that you give to whoever checks your
reports. Existing files are never replaced unless --force is given. Prints the key's
fingerprint, SHA256: and the hex SHA-256 of the public key's DER encoding; it is printed in
every report the key signs. See docs/report.md.`
}

// Run writes the key pair and prints its fingerprint.
func (c *KeygenCmd) Run(g *Globals, pr *printer) error {
	fp, err := sign.WriteKeyPair(c.Out, c.Force, nil)
	if err != nil {
		return &exitError{code: 2, err: err}
	}
	pr.Printf("%s\n", fp)
	pr.Notef("wrote %s.key (private: keep it secret) and %s.pub (public: share it)", c.Out, c.Out)
	return nil
}
