// Command gen writes beatnote's demo scenario, deterministically, from samples/synth: the logs
// under samples/logs, one link plan per circuit under samples/plans, the triage port map
// samples/portmap.yaml and samples/manifest.yaml, which lists for every log its port, circuit,
// plan, profile, intended verdict and intended causes (top cause first); and the demo network
// under samples/network (fibre lines of several channels with events on them; network.go).
//
// Run from the module root: go run ./samples/gen (or go generate ./samples/...). The flag -dir
// writes elsewhere (the tests compare a fresh run with the committed files).
//
// The scenario is invented: Quillmarsh Regional Optical, its sites and circuits are made up.
package main

import (
	"bytes"
	"compress/gzip"
	"flag"
	"fmt"
	"go.yaml.in/yaml/v3"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"time"

	"github.com/beatnote/beatnote/diagnose"
	"github.com/beatnote/beatnote/parse"
	"github.com/beatnote/beatnote/rules"
	"github.com/beatnote/beatnote/samples/synth"
)

//go:generate go run . -dir ..

// format is how one sample log is written.
type format string

const (
	csvCanonical   format = "csv"            // canonical names, RFC 3339
	csvFriendly    format = "csv-friendly"   // Rx power [mW], CD (ns/nm)…, "YYYY-MM-DD HH:MM:SS"
	csvSemicolon   format = "csv-semicolon"  // ';' with decimal commas, CRLF, BOM
	csvTab         format = "tsv"            // tab, Unix milliseconds
	csvGzip        format = "csv-gzip"       // canonical, Unix seconds, gzip
	jsonLines      format = "jsonl"          // canonical fields
	jsonLinesGzip  format = "jsonl-gzip"     //
	openConfigOTN  format = "openconfig"     // logical channel with OTN state + optical channel
	openConfigBare format = "openconfig-och" // FEC leaves on the optical channel (no OTN framing)
)

// circuit is one circuit of the scenario and the log written for it.
type circuit struct {
	id, endA, endZ, port string
	profile              string
	causes               []diagnose.CauseID
	seed                 int64
	format               format
	file                 string
	gap                  bool
	// samples overrides the number of one-minute samples (default: samples, or
	// openConfigSamples for the OpenConfig logs).
	samples int
}

// The invented operator's sites: Ferrowick, Lantry Ford, Oskelby, Vennermoor, Glimmerby,
// Tollaven, Ruskhollow, Mardle Quay, Cindervale, Pellorin.
var circuits = []circuit{
	{id: "QRO-FRW-LTF-401", endA: "Ferrowick", endZ: "Lantry Ford", port: "FRW-OT1/1/C1", profile: "400g-dp-16qam-cfec", seed: 101, format: csvCanonical, file: "ferrowick-lantryford-healthy.csv", samples: 1440}, // a full 24-hour test period
	{id: "QRO-OSK-VEN-402", endA: "Oskelby", endZ: "Vennermoor", port: "OSK-OT2/1/C1", profile: "400g-dp-16qam-ofec", causes: []diagnose.CauseID{diagnose.CauseOSNRLow}, seed: 102, format: csvFriendly, file: "oskelby-vennermoor-osnr.csv"},
	{id: "QRO-GLM-TLV-403", endA: "Glimmerby", endZ: "Tollaven", port: "GLM-OT1/2/C1", profile: "400g-dp-16qam-cfec", causes: []diagnose.CauseID{diagnose.CauseRxPowerLow}, seed: 103, format: csvSemicolon, file: "glimmerby-tollaven-lowpower.csv"},
	{id: "QRO-RSK-MDQ-104", endA: "Ruskhollow", endZ: "Mardle Quay", port: "RSK-LC3/4", profile: "100g-dp-qpsk", causes: []diagnose.CauseID{diagnose.CauseRxOverload}, seed: 104, format: jsonLines, file: "ruskhollow-mardlequay-overload.jsonl"},
	{id: "QRO-CDV-PLR-205", endA: "Cindervale", endZ: "Pellorin", port: "och-1/1/5", profile: "200g-dp-16qam", causes: []diagnose.CauseID{diagnose.CauseCDMismatch}, seed: 105, format: openConfigOTN, file: "cindervale-pellorin-patching.json"},
	{id: "QRO-FRW-OSK-406", endA: "Ferrowick", endZ: "Oskelby", port: "FRW-OT1/3/C1", profile: "400g-dp-16qam-cfec", causes: []diagnose.CauseID{diagnose.CauseCDOverLimit}, seed: 106, format: csvGzip, file: "ferrowick-oskelby-longroute.csv.gz"},
	{id: "QRO-VEN-GLM-107", endA: "Vennermoor", endZ: "Glimmerby", port: "VEN-LC1/7", profile: "100g-dp-qpsk", causes: []diagnose.CauseID{diagnose.CausePMD}, seed: 107, format: csvTab, file: "vennermoor-glimmerby-pmd.tsv"},
	{id: "QRO-TLV-RSK-408", endA: "Tollaven", endZ: "Ruskhollow", port: "TLV-OT4/1/C1", profile: "400g-dp-16qam-ofec", causes: []diagnose.CauseID{diagnose.CauseSOPTransient}, seed: 108, format: csvCanonical, file: "tollaven-ruskhollow-aerial-sop.csv"},
	{id: "QRO-MDQ-CDV-209", endA: "Mardle Quay", endZ: "Cindervale", port: "MDQ-LC2/9", profile: "200g-dp-16qam", causes: []diagnose.CauseID{diagnose.CausePDLHigh}, seed: 109, format: csvFriendly, file: "mardlequay-cindervale-pdl.csv"},
	{id: "QRO-PLR-FRW-810", endA: "Pellorin", endZ: "Ferrowick", port: "PLR-OT8/1/C1", profile: "800g-dp-16qam", causes: []diagnose.CauseID{diagnose.CauseLOOffset}, seed: 110, format: jsonLinesGzip, file: "pellorin-ferrowick-lodrift.jsonl.gz"},
	{id: "QRO-LTF-TLV-411", endA: "Lantry Ford", endZ: "Tollaven", port: "och-2/1/1", profile: "400g-dp-16qam-ofec", causes: []diagnose.CauseID{diagnose.CauseNonlinear}, seed: 111, format: openConfigBare, file: "lantryford-tollaven-hotlaunch.json"},
	{id: "QRO-OSK-MDQ-212", endA: "Oskelby", endZ: "Mardle Quay", port: "OSK-LC5/2", profile: "200g-dp-16qam", causes: []diagnose.CauseID{diagnose.CauseSignalLoss}, seed: 112, format: csvCanonical, file: "oskelby-mardlequay-cut.csv"},
	{id: "QRO-TLV-CDV-115", endA: "Tollaven", endZ: "Cindervale", port: "TLV-LC2/5", profile: "100g-dp-qpsk", causes: []diagnose.CauseID{diagnose.CauseSignalLoss}, seed: 115, format: csvTab, file: "tollaven-cindervale-silent.tsv", gap: true},
	{id: "QRO-GLM-PLR-413", endA: "Glimmerby", endZ: "Pellorin", port: "GLM-OT1/4/C1", profile: "400g-dp-16qam-cfec", causes: []diagnose.CauseID{diagnose.CauseRxPowerLow, diagnose.CauseSOPTransient}, seed: 113, format: csvSemicolon, file: "glimmerby-pellorin-lowpower-sop.csv"},
	{id: "QRO-CDV-VEN-814", endA: "Cindervale", endZ: "Vennermoor", port: "CDV-OT3/1/C1", profile: "800g-dp-16qam", causes: []diagnose.CauseID{diagnose.CauseLOOffset, diagnose.CausePDLHigh}, seed: 114, format: jsonLines, file: "cindervale-vennermoor-lo-pdl.jsonl"},
}

const (
	severity = 0.6
	samples  = 600 // ten hours of one-minute samples per port
	// openConfigSamples keeps the verbose OpenConfig logs small: four hours.
	openConfigSamples = 240
)

// spec is what synth makes the circuit's data from; the OpenConfig logs get fewer samples.
func (ct circuit) spec() synth.Spec {
	n := samples
	if ct.format == openConfigOTN || ct.format == openConfigBare {
		n = openConfigSamples
	}
	if ct.samples > 0 {
		n = ct.samples
	}
	return synth.Spec{Causes: ct.causes, Severity: severity, Seed: ct.seed, ProfileID: ct.profile,
		Samples: n, Port: ct.port, Circuit: ct.id, EndA: ct.endA, EndZ: ct.endZ, SignalLossAsGap: ct.gap}
}

// manifestEntry describes one sample log for the tests and the README.
type manifestEntry struct {
	File       string             `json:"file" yaml:"file"`
	Format     string             `json:"format" yaml:"format"`
	Port       string             `json:"port" yaml:"port"`
	Circuit    string             `json:"circuit" yaml:"circuit"`
	Plan       string             `json:"plan" yaml:"plan"`
	Profile    string             `json:"profile" yaml:"profile"`
	Verdict    diagnose.Verdict   `json:"verdict" yaml:"verdict"`
	Acceptable []string           `json:"acceptable_verdicts" yaml:"acceptable_verdicts"`
	Causes     []diagnose.CauseID `json:"causes" yaml:"causes"`
	Severity   float64            `json:"severity" yaml:"severity"`
	Seed       int64              `json:"seed" yaml:"seed"`
	Samples    int                `json:"samples" yaml:"samples"`
	Notes      []string           `json:"notes" yaml:"notes"`
	Design     map[string]any     `json:"design" yaml:"design"`
	Actual     map[string]any     `json:"actual" yaml:"actual"`
}

type manifest struct {
	Scenario string          `json:"scenario" yaml:"scenario"`
	Note     string          `json:"note" yaml:"note"`
	Logs     []manifestEntry `json:"logs" yaml:"logs"`
}

func main() {
	dir := flag.String("dir", "samples", "folder to write logs/, plans/, portmap.yaml and manifest.yaml into")
	flag.Parse()
	if err := generate(*dir); err != nil {
		fmt.Fprintln(os.Stderr, "gen:", err)
		os.Exit(1)
	}
}

// generate writes the whole scenario under dir.
func generate(dir string) error {
	for _, sub := range []string{"logs", "plans"} {
		if err := os.MkdirAll(filepath.Join(dir, sub), 0o755); err != nil {
			return err
		}
	}
	man := manifest{
		Scenario: "Quillmarsh Regional Optical (invented): ten sites, fifteen circuits",
		Note:     "Generated by go run ./samples/gen from samples/synth; every name is made up. verdict is what the data supports against the profile's limits; a stricter rule set may judge a marginal log as fail, never as pass.",
	}
	var pm strings.Builder
	pm.WriteString("# Port map for beatnote triage of the demo scenario (invented names). Generated by samples/gen.\nports:\n")
	for _, ct := range circuits {
		c, err := synth.Make(ct.spec())
		if err != nil {
			return fmt.Errorf("%s: %w", ct.id, err)
		}
		c.Plan.Description = fmt.Sprintf("%s to %s, %s (invented demo circuit)", ct.endA, ct.endZ, c.Profile.Name)
		planFile := "plans/" + strings.ToLower(ct.id) + ".yaml"
		if err := os.WriteFile(filepath.Join(dir, planFile), planYAML(c.Plan), 0o644); err != nil {
			return err
		}
		data, err := render(ct, c.Series)
		if err != nil {
			return fmt.Errorf("%s: %w", ct.id, err)
		}
		if err := os.WriteFile(filepath.Join(dir, "logs", ct.file), data, 0o644); err != nil {
			return err
		}
		fmt.Fprintf(&pm, "  - port: %q\n    plan: %s\n    profile: %s\n", ct.port, planFile, ct.profile)
		acc := []string{string(c.Verdict)}
		if c.Verdict == diagnose.Marginal {
			acc = append(acc, string(diagnose.Fail))
		}
		causes, notes := c.Causes, c.Notes
		if causes == nil {
			causes, notes = []diagnose.CauseID{}, []string{}
		}
		man.Logs = append(man.Logs, manifestEntry{File: "logs/" + ct.file, Format: string(ct.format), Port: ct.port,
			Circuit: ct.id, Plan: planFile, Profile: ct.profile, Verdict: c.Verdict, Acceptable: acc, Causes: causes,
			Severity: severity, Seed: ct.seed, Samples: c.Series.Len(), Notes: notes, Design: linkJSON(c.Design), Actual: linkJSON(c.Actual)})
	}
	if err := os.WriteFile(filepath.Join(dir, "portmap.yaml"), []byte(pm.String()), 0o644); err != nil {
		return err
	}
	if err := writeYAML(filepath.Join(dir, "manifest.yaml"), "# What each demo log was generated to show (invented scenario). Generated by samples/gen.\n", man); err != nil {
		return err
	}
	return generateNetwork(dir)
}

// writeYAML writes v as YAML (two-space indent) after the comment header.
func writeYAML(path, header string, v any) error {
	var buf bytes.Buffer
	buf.WriteString(header)
	enc := yaml.NewEncoder(&buf)
	enc.SetIndent(2)
	if err := enc.Encode(v); err != nil {
		return err
	}
	if err := enc.Close(); err != nil {
		return err
	}
	return os.WriteFile(path, buf.Bytes(), 0o644)
}

// linkJSON gives a link's figures, by their JSON names, rounded to 0.01 for the manifest; a
// figure that is not finite (no NLI model, no optimum) is null.
func linkJSON(l synth.Link) map[string]any {
	out := map[string]any{}
	v := reflect.ValueOf(l)
	for i := range v.NumField() {
		name, _, _ := strings.Cut(v.Type().Field(i).Tag.Get("json"), ",")
		x := v.Field(i).Float()
		if math.IsNaN(x) || math.IsInf(x, 0) {
			out[name] = nil
			continue
		}
		out[name] = math.Round(x*100) / 100
	}
	return out
}

// render writes one series in the circuit's format.
func render(ct circuit, s *parse.Series) ([]byte, error) {
	var b bytes.Buffer
	ss := []*parse.Series{s}
	var err error
	switch ct.format {
	case csvCanonical:
		err = synth.WriteCSV(&b, ss, synth.CSVStyle{})
	case csvFriendly:
		err = synth.WriteCSV(&b, ss, synth.CSVStyle{TimeHeader: "Timestamp", PortHeader: "Interface", Time: synth.TimeSpaceUTC,
			Columns: synth.FriendlyColumns(), Missing: "n/a"})
	case csvSemicolon:
		err = synth.WriteCSV(&b, ss, synth.CSVStyle{Delimiter: ';', DecimalComma: true, CRLF: true, BOM: true,
			TimeHeader: "Time (UTC)", PortHeader: "Port", Time: synth.TimeSpaceUTC, Columns: semicolonColumns()})
	case csvTab:
		err = synth.WriteCSV(&b, ss, synth.CSVStyle{Delimiter: '\t', Time: synth.TimeUnixMillis, Missing: "NA"})
	case csvGzip:
		var raw bytes.Buffer
		if err = synth.WriteCSV(&raw, ss, synth.CSVStyle{Time: synth.TimeUnixSeconds}); err == nil {
			err = gz(&b, raw.Bytes())
		}
	case jsonLines:
		err = synth.WriteJSONLines(&b, ss)
	case jsonLinesGzip:
		var raw bytes.Buffer
		if err = synth.WriteJSONLines(&raw, ss); err == nil {
			err = gz(&b, raw.Bytes())
		}
	case openConfigOTN:
		err = synth.WriteOpenConfig(&b, []synth.OpenConfigPort{{Series: s, ChannelIndex: 10105}})
	case openConfigBare:
		err = synth.WriteOpenConfig(&b, []synth.OpenConfigPort{{Series: s}})
	default:
		err = fmt.Errorf("unknown format %q", ct.format)
	}
	return b.Bytes(), err
}

// semicolonColumns are European-spreadsheet style headers in canonical units with the unit in
// brackets (the reader takes the unit from the name).
func semicolonColumns() []synth.Column {
	names := map[parse.Quantity]string{
		parse.PreFECBER: "Pre-FEC BER", parse.PostFECBER: "Post-FEC BER", parse.UncorrectedBlocks: "Uncorrected blocks",
		parse.QdB: "Q [dB]", parse.ESNRdB: "eSNR [dB]", parse.OSNRdB: "OSNR [dB]", parse.CDpsPerNm: "CD [ps/nm]",
		parse.DGDps: "DGD [ps]", parse.PDLdB: "PDL [dB]", parse.SOPRateKradPerS: "SOP rate [krad/s]",
		parse.LOOffsetMHz: "LO offset [MHz]", parse.RxPowerDBm: "Rx power [dBm]", parse.TxPowerDBm: "Tx power [dBm]",
		parse.FrequencyTHz: "Frequency [THz]",
	}
	cols := synth.CanonicalColumns()
	for i := range cols {
		cols[i].Header = names[cols[i].Quantity]
	}
	return cols
}

// gz compresses data with a fixed header (no name, no time) so the output is reproducible.
func gz(b *bytes.Buffer, data []byte) error {
	w, err := gzip.NewWriterLevel(b, gzip.BestCompression)
	if err != nil {
		return err
	}
	w.ModTime = time.Time{}
	if _, err := w.Write(data); err != nil {
		return err
	}
	return w.Close()
}

// planYAML writes a plan in the YAML schema of docs/rules.md, only the fields it sets.
func planYAML(p rules.Plan) []byte {
	var b strings.Builder
	fmt.Fprintf(&b, "# Link plan of an invented demo circuit (beatnote samples; generated by samples/gen).\n")
	fmt.Fprintf(&b, "circuit: %s\ndescription: %q\nend_a: %s\nend_z: %s\nports: [%q]\nprofile: %s\n",
		p.Circuit, p.Description, p.EndA, p.EndZ, strings.Join(p.Ports, `", "`), p.Profile)
	fmt.Fprintf(&b, "frequency_thz: %g\ntx_power_dbm: %g\nlaunch_power_dbm: %g\nchannels: %d\nchannel_spacing_ghz: %g\n",
		p.FrequencyTHz, p.TxPowerDBm, p.LaunchPowerDBm, p.Channels, p.ChannelSpacingGHz)
	b.WriteString("spans:\n")
	for _, s := range p.Spans {
		fmt.Fprintf(&b, "  - name: %s\n    length_km: %g\n    fiber: %s\n    connectors: %d\n    splices: %d\n",
			s.Name, s.LengthKm, s.Fiber, s.Connectors, s.Splices)
	}
	b.WriteString("amplifiers:\n")
	for _, a := range p.Amplifiers {
		fmt.Fprintf(&b, "  - name: %s\n    after_span: %d\n    gain_db: %g\n    noise_figure_db: %g\n",
			a.Name, a.AfterSpan, a.GainDB, a.NoiseFigureDB)
	}
	return []byte(b.String())
}
