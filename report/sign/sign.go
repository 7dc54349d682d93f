// Package sign signs acceptance reports and verifies them.
//
// Keys are Ed25519 (RFC 8032). The private key is stored as PEM "PRIVATE KEY" holding PKCS #8
// (RFC 5208, RFC 8410), the public key as PEM "PUBLIC KEY" holding a PKIX SubjectPublicKeyInfo
// (RFC 5280, RFC 8410). A key's fingerprint is "SHA256:" followed by the lowercase hex SHA-256
// of that SubjectPublicKeyInfo DER.
//
// A signature is a detached JSON file (SignatureFile) beside the report. Its Ed25519 signature
// covers the canonical encoding of every other field (see SignatureFile.Canonical). What is
// signed are the SHA-256 digests the caller gives: those of the bytes it analysed and of the
// report it wrote, never files read again at signing time, which could have changed meanwhile.
//
// Every file this package reads must be a regular file (no folder, device or FIFO), and every
// read is bounded: small files by a size limit, hashed files by the size they had when opened.
package sign

import (
	"bytes"
	"crypto/ed25519"
	"crypto/rand"
	"crypto/sha256"
	"crypto/x509"
	"encoding/base64"
	"encoding/hex"
	"encoding/json"
	"encoding/pem"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path"
	"path/filepath"
	"runtime"
	"strconv"
	"strings"
	"time"

	"github.com/beatnote/beatnote/rules"
)

// SignatureFormat is the value of the "format" member of a signature file this version writes.
const SignatureFormat = "beatnote-signature/1"

// KeyFingerprintPrefix starts every key fingerprint.
const KeyFingerprintPrefix = "SHA256:"

// SignedFile is one file a signature vouches for, by path and SHA-256.
type SignedFile struct {
	// Path is relative to the directory of the signature file when possible (slash-separated),
	// otherwise absolute.
	Path   string `json:"path"`
	SHA256 string `json:"sha256"` // lowercase hex
}

// SignatureFile is the detached signature of a report: beatnote's own small JSON format.
type SignatureFile struct {
	Format         string       `json:"format"`
	Signer         string       `json:"signer"`
	KeyFingerprint string       `json:"key_fingerprint"`
	PublicKey      string       `json:"public_key"` // base64 (standard, padded) of the PKIX DER
	SignedAt       string       `json:"signed_at"`  // RFC 3339, UTC
	Document       SignedFile   `json:"document"`
	Inputs         []SignedFile `json:"inputs"`
	Signature      string       `json:"signature"` // base64 (standard, padded) of the 64-byte Ed25519 signature
}

// Canonical is the byte string the Ed25519 signature covers: the line
// "beatnote-signature/1" and then one line per field, in this fixed order, each written as
// NAME ":" LENGTH ":" VALUE "\n" where LENGTH is the decimal byte length of VALUE:
// format, signer, key_fingerprint, public_key, signed_at, document.path, document.sha256,
// inputs.count, and for each input i (0-based, in file order) input.i.path and input.i.sha256.
// The length prefix makes the encoding unambiguous whatever the values hold.
func (s *SignatureFile) Canonical() []byte {
	var b bytes.Buffer
	b.WriteString(SignatureFormat + "\n")
	field := func(name, value string) {
		b.WriteString(name)
		b.WriteByte(':')
		b.WriteString(strconv.Itoa(len(value)))
		b.WriteByte(':')
		b.WriteString(value)
		b.WriteByte('\n')
	}
	field("format", s.Format)
	field("signer", s.Signer)
	field("key_fingerprint", s.KeyFingerprint)
	field("public_key", s.PublicKey)
	field("signed_at", s.SignedAt)
	field("document.path", s.Document.Path)
	field("document.sha256", s.Document.SHA256)
	field("inputs.count", strconv.Itoa(len(s.Inputs)))
	for i, in := range s.Inputs {
		field("input."+strconv.Itoa(i)+".path", in.Path)
		field("input."+strconv.Itoa(i)+".sha256", in.SHA256)
	}
	return b.Bytes()
}

// KeyFingerprint is "SHA256:" + lowercase hex of the SHA-256 of pub's PKIX DER encoding.
func KeyFingerprint(pub ed25519.PublicKey) (string, error) {
	der, err := x509.MarshalPKIXPublicKey(pub)
	if err != nil {
		return "", fmt.Errorf("sign: encode public key: %w", err)
	}
	sum := sha256.Sum256(der)
	return KeyFingerprintPrefix + hex.EncodeToString(sum[:]), nil
}

// ErrKeyExists is returned by WriteKeyPair when a key file exists and overwriting was not asked for.
var ErrKeyExists = errors.New("key file exists")

// WriteKeyPair creates a new Ed25519 key pair and writes prefix+".key" (PEM PKCS #8, mode 0600)
// and prefix+".pub" (PEM PKIX, mode 0644). Without force it refuses, writing nothing, when
// either file exists. It returns the key's fingerprint.
func WriteKeyPair(prefix string, force bool, random io.Reader) (fingerprint string, err error) {
	if random == nil {
		random = rand.Reader
	}
	keyPath, pubPath := prefix+".key", prefix+".pub"
	if !force {
		for _, p := range []string{keyPath, pubPath} {
			if _, err := os.Lstat(p); err == nil {
				return "", fmt.Errorf("%s: %w (use --force to replace it)", p, ErrKeyExists)
			} else if !errors.Is(err, fs.ErrNotExist) {
				return "", err
			}
		}
	}
	pub, priv, err := ed25519.GenerateKey(random)
	if err != nil {
		return "", fmt.Errorf("sign: generate key: %w", err)
	}
	privDER, err := x509.MarshalPKCS8PrivateKey(priv)
	if err != nil {
		return "", fmt.Errorf("sign: encode private key: %w", err)
	}
	pubDER, err := x509.MarshalPKIXPublicKey(pub)
	if err != nil {
		return "", fmt.Errorf("sign: encode public key: %w", err)
	}
	flags := os.O_WRONLY | os.O_CREATE | os.O_EXCL
	if force {
		flags = os.O_WRONLY | os.O_CREATE | os.O_TRUNC
	}
	if err := writePEM(keyPath, flags, 0o600, "PRIVATE KEY", privDER); err != nil {
		return "", err
	}
	if err := writePEM(pubPath, flags, 0o644, "PUBLIC KEY", pubDER); err != nil {
		return "", err
	}
	return KeyFingerprint(pub)
}

func writePEM(path string, flags int, mode os.FileMode, kind string, der []byte) error {
	f, err := os.OpenFile(path, flags, mode)
	if err != nil {
		if errors.Is(err, fs.ErrExist) {
			return fmt.Errorf("%s: %w (use --force to replace it)", path, ErrKeyExists)
		}
		return err
	}
	// A replaced file keeps its old mode under O_TRUNC; set it explicitly.
	if err := f.Chmod(mode); err != nil {
		f.Close()
		return err
	}
	if err := pem.Encode(f, &pem.Block{Type: kind, Bytes: der}); err != nil {
		f.Close()
		return fmt.Errorf("%s: %w", path, err)
	}
	return f.Close()
}

// ErrKeyExposed is wrapped by LoadPrivateKey's error for a private key file that its group or
// others may read or write.
var ErrKeyExposed = errors.New("private key readable or writable by others")

// LoadPrivateKey reads an Ed25519 private key written by WriteKeyPair (PEM PKCS #8). A key file
// with any permission for its group or others is refused (ErrKeyExposed): a signature proves
// nothing when others could have read the key. (Windows keeps no such bits; there the check is
// left to the file's access list.)
func LoadPrivateKey(path string) (ed25519.PrivateKey, error) {
	der, fi, err := readPEM(path, "PRIVATE KEY", " (create one with beatnote keygen)")
	if err != nil {
		return nil, err
	}
	if perm := fi.Mode().Perm(); perm&0o077 != 0 && runtime.GOOS != "windows" {
		return nil, fmt.Errorf("%s: %w (mode %04o): make it yours alone with chmod 600, and make a new key if others may have copied it", path, ErrKeyExposed, perm)
	}
	k, err := x509.ParsePKCS8PrivateKey(der)
	if err != nil {
		return nil, fmt.Errorf("%s: %w", path, err)
	}
	priv, ok := k.(ed25519.PrivateKey)
	if !ok {
		return nil, fmt.Errorf("%s: the key is %T, beatnote signs with Ed25519 keys only", path, k)
	}
	return priv, nil
}

// LoadPublicKey reads an Ed25519 public key written by WriteKeyPair (PEM PKIX).
func LoadPublicKey(path string) (ed25519.PublicKey, error) {
	der, _, err := readPEM(path, "PUBLIC KEY", "")
	if err != nil {
		return nil, err
	}
	k, err := x509.ParsePKIXPublicKey(der)
	if err != nil {
		return nil, fmt.Errorf("%s: %w", path, err)
	}
	pub, ok := k.(ed25519.PublicKey)
	if !ok {
		return nil, fmt.Errorf("%s: the key is %T, beatnote verifies Ed25519 keys only", path, k)
	}
	return pub, nil
}

// maxKeyFileBytes bounds a key file: an Ed25519 key in PEM is about 120 bytes.
const maxKeyFileBytes = 64 << 10

// readPEM returns the bytes of the first PEM block of the regular file at path, which must be of
// type kind (hint ends the error when it is not), and the file's information.
func readPEM(path, kind, hint string) ([]byte, fs.FileInfo, error) {
	data, fi, err := rules.ReadRegular(path, maxKeyFileBytes)
	if err != nil {
		return nil, nil, err
	}
	block, _ := pem.Decode(data)
	if block == nil || block.Type != kind {
		return nil, nil, fmt.Errorf("%s: not a PEM %q file%s", path, kind, hint)
	}
	return block.Bytes, fi, nil
}

// SignaturePath is where the detached signature of document goes: document + ".sig".
func SignaturePath(document string) string { return document + ".sig" }

// Sign signs the document and the inputs, by the SHA-256 digests given with them, with priv and
// returns the signature file and its bytes, to be written to sigPath (normally
// SignaturePath(document.Path)). The digests must be those of the bytes that were analysed and
// written: Sign reads no file. Paths inside the signature file are stored relative to the
// directory of sigPath where possible.
func Sign(priv ed25519.PrivateKey, signer string, signedAt time.Time, document SignedFile, inputs []SignedFile, sigPath string) (*SignatureFile, []byte, error) {
	pub, ok := priv.Public().(ed25519.PublicKey)
	if !ok {
		return nil, nil, errors.New("sign: not an Ed25519 key")
	}
	fp, err := KeyFingerprint(pub)
	if err != nil {
		return nil, nil, err
	}
	der, err := x509.MarshalPKIXPublicKey(pub)
	if err != nil {
		return nil, nil, err
	}
	sigDir, err := filepath.Abs(filepath.Dir(sigPath))
	if err != nil {
		return nil, nil, err
	}
	sf := &SignatureFile{
		Format:         SignatureFormat,
		Signer:         signer,
		KeyFingerprint: fp,
		PublicKey:      base64.StdEncoding.EncodeToString(der),
		SignedAt:       signedAt.UTC().Format(time.RFC3339),
	}
	entry := func(f SignedFile) (SignedFile, error) {
		if _, err := hex.DecodeString(f.SHA256); err != nil || len(f.SHA256) != 2*sha256.Size {
			return SignedFile{}, fmt.Errorf("sign: %s: %q is not a SHA-256 digest in hex", f.Path, f.SHA256)
		}
		return SignedFile{Path: relativePath(sigDir, f.Path), SHA256: strings.ToLower(f.SHA256)}, nil
	}
	if sf.Document, err = entry(document); err != nil {
		return nil, nil, err
	}
	for _, in := range inputs {
		e, err := entry(in)
		if err != nil {
			return nil, nil, err
		}
		sf.Inputs = append(sf.Inputs, e)
	}
	sf.Signature = base64.StdEncoding.EncodeToString(ed25519.Sign(priv, sf.Canonical()))
	data, err := json.MarshalIndent(sf, "", "  ")
	if err != nil {
		return nil, nil, err
	}
	return sf, append(data, '\n'), nil
}

// relativePath expresses path relative to dir (slash-separated) when it can, else absolute.
func relativePath(dir, path string) string {
	abs, err := filepath.Abs(path)
	if err != nil {
		return filepath.ToSlash(path)
	}
	rel, err := filepath.Rel(dir, abs)
	if err != nil {
		return filepath.ToSlash(abs)
	}
	return filepath.ToSlash(rel)
}

// CheckStatus is the outcome of one verification step.
type CheckStatus string

// The outcomes of a verification step.
const (
	CheckOK         CheckStatus = "ok"
	CheckChanged    CheckStatus = "changed"    // hash differs: tampered or replaced
	CheckMissing    CheckStatus = "missing"    // input no longer present: a warning only
	CheckUnreadable CheckStatus = "unreadable" // present but not a regular file, or not readable: a failure
	CheckFailed     CheckStatus = "failed"     // signature or key check failed
)

// FileCheck is the verification of one signed file.
type FileCheck struct {
	Path     string      `json:"path"`     // as stored in the signature file
	Resolved string      `json:"resolved"` // where it was looked for
	Expected string      `json:"expected_sha256"`
	Actual   string      `json:"actual_sha256,omitempty"`
	Status   CheckStatus `json:"status"`
	Problem  string      `json:"problem,omitempty"` // why an unreadable file could not be hashed
}

// Verification is the full outcome of Verify.
type Verification struct {
	Signer         string      `json:"signer"`
	KeyFingerprint string      `json:"key_fingerprint"`
	SignedAt       string      `json:"signed_at"`
	Signature      CheckStatus `json:"signature"`
	Document       FileCheck   `json:"document"`
	Inputs         []FileCheck `json:"inputs"`
	// KeyPinned is true when the signing key is one the person verifying trusts (a --pub key
	// or an entry of a trusted-keys file); PinnedBy then says which. Without it the signature
	// proves the files unchanged since someone signed them, not who: the Signer is only what
	// the signature file claims.
	KeyPinned bool   `json:"key_pinned"`
	PinnedBy  string `json:"pinned_by,omitempty"`
	// TrustedName is the holder's name from the trusted-keys file, when it gives one.
	TrustedName string `json:"trusted_name,omitempty"`
	// Failures say, one sentence each, what does not match. Empty means the files are intact.
	Failures []string `json:"failures"`
	// Warnings say what could not be checked (a signed input no longer present).
	Warnings []string `json:"warnings"`
}

// OK reports whether nothing failed (warnings allowed): the report and its inputs are as they
// were signed, by whoever holds the key.
func (v *Verification) OK() bool { return len(v.Failures) == 0 }

// Verified reports whether nothing failed and the key is a trusted one.
func (v *Verification) Verified() bool { return v.OK() && v.KeyPinned }

// VerifyError means verification could not be carried out (unreadable files, unknown format):
// distinct from a verification that ran and found a mismatch.
type VerifyError struct {
	Path string
	Err  error
}

func (e *VerifyError) Error() string { return e.Path + ": " + e.Err.Error() }
func (e *VerifyError) Unwrap() error { return e.Err }

// maxSignatureFileBytes bounds a signature file: its size grows with the number of inputs, at
// about 150 bytes each.
const maxSignatureFileBytes = 16 << 20

// Verify checks document against the signature file at sigPath: the Ed25519 signature over the
// canonical encoding, the document's SHA-256, and the SHA-256 of every signed input still
// present (relative input paths are resolved against the signature file's directory). When
// trusted is not empty the signature must have been made with one of those keys (a failure
// otherwise), and the Verification is KeyPinned; when it is empty, nothing says who signed.
// Only regular files are read: a signed input that became a folder, a device or a FIFO, or
// that cannot be read, is a failure (one no longer present only a warning). It returns a
// *VerifyError when it cannot complete; a damaged signature file is a failure, not an error.
func Verify(document, sigPath string, trusted []TrustedKey) (*Verification, error) {
	raw, _, err := rules.ReadRegular(sigPath, maxSignatureFileBytes)
	if err != nil {
		return nil, &VerifyError{Path: sigPath, Err: err}
	}
	v := &Verification{Signature: CheckFailed}
	var sf SignatureFile
	dec := json.NewDecoder(bytes.NewReader(raw))
	dec.DisallowUnknownFields()
	if err := dec.Decode(&sf); err != nil {
		v.Failures = append(v.Failures, fmt.Sprintf("signature file %s is damaged (%v)", sigPath, err))
		return v, nil
	}
	if sf.Format != SignatureFormat {
		if strings.HasPrefix(sf.Format, "beatnote-signature/") {
			return nil, &VerifyError{Path: sigPath, Err: fmt.Errorf("signature format %q is newer than this beatnote understands (%s)", sf.Format, SignatureFormat)}
		}
		v.Failures = append(v.Failures, fmt.Sprintf("signature file %s is damaged or not a beatnote signature (format %q)", sigPath, sf.Format))
		return v, nil
	}
	v.Signer, v.KeyFingerprint, v.SignedAt = sf.Signer, sf.KeyFingerprint, sf.SignedAt

	// The key and the signature.
	der, derErr := base64.StdEncoding.DecodeString(sf.PublicKey)
	var pub ed25519.PublicKey
	if derErr == nil {
		if k, err := x509.ParsePKIXPublicKey(der); err == nil {
			pub, _ = k.(ed25519.PublicKey)
		}
	}
	sig, sigErr := base64.StdEncoding.DecodeString(sf.Signature)
	switch {
	case pub == nil:
		v.Failures = append(v.Failures, "the public key in the signature file is damaged")
	case sigErr != nil || len(sig) != ed25519.SignatureSize:
		v.Failures = append(v.Failures, "the signature value in the signature file is damaged")
	default:
		fp, _ := KeyFingerprint(pub)
		if fp != sf.KeyFingerprint {
			v.Failures = append(v.Failures, fmt.Sprintf("the key fingerprint %s does not belong to the public key in the signature file (%s)", sf.KeyFingerprint, fp))
		}
		if k, ok := trustedFor(pub, trusted); ok {
			v.KeyPinned, v.PinnedBy, v.TrustedName = true, k.From, k.Name
		} else if len(trusted) == 1 {
			v.Failures = append(v.Failures, fmt.Sprintf("signed with key %s, not with the expected key %s (%s)", fp, trusted[0].Fingerprint, trusted[0].From))
		} else if len(trusted) > 1 {
			v.Failures = append(v.Failures, fmt.Sprintf("signed with key %s, which is none of the %d trusted keys", fp, len(trusted)))
		}
		if ed25519.Verify(pub, sf.Canonical(), sig) {
			v.Signature = CheckOK
		} else {
			v.Failures = append(v.Failures, "the signature does not match the signature file's contents: the signature file was altered after signing")
		}
	}

	// The files.
	sigDir, err := filepath.Abs(filepath.Dir(sigPath))
	if err != nil {
		return nil, &VerifyError{Path: sigPath, Err: err}
	}
	v.Document = checkFile(sf.Document, document)
	switch v.Document.Status {
	case CheckMissing, CheckUnreadable:
		return nil, &VerifyError{Path: document, Err: errors.New("cannot be read: " + v.Document.Problem)}
	case CheckChanged:
		msg := fmt.Sprintf("report %s has changed since signing (SHA-256 %s, signed %s)", document, v.Document.Actual, v.Document.Expected)
		if path.Base(sf.Document.Path) != filepath.Base(document) {
			msg += fmt.Sprintf("; note the signature was made for %s", sf.Document.Path)
		}
		v.Failures = append(v.Failures, msg)
	}
	for _, in := range sf.Inputs {
		p := filepath.FromSlash(in.Path)
		if !filepath.IsAbs(p) {
			p = filepath.Join(sigDir, p)
		}
		fc := checkFile(in, p)
		v.Inputs = append(v.Inputs, fc)
		switch fc.Status {
		case CheckChanged:
			v.Failures = append(v.Failures, fmt.Sprintf("input %s has changed since signing (SHA-256 %s, signed %s)", p, fc.Actual, fc.Expected))
		case CheckUnreadable:
			v.Failures = append(v.Failures, fmt.Sprintf("input %s cannot be checked: %s", p, fc.Problem))
		case CheckMissing:
			v.Warnings = append(v.Warnings, fmt.Sprintf("input %s is no longer present; its hash could not be checked", p))
		}
	}
	return v, nil
}

// checkFile hashes the file at path (a regular file only, read no further than its size) and
// compares the digest with the signed one.
func checkFile(sf SignedFile, path string) FileCheck {
	fc := FileCheck{Path: sf.Path, Resolved: path, Expected: sf.SHA256}
	sum, err := FileSHA256(path)
	switch {
	case errors.Is(err, fs.ErrNotExist):
		fc.Status, fc.Problem = CheckMissing, "no such file"
	case err != nil:
		fc.Status, fc.Problem = CheckUnreadable, strings.TrimPrefix(err.Error(), path+": ")
	case sum != strings.ToLower(sf.SHA256):
		fc.Actual, fc.Status = sum, CheckChanged
	default:
		fc.Actual, fc.Status = sum, CheckOK
	}
	return fc
}
