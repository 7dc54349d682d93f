package diagnose

import "testing"

// Which field actions need the laser-safety caution (common practice: laser-safety procedures
// cover any work that opens, cleans, inspects, measures or re-patches a fibre, and an OTDR
// shot toward live equipment needs its receiver disconnected).
func TestFibreCaution(t *testing.T) {
	for _, tc := range []struct{ action, want string }{
		{"Run an OTDR trace to measure the actual fibre length of each span.", CautionOTDR},
		{"Inspect and clean every connector end face in the receive path.", CautionFibre},
		{"Measure the received power with a calibrated power meter.", CautionFibre},
		{"Confirm the patching against the plan.", CautionFibre},
		{"Keep the log running: PMD varies with temperature.", ""},
		{"Check the route records (fibre type, span lengths).", ""},
	} {
		if got := FibreCaution(tc.action); got != tc.want {
			t.Errorf("FibreCaution(%q) = %q, want %q", tc.action, got, tc.want)
		}
	}
}

// Every cause's actions carry their cautions, index for index.
func TestAddCautions(t *testing.T) {
	p := PortResult{Causes: []Cause{
		{ID: CauseRxPowerLow, Actions: actions[CauseRxPowerLow]},
		{ID: CauseLOOffset, Actions: []string{"Check the laser frequency settings against the plan."}},
	}}
	addCautions(&p)
	rx := p.Causes[0]
	if len(rx.Cautions) != len(rx.Actions) || rx.Cautions[0] != CautionFibre {
		t.Errorf("rx-power-low cautions %q", rx.Cautions)
	}
	if p.Causes[1].Cautions != nil {
		t.Errorf("an action that touches no fibre got %q", p.Causes[1].Cautions)
	}
}
