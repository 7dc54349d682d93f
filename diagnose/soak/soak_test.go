package soak

import (
	"testing"
	"time"
)

func minutes(n int, skip map[int]bool) []int64 {
	var ts []int64
	for i := 0; i < n; i++ {
		if !skip[i] {
			ts = append(ts, int64(i)*60_000)
		}
	}
	return ts
}

func TestAssess(t *testing.T) {
	holes := map[int]bool{}
	for i := 100; i < 200; i++ {
		holes[i] = true
	}
	rejectedInside := map[int]bool{10: true, 20: true, 30: true}
	for _, tc := range []struct {
		name     string
		ts       []int64
		rejected int
		required time.Duration
		complete bool
		slots    int
		observed float64
	}{
		// The three-row log whose other two rows were rejected: one usable sample covers no
		// period at all, and a third of its slots.
		{"one row left of three", []int64{0}, 2, 24 * time.Hour, false, 3, 0},
		{"24 h of 1-min samples", minutes(1440, nil), 0, 24 * time.Hour, true, 1440, 86400},
		{"10 h for a 24 h test", minutes(600, nil), 0, 24 * time.Hour, false, 600, 36000},
		{"10 h for a 2 h test", minutes(600, nil), 0, 2 * time.Hour, true, 600, 36000},
		// 100 of 1440 slots empty: 93.1 % < 95 %.
		{"24 h with a 100-minute hole", minutes(1440, holes), 0, 24 * time.Hour, false, 1440, 86400},
		// Three rows rejected inside the period: their slots are empty, 1437/1440 = 99.8 %.
		{"24 h with three rejected rows", minutes(1440, rejectedInside), 3, 24 * time.Hour, true, 1440, 86400},
		// Rejected rows beyond the used ones still count: 1440 / (1440 + 100) = 93.5 %.
		{"24 h and 100 rejected rows elsewhere", minutes(1440, nil), 100, 24 * time.Hour, false, 1540, 86400},
	} {
		t.Run(tc.name, func(t *testing.T) {
			c := Assess(tc.ts, tc.rejected, tc.required, 0.95)
			if c.Complete != tc.complete || c.Slots != tc.slots || c.ObservedS != tc.observed {
				t.Errorf("complete %v slots %d observed %g s (%s); want %v %d %g", c.Complete, c.Slots, c.ObservedS, c.Shortfall, tc.complete, tc.slots, tc.observed)
			}
			if c.Complete != (c.Shortfall == "") {
				t.Errorf("shortfall %q with complete %v", c.Shortfall, c.Complete)
			}
		})
	}
}

func TestDuration(t *testing.T) {
	for s, want := range map[float64]string{604800: "7 d", 86400: "24 h", 172800: "2 d", 7200: "2 h", 36000: "10 h", 9000: "2 h 30 min", 900: "15 min", 40: "40 s", 0: "0 s", 150: "2 min 30 s"} {
		if got := Duration(s); got != want {
			t.Errorf("Duration(%g) = %q, want %q", s, got, want)
		}
	}
}
