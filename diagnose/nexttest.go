package diagnose

import (
	"fmt"

	"github.com/beatnote/beatnote/parse"
)

// nextTest names the measurement that best separates the port's leading candidates: the one
// whose outcome moves the most posterior between them. The choices follow what each test
// observes (common practice): an OSA measures the OSNR independently of the module; a loopback
// isolates the module from the line; the link plan's GN model bounds the NLI; a column the log
// lacks confirms or clears the cause that owns it.
func (pc *portCtx) nextTest(c []Cause) string {
	if len(c) == 0 {
		return ""
	}
	top := c[0].ID
	var second CauseID
	if len(c) > 1 {
		second = c[1].ID
	}
	pair := func(a, b CauseID) bool { return (top == a && second == b) || (top == b && second == a) }
	noise := noiseFamily[top] && (second == "" || noiseFamily[second])
	switch {
	case noise && !pc.has(parse.OSNRdB):
		return "Measure the OSNR with an optical spectrum analyser at the receiver (or export the module's OSNR estimate): an OSNR near the requirement names osnr-low; a good OSNR points to nonlinearity, the transceiver or filtering."
	case noise && pc.exp == nil && top != CauseOSNRLow:
		return "Give the link plan (--plan): its GN model says whether nonlinear interference at the planned launch can explain the eSNR shortfall; then loop back the module to test the transceiver."
	case pair(CauseNonlinear, CauseTransceiver) || (noise && (top == CauseTransceiver || top == CauseNonlinear)):
		return "Loop back the module (or test it back to back through an attenuator): a module that reaches its own eSNR ceiling clears the transceiver; then lower the launch power by 1 dB and watch whether the eSNR improves (nonlinearity)."
	case top == CauseFiltering:
		return "Measure the received spectrum with an optical spectrum analyser: a clipped or off-centre channel confirms filtering."
	case top == CauseRxPowerLow && !pc.has(parse.TxPowerDBm):
		return "Read the far-end transmit power: if it fell by the same amount the transmitter is at fault (tx-power), otherwise measure the receive path with a power meter."
	case top == CauseSOPTransient && !pc.has(parse.SOPRateKradPerS):
		return "Export the module's SOP-rate estimate (or compare the burst times with the other ports on the same cable): bursts at SOP spikes confirm sop-transient."
	}
	for _, id := range []CauseID{top, second} {
		if q, ok := ownColumn[id]; ok && !pc.has(q) {
			return fmt.Sprintf("Export the module's %s estimate: it confirms or clears %s.", q.Column(), id)
		}
	}
	return ""
}
