// Package errperf counts the error-performance events of ITU-T G.826 and G.8201 (OTN ODUk
// paths) from a telemetry log: errored seconds (ES), severely errored seconds (SES), background
// block errors (BBE) and unavailable time, and their ratios over the available time.
//
// Definitions (ITU-T G.826 clause 3 and Annex A; G.8201 clause 5 and Annex A; from memory):
//   - errored block: a block with at least one error; here an uncorrectable FEC codeword, or
//     an errored bit of the post-FEC BER, counts as one errored block;
//   - ES: a second with at least one errored block or a defect;
//   - SES: a second whose errored blocks are at least a fraction (G.8201: 15 %, G.826: 30 %)
//     of its blocks, or that holds a defect (here: no signal);
//   - BBE: an errored block not in an SES;
//   - unavailable time starts with ten consecutive SES (those ten included) and ends with ten
//     consecutive non-SES seconds (those ten excluded); ES, SES and BBE count in available
//     time only. ESR = ES / available s, SESR = SES / available s, BBER = BBE / blocks of the
//     available seconds that are not SES.
//
// A telemetry sample holds the count of an interval of Δ seconds, not of each second. Within an
// interval the errors are taken as evenly spread: the interval is Δ SES when its errored-block
// fraction reaches the SES fraction, otherwise it holds min(⌈n⌉, Δ) ES and n BBE. Evenly spread
// errors give the most errored seconds a count allows; with one-second samples the figures are
// exact.
package errperf

import "math"

// Interval is one sample interval.
type Interval struct {
	// Seconds is the interval's length in whole seconds (at least 1).
	Seconds int64
	// ErroredBlocks is the count of errored blocks in the interval; NaN when not known, and
	// then the interval is left out (it is neither available nor unavailable time).
	ErroredBlocks float64
	// Defect is true when the signal was lost in the interval: every second is an SES.
	Defect bool
}

// Events are the error-performance figures of a period. Ratios are nil when their denominator
// is zero (no available time).
type Events struct {
	// EvaluatedS is the time evaluated (available plus unavailable), seconds.
	EvaluatedS   int64   `json:"evaluated_s"`
	AvailableS   int64   `json:"available_s"`
	UnavailableS int64   `json:"unavailable_s"`
	ES           int64   `json:"errored_seconds"`
	SES          int64   `json:"severely_errored_seconds"`
	BBE          float64 `json:"background_block_errors"`
	// BlocksPerSecond is the block rate the ratios and the SES test use.
	BlocksPerSecond float64  `json:"blocks_per_second"`
	ESR             *float64 `json:"esr"`
	SESR            *float64 `json:"sesr"`
	BBER            *float64 `json:"bber"`
}

// Count evaluates the intervals in time order. blocksPerSecond is the block rate, sesFraction
// the errored-block fraction of an SES, unavailableRun the run of SES (non-SES) seconds that
// starts (ends) unavailable time. It panics when blocksPerSecond or unavailableRun is not
// positive.
func Count(iv []Interval, blocksPerSecond, sesFraction float64, unavailableRun int64) Events {
	if !(blocksPerSecond > 0) || unavailableRun < 1 {
		panic("errperf: block rate and unavailability run must be positive")
	}
	e := Events{BlocksPerSecond: blocksPerSecond}
	var (
		unavailable bool
		// In available time: the current run of SES seconds, counted provisionally as
		// available SES until it reaches unavailableRun.
		sesRun int64
		// In unavailable time: the current run of non-SES seconds with its ES and BBE,
		// counted provisionally as unavailable until it reaches unavailableRun.
		okRun        int64
		okES         int64
		okBBE        float64
		nonSESBlocks float64 // blocks of the available non-SES seconds
	)
	for _, in := range iv {
		d := in.Seconds
		if d < 1 || (!in.Defect && math.IsNaN(in.ErroredBlocks)) {
			continue
		}
		e.EvaluatedS += d
		n := math.Max(in.ErroredBlocks, 0)
		ses := in.Defect || n >= sesFraction*blocksPerSecond*float64(d)
		var es int64
		var bbe float64
		if !ses && n > 0 {
			es, bbe = min(int64(math.Ceil(n)), d), n
		}
		switch {
		case !unavailable && ses:
			e.AvailableS += d
			e.SES += d
			e.ES += d
			sesRun += d
			if sesRun >= unavailableRun { // the whole run becomes unavailable, from its start
				e.AvailableS -= sesRun
				e.SES -= sesRun
				e.ES -= sesRun
				e.UnavailableS += sesRun
				unavailable, sesRun = true, 0
			}
		case !unavailable:
			sesRun = 0
			e.AvailableS += d
			e.ES += es
			e.BBE += bbe
			nonSESBlocks += blocksPerSecond * float64(d)
		case ses:
			e.UnavailableS += d
			okRun, okES, okBBE = 0, 0, 0
		default:
			e.UnavailableS += d
			okRun += d
			okES += es
			okBBE += bbe
			if okRun >= unavailableRun { // available again from the start of the run
				e.UnavailableS -= okRun
				e.AvailableS += okRun
				e.ES += okES
				e.BBE += okBBE
				nonSESBlocks += blocksPerSecond * float64(okRun)
				unavailable, okRun, okES, okBBE = false, 0, 0, 0
			}
		}
	}
	ratio := func(v float64) *float64 { return &v }
	if e.AvailableS > 0 {
		e.ESR = ratio(float64(e.ES) / float64(e.AvailableS))
		e.SESR = ratio(float64(e.SES) / float64(e.AvailableS))
	}
	if nonSESBlocks > 0 {
		e.BBER = ratio(e.BBE / nonSESBlocks)
	}
	return e
}
