package diagnose

import (
	"math"
	"math/rand/v2"
	"testing"
)

// The posterior is normalised over healthy, unexplained, every cause and every pair: no cause's
// marginal can exceed what healthy and unexplained leave, the largest single-port mass goes to
// healthy on a healthy port, and a missing column changes nothing but its own term.
func TestPosteriorNormalised(t *testing.T) {
	if len(AllCauses) != numCauses {
		t.Fatalf("numCauses %d, AllCauses has %d", numCauses, len(AllCauses))
	}
	p, r := testSetup(t, "400g-dp-16qam-cfec")
	for _, c := range []struct {
		name  string
		fault styleFault
	}{
		{"healthy", nil},
		{"osnr", func(i int, rng *rand.Rand, v *styleSample) { v.osnr -= 8.5 }},
		{"power", func(i int, rng *rand.Rand, v *styleSample) { v.rx -= 8.5 }},
	} {
		res := AnalyzePort(styleLog(t, 1, c.fault), p, nil, nil, r)
		rest := 1 - res.Posterior.Healthy - res.Posterior.Unexplained
		if rest < -1e-3 || rest > 1+1e-3 {
			t.Errorf("%s: healthy %.3f + unexplained %.3f outside 0…1", c.name, res.Posterior.Healthy, res.Posterior.Unexplained)
		}
		for id, v := range res.Analysis.Posterior {
			if v < 0 || v > rest+1e-3 {
				t.Errorf("%s: %s posterior %.4f, more than the %.4f healthy and unexplained leave", c.name, id, v, rest)
			}
		}
		if c.fault == nil && res.Posterior.Healthy < 0.9 {
			t.Errorf("healthy port: P(healthy) %.3f", res.Posterior.Healthy)
		}
		if c.fault != nil && res.Posterior.Healthy > 0.01 {
			t.Errorf("%s: P(healthy) %.3f on a failing port", c.name, res.Posterior.Healthy)
		}
	}
	// Marginalising: an observable left out contributes exactly nothing.
	o := observables{noise: noiseFailing, power: powerUnknown, osnr: osnrUnknown, tx: txUnknown}
	full := o
	full.power = powerNormal
	for _, id := range []CauseID{HypHealthy, CauseOSNRLow, CauseRxPowerLow} {
		d := full.symptomLogLik(id) - o.symptomLogLik(id)
		if want := math.Log(row4(powerLik, id)[powerNormal]); math.Abs(d-want) > 1e-12 {
			t.Errorf("%s: the power term adds %.6f, want ln P(normal | %s) = %.6f", id, d, id, want)
		}
	}
}
