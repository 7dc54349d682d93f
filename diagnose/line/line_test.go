package line

import (
	"math"
	"testing"
	"time"

	"github.com/beatnote/beatnote/diagnose"
	"github.com/beatnote/beatnote/parse"
	"github.com/beatnote/beatnote/rules"
)

// Reference values computed with Python's math module: the binomial tail
// sum(comb(n, x)·p^x·(1−p)^(n−x) for x ≥ k), and for unequal p by enumerating all 2^n outcomes.
func TestPoissonBinomialTail(t *testing.T) {
	for _, c := range []struct {
		p    []float64
		k    int
		want float64
	}{
		{[]float64{0.0138, 0.0138, 0.0138, 0.0138}, 4, 3.6267393599999996e-08},
		{[]float64{0.0138, 0.0138, 0.0138, 0.0138}, 2, 0.0011217242261807997},
		{[]float64{0.3, 0.3, 0.3, 0.3, 0.3, 0.3, 0.3, 0.3, 0.3, 0.3}, 3, 0.6172172135999995},
		{[]float64{0.1, 0.2, 0.5, 0.05}, 2, 0.17450000000000004},
		{[]float64{0.1, 0.2}, 0, 1},
		{[]float64{0.1, 0.2}, 3, 0},
	} {
		if got := PoissonBinomialTail(c.p, c.k); math.Abs(got-c.want) > 1e-12*math.Max(1, c.want) && math.Abs(got-c.want)/c.want > 1e-9 {
			t.Errorf("PoissonBinomialTail(%v, %d) = %.17g, want %.17g", c.p, c.k, got, c.want)
		}
	}
}

// port makes a channel of n one-minute samples with an analysis holding the given runs.
func port(name, line string, n int, an diagnose.PortAnalysis) diagnose.PortResult {
	s := &parse.Series{Port: name}
	for i := range n {
		s.TimesMs = append(s.TimesMs, time.Date(2026, 3, 14, 0, i, 0, 0, time.UTC).UnixMilli())
	}
	an.Series = s
	return diagnose.PortResult{Port: name, Line: line, Analysis: &an}
}

func minute(m int) int64 { return time.Date(2026, 3, 14, 0, m, 0, 0, time.UTC).UnixMilli() }

// Channels that lose light in the same minute make one line-outage; losses at unrelated times
// make none; the confidence is 1 − the Bonferroni-bounded chance, recomputed here by hand.
func TestOutageCoincidence(t *testing.T) {
	r, err := rules.DefaultRules()
	if err != nil {
		t.Fatal(err)
	}
	dark := func(from int) diagnose.PortAnalysis {
		return diagnose.PortAnalysis{DarkRuns: []diagnose.Interval{{FromMs: minute(from), ToMs: minute(from + 30), Samples: 31}}}
	}
	res := &diagnose.Result{Ports: []diagnose.PortResult{
		port("a/1", "L1", 360, dark(200)), port("a/2", "L1", 360, dark(200)), port("a/3", "L1", 360, dark(201)),
		port("a/4", "L1", 360, diagnose.PortAnalysis{}),
		port("b/1", "L2", 360, dark(20)), port("b/2", "L2", 360, dark(150)), port("b/3", "L2", 360, dark(300)),
		port("c/1", "", 360, dark(200)),
	}}
	Reason(res, r)
	if len(res.Lines) != 2 || res.Lines[0].Line != "L1" || res.Lines[1].Line != "L2" {
		t.Fatalf("lines %+v", res.Lines)
	}
	l1 := res.Lines[0]
	if len(l1.Findings) != 1 || l1.Findings[0].ID != diagnose.LineOutage {
		t.Fatalf("L1 findings %+v", l1.Findings)
	}
	f := l1.Findings[0]
	if len(f.PortsAffected) != 3 || f.From != "2026-03-14T03:20:00Z" || f.To != "2026-03-14T03:51:00Z" {
		t.Errorf("finding %+v", f)
	}
	// Each of 3 channels: 1 loss in 359 min, window 2 min: p = 1 − exp(−2/359); the fourth never
	// loses light (p = 0). 179.5 windows. Hand computation of 1 − 179.5·p³.
	p := -math.Expm1(-2.0 / 359)
	if want := 1 - 179.5*p*p*p; math.Abs(f.Confidence-want) > 1e-12 {
		t.Errorf("confidence %.15g, want %.15g", f.Confidence, want)
	}
	if len(res.Lines[1].Findings) != 0 {
		t.Errorf("L2: losses hours apart gave %+v", res.Lines[1].Findings)
	}
	if refs := res.Ports[0].LineFindings; len(refs) != 1 || refs[0].ID != diagnose.LineOutage || refs[0].Line != "L1" {
		t.Errorf("port a/1 points at %+v", refs)
	}
	if len(res.Ports[3].LineFindings) != 0 || len(res.Ports[7].LineFindings) != 0 {
		t.Errorf("unaffected ports point at findings")
	}
}

// Two channels of a busy line that each flap often coinciding once is no line event: their own
// change rates make the coincidence likely.
func TestBusyChannelsCoincideByChance(t *testing.T) {
	r, _ := rules.DefaultRules()
	var a, b diagnose.PortAnalysis
	for m := 0; m < 350; m += 7 {
		a.SOPSpikes = append(a.SOPSpikes, diagnose.Interval{FromMs: minute(m), ToMs: minute(m), Peak: 100})
	}
	for m := 3; m < 350; m += 11 {
		b.SOPSpikes = append(b.SOPSpikes, diagnose.Interval{FromMs: minute(m), ToMs: minute(m), Peak: 100})
	}
	res := &diagnose.Result{Ports: []diagnose.PortResult{port("a", "L", 360, a), port("b", "L", 360, b)}}
	Reason(res, r)
	if len(res.Lines[0].Findings) != 0 {
		t.Errorf("chance coincidences made %+v", res.Lines[0].Findings)
	}
}

// The line's mean DGD pools every sample of every channel (ITU-T G.650.2: the average over time
// and wavelength), and its Maxwellian tail at the smallest tolerance. Reference tail from
// Python's math module: P(τ > x) = erfc(u/√2) + √(2/π)·u·exp(−u²/2), u = x/a,
// a = mean/(2·√(2/π)) (the Maxwell distribution, e.g. scipy.stats.maxwell.sf).
func TestPooledPMD(t *testing.T) {
	r, _ := rules.DefaultRules()
	nan := math.NaN()
	mk := func(name string, dgd []float64, tol float64) diagnose.PortResult {
		p := port(name, "L", len(dgd), diagnose.PortAnalysis{})
		p.Analysis.Series.Values[parse.DGDps] = dgd
		p.Analysis.Profile = rules.Profile{DGDTolerancePs: tol}
		return p
	}
	res := &diagnose.Result{Ports: []diagnose.PortResult{
		mk("a", []float64{1, 2, 3, nan}, 8), mk("b", []float64{2, 4, nan, nan}, 6), mk("c", []float64{nan, nan, nan, nan}, 5),
	}}
	Reason(res, r)
	pm := res.Lines[0].PMD
	if pm == nil || pm.Channels != 2 || pm.Samples != 5 || math.Abs(pm.MeanDGDPs-2.4) > 1e-12 ||
		pm.ChannelMeanMinPs != 2 || pm.ChannelMeanMaxPs != 3 || pm.TolerancePs != 6 {
		t.Fatalf("pooled PMD %+v, want mean 2.4 ps over 5 samples of 2 channels, means 2…3 ps, tolerance 6 ps", pm)
	}
	if want := 0.0011801297705922738; math.Abs(pm.ExceedProbability-want) > 1e-12 {
		t.Errorf("P(DGD > 6 ps) = %.17g, want %.17g", pm.ExceedProbability, want)
	}
}

// An OSNR step with the power held is line-osnr-drop; with the power falling as much at the
// same minute it is a loss the receivers see: line-power-drop only.
func TestOSNRDropNeedsPowerHeld(t *testing.T) {
	r, _ := rules.DefaultRules()
	mk := func(name string, powerStep bool) diagnose.PortResult {
		const n, at = 240, 120
		osnr, pw := make([]float64, n), make([]float64, n)
		for i := range osnr {
			osnr[i], pw[i] = 30+0.05*math.Sin(float64(i)), -8+0.02*math.Cos(float64(i))
			if i >= at {
				osnr[i] -= 4
				if powerStep {
					pw[i] -= 6
				}
			}
		}
		var an diagnose.PortAnalysis
		if powerStep {
			an.PowerSteps = []diagnose.ChangePoint{{TimeMs: minute(at), Index: at, Quantity: "rx_power_dbm", Before: -8, After: -14, Step: -6, Unit: "dB"}}
		}
		p := port(name, "L", n, an)
		p.Analysis.Series.Values[parse.OSNRdB], p.Analysis.Series.Values[parse.RxPowerDBm] = osnr, pw
		return p
	}
	for _, c := range []struct {
		powerStep bool
		want      diagnose.LineFindingID
	}{{false, diagnose.LineOSNRDrop}, {true, diagnose.LinePowerDrop}} {
		res := &diagnose.Result{Ports: []diagnose.PortResult{mk("a", c.powerStep), mk("b", c.powerStep), mk("c", c.powerStep)}}
		Reason(res, r)
		f := res.Lines[0].Findings
		if len(f) != 1 || f[0].ID != c.want || f[0].From != "2026-03-14T02:00:00Z" || len(f[0].PortsAffected) != 3 {
			t.Errorf("power step %v: findings %+v, want one %s at 02:00 on 3 ports", c.powerStep, f, c.want)
		}
	}
}
