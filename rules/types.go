// Package rules holds module profiles, threshold rules and link plans as data: embedded YAML for
// the built-in ones, and loaders for a user's own files that fail with the line and field at fault.
package rules

// Profile describes a generic class of coherent module: its modulation, FEC and receiver
// tolerances. Every figure has its source in Sources, keyed by the figure's YAML/JSON name.
type Profile struct {
	ID          string `yaml:"id" json:"id"`
	Name        string `yaml:"name" json:"name"`
	Description string `yaml:"description" json:"description"`
	Modulation  string `yaml:"modulation" json:"modulation"` // dp-qpsk, dp-8qam, dp-16qam, dp-32qam, dp-64qam
	// Polarizations is 2 for dual-polarization formats.
	Polarizations int     `yaml:"polarizations" json:"polarizations"`
	BaudGBd       float64 `yaml:"baud_gbd" json:"baud_gbd"`
	LineRateGbps  float64 `yaml:"line_rate_gbps" json:"line_rate_gbps"`
	FEC           string  `yaml:"fec" json:"fec"`
	// FECThresholdBER is the pre-FEC BER the FEC still corrects to error-free output.
	FECThresholdBER float64 `yaml:"fec_threshold_ber" json:"fec_threshold_ber"`
	// RequiredOSNRdB is the back-to-back OSNR (0.1 nm) at which the BER reaches the threshold.
	RequiredOSNRdB float64 `yaml:"required_osnr_db" json:"required_osnr_db"`
	// ImplementationPenaltyDB is the SNR the module loses against theory at the threshold.
	ImplementationPenaltyDB float64 `yaml:"implementation_penalty_db" json:"implementation_penalty_db"`
	// BackToBackSNRdB is the transceiver's own SNR ceiling (0 when unknown).
	BackToBackSNRdB float64 `yaml:"back_to_back_snr_db" json:"back_to_back_snr_db"`
	CDTolerancePsNm float64 `yaml:"cd_tolerance_ps_nm" json:"cd_tolerance_ps_nm"`
	// DGDTolerancePs is the largest instantaneous DGD tolerated.
	DGDTolerancePs float64 `yaml:"dgd_tolerance_ps" json:"dgd_tolerance_ps"`
	// MeanDGDTolerancePs is the largest mean DGD (PMD) the module class is specified for (0 if none).
	MeanDGDTolerancePs float64 `yaml:"mean_dgd_tolerance_ps" json:"mean_dgd_tolerance_ps"`
	PDLTolerancedB     float64 `yaml:"pdl_tolerance_db" json:"pdl_tolerance_db"`
	SOPTrackingKradS   float64 `yaml:"sop_tracking_krad_s" json:"sop_tracking_krad_s"`
	// LOOffsetRangeMHz is the ± carrier-offset range the receiver captures.
	LOOffsetRangeMHz float64 `yaml:"lo_offset_range_mhz" json:"lo_offset_range_mhz"`
	RxPowerMinDBm    float64 `yaml:"rx_power_min_dbm" json:"rx_power_min_dbm"`
	RxPowerMaxDBm    float64 `yaml:"rx_power_max_dbm" json:"rx_power_max_dbm"`
	TxPowerMinDBm    float64 `yaml:"tx_power_min_dbm" json:"tx_power_min_dbm"`
	TxPowerMaxDBm    float64 `yaml:"tx_power_max_dbm" json:"tx_power_max_dbm"`
	// FrequencyMinTHz and FrequencyMaxTHz bound the tunable range (0 when not stated).
	FrequencyMinTHz float64 `yaml:"frequency_min_thz" json:"frequency_min_thz,omitempty"`
	FrequencyMaxTHz float64 `yaml:"frequency_max_thz" json:"frequency_max_thz,omitempty"`
	// HazardLevel is the IEC 60825-2 hazard level of the interface, e.g. "1M".
	HazardLevel string `yaml:"hazard_level" json:"hazard_level"`
	// ModuleTypes are names of the module class a telemetry's profile column may give instead
	// of the id, matched ignoring case (e.g. "400ZR"); each names one profile only.
	ModuleTypes []string `yaml:"module_types" json:"module_types,omitempty"`
	// Sources names where each figure comes from, keyed by the figure's name.
	Sources map[string]string `yaml:"sources" json:"sources"`
}
