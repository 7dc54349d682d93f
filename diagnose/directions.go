package diagnose

import (
	"fmt"
	"slices"
	"strings"
)

// DirectionPair is a circuit judged in both directions: each port receives what the other's
// module sends, so each port's judgement is one direction of the circuit.
type DirectionPair struct {
	Circuit    string      `json:"circuit,omitempty"`
	Directions []Direction `json:"directions"`
	// OneWay is the port whose direction alone shows trouble ("" when both or neither do).
	OneWay string `json:"one_way,omitempty"`
	// Finding says in words where the pair points.
	Finding string `json:"finding"`
}

// Direction is one direction of a circuit: the port that receives it and its judgement.
type Direction struct {
	// ReceivedAt is the port at the receiving end; From is the port whose module transmits.
	ReceivedAt string    `json:"received_at"`
	From       string    `json:"from"`
	Line       string    `json:"line,omitempty"`
	Verdict    Verdict   `json:"verdict"`
	Causes     []CauseID `json:"causes"`
	// LineFindings are the line findings the receiving port points at.
	LineFindings []LineFindingID `json:"line_findings,omitempty"`
}

// Findings lists the direction's line finding ids, then its cause ids, joined by ", "
// ("" when there are none).
func (d Direction) Findings() string {
	var w []string
	for _, id := range d.LineFindings {
		w = append(w, string(id))
	}
	for _, id := range d.Causes {
		w = append(w, string(id))
	}
	return strings.Join(w, ", ")
}

// troubled: a direction with trouble of its own — a listed cause or line finding, or a verdict
// worse than pass that is not only for want of data.
func (d Direction) troubled() bool {
	return len(d.Causes) > 0 || len(d.LineFindings) > 0 || d.Verdict == Fail || d.Verdict == Marginal
}

// PairDirections judges each pair of ports as the two directions of one circuit: a and b are
// the ports at the two ends (each receives what the other's module sends). Pairs whose ports
// are not both in res are skipped. The pairs are set on res.Directions in the order given.
func PairDirections(res *Result, pairs [][2]string) {
	byPort := map[string]*PortResult{}
	for i := range res.Ports {
		byPort[res.Ports[i].Port] = &res.Ports[i]
	}
	res.Directions = nil
	for _, pr := range pairs {
		a, b := byPort[pr[0]], byPort[pr[1]]
		if a == nil || b == nil {
			continue
		}
		dp := DirectionPair{Circuit: a.Circuit, Directions: []Direction{direction(a, b), direction(b, a)}}
		if dp.Circuit == "" {
			dp.Circuit = b.Circuit
		}
		dp.OneWay, dp.Finding = pointAt(dp.Directions)
		res.Directions = append(res.Directions, dp)
	}
}

func direction(rx, tx *PortResult) Direction {
	d := Direction{ReceivedAt: rx.Port, From: tx.Port, Line: rx.Line, Verdict: rx.Verdict, Causes: []CauseID{}}
	for _, c := range rx.Causes {
		d.Causes = append(d.Causes, c.ID)
	}
	for _, lf := range rx.LineFindings {
		if !slices.Contains(d.LineFindings, lf.ID) {
			d.LineFindings = append(d.LineFindings, lf.ID)
		}
	}
	return d
}

// pointAt reads the two directions: trouble in one direction only lies on that direction's
// path — the far end's transmitter, the line in that direction (its fibre, amplifiers and
// patching) and the receiver at this end — since the parts both directions share (the cable
// route, the sites, each end's module as a whole) would show both ways; trouble both ways
// points at what they share.
func pointAt(ds []Direction) (oneWay, finding string) {
	a, b := ds[0], ds[1]
	path := func(d Direction) string {
		s := fmt.Sprintf("the path received at %s: the transmitter of %s, ", d.ReceivedAt, d.From)
		if d.Line != "" {
			s += "line " + d.Line + " (its fibre, amplifiers and patching in that direction), "
		} else {
			s += "the fibre, amplifiers and patching in that direction, "
		}
		return s + "and the receiver of " + d.ReceivedAt
	}
	what := func(d Direction) string {
		if w := d.Findings(); w != "" {
			return w
		}
		return strings.ToUpper(string(d.Verdict))
	}
	switch ta, tb := a.troubled(), b.troubled(); {
	case ta && !tb:
		return a.ReceivedAt, fmt.Sprintf("Seen in one direction only (%s received at %s; the other direction is clean): it lies on %s — not on what both directions share.", what(a), a.ReceivedAt, path(a))
	case tb && !ta:
		return b.ReceivedAt, fmt.Sprintf("Seen in one direction only (%s received at %s; the other direction is clean): it lies on %s — not on what both directions share.", what(b), b.ReceivedAt, path(b))
	case ta && tb:
		var shared CauseID
		for _, c := range a.Causes {
			if slices.Contains(b.Causes, c) {
				shared = c
				break
			}
		}
		if shared != "" {
			return "", fmt.Sprintf("Both directions show %s: look first at what they share — the cable route (both fibres), the sites both pass through — then at each direction's own path.", shared)
		}
		return "", fmt.Sprintf("Both directions show trouble, of different kinds (%s at %s; %s at %s): two separate faults, one on each direction's path.", what(a), a.ReceivedAt, what(b), b.ReceivedAt)
	}
	return "", "Both directions are clean."
}
