package diagnose

// actions are the recommended field actions per cause, most useful first. Safety first: every
// action that opens a connection assumes the fibre is confirmed dark or the work follows the
// operator's laser-safety procedure (IEC 60825-2).
var actions = map[CauseID][]string{
	CauseOSNRLow: {
		"Compare each amplifier's input power and gain with the link plan; a span with more loss than designed starves the next amplifier and costs OSNR.",
		"Check the amplifiers along the path for alarms, a raised noise figure or a failed pump, and the ROADM/mux channel attenuation for this channel.",
		"Measure the OSNR with an optical spectrum analyser at the receive end to confirm the module's estimate.",
	},
	CauseRxPowerLow: {
		"Inspect and clean every connector end face in the receive path to IEC 61300-3-35 before re-measuring power; re-inspect after cleaning.",
		"Measure the received power with a calibrated power meter and compare it with the plan; walk the patch path for tight bends or pinched cords.",
		"If a step loss is logged, check what was worked on at that time (patching, cable work) and run an OTDR trace toward the far end.",
	},
	CauseRxOverload: {
		"Measure the received power with a power meter; if it is above the module's overload limit, fit a fixed attenuator of the right value at the receiver.",
		"Confirm the patching against the plan: a short path or a bypassed attenuator or mux stage gives too much power.",
		"Check the preamplifier or channel attenuation setting on the line system for this channel.",
	},
	CauseCDMismatch: {
		"Confirm the patching against the link plan end to end: the measured dispersion says the light takes a different route or fibre than designed.",
		"Check the route records (fibre type, span lengths, any dispersion-compensating modules) and correct the plan or the patching.",
		"Run an OTDR trace to measure the actual fibre length of each span.",
	},
	CauseCDOverLimit: {
		"The route's dispersion is beyond what this module compensates: move the circuit to a module class with a larger CD range or a shorter route.",
		"If the route includes dispersion compensation by design, confirm that module is present and patched in.",
		"Confirm the patching against the plan in case the light takes a longer path than intended.",
	},
	CausePMD: {
		"Have the fibre's PMD measured (e.g. with a PMD analyser) and compare with the plan's coefficient; old or aerial fibre sections are the usual suspects.",
		"Move the circuit to fibre with lower PMD, or to a module class with a larger DGD tolerance.",
		"Keep the log running: PMD varies with temperature and time, and a longer record sharpens the mean-DGD estimate.",
	},
	CauseSOPTransient: {
		"Find where the route runs on aerial cable, bridges or along railways and compare the burst times with weather (lightning, wind) or work on the route.",
		"Ask whether the module firmware offers a faster polarization-tracking setting, or choose a module class with a higher SOP tracking speed.",
		"Correlate the burst times with the ports sharing the same cable: a shared cause shows on all of them.",
	},
	CausePDLHigh: {
		"Look for the components that make PDL: WSS and ROADM ports, couplers and splitters, isolators, and amplifiers whose gain depends on polarization; compare the PDL with the plan's count of these elements.",
		"Compare PDL on the other channels of the same line: a line-wide rise points to a shared component (an amplifier or a ROADM degree), a single-channel rise to its add/drop path.",
		"Measure the suspect component's PDL (e.g. with a polarization scrambler and a power meter) and replace it if it is out of its specification; connector dirt causes loss, not PDL.",
	},
	CauseLOOffset: {
		"Check the transmitter and receiver laser frequency settings against the plan's channel and the ITU-T G.694.1 grid.",
		"Check both modules' temperature and alarms: laser ageing or a cooling fault makes the carrier drift.",
		"Plan a module swap before the offset reaches the capture range; keep logging to confirm the drift rate.",
	},
	CauseNonlinear: {
		"Lower the per-channel launch power toward the plan's optimum (e.g. in 1 dB steps) and watch the eSNR and BER: they improve if nonlinearity is the cause.",
		"Check the amplifier output and gain settings and the channel count against the plan: fewer channels than planned raise the power per channel.",
		"Confirm the fibre type of each span; small-core fibre raises the nonlinear interference.",
	},
	CauseTxPower: {
		"Read the far-end module's transmit power and laser alarms: a transmitter that stepped down or runs outside its range is a module fault (laser bias, ageing) or a changed set-point.",
		"Compare the transmit power set-point with the plan and the provisioning history at the time of the step.",
		"If the set-point is right and the output is not, plan a module swap; re-check the received power after it.",
	},
	CauseFrequencyMismatch: {
		"Compare the provisioned channel frequency of both modules with the plan and the ITU-T G.694.1 grid; correct the provisioning.",
		"Check the ROADM or mux channel the port is patched to: the light must enter the filter port of its own frequency.",
		"If the frequency is provisioned right but reported off, check the module's laser alarms and plan a swap.",
	},
	CauseFiltering: {
		"Check that both lasers sit on the planned channel centre (provisioned frequency, carrier offset) and that the ROADM passbands along the path are set to the channel's width.",
		"Count the filters (ROADM degrees, WSS, muxes) the channel passes and compare with the plan: many narrow filters in cascade narrow the passband.",
		"Measure the received spectrum with an optical spectrum analyser: a clipped or asymmetric channel shape confirms filtering.",
	},
	CauseTransceiver: {
		"Loop the module back (or test it back to back with an attenuator) and compare its eSNR with the profile's: a module below its own ceiling is faulty or aged.",
		"Read the module's own alarms and temperatures, and check its firmware against the vendor's notes.",
		"Swap the module for a spare of the same class and re-run the check.",
	},
	CauseSignalLoss: {
		"Confirm with a power meter whether light arrives at the receiver; if it does not, trace back toward the transmitter span by span.",
		"Check the far-end transmitter is enabled and not shut down by automatic power reduction (ITU-T G.664), and look for alarms on the line system.",
		"Inspect and clean the connectors at every patch point you open (IEC 61300-3-35); confirm the patching against the plan.",
	},
}
