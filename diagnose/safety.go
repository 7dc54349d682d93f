package diagnose

import "strings"

// Laser-safety cautions for field actions. An action that opens, cleans, inspects, measures or
// re-patches a fibre exposes whoever does it to the light in that fibre: invisible, and at the
// powers of amplified lines able to harm the eye (IEC 60825-2 hazard levels; IEC 60825-1 classes).
const (
	// CautionFibre goes with every action that touches a fibre.
	CautionFibre = "Laser safety: confirm the fibre dark with a power meter or follow the operator's live-fibre procedure; never look into a fibre end or connector; local codes and licensed practice prevail."
	// CautionOTDR goes with an OTDR shot instead: its pulses can damage a receiver.
	CautionOTDR = CautionFibre + " Disconnect the receiver at the far end before the OTDR shot: its pulses can damage it."
)

// fibreWork are words that mark an action done on the fibre itself (common practice: these are
// the tasks laser-safety procedures cover).
var fibreWork = []string{"connector", "clean", "inspect", "end face", "patch", "attenuator", "power meter",
	"splice", "analyser", "analyzer", "loop back", "loopback", "swap", "replace", "move the circuit"}

// FibreCaution returns the laser-safety caution an action needs: CautionOTDR for an OTDR trace,
// CautionFibre for other work on the fibre, "" for an action that touches none (reading
// records, comparing settings, keeping a log running).
func FibreCaution(action string) string {
	a := strings.ToLower(action)
	if strings.Contains(a, "otdr") {
		return CautionOTDR
	}
	for _, w := range fibreWork {
		if strings.Contains(a, w) {
			return CautionFibre
		}
	}
	return ""
}

// addCautions fills Cause.Cautions from the actions.
func addCautions(p *PortResult) {
	for i := range p.Causes {
		c := &p.Causes[i]
		c.Cautions = nil
		touches := false
		cs := make([]string, len(c.Actions))
		for j, a := range c.Actions {
			cs[j] = FibreCaution(a)
			touches = touches || cs[j] != ""
		}
		if touches {
			c.Cautions = cs
		}
	}
}
