package rules

import (
	"fmt"
	"slices"
	"strings"
	"time"
)

// FiberTypes are the fibre type names a plan's span may use; the figures of each live with the
// physics models (diagnose/optics.FiberByName). An empty name means g652.
var FiberTypes = []string{"g652", "g652-bound", "g654e", "g655", "custom"}

// fiberAliases are further spellings diagnose/optics.FiberByName accepts, after dropping case,
// dots, dashes, underscores and spaces ("G.652.D" is g652d).
var fiberAliases = []string{"", "g652", "g652d", "smf", "g652bound", "g655", "g655d", "g655e", "nzdsf", "g654e", "g654"}

// KnownFiber reports whether name is a fibre type a plan's span may use.
func KnownFiber(name string) bool {
	if name == "custom" {
		return true
	}
	k := strings.NewReplacer(".", "", "-", "", "_", "", " ", "").Replace(strings.ToLower(name))
	return slices.Contains(fiberAliases, k)
}

// Validate checks a link plan's structure and ranges: at least one span, positive lengths, known
// fibre types (a "custom" span gives its own dispersion), non-negative counts and losses,
// amplifiers placed after an existing span with a noise figure of at least 0 dB, and a channel
// frequency inside the optical bands when given. It does not check the profile id (see
// CheckProfile). Its error is a *FieldError naming the field at fault.
func (p *Plan) Validate() error {
	if strings.TrimSpace(p.Circuit) == "" {
		return fieldErr("circuit", ErrMissing, "give the circuit id")
	}
	if p.Soak != "" {
		if _, err := ParseTestPeriod(p.Soak); err != nil {
			return fieldErr("soak", ErrRange, "%v", err)
		}
	}
	if err := p.validateFieldRecords(); err != nil {
		return err
	}
	// 184.5…238 THz spans the O to U bands (about 1260…1625 nm); 0 means "not given".
	if p.FrequencyTHz != 0 && !(p.FrequencyTHz >= 184.5 && p.FrequencyTHz <= 238) {
		return fieldErr("frequency_thz", ErrRange, "%g THz is outside the optical bands 184.5…238 THz", p.FrequencyTHz)
	}
	if !(p.TxPowerDBm >= -40 && p.TxPowerDBm <= 30) {
		return fieldErr("tx_power_dbm", ErrRange, "%g dBm is outside −40…+30 dBm", p.TxPowerDBm)
	}
	if !(p.LaunchPowerDBm >= -40 && p.LaunchPowerDBm <= 30) {
		return fieldErr("launch_power_dbm", ErrRange, "%g dBm is outside −40…+30 dBm", p.LaunchPowerDBm)
	}
	if p.Channels < 0 || p.Channels > 1000 {
		return fieldErr("channels", ErrRange, "%d is outside 0…1000", p.Channels)
	}
	if !(p.ChannelSpacingGHz >= 0 && p.ChannelSpacingGHz <= 1000) {
		return fieldErr("channel_spacing_ghz", ErrRange, "%g GHz is outside 0…1000 GHz", p.ChannelSpacingGHz)
	}
	if p.Channels > 1 && p.ChannelSpacingGHz == 0 {
		return fieldErr("channel_spacing_ghz", ErrMissing, "%d channels need a channel spacing", p.Channels)
	}
	if p.HazardLevel != "" && !slices.Contains(HazardLevels, p.HazardLevel) {
		return fieldErr("hazard_level", ErrRange, "%q is not one of %s", p.HazardLevel, strings.Join(HazardLevels, ", "))
	}
	if !(p.ExtraLossDB >= 0 && p.ExtraLossDB <= 60) {
		return fieldErr("extra_loss_db", ErrRange, "%g dB is outside 0…60 dB", p.ExtraLossDB)
	}
	for i, s := range p.Ports {
		if strings.TrimSpace(s) == "" {
			return fieldErr(fmt.Sprintf("ports[%d]", i), ErrMissing, "empty port id")
		}
	}
	if len(p.Spans) == 0 {
		return fieldErr("spans", ErrMissing, "a plan needs at least one span")
	}
	for i, s := range p.Spans {
		if err := s.validate(); err != nil {
			return prefixField(fmt.Sprintf("spans[%d]", i), err)
		}
	}
	for i, a := range p.Amplifiers {
		pre := fmt.Sprintf("amplifiers[%d]", i)
		if a.AfterSpan < 0 || a.AfterSpan > len(p.Spans) {
			return fieldErr(pre+".after_span", ErrRange, "%d: the plan has spans 1…%d (0 is a booster before span 1)", a.AfterSpan, len(p.Spans))
		}
		if !(a.GainDB >= 0 && a.GainDB <= 50) {
			return fieldErr(pre+".gain_db", ErrRange, "%g dB is outside 0…50 dB", a.GainDB)
		}
		// An amplifier's noise figure is at least 0 dB; the quantum limit of a phase-insensitive
		// amplifier is 3 dB, but 0 is the bound of the definition.
		if !(a.NoiseFigureDB >= 0 && a.NoiseFigureDB <= 20) {
			return fieldErr(pre+".noise_figure_db", ErrRange, "%g dB is outside 0…20 dB", a.NoiseFigureDB)
		}
	}
	return nil
}

func (s Span) validate() error {
	if !(s.LengthKm > 0 && s.LengthKm <= 20000) {
		return fieldErr("length_km", ErrRange, "%g km: a span is longer than 0 and at most 20000 km", s.LengthKm)
	}
	if !KnownFiber(s.Fiber) {
		return fieldErr("fiber", ErrRange, "%q is not one of %s", s.Fiber, strings.Join(FiberTypes, ", "))
	}
	if s.Fiber == "custom" && s.DispersionPsNmKm == nil {
		return fieldErr("dispersion_ps_nm_km", ErrMissing, "a custom fibre needs its dispersion")
	}
	type opt struct {
		key    string
		v      *float64
		lo, hi float64
		unit   string
	}
	for _, o := range []opt{
		{"dispersion_ps_nm_km", s.DispersionPsNmKm, -30, 30, "ps/(nm·km)"},
		{"slope_ps_nm2_km", s.SlopePsNm2Km, -1, 1, "ps/(nm²·km)"},
		{"attenuation_db_per_km", s.AttenuationDBPerKm, 0, 5, "dB/km"},
		{"pmd_ps_sqrt_km", s.PMDCoefficientPsSqrtKm, 0, 10, "ps/√km"},
		{"measured_loss_db", s.MeasuredLossDB, 0, 100, "dB"},
		{"connector_loss_db", s.ConnectorLossDB, 0, 10, "dB"},
		{"splice_loss_db", s.SpliceLossDB, 0, 10, "dB"},
	} {
		if o.v != nil && !(*o.v >= o.lo && *o.v <= o.hi) {
			return fieldErr(o.key, ErrRange, "%g %s is outside %g…%g %s", *o.v, o.unit, o.lo, o.hi, o.unit)
		}
	}
	if s.Connectors < 0 {
		return fieldErr("connectors", ErrRange, "%d: a count cannot be negative", s.Connectors)
	}
	if s.Splices < 0 {
		return fieldErr("splices", ErrRange, "%d: a count cannot be negative", s.Splices)
	}
	return nil
}

// CheckProfile checks that the plan's profile id, when given, is one of profiles.
func (p *Plan) CheckProfile(profiles []Profile) error {
	if p.Profile == "" {
		return nil
	}
	if _, err := ProfileByID(profiles, p.Profile); err != nil {
		return &FieldError{Field: "profile", Err: err}
	}
	return nil
}

// LoadPlan reads (ReadConfig) and validates the link plan at path. Its profile id is checked
// against profiles, or against the built-in profiles when none are given. A bad plan fails with
// a *FileError giving the line and field.
func LoadPlan(path string, profiles ...Profile) (Plan, error) {
	data, err := ReadConfig(path)
	if err != nil {
		return Plan{}, err
	}
	return ParsePlan(path, data, profiles...)
}

// ParsePlan decodes and validates a link plan already read from the file named path, as LoadPlan
// does: for a caller that keeps the bytes it parsed (to sign their digest).
func ParsePlan(path string, data []byte, profiles ...Profile) (Plan, error) {
	var p Plan
	_, ix, err := decodeStrict(path, data, &p)
	if err != nil {
		return Plan{}, err
	}
	if err := p.Validate(); err != nil {
		return Plan{}, ix.toFileError(path, err)
	}
	if len(profiles) == 0 {
		if profiles, err = BuiltinProfiles(); err != nil {
			return Plan{}, err
		}
	}
	if err := p.CheckProfile(profiles); err != nil {
		return Plan{}, ix.toFileError(path, err)
	}
	return p, nil
}

// validateFieldRecords checks the instruments and hand readings: dates as YYYY-MM-DD, powers a
// power meter can read, and every reading's instrument one of the plan's.
func (p *Plan) validateFieldRecords() error {
	date := func(key, v string, need bool) error {
		if v == "" && !need {
			return nil
		}
		if _, err := time.Parse(time.DateOnly, v); err != nil {
			return fieldErr(key, ErrRange, "%q: want a date as YYYY-MM-DD", v)
		}
		return nil
	}
	serials := map[string]bool{}
	for i, in := range p.Instruments {
		pre := fmt.Sprintf("instruments[%d]", i)
		if strings.TrimSpace(in.Kind) == "" || strings.TrimSpace(in.Serial) == "" {
			return fieldErr(pre, ErrMissing, "an instrument needs its kind and serial")
		}
		if err := date(pre+".calibrated_on", in.CalibratedOn, true); err != nil {
			return err
		}
		if err := date(pre+".calibration_due", in.CalibrationDue, false); err != nil {
			return err
		}
		serials[in.Serial] = true
	}
	for i, r := range p.PowerReadings {
		pre := fmt.Sprintf("power_readings[%d]", i)
		if strings.TrimSpace(r.Location) == "" {
			return fieldErr(pre+".location", ErrMissing, "say where the reading was taken")
		}
		if !(r.PowerDBm >= -80 && r.PowerDBm <= 30) {
			return fieldErr(pre+".power_dbm", ErrRange, "%g dBm is outside −80…+30 dBm", r.PowerDBm)
		}
		if r.WavelengthNm != 0 && !(r.WavelengthNm >= 1260 && r.WavelengthNm <= 1675) {
			return fieldErr(pre+".wavelength_nm", ErrRange, "%g nm is outside 1260…1675 nm", r.WavelengthNm)
		}
		if r.Instrument != "" && !serials[r.Instrument] {
			return fieldErr(pre+".instrument", ErrRange, "%q is not the serial of an instrument listed under instruments", r.Instrument)
		}
		if r.TakenAt != "" {
			if _, err := time.Parse(time.RFC3339, r.TakenAt); err != nil {
				if err := date(pre+".taken_at", r.TakenAt, true); err != nil {
					return err
				}
			}
		}
	}
	return nil
}
