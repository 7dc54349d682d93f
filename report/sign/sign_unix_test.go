//go:build unix

package sign

import (
	"crypto/ed25519"
	"encoding/base64"
	"errors"
	"os"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"

	"github.com/beatnote/beatnote/rules"
)

// withTimeout runs f and fails the test when it has not returned within d: a verification
// that blocks on a FIFO or reads /dev/zero for ever would hang.
func withTimeout(t *testing.T, d time.Duration, f func()) {
	t.Helper()
	done := make(chan struct{})
	go func() {
		defer close(done)
		f()
	}()
	select {
	case <-done:
	case <-time.After(d):
		t.Fatalf("did not return within %v", d)
	}
}

// A signature file listing a FIFO, /dev/zero or a folder as an input, or an input that
// became one of these, fails verification promptly: only regular files are opened, without
// blocking, and read no further than their size.
func TestVerifyReadsRegularFilesOnly(t *testing.T) {
	cases := []struct {
		name    string
		prepare func(t *testing.T, dir, sig string, inputs []string)
		want    string
	}{
		{"input became a folder", func(t *testing.T, dir, sig string, in []string) {
			os.Remove(in[0])
			if err := os.Mkdir(in[0], 0o755); err != nil {
				t.Fatal(err)
			}
		}, "a folder"},
		{"input became a FIFO", func(t *testing.T, dir, sig string, in []string) {
			os.Remove(in[0])
			if err := syscall.Mkfifo(in[0], 0o644); err != nil {
				t.Skipf("mkfifo: %v", err)
			}
		}, "a FIFO"},
		{"signature lists /dev/zero", func(t *testing.T, dir, sig string, in []string) {
			resign(t, dir, sig, "/dev/zero")
		}, "a device"},
		{"signature lists a FIFO", func(t *testing.T, dir, sig string, in []string) {
			fifo := filepath.Join(dir, "pipe")
			if err := syscall.Mkfifo(fifo, 0o644); err != nil {
				t.Skipf("mkfifo: %v", err)
			}
			resign(t, dir, sig, fifo)
		}, "a FIFO"},
		{"input path through a file", func(t *testing.T, dir, sig string, in []string) {
			// An error other than "no such file" (here ENOTDIR, which even root meets) fails.
			resign(t, dir, sig, in[1]+"/inner")
		}, "not a directory"},
		{"input unreadable", func(t *testing.T, dir, sig string, in []string) {
			if os.Geteuid() == 0 {
				t.Skip("root reads every file")
			}
			os.Chmod(in[0], 0)
		}, "permission denied"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			dir, doc, sig, inputs := signedFixture(t)
			c.prepare(t, dir, sig, inputs)
			withTimeout(t, 10*time.Second, func() {
				v, err := Verify(doc, sig, trust(t, filepath.Join(dir, "tech.pub")))
				if err != nil {
					t.Error(err)
					return
				}
				if v.OK() || v.Verified() {
					t.Errorf("verified: %+v", v)
				}
				if all := strings.Join(v.Failures, "\n"); !strings.Contains(all, c.want) {
					t.Errorf("failures %q lack %q", all, c.want)
				}
			})
		})
	}
}

// The signature file and the report themselves are read only when regular files: a FIFO in
// their place makes verification stop with an error, not hang.
func TestVerifyDoesNotHangOnSpecialFiles(t *testing.T) {
	dir, doc, sig, _ := signedFixture(t)
	fifo := filepath.Join(dir, "pipe")
	if err := syscall.Mkfifo(fifo, 0o644); err != nil {
		t.Skipf("mkfifo: %v", err)
	}
	for _, c := range []struct{ doc, sig string }{{doc, fifo}, {fifo, sig}, {doc, "/dev/zero"}, {"/dev/zero", sig}, {dir, sig}, {doc, dir}} {
		withTimeout(t, 10*time.Second, func() {
			_, err := Verify(c.doc, c.sig, nil)
			var ve *VerifyError
			if !errors.As(err, &ve) || !strings.Contains(err.Error(), rules.ErrNotRegular.Error()) {
				t.Errorf("Verify(%s, %s): err %v, want a *VerifyError: not a regular file", c.doc, c.sig, err)
			}
		})
	}
	for _, p := range []string{fifo, "/dev/zero", dir} {
		withTimeout(t, 10*time.Second, func() {
			if _, err := LoadPublicKey(p); !errors.Is(err, rules.ErrNotRegular) {
				t.Errorf("LoadPublicKey(%s): err %v, want rules.ErrNotRegular", p, err)
			}
			if _, err := LoadTrustedKeys(p); !errors.Is(err, rules.ErrNotRegular) {
				t.Errorf("LoadTrustedKeys(%s): err %v, want rules.ErrNotRegular", p, err)
			}
		})
	}
}

// resign rewrites the signature file with its first input pointing at target and signs it
// again with the fixture's key, as someone holding that key could.
func resign(t *testing.T, dir, sig, target string) {
	t.Helper()
	priv, err := LoadPrivateKey(filepath.Join(dir, "tech.key"))
	if err != nil {
		t.Fatal(err)
	}
	editSig(t, sig, func(s *SignatureFile) {
		s.Inputs[0].Path = target
		s.Signature = base64.StdEncoding.EncodeToString(ed25519.Sign(priv, s.Canonical()))
	})
}

// A file is hashed no further than the size it had when opened: one that holds more (it grew,
// or it is a kernel file that reports size 0) is an error, not an endless read.
func TestFileSHA256StopsAtTheSizeWhenOpened(t *testing.T) {
	const grows = "/proc/self/status" // Linux: a regular file of size 0 that reads as text
	if fi, err := os.Stat(grows); err != nil || !fi.Mode().IsRegular() || fi.Size() != 0 {
		t.Skipf("no %s of size 0 here", grows)
	}
	if _, err := FileSHA256(grows); !errors.Is(err, ErrChangedWhileRead) {
		t.Errorf("FileSHA256(%s): err %v, want ErrChangedWhileRead", grows, err)
	}
}
