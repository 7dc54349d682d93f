package rules

import (
	_ "embed"
	"errors"
	"fmt"
	"maps"
	"math"
	"regexp"
	"slices"
	"strings"
	"unicode"

	"go.yaml.in/yaml/v3"
)

//go:embed profiles.yaml
var builtinProfilesYAML []byte

// profileFile is the shape of a profiles file: a list under "profiles".
type profileFile struct {
	Profiles []Profile `yaml:"profiles"`
}

// profileIDRE is the form of a profile id: lower-case words joined by dashes.
var profileIDRE = regexp.MustCompile(`^[a-z0-9]+(?:[-_.][a-z0-9]+)*$`)

// Modulations maps each modulation name a profile may use to its bits per symbol per polarization.
var Modulations = map[string]int{
	"dp-qpsk": 2, "dp-8qam": 3, "dp-16qam": 4, "dp-32qam": 5, "dp-64qam": 6,
	"qpsk": 2, "8qam": 3, "16qam": 4, "32qam": 5, "64qam": 6,
}

// HazardLevels are the IEC 60825-1 classes, used by IEC 60825-2 as hazard-level names.
var HazardLevels = []string{"1", "1M", "2", "2M", "3R", "3B", "4"}

// profileFigures lists the figures of a profile that must carry a source when set, by YAML name.
var profileFigures = []string{
	"modulation", "polarizations", "baud_gbd", "line_rate_gbps", "fec", "fec_threshold_ber",
	"required_osnr_db", "implementation_penalty_db", "back_to_back_snr_db", "cd_tolerance_ps_nm",
	"dgd_tolerance_ps", "mean_dgd_tolerance_ps", "pdl_tolerance_db", "sop_tracking_krad_s",
	"lo_offset_range_mhz", "rx_power_min_dbm", "rx_power_max_dbm", "tx_power_min_dbm",
	"tx_power_max_dbm", "frequency_min_thz", "frequency_max_thz", "hazard_level",
}

// BitsPerSymbol is the number of bits a symbol carries on one polarization (0 if unknown).
func (p Profile) BitsPerSymbol() int { return Modulations[p.Modulation] }

// PolarizationCount is the number of polarizations carrying data: Polarizations, or 2 when the
// profile gives none (the models' default; every modulation name is dual-polarization).
func (p Profile) PolarizationCount() int {
	if p.Polarizations == 0 {
		return 2
	}
	return p.Polarizations
}

// isSet reports whether the figure named key holds a value (non-zero, non-empty).
func (p Profile) isSet(key string) bool {
	switch key {
	case "modulation":
		return p.Modulation != ""
	case "polarizations":
		return p.Polarizations != 0
	case "baud_gbd":
		return p.BaudGBd != 0
	case "line_rate_gbps":
		return p.LineRateGbps != 0
	case "fec":
		return p.FEC != ""
	case "fec_threshold_ber":
		return p.FECThresholdBER != 0
	case "required_osnr_db":
		return p.RequiredOSNRdB != 0
	case "implementation_penalty_db":
		return p.ImplementationPenaltyDB != 0
	case "back_to_back_snr_db":
		return p.BackToBackSNRdB != 0
	case "cd_tolerance_ps_nm":
		return p.CDTolerancePsNm != 0
	case "dgd_tolerance_ps":
		return p.DGDTolerancePs != 0
	case "mean_dgd_tolerance_ps":
		return p.MeanDGDTolerancePs != 0
	case "pdl_tolerance_db":
		return p.PDLTolerancedB != 0
	case "sop_tracking_krad_s":
		return p.SOPTrackingKradS != 0
	case "lo_offset_range_mhz":
		return p.LOOffsetRangeMHz != 0
	case "rx_power_min_dbm":
		return p.RxPowerMinDBm != 0
	case "rx_power_max_dbm":
		return p.RxPowerMaxDBm != 0
	case "tx_power_min_dbm":
		return p.TxPowerMinDBm != 0
	case "tx_power_max_dbm":
		return p.TxPowerMaxDBm != 0
	case "frequency_min_thz":
		return p.FrequencyMinTHz != 0
	case "frequency_max_thz":
		return p.FrequencyMaxTHz != 0
	case "hazard_level":
		return p.HazardLevel != ""
	}
	return false
}

// Validate checks a profile's figures for range and consistency and that every figure it holds
// names a source. Its error is a *FieldError naming the field at fault.
func (p Profile) Validate() error {
	if p.ID == "" {
		return fieldErr("id", ErrMissing, "every profile needs an id")
	}
	if !profileIDRE.MatchString(p.ID) {
		return fieldErr("id", ErrRange, "%q: use lower-case letters, digits and dashes", p.ID)
	}
	for _, t := range p.ModuleTypes {
		if t == "" || len(t) > 64 || strings.ContainsFunc(t, unicode.IsControl) {
			return fieldErr("module_types", ErrRange, "%q: a module type is a name of 1 to 64 printable bytes", t)
		}
	}
	if _, ok := Modulations[p.Modulation]; !ok {
		return fieldErr("modulation", ErrRange, "%q is not one of dp-qpsk, dp-8qam, dp-16qam, dp-32qam, dp-64qam", p.Modulation)
	}
	if p.Polarizations != 1 && p.Polarizations != 2 {
		return fieldErr("polarizations", ErrRange, "%d: must be 1 or 2", p.Polarizations)
	}
	type rng struct {
		key       string
		v, lo, hi float64
		required  bool
		unit      string
	}
	// Ranges are physical sanity bounds, not specifications; !(v >= lo && v <= hi) lets NaN fail.
	for _, r := range []rng{
		{"baud_gbd", p.BaudGBd, 1, 300, true, "GBd"},
		{"line_rate_gbps", p.LineRateGbps, 0, 5000, false, "Gb/s"},
		{"required_osnr_db", p.RequiredOSNRdB, 0, 50, false, "dB"},
		{"implementation_penalty_db", p.ImplementationPenaltyDB, 0, 20, false, "dB"},
		{"back_to_back_snr_db", p.BackToBackSNRdB, 0, 60, false, "dB"},
		{"cd_tolerance_ps_nm", p.CDTolerancePsNm, 0, 1e6, true, "ps/nm"},
		{"dgd_tolerance_ps", p.DGDTolerancePs, 0, 1000, true, "ps"},
		{"mean_dgd_tolerance_ps", p.MeanDGDTolerancePs, 0, 1000, false, "ps"},
		{"pdl_tolerance_db", p.PDLTolerancedB, 0, 20, true, "dB"},
		{"sop_tracking_krad_s", p.SOPTrackingKradS, 0, 1e5, true, "krad/s"},
		{"lo_offset_range_mhz", p.LOOffsetRangeMHz, 0, 1e5, true, "MHz"},
		{"rx_power_min_dbm", p.RxPowerMinDBm, -60, 30, false, "dBm"},
		{"rx_power_max_dbm", p.RxPowerMaxDBm, -60, 30, false, "dBm"},
		{"tx_power_min_dbm", p.TxPowerMinDBm, -60, 30, false, "dBm"},
		{"tx_power_max_dbm", p.TxPowerMaxDBm, -60, 30, false, "dBm"},
		{"frequency_min_thz", p.FrequencyMinTHz, 0, 300, false, "THz"},
		{"frequency_max_thz", p.FrequencyMaxTHz, 0, 300, false, "THz"},
	} {
		if r.required && r.v == 0 {
			return fieldErr(r.key, ErrMissing, "give a value greater than 0 %s", r.unit)
		}
		if !(r.v >= r.lo && r.v <= r.hi) {
			return fieldErr(r.key, ErrRange, "%g %s is outside %g…%g %s", r.v, r.unit, r.lo, r.hi, r.unit)
		}
	}
	if !(p.FECThresholdBER > 0 && p.FECThresholdBER < 0.5) {
		return fieldErr("fec_threshold_ber", ErrRange, "%g is outside (0, 0.5)", p.FECThresholdBER)
	}
	if p.RequiredOSNRdB == 0 && p.ImplementationPenaltyDB == 0 {
		return fieldErr("required_osnr_db", ErrMissing, "give required_osnr_db or implementation_penalty_db (or both)")
	}
	if p.RxPowerMinDBm >= p.RxPowerMaxDBm {
		return fieldErr("rx_power_max_dbm", ErrRange, "receiver window %g…%g dBm is empty", p.RxPowerMinDBm, p.RxPowerMaxDBm)
	}
	if (p.TxPowerMinDBm != 0 || p.TxPowerMaxDBm != 0) && p.TxPowerMinDBm > p.TxPowerMaxDBm {
		return fieldErr("tx_power_max_dbm", ErrRange, "transmit range %g…%g dBm is empty", p.TxPowerMinDBm, p.TxPowerMaxDBm)
	}
	if p.FrequencyMaxTHz != 0 && p.FrequencyMinTHz >= p.FrequencyMaxTHz {
		return fieldErr("frequency_max_thz", ErrRange, "frequency range %g…%g THz is empty", p.FrequencyMinTHz, p.FrequencyMaxTHz)
	}
	if p.MeanDGDTolerancePs > p.DGDTolerancePs {
		return fieldErr("mean_dgd_tolerance_ps", ErrRange, "mean DGD %g ps exceeds the instantaneous DGD tolerance %g ps", p.MeanDGDTolerancePs, p.DGDTolerancePs)
	}
	if p.LineRateGbps != 0 {
		// Line rate = polarizations × bits per symbol × symbol rate; 1 % allows rounding.
		want := float64(p.Polarizations*p.BitsPerSymbol()) * p.BaudGBd
		if math.Abs(p.LineRateGbps-want) > 0.01*want {
			return fieldErr("line_rate_gbps", ErrRange, "%g Gb/s disagrees with %d × %d bit × %g GBd = %.4g Gb/s", p.LineRateGbps, p.Polarizations, p.BitsPerSymbol(), p.BaudGBd, want)
		}
	}
	if p.HazardLevel != "" && !slices.Contains(HazardLevels, p.HazardLevel) {
		return fieldErr("hazard_level", ErrRange, "%q is not one of %s", p.HazardLevel, strings.Join(HazardLevels, ", "))
	}
	for _, key := range profileFigures {
		if p.isSet(key) && strings.TrimSpace(p.Sources[key]) == "" {
			return fieldErr("sources."+key, ErrMissing, "figure %s has no source (a standard, \"from memory\", \"common practice\" or \"derived: …\")", key)
		}
	}
	for key := range p.Sources {
		if !slices.Contains(profileFigures, key) {
			return fieldErr("sources."+key, ErrUnknownField, "no figure is named %q", key)
		}
	}
	return nil
}

// BuiltinProfiles returns the module profiles built into beatnote (rules/profiles.yaml), validated.
func BuiltinProfiles() ([]Profile, error) {
	return decodeProfiles("profiles.yaml (built in)", builtinProfilesYAML, nil)
}

// LoadProfiles returns the built-in profiles with the profiles of the file at path added: a
// profile whose id is built in overrides it field by field (figures it does not mention keep
// their built-in value and source); a new id is added after the built-in ones. A figure the file
// sets without a source gets the source "user profiles file <path>".
func LoadProfiles(path string) ([]Profile, error) {
	data, err := ReadConfig(path)
	if err != nil {
		return nil, err
	}
	return ParseProfiles(path, data)
}

// ParseProfiles is LoadProfiles for a profiles file already read from path.
func ParseProfiles(path string, data []byte) ([]Profile, error) {
	base, err := BuiltinProfiles()
	if err != nil {
		return nil, err
	}
	return decodeProfiles(path, data, base)
}

// decodeProfiles decodes a profiles file onto base (nil for none) and validates the result.
func decodeProfiles(file string, data []byte, base []Profile) ([]Profile, error) {
	// First pass: shape and types, with the line of everything.
	var shape profileFile
	root, ix, err := decodeStrict(file, data, &shape)
	if err != nil {
		return nil, err
	}
	out := make([]Profile, len(base))
	for i, p := range base {
		p.Sources = maps.Clone(p.Sources)
		out[i] = p
	}
	items := profileItems(root)
	seen := map[string]int{}
	for i, p := range shape.Profiles {
		key := fmt.Sprintf("profiles[%d].id", i)
		if first, dup := seen[p.ID]; dup && p.ID != "" {
			return nil, &FileError{File: file, Line: ix.lineOf(key), Field: key, Err: fmt.Errorf("%w profile id %q, first given on line %d", ErrDuplicate, p.ID, first)}
		}
		seen[p.ID] = ix.lineOf(key)
	}
	for i, item := range items {
		prefix := fmt.Sprintf("profiles[%d]", i)
		id := shape.Profiles[i].ID
		at := -1
		for j := range out {
			if out[j].ID == id {
				at = j
			}
		}
		var p Profile
		if at >= 0 {
			p = out[at]
		}
		// Decode the item onto the built-in profile so unmentioned figures keep their values.
		if err := item.Decode(&p); err != nil {
			return nil, &FileError{File: file, Line: item.Line, Field: prefix, Err: errors.New(stripYAMLPrefix(err))}
		}
		if base != nil {
			if p.Sources == nil {
				p.Sources = map[string]string{}
			}
			for _, key := range mentionedKeys(item) {
				if slices.Contains(profileFigures, key) && !mentionsSource(item, key) {
					p.Sources[key] = "user profiles file " + file
				}
			}
		}
		if err := p.Validate(); err != nil {
			return nil, ix.toFileError(file, prefixField(prefix, err))
		}
		if at >= 0 {
			out[at] = p
		} else {
			out = append(out, p)
		}
	}
	if len(out) == 0 {
		return nil, &FileError{File: file, Line: ix.lineOf("profiles"), Field: "profiles", Err: fmt.Errorf("%w: the file lists no profiles", ErrMissing)}
	}
	if err := checkModuleTypes(out); err != nil {
		return nil, &FileError{File: file, Line: ix.lineOf("profiles"), Field: "module_types", Err: err}
	}
	return out, nil
}

// checkModuleTypes checks that each module type names one profile and is no profile's id
// (ignoring case), so that ProfileByName has one answer.
func checkModuleTypes(profiles []Profile) error {
	owner := map[string]string{}
	for _, p := range profiles {
		owner[strings.ToLower(p.ID)] = p.ID
	}
	for _, p := range profiles {
		for _, t := range p.ModuleTypes {
			k := strings.ToLower(t)
			if other, dup := owner[k]; dup && other != p.ID {
				return fmt.Errorf("%w module type %q: profile %s has it too (or as its id)", ErrDuplicate, t, other)
			}
			owner[k] = p.ID
		}
	}
	return nil
}

// profileItems returns the item nodes of the "profiles" list of a profiles document.
func profileItems(root *yaml.Node) []*yaml.Node {
	for i := 0; i+1 < len(root.Content); i += 2 {
		if root.Content[i].Value == "profiles" && root.Content[i+1].Kind == yaml.SequenceNode {
			return root.Content[i+1].Content
		}
	}
	return nil
}

// mentionedKeys lists the keys of a mapping node.
func mentionedKeys(m *yaml.Node) []string {
	var keys []string
	for i := 0; i+1 < len(m.Content); i += 2 {
		keys = append(keys, m.Content[i].Value)
	}
	return keys
}

// mentionsSource reports whether mapping m has sources.<key>.
func mentionsSource(m *yaml.Node, key string) bool {
	for i := 0; i+1 < len(m.Content); i += 2 {
		if m.Content[i].Value == "sources" {
			for _, k := range mentionedKeys(m.Content[i+1]) {
				if k == key {
					return true
				}
			}
		}
	}
	return false
}

// ProfileByName finds the profile a telemetry's profile column names: by its id, else by one
// of its module types (ignoring case). The error lists the ids and module types known.
func ProfileByName(profiles []Profile, name string) (Profile, error) {
	var types []string
	for _, p := range profiles {
		if p.ID == name {
			return p, nil
		}
	}
	for _, p := range profiles {
		for _, t := range p.ModuleTypes {
			if strings.EqualFold(t, name) {
				return p, nil
			}
			types = append(types, t)
		}
	}
	_, err := ProfileByID(profiles, name)
	if len(types) > 0 {
		err = fmt.Errorf("%w; module types: %s", err, strings.Join(types, ", "))
	}
	return Profile{}, err
}

// ProfileByID finds the profile with the given id; the error lists the ids known.
func ProfileByID(profiles []Profile, id string) (Profile, error) {
	ids := make([]string, 0, len(profiles))
	for _, p := range profiles {
		if p.ID == id {
			return p, nil
		}
		ids = append(ids, p.ID)
	}
	return Profile{}, fmt.Errorf("%w %q (known: %s)", ErrUnknownProfile, id, strings.Join(ids, ", "))
}
