package acceptance

import (
	"bytes"
	"encoding/json"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/beatnote/beatnote/diagnose"
	"github.com/beatnote/beatnote/parse"
	"github.com/beatnote/beatnote/report"
	"github.com/beatnote/beatnote/rules"
	"github.com/beatnote/beatnote/samples/synth"
)

// engineAcceptance runs the real engine on a generated port (samples/synth) and builds the
// report from its result, as the report command does.
func engineAcceptance(t testing.TB, causes []diagnose.CauseID, seed int64, signing *Signing, fields SignOff) (*Report, synth.Case) {
	t.Helper()
	c, err := synth.Make(synth.Spec{Causes: causes, Severity: 0.7, Seed: seed, Circuit: "demo-circuit-7", EndA: "north-hub", EndZ: "river-pop"})
	if err != nil {
		t.Fatal(err)
	}
	rs, err := rules.DefaultRules()
	if err != nil {
		t.Fatal(err)
	}
	ds := &parse.Dataset{Series: []*parse.Series{c.Series}, Inputs: []parse.InputStats{{File: "generated.csv", SHA256: strings.Repeat("0", 64), RowsRead: c.Series.Len(), RowsUsed: c.Series.Len()}}}
	res, err := diagnose.Analyze(ds, diagnose.Config{Version: "test", Rules: rs, Default: diagnose.Setup{Profile: c.Profile, Plan: &c.Plan}})
	if err != nil {
		t.Fatal(err)
	}
	a, err := New(Input{Result: res, Dataset: ds, Profile: &c.Profile, Plan: &c.Plan,
		Fields: fields, Time: time.Date(2026, 3, 15, 9, 0, 0, 0, time.UTC), Signing: signing})
	if err != nil {
		t.Fatal(err)
	}
	return a, c
}

// TestEngineReportCarriesTheJudgement checks that the PDF, Markdown and JSON forms carry the
// engine's verdict, margins and causes for generated faults.
func TestEngineReportCarriesTheJudgement(t *testing.T) {
	for _, tc := range []struct {
		name   string
		causes []diagnose.CauseID
	}{
		{"healthy", nil},
		{"sop", []diagnose.CauseID{diagnose.CauseSOPTransient}},
		{"rx-power", []diagnose.CauseID{diagnose.CauseRxPowerLow}},
		{"pmd", []diagnose.CauseID{diagnose.CausePMD}},
		{"lo", []diagnose.CauseID{diagnose.CauseLOOffset}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			signing := &Signing{Signer: "Test Signer", KeyFingerprint: "SHA256:" + strings.Repeat("5a", 32)}
			a, _ := engineAcceptance(t, tc.causes, 11, signing, SignOff{Technician: "A. Tester"})
			var pdfBuf, md, js bytes.Buffer
			if err := a.WritePDF(&pdfBuf, PDFOptions{}); err != nil {
				t.Fatal(err)
			}
			keepPDF(t, "engine-"+tc.name+".pdf", pdfBuf.Bytes())
			if err := a.WriteMarkdown(&md); err != nil {
				t.Fatal(err)
			}
			if err := a.WriteJSON(&js); err != nil {
				t.Fatal(err)
			}
			text, _ := pdfText(t, pdfBuf.Bytes())
			squashed := strings.Join(strings.Fields(text), "")
			port := a.Ports[0]
			wants := []string{"Verdict:" + VerdictWords(a.Verdict), signing.KeyFingerprint, "Lasersafety"}
			for _, c := range port.Criteria {
				wants = append(wants, strings.ReplaceAll(report.CriterionMargin(c), " ", ""))
			}
			for _, c := range port.Causes {
				wants = append(wants, string(c.ID))
			}
			for _, w := range wants {
				if !strings.Contains(squashed, w) {
					t.Errorf("PDF lacks %q", w)
				}
				if !strings.Contains(strings.Join(strings.Fields(md.String()), ""), w) {
					t.Errorf("Markdown lacks %q", w)
				}
			}
			var back Report
			if err := json.Unmarshal(js.Bytes(), &back); err != nil {
				t.Fatal(err)
			}
			if back.Verdict != a.Verdict || back.ReportID != a.ReportID || len(back.Ports) != len(a.Ports) {
				t.Errorf("JSON round trip: verdict %s id %s ports %d", back.Verdict, back.ReportID, len(back.Ports))
			}
			if tc.causes != nil && len(port.Causes) > 0 && port.Causes[0].ID != tc.causes[0] {
				t.Logf("engine ranks %s first for injected %s (not this package's concern)", port.Causes[0].ID, tc.causes[0])
			}
		})
	}
}

// TestEngineSampleFiles writes a generated circuit as CSV and plan YAML into
// $BEATNOTE_KEEP_PDF for trying the command by hand; it is skipped otherwise.
func TestEngineSampleFiles(t *testing.T) {
	dir := os.Getenv("BEATNOTE_KEEP_PDF")
	if dir == "" {
		t.Skip("set BEATNOTE_KEEP_PDF to write sample files")
	}
	for _, cause := range []diagnose.CauseID{diagnose.CauseSOPTransient, diagnose.CauseRxPowerLow} {
		c, err := synth.Make(synth.Spec{Causes: []diagnose.CauseID{cause}, Severity: 0.7, Seed: 5, Circuit: "demo-" + string(cause), EndA: "north-hub", EndZ: "river-pop"})
		if err != nil {
			t.Fatal(err)
		}
		var buf bytes.Buffer
		if err := synth.WriteCSV(&buf, []*parse.Series{c.Series}, synth.CSVStyle{}); err != nil {
			t.Fatal(err)
		}
		os.WriteFile(filepath.Join(dir, string(cause)+".csv"), buf.Bytes(), 0o644)
		plan := c.Plan
		plan.Ports = []string{c.Series.Port}
		pj, _ := json.Marshal(plan) // JSON is valid YAML
		os.WriteFile(filepath.Join(dir, string(cause)+".plan.yaml"), pj, 0o644)
	}
}

// BenchmarkWritePDF measures one signed-style report of a day-long, one-minute port with every
// chart (the turn-up case on a laptop).
func BenchmarkWritePDF(b *testing.B) {
	a, _ := engineAcceptance(b, []diagnose.CauseID{diagnose.CauseSOPTransient}, 11, &Signing{Signer: "B", KeyFingerprint: "SHA256:00"}, SignOff{})
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if err := a.WritePDF(io.Discard, PDFOptions{}); err != nil {
			b.Fatal(err)
		}
	}
}
