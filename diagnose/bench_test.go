package diagnose_test

import (
	"fmt"
	"math/rand/v2"
	"sync"
	"testing"

	"github.com/beatnote/beatnote/diagnose"
	"github.com/beatnote/beatnote/parse"
	"github.com/beatnote/beatnote/samples/synth"
)

// fleetProfiles are the built-in profiles the benchmark fleet rotates through.
var fleetProfiles = []string{"400g-dp-16qam-cfec", "400g-dp-16qam-ofec", "200g-dp-16qam", "100g-dp-qpsk", "800g-dp-16qam"}

// fleetCases makes n synthetic ports of samples one-minute samples, every fourth with one fault
// (the causes in turn), the profiles in turn. Deterministic.
func fleetCases(tb testing.TB, n, samples int) []synth.Case {
	tb.Helper()
	out := make([]synth.Case, n)
	for k := range n {
		sp := synth.Spec{Seed: int64(1000 + k), ProfileID: fleetProfiles[k%len(fleetProfiles)], Samples: samples,
			Port: fmt.Sprintf("BN%03d-1/%d/C1", k/8+1, k%8+1)}
		if k%4 == 3 {
			rng := rand.New(rand.NewPCG(uint64(k), 7))
			c := synth.AllCauses[(k/4)%len(synth.AllCauses)]
			if c == diagnose.CauseCDOverLimit && sp.ProfileID != "400g-dp-16qam-cfec" {
				c = diagnose.CausePMD
			}
			sp.Causes, sp.Severity = []diagnose.CauseID{c}, rng.Float64()
		}
		c, err := synth.Make(sp)
		if err != nil {
			tb.Fatalf("synth.Make(%+v): %v", sp, err)
		}
		out[k] = c
	}
	return out
}

// fleetDataset is fleetCases as a Dataset, with a Config giving every port its own profile and
// (for every other port) its plan.
func fleetDataset(tb testing.TB, n, samples int, workers int) (*parse.Dataset, diagnose.Config) {
	cases := fleetCases(tb, n, samples)
	ds := &parse.Dataset{}
	setups := map[string]diagnose.Setup{}
	for k, c := range cases {
		ds.Series = append(ds.Series, c.Series)
		st := diagnose.Setup{Profile: c.Profile}
		if k%2 == 0 {
			plan := c.Plan
			st.Plan = &plan
		}
		setups[c.Series.Port] = st
	}
	ds.Inputs = []parse.InputStats{{File: "fleet", RowsRead: n * samples, RowsUsed: n * samples}}
	cfg := diagnose.Config{Version: "bench", Rules: mustRules(tb), Default: setups[cases[0].Series.Port], Workers: workers,
		Lookup: func(port string) (diagnose.Setup, bool) { st, ok := setups[port]; return st, ok }}
	return ds, cfg
}

var (
	benchOnce sync.Once
	benchDS   *parse.Dataset
	benchCfg  diagnose.Config
)

// benchFleet is the 96-port fleet, made once for all benchmarks.
func benchFleet(b *testing.B) (*parse.Dataset, diagnose.Config) {
	benchOnce.Do(func() { benchDS, benchCfg = fleetDataset(b, 96, 1440, 0) })
	if benchDS == nil {
		b.Fatal("the benchmark fleet could not be made")
	}
	return benchDS, benchCfg
}

func benchAnalyze(b *testing.B, workers int) {
	ds, cfg := benchFleet(b)
	cfg.Workers = workers
	cfg.CorrelationsOnDemand = true // as the command line judges
	samples := 0
	for _, s := range ds.Series {
		samples += s.Len()
	}
	b.ReportAllocs()
	b.ResetTimer()
	for b.Loop() {
		if _, err := diagnose.Analyze(ds, cfg); err != nil {
			b.Fatal(err)
		}
	}
	per := float64(b.Elapsed().Nanoseconds()) / float64(b.N)
	b.ReportMetric(per/float64(len(ds.Series)), "ns/port")
	b.ReportMetric(per/float64(samples), "ns/sample")
}

// BenchmarkAnalyzeFleet judges 96 ports × 1440 one-minute samples (every column, a quarter of
// them with a fault, half with a link plan) on GOMAXPROCS workers. ns/port × 700 is the
// diagnosis share of triaging the 1M-row fleet file (samples/bench.sh).
func BenchmarkAnalyzeFleet(b *testing.B) { benchAnalyze(b, 0) }

// BenchmarkAnalyzeFleetOneWorker is the same on one goroutine.
func BenchmarkAnalyzeFleetOneWorker(b *testing.B) { benchAnalyze(b, 1) }

// BenchmarkAnalyzeSmallPorts judges 5,000-file-shaped ports: 200 samples each.
func BenchmarkAnalyzeSmallPorts(b *testing.B) { benchSmall(b, 200) }

// BenchmarkAnalyzeTinyPorts judges 20,000-file-shaped ports: 50 samples each.
func BenchmarkAnalyzeTinyPorts(b *testing.B) { benchSmall(b, 50) }

func benchSmall(b *testing.B, samples int) {
	ds, cfg := fleetDataset(b, 200, samples, 0)
	cfg.CorrelationsOnDemand = true // as the command line judges
	b.ReportAllocs()
	b.ResetTimer()
	for b.Loop() {
		if _, err := diagnose.Analyze(ds, cfg); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/200, "ns/port")
}
