package main

import (
	"path/filepath"
	"slices"
	"testing"

	"github.com/beatnote/beatnote/diagnose"
	"github.com/beatnote/beatnote/parse"
	"github.com/beatnote/beatnote/rules"
)

// TestEngineAgreesWithManifest runs the diagnosis engine (built-in rules, the sample's profile
// and plan) on every committed log: the verdict must be one the manifest accepts and the causes
// the manifest lists must come first, in its order. A failure here means the engine or the
// samples changed; regenerate the samples (go run ./samples/gen) only if the samples are wrong.
func TestEngineAgreesWithManifest(t *testing.T) {
	profs, err := rules.BuiltinProfiles()
	if err != nil {
		t.Fatal(err)
	}
	r, err := rules.DefaultRules()
	if err != nil {
		t.Fatal(err)
	}
	m := readManifest(t)
	for _, e := range m.Logs {
		t.Run(filepath.Base(e.File), func(t *testing.T) {
			ds, err := parse.ReadPaths([]string{filepath.Join("..", e.File)}, parse.Options{})
			if err != nil {
				t.Fatal(err)
			}
			prof, err := rules.ProfileByID(profs, e.Profile)
			if err != nil {
				t.Fatal(err)
			}
			plan, err := rules.LoadPlan(filepath.Join("..", e.Plan), profs...)
			if err != nil {
				t.Fatal(err)
			}
			res, err := diagnose.Analyze(ds, diagnose.Config{Rules: r, Default: diagnose.Setup{Profile: prof, Plan: &plan}})
			if err != nil {
				t.Fatal(err)
			}
			if len(res.Ports) != 1 {
				t.Fatalf("%d ports", len(res.Ports))
			}
			p := res.Ports[0]
			var got []diagnose.CauseID
			for _, c := range p.Causes {
				got = append(got, c.ID)
			}
			if !slices.Contains(e.Acceptable, string(p.Verdict)) {
				t.Errorf("verdict %s, manifest accepts %v (causes %v)", p.Verdict, e.Acceptable, got)
			}
			if len(got) < len(e.Causes) || !slices.Equal(got[:len(e.Causes)], e.Causes) {
				t.Errorf("causes %v, manifest wants %v first", got, e.Causes)
			}
		})
	}
}
