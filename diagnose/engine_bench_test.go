package diagnose_test

import (
	"testing"

	"github.com/beatnote/beatnote/diagnose"
	"github.com/beatnote/beatnote/samples/synth"
)

// BenchmarkAnalyzePort measures the per-port cost of the engine on a day of one-minute samples
// with every column (no plan).
func BenchmarkAnalyzePort(b *testing.B) {
	c, err := synth.Make(synth.Spec{Seed: 1, Causes: []diagnose.CauseID{diagnose.CauseSOPTransient}, Severity: 0.5})
	if err != nil {
		b.Fatal(err)
	}
	r := mustRules(b)
	b.ReportAllocs()
	for b.Loop() {
		diagnose.AnalyzePort(c.Series, c.Profile, nil, nil, r)
	}
}
