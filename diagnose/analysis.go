package diagnose

import (
	"github.com/beatnote/beatnote/diagnose/optics"
	"github.com/beatnote/beatnote/parse"
	"github.com/beatnote/beatnote/rules"
)

// PortAnalysis holds the time-series findings behind one port's verdict and causes, for reports
// that chart them. It is not part of the JSON contract (PortResult.Analysis is tagged json:"-").
// Times are Unix milliseconds, UTC. Fields are nil or empty when the port lacks the quantity.
type PortAnalysis struct {
	// Series is the port's telemetry as analysed (shared with the Dataset: do not modify; its
	// columns may be in parse's compact store: see parse.Series.Decoded).
	Series *parse.Series
	// Profile is the module profile the port was judged against.
	Profile rules.Profile
	// Plan is the link plan, nil when none applies.
	Plan *rules.Plan
	// Expected holds what the plan predicts (optics.ExpectLink), nil without a plan.
	Expected *optics.LinkExpectation

	// FECLimitQdB is the profile's FEC threshold expressed as Q in dB (Q = √2·erfc⁻¹(2·BER)).
	FECLimitQdB float64
	// RequiredESNRdB is the theoretical Es/N0 (dB) at which the modulation reaches the FEC
	// threshold BER (no implementation penalty).
	RequiredESNRdB float64

	// PowerSteps are change points in received power (step loss or gain), in time order.
	PowerSteps []ChangePoint
	// BERBursts are runs of pre-FEC BER above the burst threshold (BurstThresholdBER).
	BERBursts []Interval
	// BurstThresholdBER is the pre-FEC BER level that defines a burst.
	BurstThresholdBER float64
	// BlockBursts are runs of intervals with uncorrected FEC blocks.
	BlockBursts []Interval
	// DarkRuns are runs of samples without signal (power at the loss-of-signal floor, or no
	// lock), in time order.
	DarkRuns []Interval
	// SOPSpikes are runs of SOP rate above the spike threshold (SOPSpikeThresholdKradS).
	SOPSpikes              []Interval
	SOPSpikeThresholdKradS float64
	// Coincidences pair each BER or block burst with the nearest SOP spike within the window.
	Coincidences []Coincidence
	// CoincidenceWindowS is the largest |lag| counted as a coincidence, seconds.
	CoincidenceWindowS float64

	// LOTrend is the trend of the carrier (LO) offset toward its capture limit.
	LOTrend *Trend
	// RxPowerTrend is the trend of received power (slow decay).
	RxPowerTrend *Trend
	// DGDFit is the Maxwellian fit of the DGD samples.
	DGDFit *MaxwellFit
	// Posterior is the marginal posterior of every cause id (all of them, listed or not).
	Posterior map[CauseID]float64
	// OSNRSteps are change points in the reported OSNR of at least osnr_step_db.
	OSNRSteps []ChangePoint
	// LOSteps are change points in the carrier (LO) offset of at least lo_step_fraction of the
	// capture range: retunes or relocks, not drift.
	LOSteps []ChangePoint
	// Correlations are Spearman rank correlations of pre-FEC BER with other quantities.
	Correlations []Correlation
}

// ChangePoint is a step in a series: the mean before and after a time.
type ChangePoint struct {
	TimeMs   int64   `json:"time_ms"`
	Index    int     `json:"index"`
	Quantity string  `json:"quantity"`
	Before   float64 `json:"before"`
	After    float64 `json:"after"`
	Step     float64 `json:"step"` // After − Before, in the quantity's unit (dB for powers)
	Unit     string  `json:"unit"`
}

// Interval is a run of consecutive samples above a threshold.
type Interval struct {
	FromMs  int64   `json:"from_ms"`
	ToMs    int64   `json:"to_ms"`
	Peak    float64 `json:"peak"`
	Samples int     `json:"samples"`
}

// Coincidence pairs a BER or block burst with an SOP spike. LagS is the spike start minus the
// burst start, seconds (negative: the spike came first).
type Coincidence struct {
	Kind  string   `json:"kind"` // "pre_fec_ber" or "uncorrected_blocks"
	Burst Interval `json:"burst"`
	Spike Interval `json:"spike"`
	LagS  float64  `json:"lag_s"`
}

// Trend is a straight-line fit of a quantity over time with its uncertainty.
type Trend struct {
	Quantity string  `json:"quantity"`
	Method   string  `json:"method"`
	Unit     string  `json:"unit"` // unit of the quantity; slopes are per hour
	Slope    float64 `json:"slope_per_h"`
	SlopeSE  float64 `json:"slope_se_per_h"`
	// Intercept is the fitted value at StartMs.
	Intercept float64 `json:"intercept"`
	StartMs   int64   `json:"start_ms"`
	EndMs     int64   `json:"end_ms"`
	// AtEnd is the fitted value at EndMs.
	AtEnd float64 `json:"at_end"`
	// Limit is the value the trend is projected toward (NaN when none).
	Limit float64 `json:"limit"`
	// HoursToLimit is the projected time from EndMs until the fit reaches Limit; +Inf when the
	// trend does not head toward it, 0 when already beyond.
	HoursToLimit float64 `json:"hours_to_limit"`
}

// MaxwellFit is the fit of DGD samples to a Maxwellian distribution.
type MaxwellFit struct {
	N      int     `json:"n"`
	MeanPs float64 `json:"mean_ps"`
	// KS is the Kolmogorov–Smirnov statistic D against the Maxwellian of that mean; KSPValue its
	// asymptotic p-value (a small p-value says the spread is not Maxwellian-shaped).
	KS       float64 `json:"ks"`
	KSPValue float64 `json:"ks_p_value"`
	// TolerancePs is the profile's instantaneous DGD tolerance and ExceedProbability the
	// Maxwellian probability that the DGD exceeds it, P(τ > tolerance).
	TolerancePs       float64 `json:"tolerance_ps"`
	ExceedProbability float64 `json:"exceed_probability"`
}

// Correlation is a Spearman rank correlation between two quantities of a port.
type Correlation struct {
	A   string  `json:"a"`
	B   string  `json:"b"`
	Rho float64 `json:"rho"`
	N   int     `json:"n"`
	// P is the two-sided p-value from the t approximation (NaN when N < 4).
	P float64 `json:"p"`
}
