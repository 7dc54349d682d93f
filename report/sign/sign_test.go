package sign

import (
	"crypto/ed25519"
	"crypto/sha256"
	"crypto/x509"
	"encoding/base64"
	"encoding/hex"
	"encoding/json"
	"errors"
	"os"
	"os/exec"
	"path/filepath"
	"runtime"
	"strings"
	"testing"
	"time"
)

// signedFixture makes a key pair, a "report" and two inputs in a temporary directory and signs them.
func signedFixture(t *testing.T) (dir, doc, sig string, inputs []string) {
	t.Helper()
	dir = t.TempDir()
	if _, err := WriteKeyPair(filepath.Join(dir, "tech"), false, nil); err != nil {
		t.Fatal(err)
	}
	doc = filepath.Join(dir, "out", "report.pdf")
	if err := os.MkdirAll(filepath.Dir(doc), 0o755); err != nil {
		t.Fatal(err)
	}
	mustWrite(t, doc, "%PDF-1.3 not really a pdf\n")
	inputs = []string{filepath.Join(dir, "a.csv"), filepath.Join(dir, "plan.yaml")}
	mustWrite(t, inputs[0], "time,port,q_db\n2026-01-01T00:00:00Z,p1,9.5\n")
	mustWrite(t, inputs[1], "circuit: x\n")
	priv, err := LoadPrivateKey(filepath.Join(dir, "tech.key"))
	if err != nil {
		t.Fatal(err)
	}
	sig = SignaturePath(doc)
	var signed []SignedFile
	for _, in := range inputs {
		signed = append(signed, SignedFile{Path: in, SHA256: sha256Hex(t, in)})
	}
	_, data, err := Sign(priv, "Signer Ω Ünïcode", time.Date(2026, 3, 2, 10, 0, 0, 0, time.UTC), SignedFile{Path: doc, SHA256: sha256Hex(t, doc)}, signed, sig)
	if err != nil {
		t.Fatal(err)
	}
	mustWrite(t, sig, string(data))
	return dir, doc, sig, inputs
}

// sha256Hex hashes a file with crypto/sha256 directly, independently of FileSHA256.
func sha256Hex(t *testing.T, path string) string {
	t.Helper()
	data, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	sum := sha256.Sum256(data)
	return hex.EncodeToString(sum[:])
}

// trust pins the public key file at path.
func trust(t *testing.T, path string) []TrustedKey {
	t.Helper()
	k, err := TrustPublicKey(path)
	if err != nil {
		t.Fatal(err)
	}
	return []TrustedKey{k}
}

func mustWrite(t *testing.T, path, s string) {
	t.Helper()
	if err := os.WriteFile(path, []byte(s), 0o644); err != nil {
		t.Fatal(err)
	}
}

func flipByte(t *testing.T, path string, at int) {
	t.Helper()
	data, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	if at < 0 {
		at += len(data)
	}
	data[at] ^= 0x01
	if err := os.WriteFile(path, data, 0o644); err != nil {
		t.Fatal(err)
	}
}

func TestKeygenFilesAndFingerprint(t *testing.T) {
	dir := t.TempDir()
	prefix := filepath.Join(dir, "k")
	fp, err := WriteKeyPair(prefix, false, nil)
	if err != nil {
		t.Fatal(err)
	}
	st, err := os.Stat(prefix + ".key")
	if err != nil {
		t.Fatal(err)
	}
	if st.Mode().Perm() != 0o600 {
		t.Errorf("private key mode %v, want 0600", st.Mode().Perm())
	}
	pub, err := LoadPublicKey(prefix + ".pub")
	if err != nil {
		t.Fatal(err)
	}
	// The fingerprint definition, recomputed here with crypto/x509 and crypto/sha256 directly.
	der, _ := x509.MarshalPKIXPublicKey(pub)
	sum := sha256.Sum256(der)
	if want := "SHA256:" + hex.EncodeToString(sum[:]); fp != want {
		t.Errorf("fingerprint %s, want %s", fp, want)
	}
	// RFC 8410 §4: an Ed25519 SubjectPublicKeyInfo is 44 bytes, ending in the 32-byte key.
	if len(der) != 44 || string(der[12:]) != string(pub) {
		t.Errorf("PKIX DER has %d bytes, want 44 ending in the raw key", len(der))
	}
	// Independent check with OpenSSL, when installed: the fingerprint docs/report.md tells users
	// to recompute with "openssl pkey -pubin -in K.pub -outform DER | sha256sum".
	if path, err := exec.LookPath("openssl"); err == nil {
		der, err := exec.Command(path, "pkey", "-pubin", "-in", prefix+".pub", "-outform", "DER").Output()
		if err != nil {
			t.Fatalf("openssl: %v", err)
		}
		sum := sha256.Sum256(der)
		if want := "SHA256:" + hex.EncodeToString(sum[:]); fp != want {
			t.Errorf("fingerprint %s, openssl's DER gives %s", fp, want)
		}
		// OpenSSL must also read the private key as PKCS #8 Ed25519.
		out, err := exec.Command(path, "pkey", "-in", prefix+".key", "-noout", "-text").CombinedOutput()
		if err != nil || !strings.Contains(string(out), "ED25519") {
			t.Errorf("openssl cannot read the private key: %v\n%s", err, out)
		}
	}
	priv, err := LoadPrivateKey(prefix + ".key")
	if err != nil {
		t.Fatal(err)
	}
	if !priv.Public().(ed25519.PublicKey).Equal(pub) {
		t.Error("private and public key files do not belong together")
	}

	before, _ := os.ReadFile(prefix + ".key")
	if _, err := WriteKeyPair(prefix, false, nil); !errors.Is(err, ErrKeyExists) {
		t.Errorf("second keygen without force: err %v, want ErrKeyExists", err)
	}
	after, _ := os.ReadFile(prefix + ".key")
	if string(before) != string(after) {
		t.Error("key overwritten without force")
	}
	os.Chmod(prefix+".key", 0o644)
	if _, err := WriteKeyPair(prefix, true, nil); err != nil {
		t.Fatalf("keygen with force: %v", err)
	}
	again, _ := os.ReadFile(prefix + ".key")
	if string(again) == string(before) {
		t.Error("force did not replace the key")
	}
	if st, _ := os.Stat(prefix + ".key"); st.Mode().Perm() != 0o600 {
		t.Errorf("replaced private key mode %v, want 0600", st.Mode().Perm())
	}
}

func TestSignVerifyRoundTrip(t *testing.T) {
	dir, doc, sig, _ := signedFixture(t)
	v, err := Verify(doc, sig, trust(t, filepath.Join(dir, "tech.pub")))
	if err != nil {
		t.Fatal(err)
	}
	if !v.Verified() || !v.KeyPinned || v.PinnedBy != filepath.Join(dir, "tech.pub") || v.Signature != CheckOK || len(v.Warnings) != 0 {
		t.Fatalf("verification failed: %+v", v)
	}
	if v.Signer != "Signer Ω Ünïcode" {
		t.Errorf("signer %q", v.Signer)
	}
	if len(v.Inputs) != 2 || v.Inputs[0].Status != CheckOK || v.Inputs[1].Status != CheckOK {
		t.Errorf("inputs %+v", v.Inputs)
	}
	// Independent check with OpenSSL, when installed: the signature is plain Ed25519 over the
	// canonical encoding documented in docs/report.md, checkable without beatnote.
	if path, err := exec.LookPath("openssl"); err == nil {
		raw, _ := os.ReadFile(sig)
		var sf SignatureFile
		if err := json.Unmarshal(raw, &sf); err != nil {
			t.Fatal(err)
		}
		sigBytes, _ := base64.StdEncoding.DecodeString(sf.Signature)
		canon, sigBin := filepath.Join(dir, "canon.txt"), filepath.Join(dir, "sig.bin")
		os.WriteFile(canon, sf.Canonical(), 0o644)
		os.WriteFile(sigBin, sigBytes, 0o644)
		out, err := exec.Command(path, "pkeyutl", "-verify", "-pubin", "-inkey", filepath.Join(dir, "tech.pub"),
			"-rawin", "-in", canon, "-sigfile", sigBin).CombinedOutput()
		if err != nil || !strings.Contains(string(out), "Signature Verified Successfully") {
			t.Errorf("openssl does not verify the signature: %v\n%s", err, out)
		}
	}
	// The stored paths are relative to the signature's directory.
	if v.Inputs[0].Path != "../a.csv" {
		t.Errorf("stored input path %q, want ../a.csv", v.Inputs[0].Path)
	}
}

func TestVerifyDetectsTampering(t *testing.T) {
	cases := []struct {
		name    string
		tamper  func(t *testing.T, dir, doc, sig string, inputs []string)
		wantMsg string
		warning bool
	}{
		{"pdf byte", func(t *testing.T, dir, doc, sig string, in []string) { flipByte(t, doc, 5) }, "report", false},
		{"input byte", func(t *testing.T, dir, doc, sig string, in []string) { flipByte(t, in[0], -3) }, "a.csv has changed", false},
		{"signer in sig", func(t *testing.T, dir, doc, sig string, in []string) {
			editSig(t, sig, func(s *SignatureFile) { s.Signer = "Somebody Else" })
		}, "altered after signing", false},
		{"hash in sig", func(t *testing.T, dir, doc, sig string, in []string) {
			editSig(t, sig, func(s *SignatureFile) { s.Inputs[1].SHA256 = strings.Repeat("0", 64) })
		}, "altered after signing", false},
		{"signature value", func(t *testing.T, dir, doc, sig string, in []string) {
			editSig(t, sig, func(s *SignatureFile) {
				b := []byte(s.Signature)
				if b[3] == 'A' {
					b[3] = 'B'
				} else {
					b[3] = 'A'
				}
				s.Signature = string(b)
			})
		}, "altered after signing", false},
		{"raw sig byte", func(t *testing.T, dir, doc, sig string, in []string) { flipByte(t, sig, 0) }, "damaged", false},
		{"input removed", func(t *testing.T, dir, doc, sig string, in []string) { os.Remove(in[1]) }, "no longer present", true},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			dir, doc, sig, inputs := signedFixture(t)
			c.tamper(t, dir, doc, sig, inputs)
			v, err := Verify(doc, sig, nil)
			if err != nil {
				t.Fatal(err)
			}
			all := strings.Join(append(append([]string{}, v.Failures...), v.Warnings...), "\n")
			if c.warning {
				if !v.OK() || len(v.Warnings) == 0 {
					t.Errorf("want a warning only, got failures %q warnings %q", v.Failures, v.Warnings)
				}
			} else if v.OK() {
				t.Errorf("tampering not detected")
			}
			if !strings.Contains(all, c.wantMsg) {
				t.Errorf("messages %q lack %q", all, c.wantMsg)
			}
		})
	}
}

func TestVerifyPinnedKey(t *testing.T) {
	dir, doc, sig, _ := signedFixture(t)
	if _, err := WriteKeyPair(filepath.Join(dir, "other"), false, nil); err != nil {
		t.Fatal(err)
	}
	v, err := Verify(doc, sig, trust(t, filepath.Join(dir, "other.pub")))
	if err != nil {
		t.Fatal(err)
	}
	if v.OK() || !strings.Contains(strings.Join(v.Failures, " "), "not with the expected key") {
		t.Errorf("pinned other key accepted: %q", v.Failures)
	}
}

func TestVerifyCannotComplete(t *testing.T) {
	_, doc, sig, _ := signedFixture(t)
	var ve *VerifyError
	if _, err := Verify(doc, sig+".nope", nil); !errors.As(err, &ve) {
		t.Errorf("missing signature file: err %v, want *VerifyError", err)
	}
	if _, err := Verify(doc+".nope", sig, nil); !errors.As(err, &ve) {
		t.Errorf("missing document: err %v, want *VerifyError", err)
	}
}

// editSig rewrites one field of a signature file, keeping valid JSON, as a forger would.
func editSig(t *testing.T, path string, edit func(*SignatureFile)) {
	t.Helper()
	data, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	var s SignatureFile
	if err := json.Unmarshal(data, &s); err != nil {
		t.Fatal(err)
	}
	edit(&s)
	out, _ := json.MarshalIndent(&s, "", "  ")
	if err := os.WriteFile(path, out, 0o644); err != nil {
		t.Fatal(err)
	}
}

// TestCanonicalEncoding pins the documented canonical form (docs/report.md), written out by hand.
func TestCanonicalEncoding(t *testing.T) {
	s := SignatureFile{Format: SignatureFormat, Signer: "A:B\n", KeyFingerprint: "SHA256:00", PublicKey: "pk",
		SignedAt: "2026-01-01T00:00:00Z", Document: SignedFile{Path: "r.pdf", SHA256: "d"},
		Inputs: []SignedFile{{Path: "x.csv", SHA256: "e"}}}
	want := "beatnote-signature/1\nformat:20:beatnote-signature/1\nsigner:4:A:B\n\nkey_fingerprint:9:SHA256:00\n" +
		"public_key:2:pk\nsigned_at:20:2026-01-01T00:00:00Z\ndocument.path:5:r.pdf\ndocument.sha256:1:d\n" +
		"inputs.count:1:1\ninput.0.path:5:x.csv\ninput.0.sha256:1:e\n"
	if got := string(s.Canonical()); got != want {
		t.Errorf("canonical\n%q\nwant\n%q", got, want)
	}
}

// Without a trusted key the files can be intact, but nothing says who signed: not Verified.
func TestUnpinnedKeyIsNotVerified(t *testing.T) {
	_, doc, sig, _ := signedFixture(t)
	v, err := Verify(doc, sig, nil)
	if err != nil {
		t.Fatal(err)
	}
	if !v.OK() || v.KeyPinned || v.Verified() || v.PinnedBy != "" {
		t.Errorf("unpinned: OK %v, KeyPinned %v, Verified %v, PinnedBy %q; want true, false, false, \"\"", v.OK(), v.KeyPinned, v.Verified(), v.PinnedBy)
	}
}

func TestTrustedKeysFile(t *testing.T) {
	dir, doc, sig, _ := signedFixture(t)
	tech, err := TrustPublicKey(filepath.Join(dir, "tech.pub"))
	if err != nil {
		t.Fatal(err)
	}
	otherFP, err := WriteKeyPair(filepath.Join(dir, "other"), false, nil)
	if err != nil {
		t.Fatal(err)
	}
	file := filepath.Join(dir, "trusted.txt")
	mustWrite(t, file, "# contractors\n\n"+otherFP+"  O. Ther\n"+tech.Fingerprint+"\tA. Technician, Field crew\n")
	keys, err := LoadTrustedKeys(file)
	if err != nil {
		t.Fatal(err)
	}
	if len(keys) != 2 || keys[1].Name != "A. Technician, Field crew" || keys[1].From != file+":4" {
		t.Fatalf("keys %+v", keys)
	}
	v, err := Verify(doc, sig, keys)
	if err != nil {
		t.Fatal(err)
	}
	if !v.Verified() || v.TrustedName != "A. Technician, Field crew" || v.PinnedBy != file+":4" {
		t.Errorf("trusted key not found: %+v", v)
	}
	// A file that trusts only another key: the signature fails.
	mustWrite(t, file, otherFP+" O. Ther\n")
	keys, _ = LoadTrustedKeys(file)
	if v, err := Verify(doc, sig, keys); err != nil || v.OK() || v.KeyPinned {
		t.Errorf("key not in the trusted file accepted: %v %+v", err, v)
	}
	for _, bad := range []string{"SHA256:abc A\n", "not a key\n", "# only comments\n", otherFP[:70] + "zz A\n"} {
		mustWrite(t, file, bad)
		if _, err := LoadTrustedKeys(file); err == nil {
			t.Errorf("trusted-keys file %q accepted", bad)
		} else if !strings.Contains(err.Error(), file) {
			t.Errorf("error %v does not name the file", err)
		}
	}
}

// A private key that its group or others may read or write is refused, an error rather than
// a note (RFC 8410 keys are secrets: a key others could copy proves nothing).
func TestPrivateKeyPermissions(t *testing.T) {
	if runtime.GOOS == "windows" {
		t.Skip("Windows keeps no Unix permission bits")
	}
	dir := t.TempDir()
	prefix := filepath.Join(dir, "k")
	if _, err := WriteKeyPair(prefix, false, nil); err != nil {
		t.Fatal(err)
	}
	for _, mode := range []os.FileMode{0o644, 0o640, 0o604, 0o620, 0o660} {
		os.Chmod(prefix+".key", mode)
		if _, err := LoadPrivateKey(prefix + ".key"); !errors.Is(err, ErrKeyExposed) {
			t.Errorf("key of mode %04o: err %v, want ErrKeyExposed", mode, err)
		}
	}
	for _, mode := range []os.FileMode{0o600, 0o400} {
		os.Chmod(prefix+".key", mode)
		if _, err := LoadPrivateKey(prefix + ".key"); err != nil {
			t.Errorf("key of mode %04o: %v", mode, err)
		}
	}
}

// Sign signs the digests it is given and reads no file: the hashes of what was analysed.
func TestSignUsesGivenDigests(t *testing.T) {
	dir := t.TempDir()
	if _, err := WriteKeyPair(filepath.Join(dir, "k"), false, nil); err != nil {
		t.Fatal(err)
	}
	priv, err := LoadPrivateKey(filepath.Join(dir, "k.key"))
	if err != nil {
		t.Fatal(err)
	}
	analysed := strings.Repeat("ab", 32)
	sf, _, err := Sign(priv, "S", time.Unix(0, 0), SignedFile{Path: filepath.Join(dir, "r.pdf"), SHA256: strings.Repeat("CD", 32)},
		[]SignedFile{{Path: filepath.Join(dir, "never-written.csv"), SHA256: analysed}}, filepath.Join(dir, "r.pdf.sig"))
	if err != nil {
		t.Fatal(err)
	}
	if sf.Inputs[0].SHA256 != analysed || sf.Inputs[0].Path != "never-written.csv" || sf.Document.SHA256 != strings.Repeat("cd", 32) {
		t.Errorf("signed %+v", sf)
	}
	if _, _, err := Sign(priv, "S", time.Unix(0, 0), SignedFile{Path: "r.pdf", SHA256: "xyz"}, nil, "r.pdf.sig"); err == nil {
		t.Error("a digest that is not hex SHA-256 was signed")
	}
}
