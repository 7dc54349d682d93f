package synth

import (
	"fmt"
	"slices"
	"time"

	"github.com/beatnote/beatnote/rules"
)

// LineEventKind is what happens on a shared fibre line.
type LineEventKind string

// The line events synth can apply. Every channel given the same event sees it over the same
// window, each through its own link and noise.
const (
	// LineSpanLoss: span Span loses LossDB more (a bend, a failing splice, a crushed duct).
	// The amplifier after the span holds its output power, so the received power is held and
	// the OSNR falls by what that amplifier's ASE now adds (the model's cascade of
	// optics.AmplifierOSNRdB at the lower input power).
	LineSpanLoss LineEventKind = "span-loss"
	// LineCut: the fibre is cut: no light from From to To.
	LineCut LineEventKind = "cut"
	// LineAmpOutputDrop: the last amplifier before the receivers (the preamplifier) loses a
	// pump and its output falls by LossDB: the received power falls, the OSNR set before it does
	// not change.
	LineAmpOutputDrop LineEventKind = "amp-output-drop"
	// LineSOPBursts: fast polarization changes on an aerial section (wind, lightning): a burst
	// of RateKradS at each of Bursts, lasting Duty of the sample interval.
	LineSOPBursts LineEventKind = "sop-bursts"
)

// LineEvent is one event on the fibre line a channel travels.
type LineEvent struct {
	Kind LineEventKind
	// From and To bound the event (To zero: to the end of the log). Unused by LineSOPBursts.
	From, To time.Time
	// Span is the 1-based span of LineSpanLoss.
	Span int
	// LossDB is the extra span loss (LineSpanLoss) or the output drop (LineAmpOutputDrop), dB.
	LossDB float64
	// Bursts are the times of the SOP bursts of LineSOPBursts; RateKradS their peak rate and
	// Duty the fraction of the sample interval each lasts.
	Bursts    []time.Time
	RateKradS float64
	Duty      float64
}

// lineWindow is a line event prepared for render: the sample range it covers and, for the
// events that change the link, the link's figures while it lasts.
type lineWindow struct {
	from, to int // sample indices, inclusive
	dark     bool
	link     *Link
}

// prepareLineEvents checks the events against the plan, evaluates the changed links, and
// marks the SOP bursts in f. It returns the windows in the order given.
func prepareLineEvents(spec Spec, m linkModel, prof rules.Profile, f *faults, c *Case) ([]lineWindow, error) {
	index := func(t time.Time) int {
		return int(t.Sub(spec.Start) / spec.Interval)
	}
	var out []lineWindow
	for k, ev := range spec.LineEvents {
		w := lineWindow{from: index(ev.From), to: spec.Samples - 1}
		if !ev.To.IsZero() {
			w.to = index(ev.To)
		}
		if ev.Kind != LineSOPBursts && !(w.from >= 0 && w.from <= w.to) {
			return nil, fmt.Errorf("%w: line event %d (%s): window %v … %v outside the log or reversed", ErrSpec, k+1, ev.Kind, ev.From, ev.To)
		}
		switch ev.Kind {
		case LineSpanLoss:
			if ev.Span < 1 || ev.Span > len(m.spans) || !(ev.LossDB > 0) {
				return nil, fmt.Errorf("%w: line event %d: span %d of %d, loss %g dB", ErrSpec, k+1, ev.Span, len(m.spans), ev.LossDB)
			}
			mm := m
			mm.spans = slices.Clone(m.spans)
			mm.spans[ev.Span-1].lossDB += ev.LossDB
			l := mm.evaluate(prof) // an amplifier after the span holds its output power
			w.link = &l
			c.Notes = append(c.Notes, fmt.Sprintf("line: span %d loses %.1f dB more from %s: OSNR %.1f → %.1f dB, received power %.1f → %.1f dBm",
				ev.Span, ev.LossDB, ev.From.UTC().Format(time.DateTime), c.Actual.OSNRdB, l.OSNRdB, c.Actual.RxPowerDBm, l.RxPowerDBm))
		case LineAmpOutputDrop:
			if !(ev.LossDB > 0) {
				return nil, fmt.Errorf("%w: line event %d: output drop %g dB", ErrSpec, k+1, ev.LossDB)
			}
			l := c.Actual
			l.RxPowerDBm -= ev.LossDB
			w.link = &l
			c.Notes = append(c.Notes, fmt.Sprintf("line: the preamplifier's output falls %.1f dB from %s: received power %.1f → %.1f dBm, OSNR held",
				ev.LossDB, ev.From.UTC().Format(time.DateTime), c.Actual.RxPowerDBm, l.RxPowerDBm))
		case LineCut:
			w.dark = true
			c.Notes = append(c.Notes, fmt.Sprintf("line: fibre cut from %s to %s", ev.From.UTC().Format(time.DateTime), ev.To.UTC().Format(time.DateTime)))
		case LineSOPBursts:
			if !(ev.RateKradS > 0 && ev.Duty > 0 && ev.Duty <= 1) {
				return nil, fmt.Errorf("%w: line event %d: SOP rate %g krad/s, duty %g", ErrSpec, k+1, ev.RateKradS, ev.Duty)
			}
			if f.sopAt == nil {
				f.sopAt = map[int]sopSample{}
			}
			for _, t := range ev.Bursts {
				if i := index(t); i >= 0 && i < spec.Samples {
					f.sopAt[i] = sopSample{rateKradS: ev.RateKradS, duty: ev.Duty}
				}
			}
			c.Notes = append(c.Notes, fmt.Sprintf("line: %d SOP bursts at %.0f krad/s (tracking %g krad/s)", len(ev.Bursts), ev.RateKradS, prof.SOPTrackingKradS))
			continue
		default:
			return nil, fmt.Errorf("%w: line event %d: unknown kind %q", ErrSpec, k+1, ev.Kind)
		}
		out = append(out, w)
	}
	return out, nil
}
