package report

import (
	"strings"
	"testing"

	"github.com/beatnote/beatnote/diagnose"
)

// The budget lines say every known term with its unit and say plainly which terms the port
// cannot give; no budget, no lines.
func TestBudgetLines(t *testing.T) {
	v := func(x float64) *float64 { return &x }
	b := &diagnose.Budget{MeasuredESNRdB: 13.17, ModelESNRdB: 13.95, UnexplainedDB: 0.78,
		ASEdB: v(0.54), ASESNRdB: v(23.25), TransceiverDB: v(8.46), TransceiverSNRdB: v(14.61),
		PDLdB: v(0.25), ASEFrom: "plan's ASE OSNR"}
	got := strings.Join(BudgetLines(b), "\n")
	for _, want := range []string{
		"eSNR 13.17 dB measured; 13.95 dB from the model", "unexplained +0.78 dB",
		"Amplifier noise (ASE): costs 0.54 dB (alone it would allow an SNR of 23.25 dB; from the plan's ASE OSNR)",
		"Nonlinear interference (NLI, plan's GN model): not known for this port.",
		"Transceiver's own noise (ceiling): costs 8.46 dB", "PDL: penalty 0.25 dB.",
	} {
		if !strings.Contains(got, want) {
			t.Errorf("budget lines lack %q:\n%s", want, got)
		}
	}
	if strings.Contains(got, "DGD") {
		t.Errorf("a DGD line without a DGD term:\n%s", got)
	}
	if BudgetLines(nil) != nil {
		t.Error("lines for no budget")
	}
}
