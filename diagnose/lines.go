package diagnose

// LineFindingID is a line finding id of the design contract; its JSON is the id's string.
type LineFindingID string

// The line finding ids of the design contract: what the channels of one fibre line show
// together.
const (
	LineOutage       LineFindingID = "line-outage"        // light lost on the line's channels at once
	LineOSNRDrop     LineFindingID = "line-osnr-drop"     // OSNR fell, power held: loss before an amplifier, or amplifier noise
	LinePowerDrop    LineFindingID = "line-power-drop"    // received power fell: loss after the last amplifier
	LineSOPTransient LineFindingID = "line-sop-transient" // fast polarization changes in the same minutes
)

// LineResult is one fibre line: its ports, what they show together, and the fibre's mean DGD
// from all of them.
type LineResult struct {
	Line     string        `json:"line"`
	Ports    []string      `json:"ports"`
	Findings []LineFinding `json:"findings"`
	// PMD is the fibre's mean DGD pooled over every channel (nil without DGD samples).
	PMD *LinePMD `json:"pmd,omitempty"`
}

// LineFinding is one event of a line, seen by several of its channels inside the coincidence
// window. Confidence is the probability that the channels did not change together by chance
// (diagnose/line explains the computation).
type LineFinding struct {
	ID            LineFindingID `json:"id"`
	Confidence    float64       `json:"confidence"`
	From          string        `json:"from"` // RFC 3339, UTC
	To            string        `json:"to"`
	PortsAffected []string      `json:"ports_affected"`
	Evidence      []string      `json:"evidence"`
	// Explains is the port cause the finding stands for on each affected port.
	Explains CauseID `json:"explains,omitempty"`
}

// LinePMD is the mean DGD of a line's fibre estimated from all its channels: the average over
// time and wavelength of the DGD samples (ITU-T G.650.2), with the Maxwellian probability of
// the instantaneous DGD exceeding the channels' tolerance.
type LinePMD struct {
	MeanDGDPs float64 `json:"mean_dgd_ps"`
	Channels  int     `json:"channels"`
	Samples   int     `json:"samples"`
	// ChannelMeanMinPs and ChannelMeanMaxPs bound the channels' own means.
	ChannelMeanMinPs float64 `json:"channel_mean_min_ps"`
	ChannelMeanMaxPs float64 `json:"channel_mean_max_ps"`
	// TolerancePs is the smallest DGD tolerance of the channels' profiles; ExceedProbability
	// the Maxwellian P(τ > TolerancePs) at MeanDGDPs (both 0 when no profile states one).
	TolerancePs       float64 `json:"tolerance_ps"`
	ExceedProbability float64 `json:"exceed_probability"`
}

// LineRef points a port at a line finding.
type LineRef struct {
	Line string        `json:"line"`
	ID   LineFindingID `json:"id"`
	From string        `json:"from"`
	// Explains is the port cause the finding stands for on this port.
	Explains CauseID `json:"explains,omitempty"`
}

// ModuleID is a module's identity as the port map gives it.
type ModuleID struct {
	PartNumber string `json:"part_number,omitempty"`
	Serial     string `json:"serial,omitempty"`
	Firmware   string `json:"firmware,omitempty"`
}
