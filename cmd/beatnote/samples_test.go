package main

import (
	"encoding/json"
	"go.yaml.in/yaml/v3"
	"os"
	"path/filepath"
	"slices"
	"testing"
)

// The demo logs in samples/ were generated for a stated verdict and causes (samples/manifest.yaml).
// Triage with the demo port map must give each port an acceptable verdict, its intended top
// cause on top, and every intended cause listed.
func TestTriageOnDemoSamplesMatchesManifest(t *testing.T) {
	root := filepath.Join("..", "..", "samples")
	raw, err := os.ReadFile(filepath.Join(root, "manifest.yaml"))
	if err != nil {
		t.Skipf("no demo samples: %v", err)
	}
	var man struct {
		Logs []struct {
			File       string   `yaml:"file"`
			Port       string   `yaml:"port"`
			Acceptable []string `yaml:"acceptable_verdicts"`
			Causes     []string `yaml:"causes"`
		} `yaml:"logs"`
	}
	if err := yaml.Unmarshal(raw, &man); err != nil {
		t.Fatal(err)
	}
	code, out, errw := runCLI(t, "triage", filepath.Join(root, "logs"), "--map", filepath.Join(root, "portmap.yaml"), "--format", "json")
	if code != 1 {
		t.Fatalf("exit %d, want 1 (%s)", code, errw)
	}
	var res struct {
		Ports []struct {
			Port    string `json:"port"`
			Verdict string `json:"verdict"`
			Causes  []struct {
				ID string `json:"id"`
			} `json:"causes"`
		} `json:"ports"`
	}
	if err := json.Unmarshal([]byte(out), &res); err != nil {
		t.Fatal(err)
	}
	for _, want := range man.Logs {
		i := slices.IndexFunc(res.Ports, func(p struct {
			Port    string `json:"port"`
			Verdict string `json:"verdict"`
			Causes  []struct {
				ID string `json:"id"`
			} `json:"causes"`
		}) bool {
			return p.Port == want.Port
		})
		if i < 0 {
			t.Errorf("%s (%s): port missing from triage", want.Port, want.File)
			continue
		}
		got := res.Ports[i]
		var ids []string
		for _, c := range got.Causes {
			ids = append(ids, c.ID)
		}
		if !slices.Contains(want.Acceptable, got.Verdict) {
			t.Errorf("%s (%s): verdict %s, want one of %v", want.Port, want.File, got.Verdict, want.Acceptable)
		}
		if len(want.Causes) == 0 && len(ids) != 0 {
			t.Errorf("%s (%s): causes %v, want none", want.Port, want.File, ids)
		}
		if len(want.Causes) > 0 && (len(ids) == 0 || ids[0] != want.Causes[0]) {
			t.Errorf("%s (%s): causes %v, want %s on top", want.Port, want.File, ids, want.Causes[0])
		}
		for _, c := range want.Causes {
			if !slices.Contains(ids, c) {
				t.Errorf("%s (%s): causes %v lack %s", want.Port, want.File, ids, c)
			}
		}
	}
}
