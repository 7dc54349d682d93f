package rules

import (
	_ "embed"
	"fmt"
	"reflect"
	"strings"
	"sync"
)

//go:embed thresholds.yaml
var builtinThresholdsYAML []byte

// Statistic names which per-port statistic a criterion judges. For signed quantities (CD, LO
// offset) the statistic is taken of the absolute value.
type Statistic string

// The statistics a criterion may judge: those of diagnose.Metric.
const (
	StatMin Statistic = "min"
	StatP50 Statistic = "p50"
	StatP99 Statistic = "p99"
	StatMax Statistic = "max"
)

func (s Statistic) valid() bool {
	return s == StatMin || s == StatP50 || s == StatP99 || s == StatMax
}

// Rules are the thresholds the diagnosis judges by: where pass turns marginal (beyond a module
// limit is always fail), which statistic each criterion judges, the evidence tests of the cause
// engine. (Fibre figures and the connector, splice and noise-figure defaults of link plans belong
// to the physics models, diagnose/optics.) Every value names its source in Sources, keyed by its YAML
// name. The built-in values live in rules/thresholds.yaml; docs/rules.md explains each.
type Rules struct {
	// Marginal bands: a port inside the limit but closer to it than this is marginal.

	// QMarginalMarginDB: Q-factor margin to the FEC-threshold Q (dB, 20·log10 Q) below which the
	// port is marginal; below 0 dB it fails.
	QMarginalMarginDB float64 `yaml:"q_marginal_margin_db" json:"q_marginal_margin_db"`
	// OSNRMarginalMarginDB: OSNR margin to the profile's required OSNR (dB) below which the port
	// is marginal; below 0 dB it fails.
	OSNRMarginalMarginDB float64 `yaml:"osnr_marginal_margin_db" json:"osnr_marginal_margin_db"`
	// RxPowerMarginalBandDB: distance (dB) to either edge of the receiver window within which
	// the port is marginal; outside the window it fails.
	RxPowerMarginalBandDB float64 `yaml:"rx_power_marginal_band_db" json:"rx_power_marginal_band_db"`
	// Fractions of the module tolerance above which the quantity is marginal (fail above 1).
	CDMarginalFraction       float64 `yaml:"cd_marginal_fraction" json:"cd_marginal_fraction"`
	DGDMarginalFraction      float64 `yaml:"dgd_marginal_fraction" json:"dgd_marginal_fraction"`
	PDLMarginalFraction      float64 `yaml:"pdl_marginal_fraction" json:"pdl_marginal_fraction"`
	SOPRateMarginalFraction  float64 `yaml:"sop_rate_marginal_fraction" json:"sop_rate_marginal_fraction"`
	LOOffsetMarginalFraction float64 `yaml:"lo_offset_marginal_fraction" json:"lo_offset_marginal_fraction"`

	// Statistics judged per criterion.
	QStatistic           Statistic `yaml:"q_statistic" json:"q_statistic"`
	OSNRStatistic        Statistic `yaml:"osnr_statistic" json:"osnr_statistic"`
	RxPowerLowStatistic  Statistic `yaml:"rx_power_low_statistic" json:"rx_power_low_statistic"`
	RxPowerHighStatistic Statistic `yaml:"rx_power_high_statistic" json:"rx_power_high_statistic"`
	CDStatistic          Statistic `yaml:"cd_statistic" json:"cd_statistic"`
	DGDStatistic         Statistic `yaml:"dgd_statistic" json:"dgd_statistic"`
	PDLStatistic         Statistic `yaml:"pdl_statistic" json:"pdl_statistic"`
	SOPRateStatistic     Statistic `yaml:"sop_rate_statistic" json:"sop_rate_statistic"`
	LOOffsetStatistic    Statistic `yaml:"lo_offset_statistic" json:"lo_offset_statistic"`

	// Cause evidence.

	// CDMismatchRelativeTolerance: |measured − planned| CD above this fraction of |planned| (and
	// above CDMismatchFloorPsNm) is cd-mismatch evidence.
	CDMismatchRelativeTolerance float64 `yaml:"cd_mismatch_relative_tolerance" json:"cd_mismatch_relative_tolerance"`
	CDMismatchFloorPsNm         float64 `yaml:"cd_mismatch_floor_ps_nm" json:"cd_mismatch_floor_ps_nm"`
	// PMDOutageProbability: the probability of the instantaneous DGD exceeding the module's DGD
	// tolerance that is accepted; with the Maxwellian it sets the largest mean DGD allowed.
	PMDOutageProbability float64 `yaml:"pmd_outage_probability" json:"pmd_outage_probability"`
	// BERBurstFactor: a pre-FEC BER sample above this multiple of the port's median BER is a burst.
	BERBurstFactor float64 `yaml:"ber_burst_factor" json:"ber_burst_factor"`
	// SOPSpikeFraction: an SOP-rate sample above this fraction of the module's tracking speed is a
	// spike.
	SOPSpikeFraction float64 `yaml:"sop_spike_fraction" json:"sop_spike_fraction"`
	// CoincidenceWindowS: a BER burst and an SOP spike (or power step) closer than this in time
	// coincide; the engine widens it to one sample interval when samples are sparser.
	CoincidenceWindowS float64 `yaml:"coincidence_window_s" json:"coincidence_window_s"`
	// TrendSignificanceSigma: a trend counts when its slope is this many standard errors from 0.
	TrendSignificanceSigma float64 `yaml:"trend_significance_sigma" json:"trend_significance_sigma"`
	// LODriftHorizonH: an LO offset trend projected this far ahead that reaches the capture range
	// is lo-offset evidence.
	LODriftHorizonH float64 `yaml:"lo_drift_horizon_h" json:"lo_drift_horizon_h"`
	// PowerStepDB: a change point in received power at least this large is a step loss (or gain).
	PowerStepDB float64 `yaml:"power_step_db" json:"power_step_db"`
	// SignalLossFloorDBm: received power below this means no signal (signal-loss).
	SignalLossFloorDBm float64 `yaml:"signal_loss_floor_dbm" json:"signal_loss_floor_dbm"`
	// OSNRGapVsPlanDB: measured (or BER-implied) OSNR this far below the plan's expected OSNR,
	// with received power normal, is osnr-low evidence.
	OSNRGapVsPlanDB float64 `yaml:"osnr_gap_vs_plan_db" json:"osnr_gap_vs_plan_db"`
	// NonlinearSNRGapDB: eSNR this far below the SNR implied by the measured OSNR (after the
	// module's implementation penalty) is nonlinear evidence.
	NonlinearSNRGapDB float64 `yaml:"nonlinear_snr_gap_db" json:"nonlinear_snr_gap_db"`
	// NonlinearLaunchPSDdBmPerGHz: per-channel launch power spectral density (dBm per GHz of
	// symbol rate: launch dBm − 10·log10(Rs/GHz)) above which fibre nonlinearity is a plausible
	// cause when the plan's GN model gives no optimum. Nonlinear interference grows with the
	// power density, not the channel power, so a wide channel tolerates more dBm.
	NonlinearLaunchPSDdBmPerGHz float64 `yaml:"nonlinear_launch_psd_dbm_per_ghz" json:"nonlinear_launch_psd_dbm_per_ghz"`
	// LOStepFraction: a change point in the carrier (LO) offset of at least this fraction of the
	// capture range is a step (a laser retune or a relock), not a drift.
	LOStepFraction float64 `yaml:"lo_step_fraction" json:"lo_step_fraction"`
	// FrequencyAccuracyGHz: a channel centre further than this from the nearest 6.25 GHz grid
	// frequency is off the grid.
	FrequencyAccuracyGHz float64 `yaml:"frequency_accuracy_ghz" json:"frequency_accuracy_ghz"`
	// CorrelationMinSpearman: rank correlation of BER with another quantity (DGD, power) at least
	// this strong counts as evidence.
	CorrelationMinSpearman float64 `yaml:"correlation_min_spearman" json:"correlation_min_spearman"`
	// MinSamplesForTrend: fewer samples than this give no trend, change point or fit.
	MinSamplesForTrend int `yaml:"min_samples_for_trend" json:"min_samples_for_trend"`

	// Acceptance holds the test period, coverage and error-performance figures (acceptance.go).
	Acceptance AcceptanceRules `yaml:"acceptance" json:"acceptance"`
	// PosteriorTemperature divides every log-likelihood before the posterior is normalised
	// (temperature scaling, C. Guo et al., "On calibration of modern neural networks", ICML
	// 2017): fitted on the labelled calibration corpus (lowest Brier score) so that stated
	// probabilities match observed frequencies.
	PosteriorTemperature float64 `yaml:"posterior_temperature" json:"posterior_temperature"`
	// Priors are the prior probabilities of each hypothesis about a port before its data is
	// read; the posterior is normalised over them, so they need not add up to 1.
	Priors Priors `yaml:"priors" json:"priors"`

	// Lines (channels sharing a fibre line).

	// OSNRStepDB: a change point in a channel's OSNR at least this large is a step.
	OSNRStepDB float64 `yaml:"osnr_step_db" json:"osnr_step_db"`
	// LineFindingMinConfidence: channels changing together are a line finding when the
	// probability that they did so by chance is below 1 − this.
	LineFindingMinConfidence float64 `yaml:"line_finding_min_confidence" json:"line_finding_min_confidence"`

	// Sources names where each value comes from, keyed by its YAML name.
	Sources map[string]string `yaml:"sources" json:"sources"`
}

// Priors are the prior probabilities of the hypotheses the diagnosis weighs: a healthy port,
// one of the causes of the design contract (yaml name = cause id with "_" for "-"), and an
// unexplained remainder (trouble none of the causes describes).
type Priors struct {
	Healthy           float64 `yaml:"healthy" json:"healthy"`
	Unexplained       float64 `yaml:"unexplained" json:"unexplained"`
	OSNRLow           float64 `yaml:"osnr_low" json:"osnr_low"`
	RxPowerLow        float64 `yaml:"rx_power_low" json:"rx_power_low"`
	RxOverload        float64 `yaml:"rx_overload" json:"rx_overload"`
	CDMismatch        float64 `yaml:"cd_mismatch" json:"cd_mismatch"`
	CDOverLimit       float64 `yaml:"cd_over_limit" json:"cd_over_limit"`
	PMD               float64 `yaml:"pmd" json:"pmd"`
	SOPTransient      float64 `yaml:"sop_transient" json:"sop_transient"`
	PDLHigh           float64 `yaml:"pdl_high" json:"pdl_high"`
	LOOffset          float64 `yaml:"lo_offset" json:"lo_offset"`
	Nonlinear         float64 `yaml:"nonlinear" json:"nonlinear"`
	SignalLoss        float64 `yaml:"signal_loss" json:"signal_loss"`
	TxPower           float64 `yaml:"tx_power" json:"tx_power"`
	FrequencyMismatch float64 `yaml:"frequency_mismatch" json:"frequency_mismatch"`
	Filtering         float64 `yaml:"filtering" json:"filtering"`
	Transceiver       float64 `yaml:"transceiver" json:"transceiver"`
}

// checks: every prior is a probability above zero (a zero prior could never be named).
func (p Priors) checks() []rangeCheck {
	var out []rangeCheck
	v, t := reflect.ValueOf(p), reflect.TypeOf(p)
	for i := 0; i < t.NumField(); i++ {
		name, _, _ := strings.Cut(t.Field(i).Tag.Get("yaml"), ",")
		out = append(out, rangeCheck{"priors." + name, v.Field(i).Float(), 1e-6, 1, ""})
	}
	return out
}

// Of is the prior of the hypothesis id ("healthy", "unexplained" or a cause id such as
// "osnr-low"); ok is false for an id Priors does not know.
func (p Priors) Of(id string) (prior float64, ok bool) {
	i, ok := priorField()[strings.ReplaceAll(id, "-", "_")]
	if !ok {
		return 0, false
	}
	return reflect.ValueOf(p).Field(i).Float(), true
}

// priorField maps each prior's YAML name to its field index (built once).
var priorField = sync.OnceValue(func() map[string]int {
	m := map[string]int{}
	t := reflect.TypeOf(Priors{})
	for i := 0; i < t.NumField(); i++ {
		name, _, _ := strings.Cut(t.Field(i).Tag.Get("yaml"), ",")
		m[name] = i
	}
	return m
})

// ruleValues lists every value of Rules by dotted YAML name, for the source checks.
func ruleValues(r *Rules) []ruleValue {
	var out []ruleValue
	var walk func(v reflect.Value, prefix string)
	walk = func(v reflect.Value, prefix string) {
		t := v.Type()
		for i := 0; i < t.NumField(); i++ {
			name, _, _ := strings.Cut(t.Field(i).Tag.Get("yaml"), ",")
			if name == "sources" {
				continue
			}
			f := v.Field(i)
			if f.Kind() == reflect.Struct {
				walk(f, joinPath(prefix, name))
				continue
			}
			out = append(out, ruleValue{key: joinPath(prefix, name), v: f})
		}
	}
	walk(reflect.ValueOf(r).Elem(), "")
	return out
}

type ruleValue struct {
	key string
	v   reflect.Value
}

// rangeCheck is one value's sanity range for Validate.
type rangeCheck struct {
	key    string
	v      float64
	lo, hi float64
	unit   string
}

// Validate checks every value's range and that every value names a source. Its error is a
// *FieldError naming the value at fault.
func (r Rules) Validate() error {
	// Bounds are sanity limits; !(v >= lo && v <= hi) lets NaN fail too.
	checks := []rangeCheck{
		{"q_marginal_margin_db", r.QMarginalMarginDB, 0, 10, "dB"},
		{"osnr_marginal_margin_db", r.OSNRMarginalMarginDB, 0, 20, "dB"},
		{"rx_power_marginal_band_db", r.RxPowerMarginalBandDB, 0, 20, "dB"},
		{"cd_marginal_fraction", r.CDMarginalFraction, 0, 1, ""},
		{"dgd_marginal_fraction", r.DGDMarginalFraction, 0, 1, ""},
		{"pdl_marginal_fraction", r.PDLMarginalFraction, 0, 1, ""},
		{"sop_rate_marginal_fraction", r.SOPRateMarginalFraction, 0, 1, ""},
		{"lo_offset_marginal_fraction", r.LOOffsetMarginalFraction, 0, 1, ""},
		{"cd_mismatch_relative_tolerance", r.CDMismatchRelativeTolerance, 0.001, 1, ""},
		{"cd_mismatch_floor_ps_nm", r.CDMismatchFloorPsNm, 0, 10000, "ps/nm"},
		{"ber_burst_factor", r.BERBurstFactor, 1.0001, 1e6, ""},
		{"sop_spike_fraction", r.SOPSpikeFraction, 0.001, 10, ""},
		{"coincidence_window_s", r.CoincidenceWindowS, 0, 86400, "s"},
		{"trend_significance_sigma", r.TrendSignificanceSigma, 0.5, 20, "σ"},
		{"lo_drift_horizon_h", r.LODriftHorizonH, 0.01, 24 * 365, "h"},
		{"power_step_db", r.PowerStepDB, 0.05, 40, "dB"},
		{"signal_loss_floor_dbm", r.SignalLossFloorDBm, -80, 0, "dBm"},
		{"osnr_gap_vs_plan_db", r.OSNRGapVsPlanDB, 0.1, 30, "dB"},
		{"nonlinear_snr_gap_db", r.NonlinearSNRGapDB, 0.1, 30, "dB"},
		{"nonlinear_launch_psd_dbm_per_ghz", r.NonlinearLaunchPSDdBmPerGHz, -40, 10, "dBm/GHz"},
		{"lo_step_fraction", r.LOStepFraction, 0.001, 1, ""},
		{"frequency_accuracy_ghz", r.FrequencyAccuracyGHz, 0.01, 6.25, "GHz"},
		{"posterior_temperature", r.PosteriorTemperature, 0.05, 20, ""},
		{"correlation_min_spearman", r.CorrelationMinSpearman, 0.05, 1, ""},
		{"min_samples_for_trend", float64(r.MinSamplesForTrend), 3, 1e7, "samples"},
		{"osnr_step_db", r.OSNRStepDB, 0.1, 30, "dB"},
		{"line_finding_min_confidence", r.LineFindingMinConfidence, 0.5, 0.999999, ""},
	}
	checks = append(checks, r.Acceptance.checks()...)
	checks = append(checks, r.Priors.checks()...)
	for _, c := range checks {
		if !(c.v >= c.lo && c.v <= c.hi) {
			return fieldErr(c.key, ErrRange, "%g %s is outside %g…%g %s", c.v, c.unit, c.lo, c.hi, c.unit)
		}
	}
	if !(r.PMDOutageProbability > 0 && r.PMDOutageProbability < 0.1) {
		return fieldErr("pmd_outage_probability", ErrRange, "%g is outside (0, 0.1)", r.PMDOutageProbability)
	}
	for _, s := range []struct {
		key string
		v   Statistic
	}{
		{"q_statistic", r.QStatistic}, {"osnr_statistic", r.OSNRStatistic},
		{"rx_power_low_statistic", r.RxPowerLowStatistic}, {"rx_power_high_statistic", r.RxPowerHighStatistic},
		{"cd_statistic", r.CDStatistic}, {"dgd_statistic", r.DGDStatistic}, {"pdl_statistic", r.PDLStatistic},
		{"sop_rate_statistic", r.SOPRateStatistic}, {"lo_offset_statistic", r.LOOffsetStatistic},
	} {
		if !s.v.valid() {
			return fieldErr(s.key, ErrRange, "%q is not one of min, p50, p99, max", s.v)
		}
	}
	known := map[string]bool{}
	for _, rv := range ruleValues(&r) {
		known[rv.key] = true
		if strings.TrimSpace(r.Sources[rv.key]) == "" {
			return fieldErr("sources."+rv.key, ErrMissing, "value %s has no source (a standard, \"from memory\", \"common practice\" or \"derived: …\")", rv.key)
		}
	}
	for key := range r.Sources {
		if !known[key] {
			return fieldErr("sources."+key, ErrUnknownField, "no value is named %q", key)
		}
	}
	return nil
}

// DefaultRules returns the built-in threshold rules (rules/thresholds.yaml), validated.
func DefaultRules() (Rules, error) {
	var r Rules
	if _, _, err := decodeStrict("thresholds.yaml (built in)", builtinThresholdsYAML, &r); err != nil {
		return Rules{}, err
	}
	if err := r.Validate(); err != nil {
		return Rules{}, fmt.Errorf("thresholds.yaml (built in): %w", err)
	}
	return r, nil
}

// LoadRules returns the built-in rules with the values of the file at path overriding them one
// by one. A value the file sets without a source gets the source "user rules file <path>".
func LoadRules(path string) (Rules, error) {
	data, err := ReadConfig(path)
	if err != nil {
		return Rules{}, err
	}
	return ParseRules(path, data)
}

// ParseRules is LoadRules for a rules file already read from path.
func ParseRules(path string, data []byte) (Rules, error) {
	r, err := DefaultRules()
	if err != nil {
		return Rules{}, err
	}
	// Decode into a fresh value first to know which keys the file sets, then onto the defaults.
	var probe Rules
	_, ix, err := decodeStrict(path, data, &probe)
	if err != nil {
		return Rules{}, err
	}
	if _, _, err := decodeStrict(path, data, &r); err != nil {
		return Rules{}, err
	}
	for _, rv := range ruleValues(&r) {
		if _, set := ix[rv.key]; set {
			if _, sourced := ix["sources."+rv.key]; !sourced {
				r.Sources[rv.key] = "user rules file " + path
			}
		}
	}
	if err := r.Validate(); err != nil {
		return Rules{}, ix.toFileError(path, err)
	}
	return r, nil
}
