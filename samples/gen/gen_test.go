package main

import (
	"bytes"
	"go.yaml.in/yaml/v3"
	"math"
	"os"
	"path/filepath"
	"slices"
	"testing"

	"github.com/beatnote/beatnote/parse"
	"github.com/beatnote/beatnote/rules"
	"github.com/beatnote/beatnote/samples/synth"
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
// manifest names files that exist; the logs stay under 2 MB in all.
func TestPlansLoad(t *testing.T) {
	profs, err := rules.BuiltinProfiles()
	if err != nil {
		t.Fatal(err)
	}
	for _, pm := range []string{"../portmap.yaml", "../network/portmap.yaml"} {
		if _, err := rules.LoadPortMap(pm, profs...); err != nil {
			t.Fatal(err)
		}
	}
	m := readManifest(t)
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

// TestLogsReadBack reads every committed log with the parse package and compares the series with
// the one synth makes for it: every row used, none rejected, every value equal within the
// rounding its format's units impose (mW printed to 5 significant digits, a wavelength to 8,
// linear Q to 5). This checks the writers against the reader of docs/formats.md.
func TestLogsReadBack(t *testing.T) {
	for _, ct := range circuits {
		t.Run(ct.file, func(t *testing.T) {
			ds, err := parse.ReadPaths([]string{filepath.Join("..", "logs", ct.file)}, parse.Options{})
			if err != nil {
				t.Fatal(err)
			}
			in := ds.Inputs[0]
			if in.RowsRejected != 0 || in.RowsRead != in.RowsUsed || len(ds.Rejected) != 0 {
				t.Fatalf("accounting %+v, rejected %v", in, ds.Rejected)
			}
			if len(ds.Series) != 1 || ds.Series[0].Port != ct.port {
				t.Fatalf("ports %v", ds.Series)
			}
			c, err := synth.Make(ct.spec())
			if err != nil {
				t.Fatal(err)
			}
			got, want := ds.Series[0].Decoded(), c.Series
			if !slices.Equal(got.TimesMs, want.TimesMs) {
				t.Fatalf("times differ: %d vs %d samples", got.Len(), want.Len())
			}
			for q := range parse.NumQuantities {
				for i := range want.Len() {
					w := want.Values[q][i]
					var g float64
					if got.Values[q] == nil {
						g = math.NaN()
					} else {
						g = got.Values[q][i]
					}
					tol := 1e-3 // dB, ps, MHz…: converted units lose less than this
					if q == parse.PreFECBER || q == parse.PostFECBER {
						tol = 1e-9 * math.Abs(w) // ratios are written exactly
					}
					if math.IsNaN(w) != math.IsNaN(g) || math.Abs(g-w) > tol {
						t.Fatalf("%s sample %d: read %v, made %v", q, i, g, w)
					}
				}
			}
		})
	}
}

// readManifest reads the committed samples/manifest.yaml.
func readManifest(t *testing.T) manifest {
	t.Helper()
	data, err := os.ReadFile("../manifest.yaml")
	if err != nil {
		t.Fatal(err)
	}
	var m manifest
	if err := yaml.Unmarshal(data, &m); err != nil {
		t.Fatal(err)
	}
	return m
}
