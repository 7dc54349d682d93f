package diagnose

import (
	"strings"
	"testing"
)

// A fault seen one way points at that direction's path; both ways at what they share; two
// different faults at two paths; nothing at nothing. Ports missing from the result are skipped.
func TestPairDirections(t *testing.T) {
	res := &Result{Ports: []PortResult{
		{Port: "A", Circuit: "C1", Line: "east", Verdict: Fail, Causes: []Cause{{ID: CauseRxPowerLow}}},
		{Port: "Z", Circuit: "C1", Line: "west", Verdict: Pass},
		{Port: "B", Verdict: Marginal, Causes: []Cause{{ID: CauseSOPTransient}}},
		{Port: "Y", Verdict: Fail, Causes: []Cause{{ID: CauseSOPTransient}, {ID: CausePMD}}},
		{Port: "D", Verdict: Marginal, Causes: []Cause{{ID: CausePDLHigh}}},
		{Port: "W", Verdict: Fail, Causes: []Cause{{ID: CauseOSNRLow}}},
		{Port: "E", Verdict: Pass},
		{Port: "V", Verdict: Pass, LineFindings: []LineRef{{Line: "north", ID: LineOSNRDrop}}},
	}}
	PairDirections(res, [][2]string{{"A", "Z"}, {"B", "Y"}, {"D", "W"}, {"E", "V"}, {"Q", "A"}})
	if len(res.Directions) != 4 {
		t.Fatalf("%d pairs, want 4 (the one with a missing port skipped)", len(res.Directions))
	}
	az := res.Directions[0]
	if az.Circuit != "C1" || az.OneWay != "A" || az.Directions[0].ReceivedAt != "A" || az.Directions[0].From != "Z" ||
		!strings.Contains(az.Finding, "one direction only") || !strings.Contains(az.Finding, "line east") || !strings.Contains(az.Finding, "transmitter of Z") {
		t.Errorf("A/Z: %+v", az)
	}
	if by := res.Directions[1]; by.OneWay != "" || !strings.Contains(by.Finding, "Both directions show sop-transient") {
		t.Errorf("B/Y: %+v", by)
	}
	if dw := res.Directions[2]; dw.OneWay != "" || !strings.Contains(dw.Finding, "two separate faults") {
		t.Errorf("D/W: %+v", dw)
	}
	// A line finding on the receiving port is trouble in that direction even on a pass verdict.
	if ev := res.Directions[3]; ev.OneWay != "V" {
		t.Errorf("E/V: %+v", ev)
	}
}
