package main

import (
	"bytes"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"time"

	"github.com/beatnote/beatnote/parse"
	"github.com/beatnote/beatnote/rules"
	"github.com/beatnote/beatnote/samples/synth"
)

// The demo network: fibre lines of the invented operator, each carrying several channels, with
// events on the line that every channel on it sees at the same times. Written under
// samples/network: one log per line (its receiving ports), one plan per channel, a port map
// with lines, peers and module identity, and a manifest of the events and the line finding
// each should give.

// netSamples is the length of the network logs: six hours of one-minute samples.
const netSamples = 360

// netChannels is the number of channels on each demo line.
const netChannels = 4

// lineEventSpec is one event on a line with the line finding it should give.
type lineEventSpec struct {
	event   synth.LineEvent
	finding string // the line finding id it should come out as
	what    string // in words, for the manifest
}

// netLine is one direction of a fibre line and the channels it carries.
type netLine struct {
	id           string // line name, as the port map gives it
	from, to     string // sites
	rxPrefix     string // receiving ports: rxPrefix + "/<k>"
	peerPrefix   string // the ports of the other direction, "" when that direction is not in the demo
	profile      string
	part         string // module part number (invented)
	seed         int64
	file         string
	events       []lineEventSpec
	circuitStart int    // circuit numbers of the channels start here
	samePlanAs   string // the line (other direction, same cable) whose route this one shares
}

// at is a time of the demo day (the network logs start at synth.DefaultStart).
func at(hh, mm int) time.Time {
	return synth.DefaultStart.Add(time.Duration(hh)*time.Hour + time.Duration(mm)*time.Minute)
}

var netLines = []netLine{
	{id: "QRO-LN-FRW-OSK", from: "Ferrowick", to: "Oskelby", rxPrefix: "OSK-LX1", peerPrefix: "FRW-LX1", profile: "400g-dp-16qam-ofec",
		part: "QM-400-OF-2", seed: 501, file: "line-ferrowick-oskelby.csv", circuitStart: 521,
		events: []lineEventSpec{{
			event:   synth.LineEvent{Kind: synth.LineSpanLoss, From: at(2, 12), Span: 1, LossDB: 10},
			finding: "line-osnr-drop", what: "span 1 loses 10 dB more (a crushed duct) before the first line amplifier from 02:12: OSNR falls on every channel, the amplifiers hold the power"}}},
	{id: "QRO-LN-OSK-FRW", from: "Oskelby", to: "Ferrowick", rxPrefix: "FRW-LX1", peerPrefix: "OSK-LX1", profile: "400g-dp-16qam-ofec",
		part: "QM-400-OF-2", seed: 502, file: "line-oskelby-ferrowick.csv", circuitStart: 521, samePlanAs: "QRO-LN-FRW-OSK"},
	{id: "QRO-LN-GLM-TLV", from: "Glimmerby", to: "Tollaven", rxPrefix: "TLV-LX2", profile: "200g-dp-16qam",
		part: "QM-200-16-1", seed: 503, file: "line-glimmerby-tollaven.csv", circuitStart: 531,
		events: []lineEventSpec{{
			event:   synth.LineEvent{Kind: synth.LineCut, From: at(3, 20), To: at(4, 5)},
			finding: "line-outage", what: "fibre cut from 03:20 to 04:05: every channel dark"}}},
	{id: "QRO-LN-TLV-RSK", from: "Tollaven", to: "Ruskhollow", rxPrefix: "RSK-LX3", profile: "100g-dp-qpsk",
		part: "QM-100-QP-4", seed: 504, file: "line-tollaven-ruskhollow-aerial.csv", circuitStart: 541,
		events: []lineEventSpec{
			{event: synth.LineEvent{Kind: synth.LineSOPBursts, Bursts: []time.Time{at(0, 47), at(1, 41), at(2, 18), at(3, 2), at(3, 51)}, RateKradS: 2000, Duty: 0.3},
				finding: "line-sop-transient", what: "five bursts of fast polarization change (2 Mrad/s) on the aerial section, seen by every channel in the same minute"},
			{event: synth.LineEvent{Kind: synth.LineAmpOutputDrop, From: at(4, 25), LossDB: 6},
				finding: "line-power-drop", what: "the preamplifier at Ruskhollow loses a pump from 04:25: its output, and every channel's received power, falls 6 dB"}}},
}

// netPort is the receiving port of channel k (1-based) of a line.
func (l netLine) port(k int) string { return fmt.Sprintf("%s/%d", l.rxPrefix, k) }

// circuit is the circuit of channel k: both directions share it.
func (l netLine) circuit(k int) string {
	return fmt.Sprintf("QRO-%s-%d", l.lineEnds(), l.circuitStart+k-1)
}

// lineEnds is the site pair of the line in a fixed order, so both directions name one circuit.
func (l netLine) lineEnds() string {
	a, z := strings.Split(l.id, "-")[2], strings.Split(l.id, "-")[3]
	if a > z {
		a, z = z, a
	}
	return a + "-" + z
}

// spec is the synth spec of channel k; planFor gives its plan (nil: the channel draws one).
func (l netLine) spec(k int, planFor func(int) *rules.Plan) synth.Spec {
	var events []synth.LineEvent
	for _, e := range l.events {
		events = append(events, e.event)
	}
	sp := synth.Spec{Seed: l.seed*100 + int64(k), ProfileID: l.profile, Samples: netSamples, Port: l.port(k),
		Circuit: l.circuit(k), EndA: l.from, EndZ: l.to, LineEvents: events}
	if planFor != nil {
		sp.Plan = planFor(k)
	}
	return sp
}

// netManifest is samples/network/manifest.yaml.
type netManifest struct {
	Note  string         `yaml:"note"`
	Lines []netLineEntry `yaml:"lines"`
}

type netLineEntry struct {
	Line     string         `yaml:"line"`
	From     string         `yaml:"from"`
	To       string         `yaml:"to"`
	File     string         `yaml:"file"`
	Profile  string         `yaml:"profile"`
	Ports    []string       `yaml:"ports"`
	Events   []netEventItem `yaml:"events"`
	Channels []channelItem  `yaml:"channels"`
}

type netEventItem struct {
	Kind    string `yaml:"kind"`
	From    string `yaml:"from"`
	To      string `yaml:"to,omitempty"`
	Finding string `yaml:"finding"`
	What    string `yaml:"what"`
}

type channelItem struct {
	Port         string   `yaml:"port"`
	Circuit      string   `yaml:"circuit"`
	FrequencyTHz float64  `yaml:"frequency_thz"`
	Verdict      string   `yaml:"verdict"`
	Notes        []string `yaml:"notes"`
}

// generateNetwork writes samples/network under dir.
func generateNetwork(dir string) error {
	root := filepath.Join(dir, "network")
	for _, sub := range []string{"logs", "plans"} {
		if err := os.MkdirAll(filepath.Join(root, sub), 0o755); err != nil {
			return err
		}
	}
	man := netManifest{Note: "Generated by go run ./samples/gen from samples/synth; every name is made up. Each line's channels share its plan (spans, amplifiers) on their own frequencies; every event happens to all of them at once and should come out of triage as exactly one line finding."}
	var pm strings.Builder
	pm.WriteString("# Port map of the demo network (invented names): plan, profile, fibre line, far-end peer and module of\n# every receiving port. Generated by samples/gen.\nports:\n")
	basePlans := map[string]rules.Plan{}
	for li, l := range netLines {
		base, ok := basePlans[l.samePlanAs]
		if !ok {
			first, err := synth.Make(l.spec(1, nil))
			if err != nil {
				return fmt.Errorf("%s: %w", l.id, err)
			}
			base = first.Plan
		}
		basePlans[l.id] = base
		planFor := func(k int) *rules.Plan {
			p := base
			p.FrequencyTHz = base.FrequencyTHz + 0.1*float64(k-1) // 100 GHz apart on the ITU-T G.694.1 grid
			p.Circuit, p.Ports = l.circuit(k), []string{l.port(k)}
			p.Description = fmt.Sprintf("%s to %s on line %s, channel %d (invented demo circuit)", l.from, l.to, l.id, k)
			p.EndA, p.EndZ = l.from, l.to
			return &p
		}
		entry := netLineEntry{Line: l.id, From: l.from, To: l.to, File: "logs/" + l.file, Profile: l.profile}
		for _, e := range l.events {
			it := netEventItem{Kind: string(e.event.Kind), Finding: e.finding, What: e.what}
			switch {
			case e.event.Kind == synth.LineSOPBursts:
				it.From = e.event.Bursts[0].UTC().Format(time.RFC3339)
				it.To = e.event.Bursts[len(e.event.Bursts)-1].UTC().Format(time.RFC3339)
			default:
				it.From = e.event.From.UTC().Format(time.RFC3339)
				if !e.event.To.IsZero() {
					it.To = e.event.To.UTC().Format(time.RFC3339)
				}
			}
			entry.Events = append(entry.Events, it)
		}
		var series []*parse.Series
		for k := 1; k <= netChannels; k++ {
			c, err := synth.Make(l.spec(k, planFor))
			if err != nil {
				return fmt.Errorf("%s channel %d: %w", l.id, k, err)
			}
			series = append(series, c.Series)
			plan := *planFor(k)
			planFile := "plans/" + strings.ToLower(plan.Circuit) + "-" + strings.ToLower(l.rxPrefix[:3]) + ".yaml"
			if err := os.WriteFile(filepath.Join(root, planFile), planYAML(plan), 0o644); err != nil {
				return err
			}
			fmt.Fprintf(&pm, "  - port: %q\n    plan: %s\n    profile: %s\n    line: %s\n", l.port(k), planFile, l.profile, l.id)
			if l.peerPrefix != "" {
				fmt.Fprintf(&pm, "    peer: %q\n", fmt.Sprintf("%s/%d", l.peerPrefix, k))
			}
			fmt.Fprintf(&pm, "    part_number: %s\n    serial: %q\n    firmware: %q\n", l.part, fmt.Sprintf("QM%02d%04d", li+1, 17*k+int(l.seed%97)), "3.2."+fmt.Sprint(k%3))
			entry.Ports = append(entry.Ports, l.port(k))
			notes := c.Notes
			if notes == nil {
				notes = []string{}
			}
			entry.Channels = append(entry.Channels, channelItem{Port: l.port(k), Circuit: plan.Circuit, FrequencyTHz: plan.FrequencyTHz,
				Verdict: string(c.Verdict), Notes: notes})
		}
		var b bytes.Buffer
		if err := synth.WriteCSV(&b, series, synth.CSVStyle{}); err != nil {
			return err
		}
		if err := os.WriteFile(filepath.Join(root, "logs", l.file), b.Bytes(), 0o644); err != nil {
			return err
		}
		man.Lines = append(man.Lines, entry)
	}
	if err := os.WriteFile(filepath.Join(root, "portmap.yaml"), []byte(pm.String()), 0o644); err != nil {
		return err
	}
	return writeYAML(filepath.Join(root, "manifest.yaml"), "# The demo network's lines, their channels and the events on them (invented). Generated by samples/gen.\n", man)
}
