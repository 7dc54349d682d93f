package rules

// Plan is a link plan: the design of one circuit, from which the physics models give the expected
// CD, mean DGD, received power and OSNR. Its YAML schema is beatnote's own (docs/rules.md).
type Plan struct {
	Circuit     string `yaml:"circuit" json:"circuit"`
	Description string `yaml:"description" json:"description"`
	EndA        string `yaml:"end_a" json:"end_a"`
	EndZ        string `yaml:"end_z" json:"end_z"`
	// Ports lists the telemetry port ids that carry this circuit (both ends may be listed).
	Ports   []string `yaml:"ports" json:"ports"`
	Profile string   `yaml:"profile" json:"profile"`
	// FrequencyTHz is the channel centre frequency (ITU-T G.694.1 grid).
	FrequencyTHz float64 `yaml:"frequency_thz" json:"frequency_thz"`
	// TxPowerDBm is the transceiver's output power.
	TxPowerDBm float64 `yaml:"tx_power_dbm" json:"tx_power_dbm"`
	// LaunchPowerDBm is the per-channel power launched into each span (0 means "as TxPowerDBm").
	LaunchPowerDBm float64 `yaml:"launch_power_dbm" json:"launch_power_dbm"`
	// Channels is the number of WDM channels sharing the line (for the nonlinear model; 0 = 1).
	Channels int `yaml:"channels" json:"channels"`
	// ChannelSpacingGHz of the WDM comb (for the nonlinear model).
	ChannelSpacingGHz float64 `yaml:"channel_spacing_ghz" json:"channel_spacing_ghz"`
	// HazardLevel is the IEC 60825-2 hazard level at the accessible locations, if known.
	HazardLevel string `yaml:"hazard_level" json:"hazard_level"`
	// Elements lists spans and amplifiers in the order the light passes them.
	Spans      []Span      `yaml:"spans" json:"spans"`
	Amplifiers []Amplifier `yaml:"amplifiers" json:"amplifiers"`
	// ExtraLossDB is loss outside the spans (patch panels, mux/demux), dB.
	ExtraLossDB float64 `yaml:"extra_loss_db" json:"extra_loss_db"`
	// Soak is the acceptance test period (ParseTestPeriod: 15m, 2h, 24h, 7d, …); empty means
	// the rules' acceptance.test_period_h.
	Soak string `yaml:"soak" json:"soak,omitempty"`
	// Instruments are the test instruments used at acceptance, with their calibration.
	Instruments []Instrument `yaml:"instruments" json:"instruments,omitempty"`
	// PowerReadings are optical power readings taken by hand with a power meter at acceptance.
	PowerReadings []PowerReading `yaml:"power_readings" json:"power_readings,omitempty"`
}

// Instrument is one test instrument used at acceptance. Dates are YYYY-MM-DD.
type Instrument struct {
	Kind           string `yaml:"kind" json:"kind"` // e.g. "optical power meter"
	Model          string `yaml:"model" json:"model,omitempty"`
	Serial         string `yaml:"serial" json:"serial"`
	CalibratedOn   string `yaml:"calibrated_on" json:"calibrated_on"`
	CalibrationDue string `yaml:"calibration_due" json:"calibration_due,omitempty"`
}

// PowerReading is one hand power-meter reading.
type PowerReading struct {
	Location     string  `yaml:"location" json:"location"` // e.g. "Rx patch panel, site Z"
	PowerDBm     float64 `yaml:"power_dbm" json:"power_dbm"`
	WavelengthNm float64 `yaml:"wavelength_nm" json:"wavelength_nm,omitempty"`
	Instrument   string  `yaml:"instrument" json:"instrument,omitempty"` // the serial of one of Instruments
	TakenAt      string  `yaml:"taken_at" json:"taken_at,omitempty"`     // RFC 3339 or YYYY-MM-DD
}

// Span is one fibre section between two sites or amplifiers.
type Span struct {
	Name     string  `yaml:"name" json:"name"`
	LengthKm float64 `yaml:"length_km" json:"length_km"`
	// Fiber is a fibre type: g652, g654e, g655 (typical figures) or "custom" with the fields below.
	Fiber string `yaml:"fiber" json:"fiber"`
	// DispersionPsNmKm overrides the fibre type's D at the channel wavelength.
	DispersionPsNmKm *float64 `yaml:"dispersion_ps_nm_km" json:"dispersion_ps_nm_km,omitempty"`
	// SlopePsNm2Km is the dispersion slope at the channel wavelength.
	SlopePsNm2Km *float64 `yaml:"slope_ps_nm2_km" json:"slope_ps_nm2_km,omitempty"`
	// AttenuationDBPerKm overrides the fibre type's attenuation.
	AttenuationDBPerKm *float64 `yaml:"attenuation_db_per_km" json:"attenuation_db_per_km,omitempty"`
	// PMDCoefficientPsSqrtKm overrides the fibre type's PMD coefficient.
	PMDCoefficientPsSqrtKm *float64 `yaml:"pmd_ps_sqrt_km" json:"pmd_ps_sqrt_km,omitempty"`
	// MeasuredLossDB, when known (e.g. from an OTDR or loss test), replaces the computed loss.
	MeasuredLossDB *float64 `yaml:"measured_loss_db" json:"measured_loss_db,omitempty"`
	Connectors     int      `yaml:"connectors" json:"connectors"`
	Splices        int      `yaml:"splices" json:"splices"`
	// ConnectorLossDB and SpliceLossDB per item; defaults come from the rules.
	ConnectorLossDB *float64 `yaml:"connector_loss_db" json:"connector_loss_db,omitempty"`
	SpliceLossDB    *float64 `yaml:"splice_loss_db" json:"splice_loss_db,omitempty"`
}

// Amplifier is an optical amplifier placed after span AfterSpan (1-based; 0 is a booster before
// the first span).
type Amplifier struct {
	Name          string  `yaml:"name" json:"name"`
	AfterSpan     int     `yaml:"after_span" json:"after_span"`
	GainDB        float64 `yaml:"gain_db" json:"gain_db"`
	NoiseFigureDB float64 `yaml:"noise_figure_db" json:"noise_figure_db"`
}
