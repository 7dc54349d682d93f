package main

import (
	"bytes"
	"encoding/json"
	"os"
	"path/filepath"
	"testing"

	"github.com/beatnote/beatnote/rules"
)

// TestReproducesCommittedFiles runs the generator into a temporary folder and compares every file
// with the committed one under samples/, byte for byte.
func TestReproducesCommittedFiles(t *testing.T) {
	dir := t.TempDir()
	if err := generate(dir); err != nil {
		t.Fatal(err)
	}
	n := 0
	err := filepath.Walk(dir, func(path string, info os.FileInfo, err error) error {
		if err != nil || info.IsDir() {
			return err
		}
		rel, _ := filepath.Rel(dir, path)
		got, _ := os.ReadFile(path)
		want, err := os.ReadFile(filepath.Join("..", rel))
		if err != nil {
			t.Errorf("%s: not committed: %v", rel, err)
			return nil
		}
		if !bytes.Equal(got, want) {
			t.Errorf("%s differs from a fresh run of the generator (go run ./samples/gen)", rel)
		}
		n++
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	if n < len(circuits)*2+2 {
		t.Errorf("only %d files generated", n)
	}
}

// TestPlansLoad: every plan and the port map load with the rules package's loaders, and the
// manifest names files that exist; the logs stay under 2 MB in all (issue 2).
func TestPlansLoad(t *testing.T) {
	profs, err := rules.BuiltinProfiles()
	if err != nil {
		t.Fatal(err)
	}
	if _, err := rules.LoadPortMap("../portmap.yaml", profs...); err != nil {
		t.Fatal(err)
	}
	data, err := os.ReadFile("../manifest.json")
	if err != nil {
		t.Fatal(err)
	}
	var m manifest
	if err := json.Unmarshal(data, &m); err != nil {
		t.Fatal(err)
	}
	total := int64(0)
	for _, e := range m.Logs {
		if _, err := rules.LoadPlan(filepath.Join("..", e.Plan), profs...); err != nil {
			t.Errorf("%s: %v", e.Plan, err)
		}
		st, err := os.Stat(filepath.Join("..", e.File))
		if err != nil {
			t.Fatal(err)
		}
		total += st.Size()
	}
	if total >= 2<<20 {
		t.Errorf("logs total %d bytes, over 2 MB", total)
	}
}
