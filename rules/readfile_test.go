package rules

import (
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// Every configuration loader reads with a bound: a file above MaxConfigBytes fails with
// ErrTooLarge naming the file, instead of exhausting memory.
func TestConfigReadsAreBounded(t *testing.T) {
	big := filepath.Join(t.TempDir(), "big.yaml")
	// A YAML comment line repeated past the limit: valid YAML, only too large.
	line := "# padding\n"
	if err := os.WriteFile(big, []byte(strings.Repeat(line, MaxConfigBytes/len(line)+1)), 0o644); err != nil {
		t.Fatal(err)
	}
	for name, load := range configLoaders {
		t.Run(name, func(t *testing.T) {
			err := load(big)
			var fe *FileError
			if !errors.Is(err, ErrTooLarge) || !errors.As(err, &fe) || fe.File != big {
				t.Fatalf("err = %v, want a FileError for %s wrapping ErrTooLarge", err, big)
			}
			if !strings.Contains(err.Error(), "16 MiB") {
				t.Errorf("message %q does not state the limit", err)
			}
		})
	}
}

// configLoaders are the loaders of every configuration file a command takes (--plan, --map,
// --rules, --profiles).
var configLoaders = map[string]func(string) error{
	"plan":     func(p string) error { _, err := LoadPlan(p); return err },
	"port map": func(p string) error { _, err := LoadPortMap(p); return err },
	"rules":    func(p string) error { _, err := LoadRules(p); return err },
	"profiles": func(p string) error { _, err := LoadProfiles(p); return err },
}

// A file just under the limit is read (and then judged on its content).
func TestConfigReadUnderLimit(t *testing.T) {
	p := filepath.Join(t.TempDir(), "ok.yaml")
	if err := os.WriteFile(p, []byte("x: 1\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	data, err := ReadConfig(p)
	if err != nil || string(data) != "x: 1\n" {
		t.Fatalf("ReadConfig = %q, %v", data, err)
	}
	if _, err := ReadConfig(filepath.Join(t.TempDir(), "missing.yaml")); err == nil || !strings.Contains(err.Error(), "missing.yaml") {
		t.Errorf("missing file: err = %v, want one naming the file", err)
	}
}
