package diagnose

import (
	"github.com/beatnote/beatnote/diagnose/soak"
	"github.com/beatnote/beatnote/parse"
)

// Verdict is the judgement of one port or one criterion.
type Verdict string

// The verdicts, from best to worst; NoData means nothing could be judged.
const (
	Pass     Verdict = "pass"
	Marginal Verdict = "marginal"
	Fail     Verdict = "fail"
	NoData   Verdict = "no-data"
	// Incomplete is a port that met every limit over a log too short or too sparse for the
	// acceptance test period: never a pass.
	Incomplete Verdict = "incomplete"
)

// Severity orders verdicts for worst-first sorting: fail 4, marginal 3, incomplete 2,
// no-data 1, pass 0.
func (v Verdict) Severity() int {
	switch v {
	case Fail:
		return 4
	case Marginal:
		return 3
	case Incomplete:
		return 2
	case NoData:
		return 1
	}
	return 0
}

// CauseID is a cause id of the design contract; its JSON is the id's string.
type CauseID string

// The cause ids of the design contract.
const (
	CauseOSNRLow      CauseID = "osnr-low"
	CauseRxPowerLow   CauseID = "rx-power-low"
	CauseRxOverload   CauseID = "rx-overload"
	CauseCDMismatch   CauseID = "cd-mismatch"
	CauseCDOverLimit  CauseID = "cd-over-limit"
	CausePMD          CauseID = "pmd"
	CauseSOPTransient CauseID = "sop-transient"
	CausePDLHigh      CauseID = "pdl-high"
	CauseLOOffset     CauseID = "lo-offset"
	CauseNonlinear    CauseID = "nonlinear"
	CauseSignalLoss   CauseID = "signal-loss"
	// CauseTxPower: the transmitter's output out of range or stepped, the received power
	// following it.
	CauseTxPower CauseID = "tx-power"
	// CauseFrequencyMismatch: the channel frequency differs from the plan or sits off the grid.
	CauseFrequencyMismatch CauseID = "frequency-mismatch"
	// CauseFiltering: passband narrowing or an off-centre laser.
	CauseFiltering CauseID = "filtering"
	// CauseTransceiver: an eSNR shortfall the line cannot explain (module floor, ageing, DSP).
	CauseTransceiver CauseID = "transceiver"
)

// Where a port's profile came from (PortResult.ProfileSource, Setup.ProfileSource).
const (
	ProfileFromMap    = "map"     // the port map's entry (its profile, or its plan's)
	ProfileFromColumn = "column"  // a profile column in the telemetry
	ProfileFromFlag   = "flag"    // --profile, or the profile of the --plan given
	ProfileAssumed    = "default" // nothing said: the built-in default, an assumption
)

// numCauses is len(AllCauses) (TestPosteriorNormalised checks it).
const numCauses = 15

// AllCauses lists every cause id of the design contract, in its order.
var AllCauses = []CauseID{
	CauseOSNRLow, CauseRxPowerLow, CauseRxOverload, CauseCDMismatch, CauseCDOverLimit, CausePMD,
	CauseSOPTransient, CausePDLHigh, CauseLOOffset, CauseNonlinear, CauseSignalLoss,
	CauseTxPower, CauseFrequencyMismatch, CauseFiltering, CauseTransceiver,
}

// Posterior holds the probabilities of the two hypotheses that are not causes: a healthy port,
// and trouble none of the causes describes. With the causes' confidences (each the marginal
// posterior of the cause, alone or in a pair) they come from one normalised posterior.
type Posterior struct {
	Healthy     float64 `json:"healthy"`
	Unexplained float64 `json:"unexplained"`
}

// Result is the machine-readable outcome of check and triage (the JSON of the design contract).
type Result struct {
	Tool     string             `json:"tool"`
	Version  string             `json:"version"`
	Inputs   []parse.InputStats `json:"inputs"`
	Ports    []PortResult       `json:"ports"`
	Rejected []parse.Rejection  `json:"rejected"`

	// Lines holds what the channels sharing a fibre line show together (diagnose/line), when
	// a port map names the lines; before Ports in every report.
	Lines []LineResult `json:"lines,omitempty"`
	// Directions holds the circuits judged in both directions (check with both ends' logs, or
	// with peers in the port map).
	Directions []DirectionPair `json:"directions,omitempty"`
}

// PortResult is the judgement of one port.
type PortResult struct {
	Port    string            `json:"port"`
	Profile string            `json:"profile"`
	Circuit string            `json:"circuit,omitempty"`
	Samples int               `json:"samples"`
	From    string            `json:"from"` // RFC 3339, UTC
	To      string            `json:"to"`
	Verdict Verdict           `json:"verdict"`
	Causes  []Cause           `json:"causes"`
	Metrics map[string]Metric `json:"metrics"`
	// Criteria is the criteria table: one row per judged limit.
	Criteria []Criterion `json:"criteria,omitempty"`
	// PlanVsMeasured compares the link plan's expectations with the measurements.
	PlanVsMeasured []PlanComparison `json:"plan_vs_measured,omitempty"`
	// Posterior gives the probabilities of healthy and unexplained beside the causes'.
	Posterior *Posterior `json:"posterior,omitempty"`
	// Budget is the SNR-deficit decomposition, nil when the port has no eSNR (or BER).
	Budget *Budget `json:"budget,omitempty"`
	// NextTest is the measurement that best separates the top candidates ("" when none).
	NextTest string `json:"next_test,omitempty"`
	// Risks are notes about what is inside the limits but close to them (e.g. received power
	// near the sensitivity limit with the Q margin fine): not causes, not criteria.
	Risks []string `json:"risks,omitempty"`
	// NotJudged says what could not be judged and why (no plan, quantity missing, …).
	NotJudged []string `json:"not_judged,omitempty"`
	// TestPeriod says how the log covers the acceptance test period (check and report).
	TestPeriod *soak.Coverage `json:"test_period,omitempty"`
	// ErrorPerformance holds the ITU-T G.826 / G.8201 events (check and report).
	ErrorPerformance *ErrorPerformance `json:"error_performance,omitempty"`
	// Analysis holds the time-series findings for charts (change points, bursts, trends, fits).
	Analysis *PortAnalysis `json:"-"`

	// ProfileSource says what chose the profile: ProfileFromMap, ProfileFromColumn,
	// ProfileFromFlag or ProfileAssumed ("" when the caller did not say).
	ProfileSource string `json:"profile_source,omitempty"`
	// Topology from the port map: the fibre line the port receives on, the port of the
	// circuit's other direction, the module's identity, and the line findings that explain
	// (part of) what the port shows.
	Line         string    `json:"line,omitempty"`
	Peer         string    `json:"peer,omitempty"`
	Module       *ModuleID `json:"module,omitempty"`
	LineFindings []LineRef `json:"line_findings,omitempty"`
}

// Cause is one likely physical cause with the evidence for it.
type Cause struct {
	ID         CauseID  `json:"id"`
	Confidence float64  `json:"confidence"` // 0…1
	Evidence   []string `json:"evidence"`
	Actions    []string `json:"actions,omitempty"`
	// Cautions[i] is the laser-safety caution of Actions[i] (FibreCaution), "" for an action
	// that touches no fibre; nil when none does.
	Cautions []string `json:"cautions,omitempty"`
}

// Metric summarises one quantity of a port, measured or derived. Limit and Margin are nil where
// no limit applies. Margin is positive when inside the limit.
type Metric struct {
	Min     float64  `json:"min"`
	P50     float64  `json:"p50"`
	P99     float64  `json:"p99"`
	Max     float64  `json:"max"`
	Limit   *float64 `json:"limit"`
	Margin  *float64 `json:"margin"`
	Unit    string   `json:"unit,omitempty"`
	Derived bool     `json:"derived,omitempty"`
}

// Criterion is one row of the criteria table.
type Criterion struct {
	Name      string  `json:"name"`      // e.g. "Q-factor margin to FEC threshold"
	Metric    string  `json:"metric"`    // canonical column name or derived metric key
	Statistic string  `json:"statistic"` // which statistic is judged: min, p99, max, …
	Measured  float64 `json:"measured"`
	Limit     float64 `json:"limit"`
	Margin    float64 `json:"margin"`
	Unit      string  `json:"unit"`
	// MarginUnit is the margin's unit when it differs from Unit: "decades" for the post-FEC BER,
	// whose margin is log10(limit/measured).
	MarginUnit string  `json:"margin_unit,omitempty"`
	Verdict    Verdict `json:"verdict"`
	Source     string  `json:"source,omitempty"` // where the limit comes from
}

// PlanComparison is one quantity the link plan predicts, next to what was measured.
type PlanComparison struct {
	Quantity string  `json:"quantity"`
	Expected float64 `json:"expected"`
	Measured float64 `json:"measured"`
	Unit     string  `json:"unit"`
	Note     string  `json:"note,omitempty"`
}
