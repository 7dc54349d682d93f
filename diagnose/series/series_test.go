package series

import (
	"math"
	"testing"
)

func near(t *testing.T, name string, got, want, tol float64) {
	t.Helper()
	if !(math.Abs(got-want) <= tol) {
		t.Errorf("%s = %.12g, want %.12g (±%g)", name, got, want, tol)
	}
}

// Expected quantiles from numpy 1.24 numpy.percentile / numpy.quantile (default "linear" method,
// Hyndman–Fan definition 7), run by hand on the same data.
func TestSummarizeMatchesNumpy(t *testing.T) {
	x := []float64{3.1, -0.4, 2.2, math.NaN(), 2.2, 7.5, 0.0, 1.9, 4.4, 2.2, 5.0, -1.3}
	s := Summarize(x)
	if s.N != 11 {
		t.Fatalf("N = %d, want 11 (NaN skipped)", s.N)
	}
	near(t, "min", s.Min, -1.3, 1e-12)
	near(t, "p01", s.P01, -1.21, 1e-12)
	near(t, "p50", s.P50, 2.2, 1e-12)
	near(t, "p99", s.P99, 7.25, 1e-12)
	near(t, "max", s.Max, 7.5, 1e-12)
	f := Finite(x)
	sortFloats(f)
	near(t, "q0.37", Quantile(f, 0.37), 2.11, 1e-12)
	if !math.IsNaN(Quantile(f, 1.5)) || !math.IsNaN(Quantile(nil, 0.5)) {
		t.Error("Quantile outside [0,1] or of nothing must be NaN")
	}
	if e := Summarize([]float64{math.NaN()}); e.N != 0 || !math.IsNaN(e.P50) {
		t.Errorf("all-NaN summary = %+v, want N 0 and NaN", e)
	}
}

// Expected slope, intercept and slope standard error from scipy 1.10 scipy.stats.linregress.
func TestFitLineMatchesScipy(t *testing.T) {
	x := []float64{0, 1, 2, 3, 4, 5, 6, 7, 8, 9}
	y := []float64{1.2, 1.9, 3.4, 3.8, 5.1, 6.3, 6.8, 8.2, 9.1, 9.7}
	f := FitLine(x, y)
	near(t, "slope", f.Slope, 0.9763636363636363, 1e-12)
	near(t, "intercept", f.Intercept, 1.1563636363636363, 1e-12)
	near(t, "slope se", f.SlopeSE, 0.026368860506432765, 1e-12)
	if g := FitLine([]float64{1, 1, 1}, []float64{1, 2, 3}); !math.IsNaN(g.Slope) {
		t.Errorf("constant x gave slope %g, want NaN", g.Slope)
	}
}

func TestFitTrendPerHour(t *testing.T) {
	// y rises 3 units per hour exactly: samples every 10 min (arithmetic by hand).
	var ts []int64
	var y []float64
	for i := 0; i < 13; i++ {
		ts = append(ts, 1_700_000_000_000+int64(i)*600_000)
		y = append(y, 5+3*float64(i)/6)
	}
	f := FitTrendPerHour(ts, y)
	near(t, "slope", f.Slope, 3, 1e-9)
	near(t, "intercept", f.Intercept, 5, 1e-9)
	near(t, "se", f.SlopeSE, 0, 1e-9)
}

func TestHoursToReach(t *testing.T) {
	for _, c := range []struct {
		name             string
		at, slope, limit float64
		want             float64
	}{
		{"rising toward", 100, 50, 300, 4},          // (300−100)/50
		{"falling toward", -100, -25, -300, 8},      // (−300+100)/−25
		{"moving away", 100, -10, 300, math.Inf(1)}, // never
		{"flat", 100, 0, 300, math.Inf(1)},
		{"at the limit", 300, 10, 300, 0},
		{"past and moving away", -350, -10, -300, math.Inf(1)},
	} {
		got := HoursToReach(c.at, c.slope, c.limit)
		if got != c.want {
			t.Errorf("%s: HoursToReach = %g, want %g", c.name, got, c.want)
		}
	}
}

// A planted 3 dB step loss in otherwise noisy power must be found at the planted sample, with
// before/after equal to the plain segment means (computed directly below).
func TestChangePointsFindsPlantedStep(t *testing.T) {
	n, at := 300, 170
	v := make([]float64, n)
	for i := range v {
		noise := 0.15 * math.Sin(float64(i)*2.399963) // golden-angle sequence: deterministic, noise-like
		v[i] = -8 + noise
		if i >= at {
			v[i] -= 3
		}
	}
	v[20] = math.NaN()
	steps := ChangePoints(v, ChangePointOptions{MinStep: 1})
	if len(steps) != 1 {
		t.Fatalf("got %d steps %+v, want 1", len(steps), steps)
	}
	if steps[0].Index != at {
		t.Errorf("step at index %d, want %d", steps[0].Index, at)
	}
	var b, a float64
	var nb int
	for i := 0; i < at; i++ {
		if !math.IsNaN(v[i]) {
			b += v[i]
			nb++
		}
	}
	for i := at; i < n; i++ {
		a += v[i]
	}
	near(t, "before", steps[0].Before, b/float64(nb), 1e-9)
	near(t, "after", steps[0].After, a/float64(n-at), 1e-9)
	near(t, "size", steps[0].Size(), -3, 0.05)

	// Without the gap (every sample finite, ChangePoints' no-copy path): the same step, with
	// before the mean of the now complete first segment.
	v[20] = v[21]
	steps = ChangePoints(v, ChangePointOptions{MinStep: 1})
	if len(steps) != 1 || steps[0].Index != at {
		t.Fatalf("no gap: got steps %+v, want one at %d", steps, at)
	}
	b = 0
	for i := 0; i < at; i++ {
		b += v[i]
	}
	near(t, "before (no gap)", steps[0].Before, b/float64(at), 1e-9)
}

func TestChangePointsNoneInNoise(t *testing.T) {
	v := make([]float64, 500)
	for i := range v {
		v[i] = -5 + 0.3*math.Sin(float64(i)*2.399963) + 0.2*math.Sin(float64(i)*0.7)
	}
	if steps := ChangePoints(v, ChangePointOptions{MinStep: 1}); len(steps) != 0 {
		t.Errorf("found %d steps in stationary data: %+v", len(steps), steps)
	}
	// Two steps of 2 dB: both found.
	for i := 200; i < 500; i++ {
		v[i] -= 2
	}
	for i := 350; i < 500; i++ {
		v[i] -= 2
	}
	steps := ChangePoints(v, ChangePointOptions{MinStep: 1})
	if len(steps) != 2 || steps[0].Index != 200 || steps[1].Index != 350 {
		t.Errorf("steps = %+v, want at 200 and 350", steps)
	}
}

func TestRunsAndCoincide(t *testing.T) {
	ts := make([]int64, 20)
	for i := range ts {
		ts[i] = int64(i) * 1000
	}
	ber := []float64{1, 1, 9, 9, 1, 1, 1, 1, 9, 1, 9, 1, 1, 1, 1, 1, 1, 9, 9, 9}
	runs := Runs(ts, ber, 5, 0)
	if len(runs) != 4 {
		t.Fatalf("runs = %+v, want 4", runs)
	}
	if r := runs[0]; r.FromIdx != 2 || r.ToIdx != 3 || r.Samples != 2 || r.Peak != 9 {
		t.Errorf("first run = %+v", r)
	}
	if got := Runs(ts, ber, 5, 1); len(got) != 3 || got[1].FromIdx != 8 || got[1].ToIdx != 10 || got[1].Samples != 2 {
		t.Errorf("bridged runs = %+v, want the 8 and 10 runs joined", got)
	}
	sop := []float64{0, 0, 0, 50, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 50, 0, 0, 0, 0, 0}
	spikes := Runs(ts, sop, 10, 0)
	pairs := Coincide(runs, spikes, 2000)
	// burst [2,3] overlaps spike 3 (lag +1 s); bursts at 8 and 10 are > 2 s from any spike;
	// burst [17,19] is 3 s after spike 14: outside the window. Worked by hand.
	if len(pairs) != 1 || pairs[0].Burst.FromIdx != 2 || pairs[0].LagMs != 1000 {
		t.Errorf("pairs = %+v", pairs)
	}
	if p := Coincide(runs, spikes, 3000); len(p) != 2 || p[1].LagMs != -3000 {
		t.Errorf("3 s window pairs = %+v", p)
	}
	// spikes at 3 s and 14 s widened by 2 s: [1,5] and [12,16] → 8 s of a 19 s span.
	near(t, "chance", ChanceCoincidence(spikes, 2000, 0, 19000), 8.0/19, 1e-12)
}

// Expected ρ and p from scipy 1.10 scipy.stats.spearmanr, ranks from scipy.stats.rankdata.
func TestSpearmanMatchesScipy(t *testing.T) {
	a := []float64{1.0, 2.0, 2.0, 3.5, 0.7, 9.1, 4.4, 4.4, 4.4, 2.8, 6.0, 0.1, math.NaN()}
	b := []float64{0.3, 0.9, 0.5, 1.7, 0.2, 3.3, 1.1, 2.9, 2.0, 0.4, 2.2, 0.8, 5}
	rho, n, p := Spearman(a, b)
	if n != 12 {
		t.Errorf("n = %d, want 12", n)
	}
	near(t, "rho", rho, 0.8607036601716381, 1e-12)
	near(t, "p", p, 0.0003253595640253831, 1e-9)
	want := []float64{3, 4.5, 4.5, 7, 2, 12, 9, 9, 9, 6, 11, 1}
	for i, r := range Ranks(a[:12]) {
		if r != want[i] {
			t.Errorf("rank[%d] = %g, want %g", i, r, want[i])
		}
	}
	if r, _, _ := Spearman([]float64{1, 1, 1, 1}, []float64{1, 2, 3, 4}); !math.IsNaN(r) {
		t.Errorf("constant side gave rho %g, want NaN", r)
	}
}

func TestNoiseSigmaIgnoresStep(t *testing.T) {
	// White ±1 alternation has first differences ±2 → MAD of differences 2·… ; a step adds one
	// outlying difference and must not move the estimate (by hand: all |Δ−median| equal 2).
	v := []float64{1, -1, 1, -1, 1, -1, 1, -1, 1, -1, 1, -1}
	base := NoiseSigma(v)
	for i := 6; i < len(v); i++ {
		v[i] -= 10
	}
	near(t, "sigma with step", NoiseSigma(v), base, 1e-12)
}

func sortFloats(v []float64) {
	for i := 1; i < len(v); i++ {
		for j := i; j > 0 && v[j] < v[j-1]; j-- {
			v[j], v[j-1] = v[j-1], v[j]
		}
	}
}

// Summarize selects rather than sorts: it must agree exactly with Quantile on the sorted data,
// for every length from 1 to 300 and for data with many ties.
func TestSummarizeAgreesWithSortedQuantiles(t *testing.T) {
	state := uint64(12345)
	rnd := func() float64 { // xorshift, deterministic
		state ^= state << 13
		state ^= state >> 7
		state ^= state << 17
		return float64(state%100000) / 1000
	}
	for n := 1; n <= 300; n++ {
		for _, ties := range []bool{false, true} {
			v := make([]float64, n)
			for i := range v {
				v[i] = rnd()
				if ties {
					v[i] = math.Floor(v[i] / 25)
				}
			}
			s := Summarize(v)
			f := append([]float64(nil), v...)
			sortFloats(f)
			for _, c := range []struct {
				name string
				got  float64
				p    float64
			}{{"min", s.Min, 0}, {"p01", s.P01, 0.01}, {"p50", s.P50, 0.5}, {"p99", s.P99, 0.99}, {"max", s.Max, 1}} {
				if want := Quantile(f, c.p); c.got != want {
					t.Fatalf("n %d ties %v: %s = %g, want %g", n, ties, c.name, c.got, want)
				}
			}
		}
	}
}
