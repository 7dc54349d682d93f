package rules

import (
	"errors"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
)

// within reports |got − want| ≤ tol.
func within(got, want, tol float64) bool { return math.Abs(got-want) <= tol }

func mustBuiltin(t *testing.T) []Profile {
	t.Helper()
	ps, err := BuiltinProfiles()
	if err != nil {
		t.Fatalf("BuiltinProfiles: %v", err)
	}
	return ps
}

func TestBuiltinProfilesLoadAndValidate(t *testing.T) {
	ps := mustBuiltin(t)
	// The module classes the profiles cover, under our own ids.
	for _, id := range []string{"100g-dp-qpsk", "200g-dp-16qam", "400g-dp-16qam-cfec", "400g-dp-16qam-ofec", "800g-dp-16qam"} {
		p, err := ProfileByID(ps, id)
		if err != nil {
			t.Errorf("%s: %v", id, err)
			continue
		}
		if err := p.Validate(); err != nil {
			t.Errorf("%s: %v", id, err)
		}
		// Every figure the profile holds must say where it comes from.
		for _, key := range profileFigures {
			if p.isSet(key) && p.Sources[key] == "" {
				t.Errorf("%s: %s has no source", id, key)
			}
		}
	}
	if _, err := ProfileByID(ps, "no-such"); !errors.Is(err, ErrUnknownProfile) || !strings.Contains(err.Error(), "400g-dp-16qam-cfec") {
		t.Errorf("ProfileByID(no-such) = %v, want ErrUnknownProfile listing the known ids", err)
	}
}

// The 400ZR-class figures against OIF-400ZR-01.0 as tabled in X. Liu, Optical Communications in the 5G Era (2022) §7.3. Each check names the source and its status.
func TestProfile400ZRMatchesPublishedFigures(t *testing.T) {
	p, err := ProfileByID(mustBuiltin(t), "400g-dp-16qam-cfec")
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct {
		name      string
		got, want float64
		source    string
	}{
		// OIF-400ZR-01.0 as tabled in X. Liu, Optical Communications in the 5G Era (2022) §7.3: confirmed.
		{"CD tolerance ps/nm", p.CDTolerancePsNm, 2400, "OIF-400ZR-01.0 via Liu §7.3, confirmed"},
		{"instantaneous DGD ps", p.DGDTolerancePs, 28, "OIF-400ZR-01.0 via Liu §7.3, confirmed"},
		{"PDL dB", p.PDLTolerancedB, 2, "OIF-400ZR-01.0 via Liu §7.3, confirmed"},
		{"SOP krad/s", p.SOPTrackingKradS, 50, "OIF-400ZR-01.0 via Liu §7.3, confirmed"},
		{"frequency min THz", p.FrequencyMinTHz, 191.3, "OIF-400ZR-01.0 via Liu §7.3, confirmed"},
		{"frequency max THz", p.FrequencyMaxTHz, 196.1, "OIF-400ZR-01.0 via Liu §7.3, confirmed"},
		// OIF-400ZR-01.0, secondary source only.
		{"required OSNR dB", p.RequiredOSNRdB, 26, "OIF-400ZR-01.0, secondary source only"},
		{"mean DGD ps", p.MeanDGDTolerancePs, 10, "OIF-400ZR-01.0, secondary source only"},
		// OIF-400ZR-01.0, from memory.
		{"CFEC threshold BER", p.FECThresholdBER, 1.22e-2, "OIF-400ZR-01.0, from memory"},
		{"symbol rate GBd", p.BaudGBd, 59.84375, "OIF-400ZR-01.0, from memory"},
		{"Rx power min dBm", p.RxPowerMinDBm, -12, "OIF-400ZR-01.0, from memory"},
		{"Rx power max dBm", p.RxPowerMaxDBm, 0, "OIF-400ZR-01.0, from memory"},
		// Derived: ±1.8 GHz transmitter accuracy (OIF-400ZR-01.0, from memory) at each end.
		{"LO capture ±MHz", p.LOOffsetRangeMHz, 2 * 1800, "derived from ±1.8 GHz, from memory"},
	} {
		if !within(c.got, c.want, 1e-9*math.Max(1, math.Abs(c.want))) {
			t.Errorf("%s = %g, want %g (%s)", c.name, c.got, c.want, c.source)
		}
	}
	for _, key := range []string{"cd_tolerance_ps_nm", "dgd_tolerance_ps", "pdl_tolerance_db", "sop_tracking_krad_s"} {
		if !strings.Contains(p.Sources[key], "OIF-400ZR-01.0") {
			t.Errorf("source of %s = %q, want it to name OIF-400ZR-01.0", key, p.Sources[key])
		}
	}
}

// Required Es/N0 (dB) for Gray-coded square QAM on AWGN at a pre-FEC BER, computed with Python (Cho & Yoon exact forms),
// "Computed check values", exact BER computed with Python's math library (Cho & Yoon 2002).
var requiredEsN0dB = map[string]map[float64]float64{
	"dp-qpsk":  {3.8e-3: 8.528, 1e-2: 7.333, 1.22e-2: 7.047, 2e-2: 6.251},
	"dp-16qam": {3.8e-3: 15.193, 1e-2: 13.903, 1.22e-2: 13.589, 2e-2: 12.711},
	"dp-64qam": {3.8e-3: 21.122, 1e-2: 19.735, 1.22e-2: 19.394, 2e-2: 18.430},
}

// osnrMinusSNRdB is 10·log10(Rs/12.5 GHz): OSNR↔SNR for two polarizations in a 0.1 nm reference
// bandwidth (Essiambre et al., JLT 28(4), 2010).
func osnrMinusSNRdB(baudGBd float64) float64 { return 10 * math.Log10(baudGBd/12.5) }

func TestOSNRConversionMatchesReferences(t *testing.T) {
	// Computed with Python's math library.
	for _, c := range []struct{ baud, want float64 }{{32, 4.082}, {59.84375, 6.801}, {63.139, 7.034}, {118.2, 9.757}} {
		if got := osnrMinusSNRdB(c.baud); !within(got, c.want, 0.0005) {
			t.Errorf("OSNR−SNR at %g GBd = %.4f dB, want %.3f", c.baud, got, c.want)
		}
	}
}

// A required OSNR marked "derived" must equal theory (Es/N0 at the threshold, from REFERENCES)
// + 10·log10(Rs/12.5 GHz) + the implementation penalty; a specified one must leave a
// non-negative implementation penalty that matches the profile's figure.
func TestRequiredOSNRConsistentWithTheory(t *testing.T) {
	for _, p := range mustBuiltin(t) {
		t.Run(p.ID, func(t *testing.T) {
			es, ok := requiredEsN0dB[p.Modulation][p.FECThresholdBER]
			if !ok {
				t.Fatalf("no reference Es/N0 for %s at BER %g", p.Modulation, p.FECThresholdBER)
			}
			theory := es + osnrMinusSNRdB(p.BaudGBd)
			if p.RequiredOSNRdB < theory {
				t.Errorf("required OSNR %.2f dB is below the AWGN bound %.2f dB", p.RequiredOSNRdB, theory)
			}
			// Figures are given to 0.01 dB.
			if got := p.RequiredOSNRdB - theory; !within(got, p.ImplementationPenaltyDB, 0.011) {
				t.Errorf("required OSNR − theory = %.3f dB, profile's implementation penalty %.3f dB (source %q)",
					got, p.ImplementationPenaltyDB, p.Sources["required_osnr_db"])
			}
		})
	}
	// Worked example computed with Python: 400ZR at 1.22e-2 needs 20.39 dB in theory, leaving about 5.6 dB.
	if got := requiredEsN0dB["dp-16qam"][1.22e-2] + osnrMinusSNRdB(59.84375); !within(got, 20.39, 0.005) {
		t.Errorf("400ZR-class theoretical OSNR = %.3f dB, want 20.39 (computed with Python)", got)
	}
}

func TestDefaultRulesValidate(t *testing.T) {
	r, err := DefaultRules()
	if err != nil {
		t.Fatal(err)
	}
	for _, rv := range ruleValues(&r) {
		if r.Sources[rv.key] == "" {
			t.Errorf("%s has no source", rv.key)
		}
	}
	if r.QStatistic != StatMin || r.DGDStatistic != StatP99 {
		t.Errorf("statistics: q %s, dgd %s", r.QStatistic, r.DGDStatistic)
	}
}

// maxwellTail is P(τ > x) for a Maxwellian DGD with mean m: u = x/a, a = m/(2·√(2/π)),
// P = erfc(u/√2) + √(2/π)·u·exp(−u²/2) (M. Karlsson, JLT 19(3), 2001).
func maxwellTail(x, mean float64) float64 {
	a := mean / (2 * math.Sqrt(2/math.Pi))
	u := x / a
	return math.Erfc(u/math.Sqrt2) + math.Sqrt(2/math.Pi)*u*math.Exp(-u*u/2)
}

// The default PMD outage probability is derived from "max DGD = 3 × mean": check the derivation
// against the Maxwellian tail and against the value computed independently with Python's math.erfc (4.200e-5).
func TestPMDOutageProbabilityDerivation(t *testing.T) {
	r, err := DefaultRules()
	if err != nil {
		t.Fatal(err)
	}
	p3 := maxwellTail(3, 1)
	if !within(p3, 4.200e-5, 0.001e-5) {
		t.Fatalf("Maxwellian P(τ > 3·mean) = %.4e, Python's math.erfc gives 4.200e-5", p3)
	}
	if !within(r.PMDOutageProbability, p3, 0.01*p3) {
		t.Errorf("pmd_outage_probability = %g, want P(τ > 3·mean) = %.4g", r.PMDOutageProbability, p3)
	}
	// Computed with Python's math.erfc (Karlsson 2001 tail): a 28 ps limit on a 10 ps mean is exceeded with probability 1.7e-4.
	if got := maxwellTail(28, 10); !within(got, 1.7e-4, 0.05e-4) {
		t.Errorf("P(τ > 28 ps | mean 10 ps) = %.3g, want 1.7e-4", got)
	}
}

func writeFile(t *testing.T, dir, name, body string) string {
	t.Helper()
	p := filepath.Join(dir, name)
	if err := os.WriteFile(p, []byte(body), 0o644); err != nil {
		t.Fatal(err)
	}
	return p
}

func TestLoadRulesOverridesSingleValues(t *testing.T) {
	def, err := DefaultRules()
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	path := writeFile(t, dir, "mine.yaml", "q_marginal_margin_db: 2.5\npower_step_db: 1.0\nsources:\n  power_step_db: our outside-plant rule\n")
	r, err := LoadRules(path)
	if err != nil {
		t.Fatal(err)
	}
	if r.QMarginalMarginDB != 2.5 || r.PowerStepDB != 1.0 {
		t.Errorf("overrides not applied: q %g, step %g", r.QMarginalMarginDB, r.PowerStepDB)
	}
	if r.Sources["q_marginal_margin_db"] != "user rules file "+path {
		t.Errorf("source of an unsourced override = %q", r.Sources["q_marginal_margin_db"])
	}
	if r.Sources["power_step_db"] != "our outside-plant rule" {
		t.Errorf("source of a sourced override = %q", r.Sources["power_step_db"])
	}
	if r.OSNRGapVsPlanDB != def.OSNRGapVsPlanDB || r.Sources["osnr_gap_vs_plan_db"] != def.Sources["osnr_gap_vs_plan_db"] {
		t.Errorf("an untouched value changed: %g %q", r.OSNRGapVsPlanDB, r.Sources["osnr_gap_vs_plan_db"])
	}
}

func TestLoadProfilesOverridesAndAdds(t *testing.T) {
	base := mustBuiltin(t)
	dir := t.TempDir()
	path := writeFile(t, dir, "mine.yaml", `profiles:
  - id: 400g-dp-16qam-cfec
    rx_power_min_dbm: -14
  - id: lab-200g-8qam
    name: lab class
    modulation: dp-8qam
    polarizations: 2
    baud_gbd: 43
    fec_threshold_ber: 2.0e-2
    implementation_penalty_db: 2
    cd_tolerance_ps_nm: 30000
    dgd_tolerance_ps: 50
    pdl_tolerance_db: 3
    sop_tracking_krad_s: 50
    lo_offset_range_mhz: 2000
    rx_power_min_dbm: -20
    rx_power_max_dbm: 0
    sources:
      baud_gbd: lab measurement
`)
	ps, err := LoadProfiles(path)
	if err != nil {
		t.Fatal(err)
	}
	if len(ps) != len(base)+1 {
		t.Fatalf("got %d profiles, want %d", len(ps), len(base)+1)
	}
	zr, _ := ProfileByID(ps, "400g-dp-16qam-cfec")
	zr0, _ := ProfileByID(base, "400g-dp-16qam-cfec")
	if zr.RxPowerMinDBm != -14 || zr.Sources["rx_power_min_dbm"] != "user profiles file "+path {
		t.Errorf("override: rx min %g, source %q", zr.RxPowerMinDBm, zr.Sources["rx_power_min_dbm"])
	}
	if zr.CDTolerancePsNm != zr0.CDTolerancePsNm || zr.Sources["cd_tolerance_ps_nm"] != zr0.Sources["cd_tolerance_ps_nm"] {
		t.Errorf("an unmentioned figure changed: %g %q", zr.CDTolerancePsNm, zr.Sources["cd_tolerance_ps_nm"])
	}
	lab, err := ProfileByID(ps, "lab-200g-8qam")
	if err != nil {
		t.Fatal(err)
	}
	if lab.Sources["baud_gbd"] != "lab measurement" || lab.Sources["cd_tolerance_ps_nm"] != "user profiles file "+path {
		t.Errorf("new profile sources: %v", lab.Sources)
	}
	// The built-in set must not have been modified through shared maps.
	again := mustBuiltin(t)
	if z, _ := ProfileByID(again, "400g-dp-16qam-cfec"); z.RxPowerMinDBm != zr0.RxPowerMinDBm || strings.HasPrefix(z.Sources["rx_power_min_dbm"], "user") {
		t.Errorf("built-in profile changed by a user file: %g %q", z.RxPowerMinDBm, z.Sources["rx_power_min_dbm"])
	}
}

// A built-in file without a source for a figure is rejected (user files get a default source).
func TestProfileWithoutSourceRejected(t *testing.T) {
	_, err := decodeProfiles("x.yaml", []byte(`profiles:
  - id: a
    modulation: dp-qpsk
    polarizations: 2
    baud_gbd: 32
    fec_threshold_ber: 3.8e-3
    implementation_penalty_db: 2
    cd_tolerance_ps_nm: 1000
    dgd_tolerance_ps: 10
    pdl_tolerance_db: 1
    sop_tracking_krad_s: 10
    lo_offset_range_mhz: 1000
    rx_power_min_dbm: -10
    rx_power_max_dbm: 0
`), nil)
	var fe *FileError
	if !errors.As(err, &fe) || !errors.Is(err, ErrMissing) || fe.Field != "profiles[0].sources.modulation" || fe.Line != 2 {
		t.Errorf("err = %v, want missing source for profiles[0].sources.modulation at line 2", err)
	}
}

var headerRE = regexp.MustCompile(`^# field: *(\S*) +sentinel: *(\S+)`)

var sentinels = map[string]error{
	"range": ErrRange, "missing": ErrMissing, "unknown-field": ErrUnknownField, "type": ErrType,
	"duplicate": ErrDuplicate, "unknown-profile": ErrUnknownProfile, "none": nil,
}

// TestBadFiles runs the corpus in testdata/bad. Each file states on its first line the field and
// kind of fault expected; the line the error must point at carries the comment "want-error".
func TestBadFiles(t *testing.T) {
	files, err := filepath.Glob("testdata/bad/*.yaml")
	if err != nil || len(files) == 0 {
		t.Fatalf("no bad-file corpus: %v", err)
	}
	for _, path := range files {
		t.Run(filepath.Base(path), func(t *testing.T) {
			data, err := os.ReadFile(path)
			if err != nil {
				t.Fatal(err)
			}
			lines := strings.Split(string(data), "\n")
			m := headerRE.FindStringSubmatch(lines[0])
			if m == nil {
				t.Fatalf("first line %q lacks the field/sentinel header", lines[0])
			}
			wantField, sentinel := m[1], sentinels[m[2]]
			wantLine := 0
			for i, l := range lines {
				if strings.Contains(l, "want-error") {
					wantLine = i + 1
				}
			}
			// The corpus lives in testdata/bad but port maps refer to plans in testdata.
			switch base := filepath.Base(path); {
			case strings.HasPrefix(base, "plan-"):
				_, err = LoadPlan(path)
			case strings.HasPrefix(base, "profiles-"):
				_, err = LoadProfiles(path)
			case strings.HasPrefix(base, "rules-"):
				_, err = LoadRules(path)
			case strings.HasPrefix(base, "portmap-"):
				_, err = LoadPortMap(path)
			default:
				t.Fatalf("unknown kind of file %s", base)
			}
			var fe *FileError
			if !errors.As(err, &fe) {
				t.Fatalf("err = %v (%T), want a *FileError", err, err)
			}
			if fe.File != path || fe.Line != wantLine || fe.Field != wantField {
				t.Errorf("got %s:%d field %q, want %s:%d field %q (%v)", fe.File, fe.Line, fe.Field, path, wantLine, wantField, err)
			}
			if sentinel != nil && !errors.Is(err, sentinel) {
				t.Errorf("err = %v, want it to wrap %v", err, sentinel)
			}
			// The message starts file:line: so editors can jump to it.
			if prefix := path + ":"; !strings.HasPrefix(err.Error(), prefix) {
				t.Errorf("message %q does not start with %q", err, prefix)
			}
		})
	}
}

func TestLoadGoodPlans(t *testing.T) {
	p, err := LoadPlan("testdata/plans/good-plan.yaml")
	if err != nil {
		t.Fatal(err)
	}
	if p.Circuit != "LAB-0001" || len(p.Spans) != 2 || len(p.Amplifiers) != 2 || p.Spans[1].DispersionPsNmKm == nil || *p.Spans[1].DispersionPsNmKm != 4.2 {
		t.Errorf("plan decoded wrongly: %+v", p)
	}
	if p.Spans[0].MeasuredLossDB != nil {
		t.Errorf("span 0 has a measured loss it was not given")
	}
	if _, err := LoadPlan("testdata/plans/minimal-plan.yaml"); err != nil {
		t.Errorf("minimal plan: %v", err)
	}
	// A profile known only from a user set is accepted when that set is passed.
	custom := append(mustBuiltin(t), Profile{ID: "lab-x"})
	q := p
	q.Profile = "lab-x"
	if err := q.CheckProfile(custom); err != nil {
		t.Errorf("CheckProfile with user profiles: %v", err)
	}
	if err := q.CheckProfile(mustBuiltin(t)); !errors.Is(err, ErrUnknownProfile) {
		t.Errorf("CheckProfile(lab-x) against built-ins = %v, want ErrUnknownProfile", err)
	}
}

func TestPlanValidateTable(t *testing.T) {
	ok := func() Plan {
		return Plan{Circuit: "c", Spans: []Span{{LengthKm: 10, Fiber: "g652"}}}
	}
	neg := -0.1
	for _, c := range []struct {
		name  string
		edit  func(*Plan)
		field string
	}{
		{"valid", func(*Plan) {}, ""},
		{"no circuit", func(p *Plan) { p.Circuit = " " }, "circuit"},
		{"zero length", func(p *Plan) { p.Spans[0].LengthKm = 0 }, "spans[0].length_km"},
		{"NaN length", func(p *Plan) { p.Spans[0].LengthKm = math.NaN() }, "spans[0].length_km"},
		{"negative attenuation", func(p *Plan) { p.Spans[0].AttenuationDBPerKm = &neg }, "spans[0].attenuation_db_per_km"},
		{"negative connectors", func(p *Plan) { p.Spans[0].Connectors = -1 }, "spans[0].connectors"},
		{"frequency off band", func(p *Plan) { p.FrequencyTHz = 19.31 }, "frequency_thz"},
		{"channels without spacing", func(p *Plan) { p.Channels = 40 }, "channel_spacing_ghz"},
		{"hazard level", func(p *Plan) { p.HazardLevel = "5" }, "hazard_level"},
		{"NF < 0", func(p *Plan) { p.Amplifiers = []Amplifier{{AfterSpan: 1, NoiseFigureDB: -0.5}} }, "amplifiers[0].noise_figure_db"},
		{"fibre alias", func(p *Plan) { p.Spans[0].Fiber = "G.655.D" }, ""},
		{"empty fibre means g652", func(p *Plan) { p.Spans[0].Fiber = "" }, ""},
	} {
		t.Run(c.name, func(t *testing.T) {
			p := ok()
			c.edit(&p)
			err := p.Validate()
			if c.field == "" {
				if err != nil {
					t.Errorf("Validate = %v, want nil", err)
				}
				return
			}
			var fe *FieldError
			if !errors.As(err, &fe) || fe.Field != c.field {
				t.Errorf("Validate = %v, want a fault in %s", err, c.field)
			}
		})
	}
}

func TestPortMapLookup(t *testing.T) {
	m, err := LoadPortMap("testdata/portmap.yaml")
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct {
		port, wantPattern, wantProfile, wantPlan string
	}{
		// An exact entry wins over the pattern listed after it.
		{"north/1/1", "north/1/1", "", filepath.Join("testdata", "plans", "good-plan.yaml")},
		// * crosses slashes.
		{"north/2/7", "north/*", "400g-dp-16qam-ofec", ""},
		{"edge-07/line2", "edge-??/line[12]", "100g-dp-qpsk", filepath.Join("testdata", "plans", "minimal-plan.yaml")},
		// [12] does not match 3; ?? needs two characters: both fall through to the catch-all.
		{"edge-07/line3", "*", "800g-dp-16qam", ""},
		{"edge-7/line1", "*", "800g-dp-16qam", ""},
	} {
		e, ok := m.Lookup(c.port)
		if !ok {
			t.Errorf("Lookup(%q): no entry", c.port)
			continue
		}
		if e.Port != c.wantPattern || e.Profile != c.wantProfile || e.PlanPath != c.wantPlan {
			t.Errorf("Lookup(%q) = %q profile %q plan %q; want %q %q %q", c.port, e.Port, e.Profile, e.PlanPath, c.wantPattern, c.wantProfile, c.wantPlan)
		}
		if e.Line == 0 {
			t.Errorf("Lookup(%q): entry has no line", c.port)
		}
	}
	// Without a catch-all an unknown port has no entry.
	m.Entries = m.Entries[:3]
	if e, ok := m.Lookup("south/1/1"); ok {
		t.Errorf("Lookup(south/1/1) = %+v, want none", e)
	}
}

func TestGlobRegexp(t *testing.T) {
	for _, c := range []struct {
		pattern, port string
		want          bool
	}{
		{"a.b", "a.b", true},
		{"a.b", "axb", false}, // a dot is literal
		{"a/*", "a/b/c", true},
		{"a?", "ab", true},
		{"a?", "abc", false},
		{"x[!0-4]", "x5", true},
		{"x[!0-4]", "x3", false},
		{"(x)+", "(x)+", true},
	} {
		re, err := globRegexp(c.pattern)
		if err != nil {
			t.Fatalf("%q: %v", c.pattern, err)
		}
		if got := re.MatchString(c.port); got != c.want {
			t.Errorf("glob %q on %q = %v, want %v", c.pattern, c.port, got, c.want)
		}
	}
}

func TestFileErrorFormat(t *testing.T) {
	e := &FileError{File: "plan.yaml", Line: 7, Field: "spans[0].length_km", Err: ErrRange}
	if got, want := e.Error(), "plan.yaml:7: spans[0].length_km: out of range"; got != want {
		t.Errorf("Error() = %q, want %q", got, want)
	}
	if !errors.Is(e, ErrRange) {
		t.Error("FileError does not unwrap to its cause")
	}
	e = &FileError{File: "gone.yaml", Err: os.ErrNotExist}
	if got, want := e.Error(), "gone.yaml: file does not exist"; got != want {
		t.Errorf("Error() = %q, want %q", got, want)
	}
}

func TestEmptyFile(t *testing.T) {
	path := writeFile(t, t.TempDir(), "empty.yaml", "# nothing here\n")
	if _, err := LoadPlan(path); !errors.Is(err, ErrEmpty) {
		t.Errorf("LoadPlan(empty) = %v, want ErrEmpty", err)
	}
	if _, err := LoadRules(filepath.Join(t.TempDir(), "missing.yaml")); !errors.Is(err, os.ErrNotExist) {
		t.Errorf("LoadRules(missing) = %v, want not-exist", err)
	}
}

// FuzzDecodePlan: arbitrary bytes never panic the strict decoder, and any error it returns is a
// *FileError.
func FuzzDecodePlan(f *testing.F) {
	for _, p := range []string{"testdata/plans/good-plan.yaml", "testdata/bad/plan-wrong-type.yaml", "testdata/portmap.yaml"} {
		if b, err := os.ReadFile(p); err == nil {
			f.Add(b)
		}
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		var p Plan
		_, ix, err := decodeStrict("fuzz.yaml", data, &p)
		if err != nil {
			var fe *FileError
			if !errors.As(err, &fe) {
				t.Fatalf("error %v is not a *FileError", err)
			}
			return
		}
		if verr := p.Validate(); verr != nil {
			var fe *FileError
			if !errors.As(ix.toFileError("fuzz.yaml", verr), &fe) {
				t.Fatalf("validate error %v did not become a *FileError", verr)
			}
		}
	})
}

// The examples in docs/rules.md must load, so the user documentation cannot drift from the code.
func TestDocExamplesLoad(t *testing.T) {
	doc, err := os.ReadFile("../docs/rules.md")
	if err != nil {
		t.Skipf("docs/rules.md not found: %v", err)
	}
	blocks := regexp.MustCompile("(?s)```yaml\n(.*?)```").FindAllStringSubmatch(string(doc), -1)
	if len(blocks) < 4 {
		t.Fatalf("found %d yaml examples, want profile, rules, plan and port map", len(blocks))
	}
	dir := t.TempDir()
	for i, b := range blocks {
		path := writeFile(t, dir, "example.yaml", b[1])
		var err error
		switch body := b[1]; {
		case strings.HasPrefix(body, "profiles:"):
			_, err = LoadProfiles(path)
		case strings.Contains(body, "circuit:"):
			_, err = LoadPlan(path)
		case strings.HasPrefix(body, "ports:"):
			// Plans named in the example do not exist here: check shape and patterns only.
			var m PortMap
			var ix lineIndex
			if _, ix, err = decodeStrict(path, []byte(body), &m); err == nil {
				err = ix.toFileError(path, m.Validate())
			}
		default:
			_, err = LoadRules(path)
		}
		if err != nil {
			t.Errorf("example %d does not load: %v", i+1, err)
		}
	}
}

// FuzzPortMap: arbitrary bytes never panic the port map's decoder and validation; errors are
// *FileErrors; a map that validates finds every exact entry by its own port and has printable,
// bounded names and peers that are exact ports other than their own.
func FuzzPortMap(f *testing.F) {
	for _, p := range []string{"testdata/portmap.yaml", "testdata/bad/portmap-peer-mismatch.yaml", "testdata/bad/portmap-serial-control.yaml", "../samples/network/portmap.yaml"} {
		if b, err := os.ReadFile(p); err == nil {
			f.Add(b)
		}
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		var m PortMap
		_, ix, err := decodeStrict("fuzz.yaml", data, &m)
		if err != nil {
			var fe *FileError
			if !errors.As(err, &fe) {
				t.Fatalf("error %v is not a *FileError", err)
			}
			return
		}
		if verr := m.Validate(); verr != nil {
			var fe *FileError
			if !errors.As(ix.toFileError("fuzz.yaml", verr), &fe) {
				t.Fatalf("validate error %v did not become a *FileError", verr)
			}
			return
		}
		for _, e := range m.Entries {
			if checkName("x", e.FibreLine) != nil || checkName("x", e.Serial) != nil || checkName("x", e.Peer) != nil {
				t.Fatalf("entry %+v validated with a bad name", e)
			}
			if e.Peer != "" && (e.Peer == e.Port || strings.ContainsAny(e.Peer, globMeta)) {
				t.Fatalf("entry %+v validated with a bad peer", e)
			}
			if strings.ContainsAny(e.Port, globMeta) {
				continue
			}
			if got, ok := m.Lookup(e.Port); !ok || got.Port != e.Port {
				t.Fatalf("Lookup(%q) = %+v, %v", e.Port, got, ok)
			}
		}
	})
}

// A telemetry's profile column gives an id, or a module type a profile lists (ignoring case).
func TestProfileByName(t *testing.T) {
	base := mustBuiltin(t)
	for _, tc := range []struct{ name, want, errHas string }{
		{"100g-dp-qpsk", "100g-dp-qpsk", ""},
		{"400ZR", "400g-dp-16qam-cfec", ""},
		{"400zr", "400g-dp-16qam-cfec", ""},
		{"100G-DP-QPSK", "", `unknown profile "100G-DP-QPSK" (known: 100g-dp-qpsk, `},
		{"zr400", "", "; module types: 400ZR"},
	} {
		p, err := ProfileByName(base, tc.name)
		if tc.errHas != "" {
			if !errors.Is(err, ErrUnknownProfile) || !strings.Contains(err.Error(), tc.errHas) {
				t.Errorf("%q: err %v, want ErrUnknownProfile saying %q", tc.name, err, tc.errHas)
			}
			continue
		}
		if err != nil || p.ID != tc.want {
			t.Errorf("%q: %q, %v; want %s", tc.name, p.ID, err, tc.want)
		}
	}
	// A module type names one profile: a second profile claiming it, or claiming another's id,
	// is refused.
	dir := t.TempDir()
	for name, types := range map[string]string{"twice.yaml": "[400zr]", "id.yaml": "[100G-DP-QPSK]"} {
		path := writeFile(t, dir, name, "profiles:\n  - id: 800g-dp-16qam\n    module_types: "+types+"\n")
		if _, err := LoadProfiles(path); !errors.Is(err, ErrDuplicate) || !strings.Contains(err.Error(), "module type") {
			t.Errorf("%s: err %v, want a duplicate module type", name, err)
		}
	}
}
