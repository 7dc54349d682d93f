package rules

import (
	"errors"
	"testing"
	"time"
)

// The bringing-into-service periods of ITU-T M.2110 (from memory) and other durations.
func TestParseTestPeriod(t *testing.T) {
	for s, want := range map[string]time.Duration{"15m": 15 * time.Minute, "2h": 2 * time.Hour, "24h": 24 * time.Hour, "7d": 7 * 24 * time.Hour, " 36h ": 36 * time.Hour} {
		if got, err := ParseTestPeriod(s); err != nil || got != want {
			t.Errorf("ParseTestPeriod(%q) = %v, %v; want %v", s, got, err, want)
		}
	}
	for _, bad := range []string{"", "soon", "30s", "-2h", "400d", "1.5d"} {
		if _, err := ParseTestPeriod(bad); err == nil {
			t.Errorf("ParseTestPeriod(%q) accepted", bad)
		}
	}
}

// A plan's instruments and hand readings are checked field by field, and a bad one is named.
func TestPlanFieldRecords(t *testing.T) {
	base := func() Plan {
		return Plan{Circuit: "c", Spans: []Span{{LengthKm: 10, Fiber: "g652"}},
			Instruments:   []Instrument{{Kind: "optical power meter", Serial: "PM-1", CalibratedOn: "2026-01-10", CalibrationDue: "2027-01-10"}},
			PowerReadings: []PowerReading{{Location: "Rx patch panel", PowerDBm: -7.9, WavelengthNm: 1550, Instrument: "PM-1", TakenAt: "2026-03-14T08:00:00Z"}}}
	}
	if p := base(); p.Validate() != nil {
		t.Fatalf("valid plan refused: %v", p.Validate())
	}
	for _, tc := range []struct {
		field string
		edit  func(*Plan)
	}{
		{"soak", func(p *Plan) { p.Soak = "a while" }},
		{"instruments[0]", func(p *Plan) { p.Instruments[0].Serial = "" }},
		{"instruments[0].calibrated_on", func(p *Plan) { p.Instruments[0].CalibratedOn = "10/01/2026" }},
		{"power_readings[0].power_dbm", func(p *Plan) { p.PowerReadings[0].PowerDBm = 45 }},
		{"power_readings[0].instrument", func(p *Plan) { p.PowerReadings[0].Instrument = "PM-9" }},
		{"power_readings[0].taken_at", func(p *Plan) { p.PowerReadings[0].TakenAt = "yesterday" }},
	} {
		p := base()
		tc.edit(&p)
		var fe *FieldError
		if err := p.Validate(); !errors.As(err, &fe) || fe.Field != tc.field {
			t.Errorf("%s: got %v", tc.field, err)
		}
	}
}
