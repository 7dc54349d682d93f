// Package soak says whether a log covers an acceptance test period: long enough, and with
// enough of its sample slots holding a used row. An acceptance is only as good as the period it
// watched: ITU-T M.2110 (from memory) brings a path into service after a test of 15 min, 2 h,
// 24 h or 7 days, and a shorter or holed record cannot stand in for it.
package soak

import (
	"fmt"
	"math"
	"time"

	"github.com/beatnote/beatnote/diagnose/series"
)

// Coverage is how a port's log covers the required test period.
type Coverage struct {
	// RequiredS is the test period asked for, seconds; MinCoverage the fraction of sample
	// slots that must hold a used row.
	RequiredS   float64 `json:"required_s"`
	MinCoverage float64 `json:"min_coverage"`
	// ObservedS is the period the log covers: last − first sample time plus one sample
	// interval (each sample stands for the interval it ends), seconds; 0 with one sample.
	ObservedS float64 `json:"observed_s"`
	// IntervalS is the nominal sample interval (the median spacing), seconds.
	IntervalS float64 `json:"interval_s"`
	// Samples are the used rows; RejectedRows the rows counted against this port; Slots the
	// sample slots of the observed period (at least Samples + RejectedRows).
	Samples      int `json:"samples"`
	RejectedRows int `json:"rejected_rows"`
	Slots        int `json:"slots"`
	// Fraction is Samples / Slots.
	Fraction float64 `json:"coverage"`
	// Complete is true when ObservedS ≥ RequiredS and Fraction ≥ MinCoverage.
	Complete bool `json:"complete"`
	// Shortfall says, for people, why the test is incomplete ("" when complete).
	Shortfall string `json:"shortfall,omitempty"`
}

// Assess judges the sample times timesMs (ascending, Unix ms) of one port, with rejected rows
// that may have been this port's, against a test period and a minimum coverage.
//
// Slots = max(round((last − first)/Δ) + 1, samples + rejected), Δ the median spacing: a gap
// leaves its slots empty, and a rejected row fills no slot. Coverage = samples / slots.
func Assess(timesMs []int64, rejected int, required time.Duration, minCoverage float64) Coverage {
	c := Coverage{RequiredS: required.Seconds(), MinCoverage: minCoverage, Samples: len(timesMs), RejectedRows: rejected}
	step := series.MedianStepMs(timesMs)
	slots := len(timesMs) + rejected
	if step > 0 {
		span := timesMs[len(timesMs)-1] - timesMs[0]
		c.IntervalS = float64(step) / 1000
		c.ObservedS = float64(span+step) / 1000
		slots = max(slots, int(math.Round(float64(span)/float64(step)))+1)
	}
	c.Slots = slots
	if slots > 0 {
		c.Fraction = float64(c.Samples) / float64(slots)
	}
	switch {
	case c.ObservedS < c.RequiredS:
		c.Shortfall = fmt.Sprintf("the log covers %s of the %s test period", Duration(c.ObservedS), Duration(c.RequiredS))
	case !(c.Fraction >= minCoverage):
		c.Shortfall = fmt.Sprintf("%.1f %% of the sample slots hold a used row (%d of %d; gaps and %d rejected rows count against it), below the %.0f %% required",
			100*c.Fraction, c.Samples, slots, rejected, 100*minCoverage)
	default:
		c.Complete = true
	}
	return c
}

// Duration prints seconds for people: "7 d", "24 h" (whole days from two on), "2 h 30 min", "15 min", "40 s".
func Duration(s float64) string {
	if !(s >= 0) || math.IsInf(s, 0) {
		return "n/a"
	}
	t := int64(math.Round(s))
	switch {
	case t >= 2*86400 && t%86400 == 0:
		return fmt.Sprintf("%d d", t/86400)
	case t >= 3600:
		h, m := t/3600, (t%3600)/60
		if m == 0 {
			return fmt.Sprintf("%d h", h)
		}
		return fmt.Sprintf("%d h %d min", h, m)
	case t >= 60:
		m, r := t/60, t%60
		if r == 0 {
			return fmt.Sprintf("%d min", m)
		}
		return fmt.Sprintf("%d min %d s", m, r)
	}
	return fmt.Sprintf("%d s", t)
}
