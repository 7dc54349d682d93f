package errperf

import (
	"math"
	"testing"
)

// seconds builds one-second intervals: 's' a severely errored second (a defect), '.' an
// error-free second, 'e' a second with one errored block.
func seconds(pattern string) []Interval {
	var iv []Interval
	for _, c := range pattern {
		switch c {
		case 's':
			iv = append(iv, Interval{Seconds: 1, Defect: true})
		case '.':
			iv = append(iv, Interval{Seconds: 1})
		case 'e':
			iv = append(iv, Interval{Seconds: 1, ErroredBlocks: 1})
		}
	}
	return iv
}

func repeat(s string, n int) string {
	out := ""
	for i := 0; i < n; i++ {
		out += s
	}
	return out
}

// The expected figures are worked by hand from the definitions of ITU-T G.826 clause 3 and
// Annex A (unavailable time: ten consecutive SES start it, ten consecutive non-SES end it, the
// ten seconds belonging to the new state; ES, SES and BBE count in available time only).
func TestCountWorkedExamples(t *testing.T) {
	const b = 1000 // blocks per second
	for _, tc := range []struct {
		name                    string
		iv                      []Interval
		avail, unavail, es, ses int64
		bbe                     float64
	}{
		{"error-free", seconds(repeat(".", 100)), 100, 0, 0, 0, 0},
		{"five SES stay available", seconds(repeat("s", 5) + repeat(".", 20)), 25, 0, 5, 5, 0},
		{"nine SES, one good, nine SES: never ten in a row", seconds(repeat("s", 9) + "." + repeat("s", 9)), 19, 0, 18, 18, 0},
		{"twelve SES start unavailable time", seconds(repeat("s", 12) + repeat(".", 15)), 15, 12, 0, 0, 0},
		{"errors inside unavailable time do not count", seconds(repeat("s", 12) + repeat("e", 5) + repeat("s", 3) + repeat(".", 10)), 10, 20, 0, 0, 0},
		{"errors after the return count", seconds(repeat("s", 10) + repeat("e", 10) + "e"), 11, 10, 11, 0, 11},
		{"isolated errored seconds", seconds("..e..e..e."), 10, 0, 3, 0, 3},
	} {
		t.Run(tc.name, func(t *testing.T) {
			e := Count(tc.iv, b, 0.15, 10)
			if e.AvailableS != tc.avail || e.UnavailableS != tc.unavail || e.ES != tc.es || e.SES != tc.ses || e.BBE != tc.bbe {
				t.Errorf("got available %d unavailable %d ES %d SES %d BBE %g; want %d %d %d %d %g",
					e.AvailableS, e.UnavailableS, e.ES, e.SES, e.BBE, tc.avail, tc.unavail, tc.es, tc.ses, tc.bbe)
			}
			if e.EvaluatedS != e.AvailableS+e.UnavailableS {
				t.Errorf("evaluated %d ≠ available + unavailable", e.EvaluatedS)
			}
		})
	}
}

// Ratios: ESR = ES / available s, SESR = SES / available s, BBER = BBE / blocks of available
// non-SES seconds (ITU-T G.826 clause 3.2). Hand-worked: 5 SES in 25 s → SESR 0.2; 3 errored
// blocks in 10 s of 1000 blocks → BBER 3e-4.
func TestCountRatios(t *testing.T) {
	e := Count(seconds(repeat("s", 5)+repeat(".", 20)), 1000, 0.15, 10)
	if *e.SESR != 0.2 || *e.ESR != 0.2 {
		t.Errorf("SESR %g ESR %g, want 0.2 0.2", *e.SESR, *e.ESR)
	}
	e = Count(seconds("..e..e..e."), 1000, 0.15, 10)
	if math.Abs(*e.BBER-3e-4) > 1e-15 || math.Abs(*e.ESR-0.3) > 1e-15 || *e.SESR != 0 {
		t.Errorf("BBER %g ESR %g SESR %g, want 3e-4 0.3 0", *e.BBER, *e.ESR, *e.SESR)
	}
	e = Count(seconds(repeat("s", 20)), 1000, 0.15, 10)
	if e.SESR != nil || e.BBER != nil || e.UnavailableS != 20 {
		t.Errorf("all unavailable: SESR %v BBER %v unavailable %d, want nil nil 20", e.SESR, e.BBER, e.UnavailableS)
	}
}

// A sample interval longer than a second: errors evenly spread over its seconds.
func TestCountLongIntervals(t *testing.T) {
	const b = 1000
	for _, tc := range []struct {
		name             string
		iv               Interval
		es, ses, unavail int64
		bbe              float64
	}{
		// 30 errored blocks in 60 s of 1000 blocks: 0.05 % errored, no SES; 30 ES (one each).
		{"few errors", Interval{Seconds: 60, ErroredBlocks: 30}, 30, 0, 0, 30},
		// 100 errored blocks in 60 s: every second holds one or two, so 60 ES.
		{"errors in every second", Interval{Seconds: 60, ErroredBlocks: 100}, 60, 0, 0, 100},
		// 10 000 of 60 000 blocks errored = 16.7 % ≥ 15 %: 60 SES, more than ten in a row, so
		// the minute is unavailable time.
		{"severely errored minute", Interval{Seconds: 60, ErroredBlocks: 10000}, 0, 0, 60, 0},
		// 8 000 of 60 000 = 13.3 % < 15 %: not SES; every second errored.
		{"just below the SES fraction", Interval{Seconds: 60, ErroredBlocks: 8000}, 60, 0, 0, 8000},
	} {
		t.Run(tc.name, func(t *testing.T) {
			e := Count([]Interval{tc.iv}, b, 0.15, 10)
			if e.ES != tc.es || e.SES != tc.ses || e.UnavailableS != tc.unavail || e.BBE != tc.bbe {
				t.Errorf("ES %d SES %d unavailable %d BBE %g; want %d %d %d %g", e.ES, e.SES, e.UnavailableS, e.BBE, tc.es, tc.ses, tc.unavail, tc.bbe)
			}
		})
	}
}

// G.8201 counts a second SES from 15 % errored blocks, G.826 from 30 %: a second with 20 % is
// severely errored under the first only.
func TestCountSESFraction(t *testing.T) {
	iv := []Interval{{Seconds: 1, ErroredBlocks: 200}}
	if e := Count(iv, 1000, 0.15, 10); e.SES != 1 {
		t.Errorf("15 %%: SES %d, want 1", e.SES)
	}
	if e := Count(iv, 1000, 0.30, 10); e.SES != 0 || e.ES != 1 {
		t.Errorf("30 %%: SES %d ES %d, want 0 1", e.SES, e.ES)
	}
}

// Intervals without a count are left out; they neither add time nor break a run.
func TestCountUnknownIntervals(t *testing.T) {
	iv := append(seconds(repeat("s", 5)), Interval{Seconds: 30, ErroredBlocks: math.NaN()})
	iv = append(iv, seconds(repeat("s", 5))...)
	e := Count(iv, 1000, 0.15, 10)
	if e.EvaluatedS != 10 || e.UnavailableS != 10 {
		t.Errorf("evaluated %d unavailable %d, want 10 10", e.EvaluatedS, e.UnavailableS)
	}
}
