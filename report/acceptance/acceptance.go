package acceptance

import (
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"sort"
	"strconv"
	"strings"
	"time"

	"github.com/beatnote/beatnote/diagnose"
	"github.com/beatnote/beatnote/parse"
	"github.com/beatnote/beatnote/report"
	"github.com/beatnote/beatnote/rules"
)

// DocumentFormat is the value of the "format" member of the JSON acceptance report.
const DocumentFormat = "beatnote-acceptance/1"

// MaxRejectionsShown bounds the rejected rows an acceptance report lists; the counts stay complete.
const MaxRejectionsShown = 10

// SignOff holds the hand-over fields the technician fills in. Empty fields print as blank lines
// to be completed by hand.
type SignOff struct {
	Technician     string `json:"technician"`
	Organisation   string `json:"organisation"`
	AcceptingParty string `json:"accepting_party"`
	EndA           string `json:"end_a"`
	EndZ           string `json:"end_z"`
	Notes          string `json:"notes"`
}

// ProfileSummary is the part of a module profile an acceptance report shows.
type ProfileSummary struct {
	ID              string  `json:"id"`
	Name            string  `json:"name"`
	Modulation      string  `json:"modulation"`
	BaudGBd         float64 `json:"baud_gbd"`
	FEC             string  `json:"fec"`
	FECThresholdBER float64 `json:"fec_threshold_ber"`
	// Assumed is set when nothing named the profile of some port: the built-in default was
	// assumed (the report says so in its header).
	Assumed bool `json:"assumed,omitempty"`
}

// PlanSummary is the part of a link plan an acceptance report shows.
type PlanSummary struct {
	Circuit      string  `json:"circuit"`
	Description  string  `json:"description,omitempty"`
	EndA         string  `json:"end_a,omitempty"`
	EndZ         string  `json:"end_z,omitempty"`
	Spans        int     `json:"spans"`
	LengthKm     float64 `json:"length_km"`
	Amplifiers   int     `json:"amplifiers"`
	FrequencyTHz float64 `json:"frequency_thz,omitempty"`
	// Instruments and PowerReadings are the plan's record of the instruments used and the hand
	// power-meter readings taken at acceptance.
	Instruments   []rules.Instrument   `json:"instruments,omitempty"`
	PowerReadings []rules.PowerReading `json:"power_readings,omitempty"`
}

// SafetySection is the laser-safety part of the report.
type SafetySection struct {
	// HazardLevel is the IEC 60825-2 hazard level of the interface, or "not stated".
	HazardLevel string `json:"hazard_level"`
	// HazardSource says where the level came from ("link plan", "module profile …", or "").
	HazardSource string   `json:"hazard_source,omitempty"`
	Cautions     []string `json:"cautions"`
}

// RejectionSummary accounts for rows that were not used.
type RejectionSummary struct {
	Total int               `json:"total"`
	First []parse.Rejection `json:"first"` // at most MaxRejectionsShown
}

// SettingsFile is a file the judgement was made with besides the telemetry — the link plan, the
// port map, a profiles or rules file — with its SHA-256, so the report names exactly what it
// was judged against.
type SettingsFile struct {
	Role   string `json:"role"` // "link plan", "port map", "profiles", "rules"
	File   string `json:"file"`
	SHA256 string `json:"sha256"`
}

// Signing says who signs the report with which key. The fingerprint is printed in the report;
// the signature itself is detached (see Sign).
type Signing struct {
	Signer         string `json:"signer"`
	KeyFingerprint string `json:"key_fingerprint"`
}

// Report is the content of an acceptance report, the same for PDF, Markdown and JSON.
// Build it with New.
type Report struct {
	Format      string                `json:"format"`
	Tool        string                `json:"tool"`
	Version     string                `json:"version"`
	ReportID    string                `json:"report_id"`
	GeneratedAt string                `json:"generated_at"` // RFC 3339, UTC
	Circuit     string                `json:"circuit"`
	EndA        string                `json:"end_a"`
	EndZ        string                `json:"end_z"`
	From        string                `json:"from"`
	To          string                `json:"to"`
	Profile     *ProfileSummary       `json:"profile,omitempty"`
	Verdict     diagnose.Verdict      `json:"verdict"`
	Plan        *PlanSummary          `json:"plan,omitempty"`
	Ports       []diagnose.PortResult `json:"ports"` // the engine's judgements; empty actions filled from DefaultActions
	// Directions holds the circuit judged both ways, when both ends' ports are reported.
	Directions []diagnose.DirectionPair `json:"directions,omitempty"`
	Inputs     []parse.InputStats       `json:"inputs"`
	Settings   []SettingsFile           `json:"settings_files,omitempty"`
	Rejected   RejectionSummary         `json:"rejected"`
	Safety     SafetySection            `json:"safety"`
	SignOff    SignOff                  `json:"sign_off"`
	Signing    *Signing                 `json:"signing,omitempty"`

	// series keeps each port's telemetry for the charts (PDF only), keyed by port.
	series map[string]*parse.Series
	// marks keeps each port's chart annotations from the engine, keyed by port.
	marks map[string]ChartMarks
	// profile is the full profile, for chart limit lines.
	profile *rules.Profile
	// chartIndex numbers the charts of the document being drawn.
	chartIndex int
}

// Input is everything an acceptance report is made from. Result is required; the
// rest is optional.
type Input struct {
	Result  *diagnose.Result
	Dataset *parse.Dataset // telemetry for the charts
	Profile *rules.Profile // the module profile in force
	Plan    *rules.Plan
	Fields  SignOff
	Time    time.Time // report time; the zero time is refused (determinism is the caller's choice)
	Signing *Signing  // nil when the report is not signed
	// Settings are the plan, map, profiles and rules files used, with their SHA-256.
	Settings []SettingsFile
	// Marks holds chart annotations per port (change points, bursts, trend, DGD fit). Ports
	// not listed take theirs from PortResult.Analysis when the engine filled it in.
	Marks map[string]ChartMarks
}

// New gathers the report content. It does not judge anything itself: verdicts,
// criteria and causes are the engine's.
func New(in Input) (*Report, error) {
	if in.Result == nil {
		return nil, errors.New("acceptance: no diagnosis result")
	}
	if len(in.Result.Ports) == 0 {
		return nil, errors.New("acceptance: the inputs hold no port to report on")
	}
	if in.Time.IsZero() {
		return nil, errors.New("acceptance: no report time given")
	}
	a := &Report{
		Format:      DocumentFormat,
		Tool:        in.Result.Tool,
		Version:     in.Result.Version,
		GeneratedAt: in.Time.UTC().Format(time.RFC3339),
		Inputs:      append([]parse.InputStats(nil), in.Result.Inputs...),
		Settings:    in.Settings,
		Directions:  in.Result.Directions,
		SignOff:     in.Fields,
		Signing:     in.Signing,
		series:      map[string]*parse.Series{},
		marks:       map[string]ChartMarks{},
		profile:     in.Profile,
	}
	if a.Tool == "" {
		a.Tool = "beatnote"
	}
	if a.Inputs == nil {
		a.Inputs = []parse.InputStats{}
	}

	// Ports, worst first as the engine sorted them; the overall verdict is the worst.
	worst := diagnose.Pass
	for _, pr := range in.Result.Ports {
		p := pr
		p.Causes = make([]diagnose.Cause, len(pr.Causes))
		for i, c := range pr.Causes {
			if len(c.Actions) == 0 {
				c.Actions = DefaultActions(c.ID)
			}
			p.Causes[i] = c
		}
		a.Ports = append(a.Ports, p)
		if pr.Verdict.Severity() > worst.Severity() {
			worst = pr.Verdict
		}
		if pr.From != "" && (a.From == "" || pr.From < a.From) {
			a.From = pr.From
		}
		if pr.To > a.To {
			a.To = pr.To
		}
	}
	a.Verdict = worst

	// Circuit and ends: the plan names them; the sign-off fields override the ends.
	if in.Plan != nil {
		a.Circuit, a.EndA, a.EndZ = in.Plan.Circuit, in.Plan.EndA, in.Plan.EndZ
		ps := &PlanSummary{
			Circuit: in.Plan.Circuit, Description: in.Plan.Description, EndA: in.Plan.EndA,
			EndZ: in.Plan.EndZ, Spans: len(in.Plan.Spans), Amplifiers: len(in.Plan.Amplifiers),
			FrequencyTHz: in.Plan.FrequencyTHz, Instruments: in.Plan.Instruments, PowerReadings: in.Plan.PowerReadings,
		}
		for _, s := range in.Plan.Spans {
			ps.LengthKm += s.LengthKm
		}
		a.Plan = ps
	}
	if a.Circuit == "" {
		for _, p := range a.Ports {
			if p.Circuit != "" {
				a.Circuit = p.Circuit
				break
			}
		}
	}
	if a.Circuit == "" {
		names := make([]string, len(a.Ports))
		for i, p := range a.Ports {
			names[i] = p.Port
		}
		a.Circuit = strings.Join(names, ", ")
	}
	if in.Fields.EndA != "" {
		a.EndA = in.Fields.EndA
	}
	if in.Fields.EndZ != "" {
		a.EndZ = in.Fields.EndZ
	}
	a.SignOff.EndA, a.SignOff.EndZ = a.EndA, a.EndZ

	if in.Profile != nil {
		a.Profile = &ProfileSummary{
			ID: in.Profile.ID, Name: in.Profile.Name, Modulation: in.Profile.Modulation,
			BaudGBd: in.Profile.BaudGBd, FEC: in.Profile.FEC, FECThresholdBER: in.Profile.FECThresholdBER,
		}
		for _, p := range in.Result.Ports {
			if p.ProfileSource == diagnose.ProfileAssumed {
				a.Profile.Assumed = true
			}
		}
	}

	a.Rejected.Total = 0
	for _, st := range a.Inputs {
		a.Rejected.Total += st.RowsRejected
	}
	n := min(len(in.Result.Rejected), MaxRejectionsShown)
	a.Rejected.First = append([]parse.Rejection{}, in.Result.Rejected[:n]...)

	a.Safety = newSafetySection(in.Plan, in.Profile)

	if in.Dataset != nil {
		for _, s := range in.Dataset.Series {
			a.series[s.Port] = s.Decoded()
		}
	}
	for _, pr := range in.Result.Ports {
		if pr.Analysis == nil {
			continue
		}
		if a.series[pr.Port] == nil && pr.Analysis.Series != nil {
			a.series[pr.Port] = pr.Analysis.Series.Decoded()
		}
		a.marks[pr.Port] = MarksFromAnalysis(pr.Analysis)
	}
	for port, m := range in.Marks {
		a.marks[port] = m
	}

	id, err := a.computeID()
	if err != nil {
		return nil, err
	}
	a.ReportID = id
	return a, nil
}

// computeID is "BN-" and the first 16 hex digits of the SHA-256 of the report's JSON content
// with an empty id: the same content gives the same id, any change a different one.
func (a *Report) computeID() (string, error) {
	c := *a
	c.ReportID = ""
	data, err := json.Marshal(&c)
	if err != nil {
		return "", fmt.Errorf("acceptance: %w", err)
	}
	sum := sha256.Sum256(data)
	return "BN-" + strings.ToUpper(hex.EncodeToString(sum[:8])), nil
}

// HazardNotStated is the hazard level shown when neither plan nor profile gives one.
const HazardNotStated = "not stated"

func newSafetySection(plan *rules.Plan, prof *rules.Profile) SafetySection {
	s := SafetySection{HazardLevel: HazardNotStated}
	switch {
	case plan != nil && strings.TrimSpace(plan.HazardLevel) != "":
		s.HazardLevel, s.HazardSource = strings.TrimSpace(plan.HazardLevel), "link plan"
	case prof != nil && strings.TrimSpace(prof.HazardLevel) != "":
		s.HazardLevel, s.HazardSource = strings.TrimSpace(prof.HazardLevel), "module profile "+prof.ID
	}
	level := "The IEC 60825-2 hazard level at the accessible locations of this interface is " + s.HazardLevel
	if s.HazardSource != "" {
		level += " (as given in the " + s.HazardSource + ")."
	} else {
		level += ": neither the link plan nor the module profile gives it. Treat every fibre end as live and hazardous until you know better."
	}
	s.Cautions = []string{
		level,
		"The light on this link is infrared and invisible: you cannot tell by looking whether a fibre is lit, and the eye gets no warning from it.",
		"Never look into a fibre end, a connector or an open adapter, with or without a lens. Magnifying optics concentrate the light and raise the hazard.",
		"Before inspecting or cleaning, confirm with an optical power meter that the fibre is dark, and cap every end you are not working on.",
		"Inspect connector end faces with a video inspection scope, never a direct-view microscope, and judge them against IEC 61300-3-35.",
		"Automatic power reduction or shutdown (ITU-T G.664) may not act on every path, especially on amplified spans; it is no substitute for safe working practice.",
		"These notes do not replace local regulations, the network operator's procedures or licensed safety practice: where they differ, those prevail.",
	}
	return s
}

// defaultActions are recommended first steps per cause, used when the engine gives none.
// Common practice, in our own words.
var defaultActions = map[diagnose.CauseID][]string{
	diagnose.CauseOSNRLow: {
		"Compare the per-span amplifier gains and input powers with the plan; look for a span with extra loss or a low-gain amplifier.",
		"Check the channel's launch power against the plan and the mux/demux insertion loss.",
	},
	diagnose.CauseRxPowerLow: {
		"Measure the received power with a calibrated meter and compare with the plan's budget.",
		"Inspect and clean the connectors on the receive path (patch panels, demux); look for a bent or pinched patch cord.",
	},
	diagnose.CauseRxOverload: {
		"Add or increase a fixed attenuator before the receiver until the power sits inside the module's window.",
		"Check that the right (short-reach) optics and attenuation plan are installed.",
	},
	diagnose.CauseCDMismatch: {
		"Check the plan's span lengths and fibre types against the as-built record; the route may differ from the design.",
		"Look for dispersion-compensating modules left in a coherent path.",
	},
	diagnose.CauseCDOverLimit: {
		"The accumulated dispersion exceeds what the receiver compensates: re-route, add compensation, or use a module with a larger tolerance.",
	},
	diagnose.CausePMD: {
		"Ask for a PMD measurement of the spans; older fibre sections are the usual suspects.",
		"Watch the DGD over a longer period: PMD statistics need time to show the tail.",
	},
	diagnose.CauseSOPTransient: {
		"Look for mechanical disturbance on the route at the burst times: aerial cable in wind or lightning, works near the duct, vibrating equipment.",
		"Correlate the burst times with the neighbouring channels on the same fibre.",
	},
	diagnose.CausePDLHigh: {
		"Inspect connectors and passive components (splitters, filters, isolators) on the path; replace the component with excess PDL.",
	},
	diagnose.CauseLOOffset: {
		"Check the transmitter's and the receiver's frequency settings against the plan's grid channel.",
		"A drifting offset points at a laser ageing or a temperature-control fault: raise it with the module supplier.",
	},
	diagnose.CauseNonlinear: {
		"Reduce the launch power step by step and watch whether the Q-factor improves.",
		"Check the power of the neighbouring channels against the plan.",
	},
	diagnose.CauseSignalLoss: {
		"Confirm the far-end transmitter is on and the fibre path is continuous (power meter, then OTDR).",
		"Check for a fibre cut or an open patch at the times the signal dropped.",
	},
}

// DefaultActions are beatnote's recommended first steps for a cause id (nil when unknown).
func DefaultActions(causeID diagnose.CauseID) []string {
	return append([]string(nil), defaultActions[causeID]...)
}

// WriteJSON writes the report as one indented JSON object.
func (a *Report) WriteJSON(w io.Writer) error {
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	return enc.Encode(a)
}

// sortedMetricKeys gives a port's metric names in canonical column order, derived ones after.
func sortedMetricKeys(m map[string]diagnose.Metric) []string {
	keys := make([]string, 0, len(m))
	for k := range m {
		keys = append(keys, k)
	}
	rank := func(k string) int {
		if q, ok := parse.QuantityByColumn(k); ok {
			return int(q)
		}
		return int(parse.NumQuantities)
	}
	sort.Slice(keys, func(i, j int) bool {
		ri, rj := rank(keys[i]), rank(keys[j])
		if ri != rj {
			return ri < rj
		}
		return keys[i] < keys[j]
	})
	return keys
}

// metricRows are a port's measurements as table rows in sortedMetricKeys order: the name (marked
// "(derived)" when computed from other columns), then min, median, p99 and max with their unit.
func metricRows(m map[string]diagnose.Metric) [][]string {
	keys := sortedMetricKeys(m)
	rows := make([][]string, len(keys))
	for i, k := range keys {
		mt := m[k]
		name := report.QuantityLabel(k)
		if mt.Derived {
			name += " (derived)"
		}
		rows[i] = []string{name, report.FormatValue(mt.Min, mt.Unit), report.FormatValue(mt.P50, mt.Unit), report.FormatValue(mt.P99, mt.Unit), report.FormatValue(mt.Max, mt.Unit)}
	}
	return rows
}

// readingNote says what a reader of a hand reading should know about its instrument: not
// listed, or the reading taken after the instrument's calibration fell due ("" when neither).
func readingNote(r rules.PowerReading, ins []rules.Instrument) string {
	if r.Instrument == "" {
		return "instrument not stated"
	}
	for _, in := range ins {
		if in.Serial != r.Instrument {
			continue
		}
		if in.CalibrationDue != "" && r.TakenAt != "" && r.TakenAt[:min(len(r.TakenAt), 10)] > in.CalibrationDue {
			return "taken after the instrument's calibration fell due (" + in.CalibrationDue + ")"
		}
		return ""
	}
	return ""
}

// instrumentRows and readingRows are the field-measurement tables, the same for PDF and Markdown.
func instrumentRows(ins []rules.Instrument) [][]string {
	rows := make([][]string, len(ins))
	for i, in := range ins {
		rows[i] = []string{in.Kind, orBlank(in.Model, "not stated"), in.Serial, in.CalibratedOn, orBlank(in.CalibrationDue, "not stated")}
	}
	return rows
}

func readingRows(rs []rules.PowerReading, ins []rules.Instrument) [][]string {
	rows := make([][]string, len(rs))
	for i, r := range rs {
		wl := "not stated"
		if r.WavelengthNm > 0 {
			wl = strconv.FormatFloat(r.WavelengthNm, 'f', -1, 64) + " nm"
		}
		rows[i] = []string{r.Location, report.FormatValue(r.PowerDBm, "dBm"), wl, orBlank(r.Instrument, "not stated"), orBlank(r.TakenAt, "not stated"), readingNote(r, ins)}
	}
	return rows
}
