package main

import (
	"bytes"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/beatnote/beatnote/parse"
	"github.com/beatnote/beatnote/rules"
)

// TestDeterministicAndComplete: the same seed writes the same bytes, every row has all sixteen
// canonical columns, the reader takes every row, and some ports are in trouble.
func TestDeterministicAndComplete(t *testing.T) {
	dir := t.TempDir()
	a, b := filepath.Join(dir, "a.csv"), filepath.Join(dir, "b.csv")
	for _, p := range []string{a, b} {
		if err := writeFleet(p, 40, 60, 0.2, 9, false); err != nil {
			t.Fatal(err)
		}
	}
	da, _ := os.ReadFile(a)
	db, _ := os.ReadFile(b)
	if !bytes.Equal(da, db) {
		t.Fatal("same seed, different bytes")
	}
	if err := writeFleet(b, 40, 60, 0.2, 10, false); err != nil {
		t.Fatal(err)
	}
	if db, _ = os.ReadFile(b); bytes.Equal(da, db) {
		t.Fatal("seeds 9 and 10 gave the same bytes")
	}
	header := strings.SplitN(string(da), "\n", 2)[0]
	if n := len(strings.Split(header, ",")); n != 16 {
		t.Fatalf("header has %d columns: %s", n, header)
	}
	ds, err := parse.ReadPaths([]string{a}, parse.Options{})
	if err != nil {
		t.Fatal(err)
	}
	in := ds.Inputs[0]
	if in.RowsRead != 40*60 || in.RowsUsed != in.RowsRead || len(ds.Series) != 40 {
		t.Fatalf("accounting %+v, %d ports", in, len(ds.Series))
	}
	// The port map names every port's own profile, so triage need not assume one.
	pm, err := rules.LoadPortMap(filepath.Join(dir, "a.portmap.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	for k, s := range ds.Series {
		e, ok := pm.Lookup(s.Port)
		if !ok || e.Profile == "" {
			t.Fatalf("port %s not in the map %v", s.Port, e)
		}
		if k == 0 && e.Profile != spec(0, 60, 0.2, 9).ProfileID {
			t.Errorf("port %s mapped to %s", s.Port, e.Profile)
		}
	}
	profiles := map[string]bool{}
	for _, e := range pm.Entries {
		profiles[e.Profile] = true
	}
	if len(pm.Entries) != 40 || len(profiles) < 2 {
		t.Errorf("map: %d entries, %d profiles", len(pm.Entries), len(profiles))
	}
	truth, _ := os.ReadFile(a + ".truth.json")
	if !bytes.Contains(truth, []byte(`"causes"`)) {
		t.Fatalf("no troubled port at 20 %%: %s", truth)
	}

	files := filepath.Join(dir, "many")
	if err := writeFiles(files, 30, 200, 0.1, 9); err != nil {
		t.Fatal(err)
	}
	ds, err = parse.ReadPaths([]string{files}, parse.Options{})
	if err != nil {
		t.Fatal(err)
	}
	if len(ds.Inputs) != 30 || len(ds.Series) != 30 {
		t.Fatalf("%d inputs, %d ports", len(ds.Inputs), len(ds.Series))
	}
	if _, err := rules.LoadPortMap(files + ".portmap.yaml"); err != nil {
		t.Fatal(err)
	}
	if _, err := os.Stat(files + ".truth.json"); err != nil {
		t.Fatal(err)
	}
}
