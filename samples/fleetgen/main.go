// Command fleetgen writes the fleet-scale inputs of samples/bench.sh (docs/performance.md),
// deterministically by seed, from samples/synth: a canonical CSV of 700 ports × 1440 one-minute
// samples with all sixteen columns (about one million rows), a few per cent of the ports in
// trouble; and, with -files-dir, the second shape: 5,000 small files of 200 rows each (one port
// per file).
//
//	go run ./samples/fleetgen                       # out/fleet.csv
//	go run ./samples/fleetgen -files-dir out/fleet-files
//	go run ./samples/fleetgen -out out/fleet.jsonl          # the same rows as JSON Lines
//	go run ./samples/fleetgen -out out/fleet.json           # as OpenConfig-shaped JSON Lines
//
// Its output is never committed (out/ is scratch). The list of troubled ports and their causes is
// written beside each output as <out>.truth.json and <files-dir>.truth.json, and a port map
// giving every port its module profile as <out without .csv>.portmap.yaml and
// <files-dir>.portmap.yaml (triage refuses to guess a profile).
package main

import (
	"encoding/json"
	"flag"
	"fmt"
	"math/rand/v2"
	"os"
	"path/filepath"
	"runtime"
	"strings"
	"sync"
	"time"

	"github.com/beatnote/beatnote/diagnose"
	"github.com/beatnote/beatnote/parse"
	"github.com/beatnote/beatnote/samples/synth"
	"go.yaml.in/yaml/v3"
)

var profiles = []string{"400g-dp-16qam-cfec", "400g-dp-16qam-ofec", "200g-dp-16qam", "100g-dp-qpsk", "800g-dp-16qam"}

// truth is what fleetgen injected into one troubled port.
type truth struct {
	Port     string             `json:"port"`
	Profile  string             `json:"profile"`
	Causes   []diagnose.CauseID `json:"causes"`
	Severity float64            `json:"severity"`
	Verdict  string             `json:"verdict"`
}

func main() {
	out := flag.String("out", "out/fleet.csv", "the fleet file to write: CSV, or JSON Lines when it ends in .jsonl, or OpenConfig-shaped JSON when it ends in .json")
	ports := flag.Int("ports", 700, "ports in the fleet CSV")
	samples := flag.Int("samples", 1440, "one-minute samples per port in the fleet CSV")
	trouble := flag.Float64("trouble", 0.04, "fraction of ports in trouble")
	seed := flag.Int64("seed", 1, "seed; the same seed writes the same bytes")
	filesDir := flag.String("files-dir", "", "also write the many-small-files shape into this folder")
	files := flag.Int("files", 5000, "files in the many-small-files shape")
	rows := flag.Int("rows", 200, "rows (samples of one port) per small file")
	byPort := flag.Bool("by-port", false, "write the fleet file's rows port after port (grouped by port) instead of sample time after sample time; CSV and JSON Lines")
	flag.Parse()
	start := time.Now()
	if *out != "" {
		if err := writeFleet(*out, *ports, *samples, *trouble, *seed, *byPort); err != nil {
			fmt.Fprintln(os.Stderr, "fleetgen:", err)
			os.Exit(1)
		}
		fmt.Fprintf(os.Stderr, "fleetgen: wrote %s (%d ports × %d samples) in %v\n", *out, *ports, *samples, time.Since(start).Round(time.Millisecond))
	}
	if *filesDir != "" {
		t := time.Now()
		if err := writeFiles(*filesDir, *files, *rows, *trouble, *seed); err != nil {
			fmt.Fprintln(os.Stderr, "fleetgen:", err)
			os.Exit(1)
		}
		fmt.Fprintf(os.Stderr, "fleetgen: wrote %d files of %d rows into %s in %v\n", *files, *rows, *filesDir, time.Since(t).Round(time.Millisecond))
	}
}

// spec draws the spec of port k: its profile, and for a fraction trouble of the ports one cause
// (one in five of them two) at a random severity.
func spec(k int, n int, trouble float64, seed int64) synth.Spec {
	rng := rand.New(rand.NewPCG(uint64(seed), uint64(k)))
	s := synth.Spec{Seed: seed*1_000_003 + int64(k), ProfileID: profiles[k%len(profiles)], Samples: n,
		Port: fmt.Sprintf("NE%03d-%d/%d/C%d", k/16+1, k%16/4+1, k%4+1, 1), Circuit: fmt.Sprintf("FLT-%05d", k+1)}
	if rng.Float64() < trouble {
		pick := func() diagnose.CauseID {
			for {
				c := synth.AllCauses[rng.IntN(len(synth.AllCauses))]
				if c != diagnose.CauseCDOverLimit || s.ProfileID == "400g-dp-16qam-cfec" {
					return c
				}
			}
		}
		s.Causes = []diagnose.CauseID{pick()}
		if rng.IntN(5) == 0 {
			if c := pick(); c != s.Causes[0] {
				s.Causes = append(s.Causes, c)
			}
		}
		s.Severity = rng.Float64()
	}
	return s
}

// portMapPath is where the port map of the output at path goes: beside it, never inside a
// folder triage reads.
func portMapPath(path string) string {
	path = filepath.Clean(path)
	return strings.TrimSuffix(path, filepath.Ext(path)) + ".portmap.yaml"
}

// writePortMap writes a port map (docs/rules.md) giving each port its profile, exactly.
func writePortMap(path string, ports, profiles []string) error {
	type entry struct {
		Port    string `yaml:"port"`
		Profile string `yaml:"profile"`
	}
	doc := struct {
		Ports []entry `yaml:"ports"`
	}{}
	for i := range ports {
		doc.Ports = append(doc.Ports, entry{ports[i], profiles[i]})
	}
	y, err := yaml.Marshal(doc)
	if err != nil {
		return err
	}
	return os.WriteFile(path, append([]byte("# Written by samples/fleetgen: each fleet port and its module profile.\n"), y...), 0o644)
}

// makeAll builds n ports in parallel, in order, and the port map of them at mapPath.
func makeAll(n, samples int, trouble float64, seed int64, mapPath string) ([]*parse.Series, []truth, error) {
	series := make([]*parse.Series, n)
	truths := make([]*truth, n)
	errs := make([]error, n)
	var wg sync.WaitGroup
	next := make(chan int)
	for range runtime.GOMAXPROCS(0) {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for k := range next {
				sp := spec(k, samples, trouble, seed)
				c, err := synth.Make(sp)
				if err != nil {
					errs[k] = err
					continue
				}
				series[k] = c.Series
				if len(c.Causes) > 0 {
					truths[k] = &truth{Port: sp.Port, Profile: sp.ProfileID, Causes: c.Causes, Severity: sp.Severity, Verdict: string(c.Verdict)}
				}
			}
		}()
	}
	for k := range n {
		next <- k
	}
	close(next)
	wg.Wait()
	var out []truth
	names, profs := make([]string, n), make([]string, n)
	for k := range n {
		if errs[k] != nil {
			return nil, nil, errs[k]
		}
		if truths[k] != nil {
			out = append(out, *truths[k])
		}
		names[k], profs[k] = series[k].Port, spec(k, samples, trouble, seed).ProfileID
	}
	return series, out, writePortMap(mapPath, names, profs)
}

func writeTruth(path string, t []truth) error {
	js, err := json.MarshalIndent(t, "", "  ")
	if err != nil {
		return err
	}
	return os.WriteFile(path, append(js, '\n'), 0o644)
}

func writeFleet(path string, ports, samples int, trouble float64, seed int64, byPort bool) error {
	if byPort && filepath.Ext(path) == ".json" {
		return fmt.Errorf("-by-port writes CSV or JSON Lines, not OpenConfig JSON (%s)", path)
	}
	if err := os.MkdirAll(filepath.Dir(path), 0o755); err != nil {
		return err
	}
	series, truths, err := makeAll(ports, samples, trouble, seed, portMapPath(path))
	if err != nil {
		return err
	}
	f, err := os.Create(path)
	if err != nil {
		return err
	}
	switch filepath.Ext(path) {
	case ".jsonl":
		if !byPort {
			err = synth.WriteJSONLines(f, series)
			break
		}
		for _, s := range series {
			if err = synth.WriteJSONLines(f, []*parse.Series{s}); err != nil {
				break
			}
		}
	case ".json":
		ports := make([]synth.OpenConfigPort, len(series))
		for k, s := range series {
			ports[k] = synth.OpenConfigPort{Series: s, ChannelIndex: k + 1}
		}
		err = synth.WriteOpenConfig(f, ports)
	default:
		err = synth.WriteCSV(f, series, synth.CSVStyle{ByPort: byPort})
	}
	if err != nil {
		f.Close()
		return err
	}
	if err := f.Close(); err != nil {
		return err
	}
	return writeTruth(path+".truth.json", truths)
}

func writeFiles(dir string, files, rows int, trouble float64, seed int64) error {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return err
	}
	series, truths, err := makeAll(files, rows, trouble, seed+1, portMapPath(dir))
	if err != nil {
		return err
	}
	for k, s := range series {
		f, err := os.Create(filepath.Join(dir, fmt.Sprintf("port-%05d.csv", k+1)))
		if err != nil {
			return err
		}
		err = synth.WriteCSV(f, []*parse.Series{s}, synth.CSVStyle{})
		if cerr := f.Close(); err == nil {
			err = cerr
		}
		if err != nil {
			return err
		}
	}
	// The truth goes beside the folder, not in it: triage reads every .json inside.
	return writeTruth(filepath.Clean(dir)+".truth.json", truths)
}
