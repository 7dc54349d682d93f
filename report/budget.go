package report

import (
	"fmt"

	"github.com/beatnote/beatnote/diagnose"
)

// BudgetLines words a port's SNR-deficit budget (diagnose.Budget), one mechanism a line, for
// the text, Markdown and PDF reports. Nil without a budget.
func BudgetLines(b *diagnose.Budget) []string {
	if b == nil {
		return nil
	}
	out := []string{fmt.Sprintf("eSNR %.2f dB measured; %.2f dB from the model of the known terms; unexplained %+.2f dB (positive: worse than the model).", b.MeasuredESNRdB, b.ModelESNRdB, b.UnexplainedDB)}
	noise := func(name string, cost, snr *float64, note string) {
		switch {
		case cost != nil && snr != nil:
			out = append(out, fmt.Sprintf("%s: costs %.2f dB (alone it would allow an SNR of %.2f dB%s).", name, *cost, *snr, note))
		case snr != nil:
			out = append(out, fmt.Sprintf("%s: the only noise term, SNR %.2f dB%s.", name, *snr, note))
		default:
			out = append(out, fmt.Sprintf("%s: not known for this port.", name))
		}
	}
	src := ""
	if b.ASEFrom != "" {
		src = "; from the " + b.ASEFrom
	}
	noise("Amplifier noise (ASE)", b.ASEdB, b.ASESNRdB, src)
	noise("Nonlinear interference (NLI, plan's GN model)", b.NLIdB, b.NLISNRdB, "")
	noise("Transceiver's own noise (ceiling)", b.TransceiverDB, b.TransceiverSNRdB, "")
	pen := func(name string, v *float64) {
		if v != nil {
			out = append(out, fmt.Sprintf("%s: penalty %.2f dB.", name, *v))
		}
	}
	pen("PDL", b.PDLdB)
	pen("DGD", b.DGDdB)
	pen("Filtering", b.FilteringDB)
	return out
}
