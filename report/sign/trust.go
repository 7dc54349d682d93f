package sign

import (
	"bufio"
	"bytes"
	"crypto/ed25519"
	"encoding/hex"
	"fmt"
	"strings"

	"github.com/beatnote/beatnote/rules"
)

// TrustedKey is a public key the person verifying trusts, by its fingerprint, with the name
// they know its holder by and where that trust comes from (a --pub file or a line of a
// trusted-keys file).
type TrustedKey struct {
	Fingerprint string // "SHA256:" + 64 lowercase hex digits (KeyFingerprint)
	Name        string // the holder, as the person verifying names them; may be empty
	From        string // "FILE" for a public key file, "FILE:LINE" for a trusted-keys file
}

// TrustPublicKey makes a TrustedKey of the public key file at path (PEM PKIX, as written by
// WriteKeyPair).
func TrustPublicKey(path string) (TrustedKey, error) {
	pub, err := LoadPublicKey(path)
	if err != nil {
		return TrustedKey{}, err
	}
	fp, err := KeyFingerprint(pub)
	if err != nil {
		return TrustedKey{}, err
	}
	return TrustedKey{Fingerprint: fp, From: path}, nil
}

// maxTrustedKeysBytes bounds a trusted-keys file: about 10 000 entries.
const maxTrustedKeysBytes = 1 << 20

// LoadTrustedKeys reads a trusted-keys file, beatnote's own small text format: one key per
// line, written as its fingerprint ("SHA256:" and 64 hex digits, as keygen and verify print it)
// followed, after white space, by the name of its holder; blank lines and lines starting with
// "#" are ignored. For example:
//
//	# keys of the contractors who hand over links to us
//	SHA256:9f86d081884c7d659a2feaa0c55ad015a3bf4f1b2b0b822cd15d6c15b0f00a08  A. Technician, Field crew
//
// A line that is not of this form is an error naming the file and line.
func LoadTrustedKeys(path string) ([]TrustedKey, error) {
	data, _, err := rules.ReadRegular(path, maxTrustedKeysBytes)
	if err != nil {
		return nil, err
	}
	var keys []TrustedKey
	sc := bufio.NewScanner(bytes.NewReader(data))
	sc.Buffer(nil, maxTrustedKeysBytes)
	for line := 1; sc.Scan(); line++ {
		text := strings.TrimSpace(sc.Text())
		if text == "" || strings.HasPrefix(text, "#") {
			continue
		}
		fp := strings.Fields(text)[0]
		name := text[len(fp):]
		hexPart, ok := strings.CutPrefix(fp, KeyFingerprintPrefix)
		if _, err := hex.DecodeString(hexPart); !ok || err != nil || len(hexPart) != 2*32 {
			return nil, fmt.Errorf("%s:%d: want a key fingerprint (SHA256: and 64 hex digits) and the holder's name, got %q", path, line, text)
		}
		keys = append(keys, TrustedKey{Fingerprint: KeyFingerprintPrefix + strings.ToLower(hexPart),
			Name: strings.TrimSpace(name), From: fmt.Sprintf("%s:%d", path, line)})
	}
	if err := sc.Err(); err != nil {
		return nil, fmt.Errorf("%s: %w", path, err)
	}
	if len(keys) == 0 {
		return nil, fmt.Errorf("%s: no key in the file (one line per key: SHA256:… and the holder's name)", path)
	}
	return keys, nil
}

// trustedFor returns the trusted key that pub is, if any.
func trustedFor(pub ed25519.PublicKey, trusted []TrustedKey) (TrustedKey, bool) {
	fp, err := KeyFingerprint(pub)
	if err != nil {
		return TrustedKey{}, false
	}
	for _, k := range trusted {
		if k.Fingerprint == fp {
			return k, true
		}
	}
	return TrustedKey{}, false
}
