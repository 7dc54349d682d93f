package acceptance

import (
	"bytes"
	"io"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/ledongthuc/pdf"

	"github.com/beatnote/beatnote/diagnose"
	"github.com/beatnote/beatnote/parse"
	"github.com/beatnote/beatnote/rules"
)

// The fixtures below are hand-built layout material, not checks of any computation: the report
// prints what the engine judged, and these tests check that it is printed, readable and
// reproducible.

func ptr(v float64) *float64 { return &v }

func fixtureProfile() *rules.Profile {
	return &rules.Profile{
		ID: "test-16qam-60g", Name: "layout fixture", Modulation: "dp-16qam", BaudGBd: 59.84375, FEC: "cfec",
		FECThresholdBER: 1.22e-2, DGDTolerancePs: 28, SOPTrackingKradS: 50, LOOffsetRangeMHz: 3600,
		RxPowerMinDBm: -12, RxPowerMaxDBm: 0, HazardLevel: "1M",
	}
}

func fixtureResult() *diagnose.Result {
	return &diagnose.Result{
		Tool: "beatnote", Version: "test",
		Inputs: []parse.InputStats{{File: "logs/circuit-a.csv", SHA256: strings.Repeat("ab", 32), Format: "csv", RowsRead: 300, RowsUsed: 298, RowsRejected: 2}},
		Ports: []diagnose.PortResult{{
			Port: "line-1/1", Profile: "test-16qam-60g", Samples: 298,
			From: "2026-03-01T00:00:00Z", To: "2026-03-01T04:57:00Z", Verdict: diagnose.Marginal,
			Causes: []diagnose.Cause{{ID: diagnose.CauseSOPTransient, Confidence: 0.72,
				Evidence: []string{"3 pre-FEC BER bursts coincide with SOP rate above 40 krad/s"}}},
			Metrics: map[string]diagnose.Metric{
				"q_db":         {Min: 8.1, P50: 9.0, P99: 9.4, Max: 9.5, Limit: ptr(7.05), Margin: ptr(1.05), Unit: "dB"},
				"rx_power_dbm": {Min: -9.8, P50: -8.2, P99: -7.9, Max: -7.8, Limit: ptr(-12), Margin: ptr(2.2), Unit: "dBm"},
			},
			Criteria: []diagnose.Criterion{
				{Name: "Q-factor margin to FEC threshold", Metric: "q_db", Statistic: "min", Measured: 8.1, Limit: 7.05, Margin: 1.05, Unit: "dB", Verdict: diagnose.Marginal, Source: "profile fec_threshold_ber"},
				{Name: "Received power above sensitivity", Metric: "rx_power_dbm", Statistic: "min", Measured: -9.8, Limit: -12, Margin: 2.2, Unit: "dBm", Verdict: diagnose.Pass},
			},
			PlanVsMeasured: []diagnose.PlanComparison{{Quantity: "cd_ps_nm", Expected: 1360, Measured: 1372, Unit: "ps/nm", Note: "within 2 %"}},
		}},
		Rejected: []parse.Rejection{
			{File: "logs/circuit-a.csv", Line: 17, Field: "pre_fec_ber", Reason: "BER 0.7 outside 0…0.5"},
			{File: "logs/circuit-a.csv", Line: 90, Field: "time", Reason: "unparsable time \"yesterday\""},
		},
	}
}

// fixtureSeries is a smooth invented trace for the charts (no check value depends on it).
func fixtureSeries() *parse.Dataset {
	n := 300
	s := &parse.Series{Port: "line-1/1", TimesMs: make([]int64, n)}
	start := time.Date(2026, 3, 1, 0, 0, 0, 0, time.UTC).UnixMilli()
	for _, q := range []parse.Quantity{parse.QdB, parse.RxPowerDBm, parse.DGDps, parse.SOPRateKradPerS, parse.LOOffsetMHz} {
		s.Values[q] = make([]float64, n)
	}
	for i := 0; i < n; i++ {
		t := float64(i)
		s.TimesMs[i] = start + int64(i)*60_000
		s.Values[parse.QdB][i] = 9 + 0.3*math.Sin(t/17)
		s.Values[parse.RxPowerDBm][i] = -8 + 0.1*math.Cos(t/9)
		if i > 180 {
			s.Values[parse.RxPowerDBm][i] -= 1.5
		}
		s.Values[parse.DGDps][i] = 3 + 1.5*math.Abs(math.Sin(t*0.37)) + 0.8*math.Abs(math.Cos(t*1.3))
		s.Values[parse.SOPRateKradPerS][i] = 2 + 1.5*math.Abs(math.Sin(t/5))
		s.Values[parse.LOOffsetMHz][i] = 120 - 0.2*t + 8*math.Sin(t/7)
	}
	return &parse.Dataset{Series: []*parse.Series{s}}
}

func fixtureMarks() map[string]ChartMarks {
	start := time.Date(2026, 3, 1, 0, 0, 0, 0, time.UTC).UnixMilli()
	const a = 2.0
	return map[string]ChartMarks{"line-1/1": {
		RxPowerChanges: []int64{start + 181*60_000},
		BERBursts:      []TimeSpan{{FromMs: start + 60*60_000, ToMs: start + 64*60_000}},
		LOTrend:        &LinearTrend{OriginMs: start, Intercept: 120, SlopePerHour: -12},
		DGDFit: &DensityCurve{Label: "Maxwellian fit (layout only)", PDF: func(x float64) float64 {
			return math.Sqrt(2/math.Pi) * x * x / (a * a * a) * math.Exp(-x*x/(2*a*a))
		}},
		QLimitDB: ptr(7.05),
	}}
}

var fixtureTime = time.Date(2026, 3, 2, 10, 30, 0, 0, time.UTC)

func fixtureAcceptance(t *testing.T, fields SignOff, signing *Signing) *Report {
	t.Helper()
	a, err := New(Input{
		Result: fixtureResult(), Dataset: fixtureSeries(), Profile: fixtureProfile(),
		Fields: fields, Time: fixtureTime, Signing: signing, Marks: fixtureMarks(),
	})
	if err != nil {
		t.Fatal(err)
	}
	return a
}

// pdfText extracts the plain text of every page with github.com/ledongthuc/pdf.
func pdfText(t *testing.T, data []byte) (text string, pages int) {
	t.Helper()
	ps := pageTexts(t, data)
	return strings.Join(ps, ""), len(ps)
}

func keepPDF(t *testing.T, name string, data []byte) {
	if dir := os.Getenv("BEATNOTE_KEEP_PDF"); dir != "" {
		if err := os.WriteFile(filepath.Join(dir, name), data, 0o644); err != nil {
			t.Log(err)
		}
	}
}

func TestPDFReadsBack(t *testing.T) {
	signing := &Signing{Signer: "Field Tech One", KeyFingerprint: "SHA256:" + strings.Repeat("0f", 32)}
	a := fixtureAcceptance(t, SignOff{Technician: "Field Tech One", Organisation: "Example Fibre Works"}, signing)
	var buf bytes.Buffer
	if err := a.WritePDF(&buf, PDFOptions{}); err != nil {
		t.Fatal(err)
	}
	keepPDF(t, "fixture.pdf", buf.Bytes())
	text, pages := pdfText(t, buf.Bytes())
	squashed := strings.Join(strings.Fields(text), "")
	for _, want := range []string{
		"Verdict: MARGINAL", "Q-factor margin to FEC threshold", "+1.05 dB", "+2.20 dB",
		"sop-transient", "Laser safety", "IEC 60825-2", "1M", "IEC 61300-3-35", "G.664",
		signing.KeyFingerprint, a.ReportID, "Handed over by", "Accepted by",
	} {
		if !strings.Contains(squashed, strings.Join(strings.Fields(want), "")) {
			t.Errorf("PDF text lacks %q", want)
		}
	}
	if pages < 2 || pages > 12 {
		t.Errorf("%d pages, want 2…12", pages)
	}
}

func TestOutputIsByteIdentical(t *testing.T) {
	render := func() (pdfOut, md, js []byte) {
		a := fixtureAcceptance(t, SignOff{Technician: "Same Person", Notes: "same notes"}, nil)
		var p, m, j bytes.Buffer
		if err := a.WritePDF(&p, PDFOptions{Paper: PaperLetter}); err != nil {
			t.Fatal(err)
		}
		if err := a.WriteMarkdown(&m); err != nil {
			t.Fatal(err)
		}
		if err := a.WriteJSON(&j); err != nil {
			t.Fatal(err)
		}
		return p.Bytes(), m.Bytes(), j.Bytes()
	}
	p1, m1, j1 := render()
	p2, m2, j2 := render()
	if !bytes.Equal(p1, p2) {
		t.Error("PDF differs between two runs")
	}
	if !bytes.Equal(m1, m2) || !bytes.Equal(j1, j2) {
		t.Error("Markdown or JSON differs between two runs")
	}
	// A different field must change the bytes and the report id.
	a := fixtureAcceptance(t, SignOff{Technician: "Other Person", Notes: "same notes"}, nil)
	b := fixtureAcceptance(t, SignOff{Technician: "Same Person", Notes: "same notes"}, nil)
	if a.ReportID == b.ReportID {
		t.Error("report id ignores the sign-off fields")
	}
}

func TestPaperSizes(t *testing.T) {
	for _, tc := range []struct {
		paper  Paper
		wantPt string // MediaBox width × height in points: ISO 216 A4 210×297 mm; US Letter 8.5×11 in
	}{{PaperA4, "595.28 841.89"}, {PaperLetter, "612.00 792.00"}} {
		var buf bytes.Buffer
		if err := fixtureAcceptance(t, SignOff{}, nil).WritePDF(&buf, PDFOptions{Paper: tc.paper}); err != nil {
			t.Fatal(err)
		}
		if !bytes.Contains(buf.Bytes(), []byte("/MediaBox [0 0 "+tc.wantPt+"]")) {
			t.Errorf("%s: MediaBox %s not found", tc.paper, tc.wantPt)
		}
	}
	if err := fixtureAcceptance(t, SignOff{}, nil).WritePDF(io.Discard, PDFOptions{Paper: "a3"}); err == nil {
		t.Error("unknown paper accepted")
	}
}

// TestOddTextLaysOut feeds very long names, Greek, Cyrillic, CJK and empty fields through the
// PDF writer: no panic, every Latin/Greek/Cyrillic word present, CJK substituted and said so.
func TestOddTextLaysOut(t *testing.T) {
	long := strings.Repeat("Extremely-long-unbroken-site-identifier-", 12)
	fields := SignOff{
		Technician:     "Δοκιμαστής Πρώτος",
		Organisation:   "Бригада «Пробный Свет» " + strings.Repeat("очень длинное название ", 15),
		AcceptingParty: "試験光路",
		EndA:           long,
		EndZ:           "",
		Notes:          "line one\nline two\twith tab; " + strings.Repeat("wrap me ", 80),
	}
	res := fixtureResult()
	res.Ports[0].Port = "port-" + strings.Repeat("x", 150)
	res.Ports[0].Causes[0].Evidence = append(res.Ports[0].Causes[0].Evidence, strings.Repeat("evidence-without-spaces", 20))
	ds := fixtureSeries()
	ds.Series[0].Port = res.Ports[0].Port
	a, err := New(Input{Result: res, Dataset: ds, Profile: fixtureProfile(), Fields: fields, Time: fixtureTime})
	if err != nil {
		t.Fatal(err)
	}
	var buf bytes.Buffer
	if err := a.WritePDF(&buf, PDFOptions{}); err != nil {
		t.Fatal(err)
	}
	keepPDF(t, "oddtext.pdf", buf.Bytes())
	text, pages := pdfText(t, buf.Bytes())
	squashed := strings.Join(strings.Fields(text), "")
	// The tab typed in the notes is shown as \t (escape.Visible), as every control character is.
	for _, want := range []string{"U+8A66", "(Liberation Sans) has no glyph", "wrapmewrapme", `linetwo\twithtab`} {
		if !strings.Contains(squashed, strings.Join(strings.Fields(want), "")) {
			t.Errorf("PDF text lacks %q", want)
		}
	}
	// github.com/ledongthuc/pdf returns only the low byte of each two-byte (Identity-H) code,
	// so non-Latin text is compared in that form here; pdftotext, when installed, reads the
	// font's ToUnicode map and must give the letters themselves.
	for _, want := range []string{"Πρώτος", "«Пробный Свет»"} {
		if !strings.Contains(squashed, strings.Join(strings.Fields(lowBytes(want)), "")) {
			t.Errorf("PDF text lacks %q", want)
		}
	}
	if path, err := exec.LookPath("pdftotext"); err == nil {
		f := filepath.Join(t.TempDir(), "odd.pdf")
		os.WriteFile(f, buf.Bytes(), 0o644)
		out, err := exec.Command(path, f, "-").Output()
		if err != nil {
			t.Fatalf("pdftotext: %v", err)
		}
		for _, want := range []string{"Δοκιμαστής Πρώτος", "Бригада «Пробный Свет»"} {
			if !strings.Contains(string(out), want) {
				t.Errorf("pdftotext finds no %q", want)
			}
		}
	}
	// The long identifier is wrapped, not cut: all its characters are there.
	if strings.Count(squashed, "Extremely-long-unbroken-site-identifier-") < 12 {
		t.Errorf("long site name lost characters")
	}
	if pages < 3 || pages > 15 {
		t.Errorf("%d pages", pages)
	}
	// A field far taller than a page continues on the next pages, every word kept.
	huge := fixtureAcceptance(t, SignOff{Notes: strings.Repeat("numbered-word ", 4000)}, nil)
	var hb bytes.Buffer
	if err := huge.WritePDF(&hb, PDFOptions{}); err != nil {
		t.Fatal(err)
	}
	keepPDF(t, "hugenotes.pdf", hb.Bytes())
	htext, hpages := pdfText(t, hb.Bytes())
	if got := strings.Count(htext, "numbered-word"); got != 4000 {
		t.Errorf("huge notes: %d of 4000 words in the PDF", got)
	}
	if hpages < 6 || hpages > 20 {
		t.Errorf("huge notes: %d pages", hpages)
	}
	// Markdown keeps the original letters.
	var md bytes.Buffer
	if err := a.WriteMarkdown(&md); err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(md.String(), "試験光路") {
		t.Error("Markdown lost the CJK name")
	}
}

func TestNewRefusesEmpty(t *testing.T) {
	if _, err := New(Input{Result: &diagnose.Result{}, Time: fixtureTime}); err == nil {
		t.Error("a result without ports gave a report")
	}
	if _, err := New(Input{Result: fixtureResult()}); err == nil {
		t.Error("a report without a time was made")
	}
}

func TestSafetyHazardLevelSource(t *testing.T) {
	prof := fixtureProfile()
	s := newSafetySection(&rules.Plan{HazardLevel: "3B"}, prof)
	if s.HazardLevel != "3B" || s.HazardSource != "link plan" {
		t.Errorf("plan level: %+v", s)
	}
	s = newSafetySection(nil, prof)
	if s.HazardLevel != "1M" {
		t.Errorf("profile level: %+v", s)
	}
	s = newSafetySection(nil, nil)
	if s.HazardLevel != HazardNotStated || !strings.Contains(s.Cautions[0], "Treat every fibre end as live") {
		t.Errorf("no level: %+v", s)
	}
}

// lowBytes maps each rune to its low byte, as github.com/ledongthuc/pdf decodes Identity-H text.
func lowBytes(s string) string {
	var b strings.Builder
	for _, r := range s {
		b.WriteRune(r & 0xff)
	}
	return b.String()
}

// pageTexts extracts the plain text of each page with github.com/ledongthuc/pdf.
func pageTexts(t *testing.T, data []byte) []string {
	t.Helper()
	r, err := pdf.NewReader(bytes.NewReader(data), int64(len(data)))
	if err != nil {
		t.Fatalf("read back PDF: %v", err)
	}
	var out []string
	for i := 1; i <= r.NumPage(); i++ {
		var b strings.Builder
		if p := r.Page(i); !p.V.IsNull() {
			rows, err := p.GetTextByRow()
			if err != nil {
				t.Fatalf("page %d: %v", i, err)
			}
			for _, row := range rows {
				for _, w := range row.Content {
					b.WriteString(w.S)
				}
				b.WriteByte('\n')
			}
		}
		out = append(out, b.String())
	}
	return out
}

// The signature lines never stand alone on a page: whatever the length of the notes before them,
// the page that holds them also holds the sign-off heading and its fields.
func TestSignatureBlockStaysWithItsFields(t *testing.T) {
	for words := 0; words <= 600; words += 40 {
		a := fixtureAcceptance(t, SignOff{Technician: "Field Tech One", Notes: strings.Repeat("note ", words)}, nil)
		var buf bytes.Buffer
		if err := a.WritePDF(&buf, PDFOptions{}); err != nil {
			t.Fatal(err)
		}
		for i, p := range pageTexts(t, buf.Bytes()) {
			if strings.Contains(p, "Handed over by") && !(strings.Contains(p, "Sign-off") && strings.Contains(p, "Field Tech One")) {
				t.Errorf("%d words of notes: the signature lines on page %d stand apart from the sign-off fields", words, i+1)
			}
		}
	}
}

// A hand reading taken after its instrument's calibration fell due is flagged; one within it is
// not; one without an instrument says so.
func TestReadingNote(t *testing.T) {
	ins := []rules.Instrument{{Kind: "optical power meter", Serial: "PM-1", CalibratedOn: "2025-11-03", CalibrationDue: "2026-03-01"}}
	for _, tc := range []struct {
		r    rules.PowerReading
		want string
	}{
		{rules.PowerReading{Instrument: "PM-1", TakenAt: "2026-03-14T07:40:00Z"}, "taken after the instrument's calibration fell due (2026-03-01)"},
		{rules.PowerReading{Instrument: "PM-1", TakenAt: "2026-02-20"}, ""},
		{rules.PowerReading{Instrument: "PM-1", TakenAt: "2026-03-01"}, ""},
		{rules.PowerReading{}, "instrument not stated"},
	} {
		if got := readingNote(tc.r, ins); got != tc.want {
			t.Errorf("%+v: %q, want %q", tc.r, got, tc.want)
		}
	}
}
