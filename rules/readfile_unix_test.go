//go:build unix

package rules

import (
	"errors"
	"os"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"
)

// A FIFO without a writer, a device that never ends and a folder given as a configuration file
// fail at once with an error that names the file and says what it is: the open does not wait
// for a writer, and nothing but a regular file is read.
func TestConfigReadsRegularFilesOnly(t *testing.T) {
	dir := t.TempDir()
	fifo := filepath.Join(dir, "plan.fifo")
	if err := syscall.Mkfifo(fifo, 0o600); err != nil {
		t.Skipf("mkfifo: %v", err)
	}
	paths := map[string]string{fifo: "a FIFO", dir: "a folder"}
	if _, err := os.Stat("/dev/zero"); err == nil {
		paths["/dev/zero"] = "a device"
	}
	for name, load := range configLoaders {
		for p, kind := range paths {
			t.Run(name+" "+kind, func(t *testing.T) {
				done := make(chan error, 1)
				go func() { done <- load(p) }()
				var err error
				select {
				case err = <-done:
				case <-time.After(5 * time.Second):
					t.Fatalf("loading %s did not return within 5 s", p)
				}
				var fe *FileError
				if !errors.Is(err, ErrNotRegular) || !errors.As(err, &fe) || fe.File != p {
					t.Fatalf("err = %v, want a FileError for %s wrapping ErrNotRegular", err, p)
				}
				if !strings.Contains(err.Error(), kind) {
					t.Errorf("message %q does not say the file is %s", err, kind)
				}
			})
		}
	}
}
