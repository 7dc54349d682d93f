package acceptance

import (
	"bytes"
	"fmt"
	"github.com/beatnote/beatnote/report/words"
	"io"
	"math"
	"sort"
	"strings"
	"time"

	"codeberg.org/go-fonts/liberation/liberationmonoregular"
	"codeberg.org/go-fonts/liberation/liberationsansbold"
	"codeberg.org/go-fonts/liberation/liberationsansitalic"
	"codeberg.org/go-fonts/liberation/liberationsansregular"
	"codeberg.org/go-pdf/fpdf"
	"golang.org/x/image/font/sfnt"

	"github.com/beatnote/beatnote/diagnose"
	"github.com/beatnote/beatnote/report"
	"github.com/beatnote/beatnote/report/escape"
)

// Paper is a page size for the PDF report.
type Paper string

// The supported paper sizes.
const (
	PaperA4     Paper = "a4"
	PaperLetter Paper = "letter"
)

// PDFOptions control the PDF layout.
type PDFOptions struct {
	Paper Paper // default A4
}

// Layout constants, in millimetres and points.
const (
	pdfMargin     = 15.0
	pdfBottom     = 16.0 // space kept free for the footer
	pdfLineH      = 4.4  // body line height at 9 pt
	pdfCellPad    = 1.2
	pdfBodySize   = 9.0
	pdfSmallSize  = 7.5
	pdfFooterSize = 6.5
)

// fontCoverage knows which runes the embedded font can draw.
type fontCoverage struct {
	font *sfnt.Font
	buf  sfnt.Buffer
	memo map[rune]bool
}

func newFontCoverage(ttf []byte) (*fontCoverage, error) {
	f, err := sfnt.Parse(ttf)
	if err != nil {
		return nil, err
	}
	return &fontCoverage{font: f, memo: map[rune]bool{}}, nil
}

func (c *fontCoverage) has(r rune) bool {
	if ok, seen := c.memo[r]; seen {
		return ok
	}
	idx, err := c.font.GlyphIndex(&c.buf, r)
	ok := err == nil && idx != 0
	c.memo[r] = ok
	return ok
}

// pdfWriter lays out one acceptance report.
type pdfWriter struct {
	a        *Report
	pdf      *fpdf.Fpdf
	cover    *fontCoverage
	missing  map[rune]bool // runes replaced because the font lacks them
	charts   int           // charts drawn so far
	pageW    float64
	contentW float64
}

// WritePDF writes the report as a PDF. The output depends only on the report content and the
// options: the same content gives byte-identical files.
func (a *Report) WritePDF(w io.Writer, opt PDFOptions) error {
	size := "A4"
	switch opt.Paper {
	case "", PaperA4:
	case PaperLetter:
		size = "Letter"
	default:
		return fmt.Errorf("acceptance: unknown paper %q (a4 or letter)", opt.Paper)
	}
	cover, err := newFontCoverage(liberationsansregular.TTF)
	if err != nil {
		return fmt.Errorf("acceptance: font: %w", err)
	}
	pdf := fpdf.New("P", "mm", size, "")
	when, err := time.Parse(time.RFC3339, a.GeneratedAt)
	if err != nil {
		return fmt.Errorf("acceptance: report time %q: %w", a.GeneratedAt, err)
	}
	pdf.SetCreationDate(when)
	pdf.SetModificationDate(when)
	pdf.SetCatalogSort(true)
	pdf.SetProducer("beatnote "+a.Version, true)
	pdf.SetCreator("beatnote "+a.Version, true)
	pdf.AddUTF8FontFromBytes("sans", "", liberationsansregular.TTF)
	pdf.AddUTF8FontFromBytes("sans", "B", liberationsansbold.TTF)
	pdf.AddUTF8FontFromBytes("sans", "I", liberationsansitalic.TTF)
	pdf.AddUTF8FontFromBytes("mono", "", liberationmonoregular.TTF)
	pdf.SetMargins(pdfMargin, pdfMargin, pdfMargin)
	pdf.SetAutoPageBreak(true, pdfBottom+4)
	pdf.SetCellMargin(pdfCellPad)
	pdf.AliasNbPages("{nb}")

	pw := &pdfWriter{a: a, pdf: pdf, cover: cover, missing: map[rune]bool{}}
	pw.pageW, _ = pdf.GetPageSize()
	pw.contentW = pw.pageW - 2*pdfMargin
	pdf.SetTitle(pw.text("Acceptance report "+a.Circuit), true)
	pdf.SetSubject(a.ReportID, true)
	if a.Signing != nil {
		pdf.SetAuthor(pw.text(a.Signing.Signer), true)
	}
	pdf.SetHeaderFunc(pw.header)
	pdf.SetFooterFunc(pw.footer)

	if err := pw.body(); err != nil {
		return err
	}
	if pdf.Err() {
		return fmt.Errorf("acceptance: pdf: %w", pdf.Error())
	}
	var buf bytes.Buffer
	if err := pdf.Output(&buf); err != nil {
		return fmt.Errorf("acceptance: pdf: %w", err)
	}
	_, err = w.Write(buf.Bytes())
	return err
}

// text makes s one drawable line: control and formatting characters (line breaks included)
// are shown as escapes by escape.Visible, so that text from an input cannot start a line of its
// own, and runes the font lacks become <U+XXXX>, remembered so the report can say so. Text
// meant to take several lines is split at its line breaks first (see table).
func (pw *pdfWriter) text(s string) string {
	var b strings.Builder
	for _, r := range escape.Visible(s) {
		switch {
		case r == ' ' || pw.cover.has(r):
			b.WriteRune(r)
		default:
			pw.missing[r] = true
			fmt.Fprintf(&b, "<U+%04X>", r)
		}
	}
	return b.String()
}

func (pw *pdfWriter) header() {
	if pw.pdf.PageNo() == 1 {
		return
	}
	pdf := pw.pdf
	pdf.SetFont("sans", "", pdfSmallSize)
	pdf.SetTextColor(90, 90, 90)
	left := pw.fit("Acceptance report · "+pw.a.Circuit, pw.contentW*0.7)
	pdf.CellFormat(pw.contentW*0.7, 4, left, "", 0, "L", false, 0, "")
	pdf.CellFormat(pw.contentW*0.3, 4, pw.a.ReportID, "", 1, "R", false, 0, "")
	pdf.SetDrawColor(180, 180, 180)
	pdf.Line(pdfMargin, pdf.GetY()+0.5, pw.pageW-pdfMargin, pdf.GetY()+0.5)
	pdf.Ln(4)
	pdf.SetTextColor(0, 0, 0)
}

// fit shortens s with an ellipsis to width w; only for the running header, whose full text
// appears on the first page.
func (pw *pdfWriter) fit(s string, w float64) string {
	s = pw.text(s)
	if pw.pdf.GetStringWidth(s) <= w-2*pdfCellPad {
		return s
	}
	r := []rune(s)
	for len(r) > 0 && pw.pdf.GetStringWidth(string(r)+"…") > w-2*pdfCellPad {
		r = r[:len(r)-1]
	}
	return string(r) + "…"
}

func (pw *pdfWriter) footer() {
	pdf := pw.pdf
	_, pageH := pdf.GetPageSize()
	y := pageH - pdfBottom + 2
	pdf.SetDrawColor(180, 180, 180)
	pdf.Line(pdfMargin, y, pw.pageW-pdfMargin, y)
	pdf.SetXY(pdfMargin, y+1)
	pdf.SetFont("sans", "", pdfFooterSize)
	pdf.SetTextColor(70, 70, 70)
	key := "not signed"
	if pw.a.Signing != nil {
		key = pw.a.Signing.KeyFingerprint
	}
	pdf.CellFormat(pw.contentW-22, 3.2, "Report "+pw.a.ReportID+" · "+pw.a.GeneratedAt, "", 2, "L", false, 0, "")
	pdf.CellFormat(pw.contentW-22, 3.2, "Signing key "+key, "", 0, "L", false, 0, "")
	pdf.SetXY(pw.pageW-pdfMargin-22, y+1)
	pdf.CellFormat(22, 3.2, fmt.Sprintf("page %d of {nb}", pdf.PageNo()), "", 0, "R", false, 0, "")
	pdf.SetTextColor(0, 0, 0)
}

// ensure starts a new page unless h millimetres are left above the footer.
func (pw *pdfWriter) ensure(h float64) {
	_, pageH := pw.pdf.GetPageSize()
	if pw.pdf.GetY()+h > pageH-pdfBottom-4 {
		pw.pdf.AddPage()
	}
}

func (pw *pdfWriter) heading(s string, size float64) {
	pw.ensure(size*0.8 + 26) // keep a heading with the start of what follows
	pdf := pw.pdf
	pdf.Ln(2)
	pdf.SetFont("sans", "B", size)
	pdf.SetTextColor(0x1f, 0x4e, 0x79)
	pdf.MultiCell(pw.contentW, size*0.45, pw.text(s), "", "L", false)
	pdf.SetTextColor(0, 0, 0)
	pdf.Ln(1)
}

func (pw *pdfWriter) para(s string, style string, size float64) {
	pdf := pw.pdf
	pdf.SetFont("sans", style, size)
	pdf.MultiCell(pw.contentW, size*0.48, pw.text(s), "", "L", false)
}

// bullet writes one bulleted paragraph, wrapped under its own indent.
func (pw *pdfWriter) bullet(indent float64, mark, s string) {
	pdf := pw.pdf
	pdf.SetFont("sans", "", pdfBodySize)
	lines := pdf.SplitText(pw.text(s), pw.contentW-indent-5)
	pw.ensure(float64(min(len(lines), 3)) * pdfLineH)
	pdf.SetX(pdfMargin + indent)
	pdf.CellFormat(5, pdfLineH, mark, "", 0, "L", false, 0, "")
	pdf.MultiCell(pw.contentW-indent-5, pdfLineH, pw.text(s), "", "L", false)
}

// causeList writes an italic label and one bullet per item, indented under a likely cause, with
// notes[i] (a laser-safety caution) in small italics under item i when given; nothing when
// items is empty.
func (pw *pdfWriter) causeList(label, mark string, items, notes []string) {
	if len(items) == 0 {
		return
	}
	pdf := pw.pdf
	pdf.SetFont("sans", "I", pdfBodySize)
	pdf.SetX(pdfMargin + 4)
	pdf.CellFormat(40, pdfLineH, label, "", 1, "L", false, 0, "")
	for i, it := range items {
		pw.bullet(4, mark, it)
		if i < len(notes) && notes[i] != "" {
			pdf.SetFont("sans", "I", pdfSmallSize+0.5)
			pdf.SetX(pdfMargin + 9)
			pdf.MultiCell(pw.contentW-9, 3.6, pw.text(notes[i]), "", "L", false)
		}
	}
}

// footnotes writes numbered notes in small type under a table.
func (pw *pdfWriter) footnotes(texts []string) {
	pdf := pw.pdf
	for i, t := range texts {
		pdf.SetFont("sans", "", pdfSmallSize)
		line := fmt.Sprintf("[%d] %s", i+1, t)
		pw.ensure(3.2 * float64(len(pdf.SplitText(pw.text(line), pw.contentW))))
		pdf.MultiCell(pw.contentW, 3.2, pw.text(line), "", "L", false)
	}
	pdf.Ln(2)
}

// marginBarW is the width of a margin bar, mm: marginBarBeyond of it for a margin beyond the
// limit, the rest for the headroom inside it.
const (
	marginBarW      = 16.0
	marginBarBeyond = 5.0
)

// marginBar draws a criterion's margin at (x, y), height h: a track with a tick at the limit, a
// grey bar to the right of the tick for headroom inside the limit, a black bar to its left for
// a margin beyond it. f is marginFraction's value; NaN draws the track only.
func (pw *pdfWriter) marginBar(x, y, h, f float64) {
	pdf := pw.pdf
	tick := x + marginBarBeyond
	pdf.SetDrawColor(0xb0, 0xb0, 0xb0)
	pdf.SetLineWidth(0.15)
	pdf.Rect(x, y, marginBarW, h, "D")
	switch {
	case f > 0:
		pdf.SetFillColor(0x8a, 0x8a, 0x8a)
		pdf.Rect(tick, y, f*(marginBarW-marginBarBeyond), h, "F")
	case f < 0:
		pdf.SetFillColor(0, 0, 0)
		w := -f * marginBarBeyond
		pdf.Rect(tick-w, y, w, h, "F")
	}
	pdf.SetDrawColor(0, 0, 0)
	pdf.SetLineWidth(0.35)
	pdf.Line(tick, y-0.6, tick, y+h+0.6)
	pdf.SetLineWidth(0.2)
}

// warningTriangle draws the exclamation mark in a triangle of the laser-safety section in a
// square of side s at (x, y).
func (pw *pdfWriter) warningTriangle(x, y, s float64) {
	pdf := pw.pdf
	pdf.SetDrawColor(0x33, 0x33, 0x33)
	pdf.SetFillColor(0x33, 0x33, 0x33)
	pdf.SetLineCapStyle("round")
	pdf.SetLineJoinStyle("round")
	pdf.SetLineWidth(s * 0.07)
	pdf.Polygon([]fpdf.PointType{{X: x + 0.5*s, Y: y + 0.08*s}, {X: x + 0.95*s, Y: y + 0.9*s}, {X: x + 0.05*s, Y: y + 0.9*s}}, "D")
	pdf.SetLineWidth(s * 0.1)
	pdf.Line(x+0.5*s, y+0.35*s, x+0.5*s, y+0.62*s)
	pdf.Circle(x+0.5*s, y+0.76*s, s*0.045, "F")
	pdf.SetLineWidth(0.2)
	pdf.SetDrawColor(0, 0, 0)
}

// column describes one table column.
type column struct {
	title string
	width float64 // fraction of the content width
	align string  // L, R or C
	mono  bool
	// subdued draws every paragraph after the first smaller and in grey (sources, notes).
	subdued bool
	// bars, when set, holds one margin fraction per row (marginFraction; NaN for none): the
	// cell draws a margin bar before its text.
	bars []float64
}

// cellLine is one wrapped line of a table cell.
type cellLine struct {
	text string
	sub  bool // a subdued line
}

// table draws a table with wrapped cells. Every cell's text is wrapped, none is cut. The header
// row is repeated after a page break; a row that fits on a page is never split, a taller one
// continues on the next page.
// oneLineCells escapes every cell of rows with escape.Visible: table cells break at "\n", and a
// cell made of text from an input must stay on one line.
func oneLineCells(rows [][]string) [][]string {
	for _, r := range rows {
		for j := range r {
			r[j] = escape.Visible(r[j])
		}
	}
	return rows
}

func (pw *pdfWriter) table(cols []column, rows [][]string, size float64) {
	pdf := pw.pdf
	lineH := size * 0.47
	padY := pdfCellPad * 0.6
	widths := make([]float64, len(cols))
	for i, c := range cols {
		widths[i] = c.width * pw.contentW
	}
	setFont := func(c column, bold, sub bool) {
		switch {
		case bold:
			pdf.SetFont("sans", "B", size)
		case sub:
			pdf.SetFont("sans", "", size-1.5)
		case c.mono:
			pdf.SetFont("mono", "", size-0.5)
		default:
			pdf.SetFont("sans", "", size)
		}
	}
	layout := func(cells []string, bold bool) ([][]cellLine, int) {
		out := make([][]cellLine, len(cols))
		n := 1
		for i, c := range cols {
			txt := ""
			if i < len(cells) {
				txt = cells[i]
			}
			var lines []cellLine
			for k, para := range strings.Split(txt, "\n") {
				para = pw.text(para)
				sub := c.subdued && k > 0 && !bold
				setFont(c, bold, sub)
				sl := pdf.SplitText(para, widths[i])
				if len(sl) == 0 {
					sl = []string{""}
				}
				for _, l := range sl {
					lines = append(lines, cellLine{text: l, sub: sub})
				}
			}
			out[i] = lines
			n = max(n, len(lines))
		}
		return out, n
	}
	draw := func(cells [][]cellLine, from, to int, bold, fill bool, row int) {
		x0, y0 := pdfMargin, pdf.GetY()
		h := float64(to-from)*lineH + 2*padY
		x := x0
		for i, c := range cols {
			if fill {
				pdf.SetFillColor(0xe8, 0xee, 0xf5)
				pdf.Rect(x, y0, widths[i], h, "F")
			}
			pdf.SetDrawColor(190, 190, 190)
			pdf.SetLineWidth(0.2)
			pdf.Rect(x, y0, widths[i], h, "D")
			textX, textW := x, widths[i]
			if c.bars != nil && !bold && row < len(c.bars) {
				if from == 0 {
					pw.marginBar(x+1.2, y0+padY+0.25*lineH, lineH*0.55, c.bars[row])
				}
				textX, textW = x+marginBarW+2.4, widths[i]-marginBarW-2.4
			}
			for j := from; j < to && j < len(cells[i]); j++ {
				line := cells[i][j]
				setFont(c, bold, line.sub)
				if line.sub {
					pdf.SetTextColor(95, 95, 95)
				}
				pdf.SetXY(textX, y0+padY+float64(j-from)*lineH)
				pdf.CellFormat(textW, lineH, line.text, "", 0, c.align, false, 0, "")
				pdf.SetTextColor(0, 0, 0)
			}
			x += widths[i]
		}
		pdf.SetXY(x0, y0+h)
	}
	titles := make([]string, len(cols))
	for i, c := range cols {
		titles[i] = c.title
	}
	head, headN := layout(titles, true)
	headH := float64(headN)*lineH + 2*padY
	_, pageH := pdf.GetPageSize()
	limit := pageH - pdfBottom - 4
	// Lines a fresh page holds below the running header and the table header.
	pageLines := int((limit - pdfMargin - 9 - headH - 2*padY) / lineH)
	pw.ensure(headH + 2*lineH + 3)
	draw(head, 0, headN, true, true, -1)
	for ri, r := range rows {
		cells, n := layout(r, false)
		for from := 0; from < n; {
			avail := int((limit - pdf.GetY() - 2*padY) / lineH)
			if avail < 1 || (from == 0 && n <= pageLines && avail < n) {
				pdf.AddPage()
				draw(head, 0, headN, true, true, -1)
				continue
			}
			to := min(n, from+avail)
			draw(cells, from, to, false, false, ri)
			from = to
		}
	}
	pdf.Ln(2)
}

func (pw *pdfWriter) body() error {
	a, pdf := pw.a, pw.pdf
	pdf.AddPage()

	// Title block.
	pdf.SetFont("sans", "B", 17)
	pdf.MultiCell(pw.contentW, 8, "Coherent link acceptance report", "", "L", false)
	pdf.SetFont("sans", "", 10.5)
	pdf.MultiCell(pw.contentW, 5, pw.text(a.Circuit), "", "L", false)
	pdf.Ln(3)

	// The verdict: the word, then the sentence naming what decided it and the tally. No colour
	// and no icon: a rule at the left sets it apart.
	y := pdf.GetY()
	pdf.SetFont("sans", "B", 15)
	pdf.SetX(pdfMargin + 4)
	pdf.CellFormat(pw.contentW-4, 7, "Verdict: "+VerdictWords(a.Verdict), "", 2, "L", false, 0, "")
	pdf.SetFont("sans", "", pdfBodySize+0.5)
	pdf.SetX(pdfMargin + 4)
	pdf.MultiCell(pw.contentW-4, pdfLineH+0.3, pw.text(headline(a)), "", "L", false)
	if tally := criteriaTally(a); tally != "" {
		pdf.SetX(pdfMargin + 4)
		pdf.SetFont("sans", "", pdfBodySize)
		pdf.MultiCell(pw.contentW-4, pdfLineH, tally, "", "L", false)
	}
	pdf.SetDrawColor(0x33, 0x33, 0x33)
	pdf.SetLineWidth(0.8)
	pdf.Line(pdfMargin+0.4, y, pdfMargin+0.4, pdf.GetY())
	pdf.SetLineWidth(0.2)
	pdf.Ln(4)

	// Summary.
	profile := "not stated"
	if a.Profile != nil {
		profile = profileLine(a.Profile)
	}
	signing := "not signed"
	if a.Signing != nil {
		signing = a.Signing.KeyFingerprint + "\nsigner: " + escape.Visible(orBlank(a.Signing.Signer, "not named"))
	}
	var ports []string
	for _, p := range a.Ports {
		ports = append(ports, fmt.Sprintf("%s: %s (%s)", escape.Visible(p.Port), VerdictWords(p.Verdict), words.Plural(p.Samples, "sample", "samples")))
	}
	kv := [][]string{
		{"Circuit", escape.Visible(a.Circuit)},
		{"End A", escape.Visible(orBlank(a.EndA, "not stated"))},
		{"End Z", escape.Visible(orBlank(a.EndZ, "not stated"))},
		{"Period (UTC)", a.From + " to " + a.To},
		{"Module profile", escape.Visible(profile)},
		{"Ports", strings.Join(ports, "\n")},
		{"Report id", a.ReportID},
		{"Report time (UTC)", a.GeneratedAt},
		{"Signing key", signing},
	}
	pw.table([]column{{title: "Summary", width: 0.22, align: "L"}, {title: "", width: 0.78, align: "L"}}, kv, pdfBodySize)

	if a.Plan != nil {
		pw.heading("Link plan", 12)
		s := fmt.Sprintf("%s: %s, %.1f km of fibre, %s", a.Plan.Circuit, words.Plural(a.Plan.Spans, "span", "spans"), a.Plan.LengthKm, words.Plural(a.Plan.Amplifiers, "amplifier", "amplifiers"))
		if a.Plan.FrequencyTHz > 0 {
			s += fmt.Sprintf(", channel at %.5f THz", a.Plan.FrequencyTHz)
		}
		s += "."
		if a.Plan.Description != "" {
			s += " " + a.Plan.Description
		}
		pw.para(s, "", pdfBodySize)
		if rows := instrumentRows(a.Plan.Instruments); len(rows) > 0 {
			pw.heading("Field measurements", 12)
			pw.table([]column{{title: "instrument", width: 0.26, align: "L"}, {title: "model", width: 0.22, align: "L"},
				{title: "serial", width: 0.18, align: "L"}, {title: "calibrated on", width: 0.17, align: "L"}, {title: "calibration due", width: 0.17, align: "L"}},
				oneLineCells(rows), pdfBodySize-0.5)
		}
		if rows := readingRows(a.Plan.PowerReadings, a.Plan.Instruments); len(rows) > 0 {
			if len(a.Plan.Instruments) == 0 {
				pw.heading("Field measurements", 12)
			}
			pw.para("Hand power-meter readings:", "", pdfBodySize)
			pw.table([]column{{title: "where", width: 0.24, align: "L"}, {title: "power", width: 0.12, align: "R"},
				{title: "wavelength", width: 0.12, align: "R"}, {title: "instrument", width: 0.14, align: "L"},
				{title: "taken", width: 0.18, align: "L"}, {title: "note", width: 0.2, align: "L"}},
				oneLineCells(rows), pdfBodySize-0.5)
		}
	}

	if len(a.Directions) > 0 {
		pw.heading("Both directions", 12)
		for _, dp := range a.Directions {
			var rows [][]string
			for _, d := range dp.Directions {
				rows = append(rows, []string{d.From, d.ReceivedAt, orBlank(d.Line, "—"), VerdictWords(d.Verdict),
					orBlank(d.Findings(), "none")})
			}
			pw.table([]column{{title: "from", width: 0.16, align: "L"}, {title: "received at", width: 0.16, align: "L"},
				{title: "line", width: 0.2, align: "L"}, {title: "verdict", width: 0.14, align: "L"}, {title: "causes and line findings", width: 0.34, align: "L"}}, oneLineCells(rows), pdfBodySize)
			pw.para(dp.Finding, "", pdfBodySize)
		}
	}

	for _, port := range a.Ports {
		if err := pw.portSection(port); err != nil {
			return err
		}
	}
	pw.inputsSection()
	pw.safetySection()
	pw.signOffSection()
	return nil
}

func (pw *pdfWriter) portSection(port diagnose.PortResult) error {
	pdf := pw.pdf
	pw.ensure(40)
	pdf.Ln(3)
	pdf.SetFont("sans", "B", 13)
	pdf.SetTextColor(0x1f, 0x4e, 0x79)
	pdf.MultiCell(pw.contentW, 6, pw.text("Port "+port.Port+" — "+VerdictWords(port.Verdict)), "", "L", false)
	pdf.SetTextColor(0, 0, 0)
	pw.para(fmt.Sprintf("Profile %s; %s from %s to %s.", orBlank(report.ProfileText(&port), "not stated"), words.Plural(port.Samples, "sample", "samples"), port.From, port.To), "", pdfBodySize)
	for _, f := range portFacts(&port) {
		pw.para(f, "", pdfBodySize)
	}
	pdf.Ln(1)

	if len(port.Criteria) > 0 {
		pw.heading("Criteria", 11)
		rows := make([][]string, len(port.Criteria))
		bars := make([]float64, len(port.Criteria))
		var notes report.Footnotes
		for i, c := range port.Criteria {
			name := escape.Visible(c.Name)
			if c.Source != "" {
				name += fmt.Sprintf("\nlimit: %s [%d]", report.SourceClass(c.Source), notes.Note(c.Source))
			}
			rows[i] = []string{name, escape.Visible(c.Statistic), report.FormatValue(c.Measured, c.Unit), report.FormatValue(c.Limit, c.Unit), report.CriterionMargin(c), strings.ToLower(VerdictWords(c.Verdict))}
			bars[i] = marginFraction(c)
		}
		pw.table([]column{
			{title: "criterion", width: 0.35, align: "L", subdued: true}, {title: "statistic", width: 0.08, align: "L"},
			{title: "measured", width: 0.13, align: "R"}, {title: "limit", width: 0.13, align: "R"},
			{title: "margin", width: 0.12, align: "R"}, {title: "margin to the limit", width: 0.19, align: "L", bars: bars},
		}, rows, pdfBodySize-0.5)
		pw.footnotes(notes.Texts())
	}
	if len(port.PlanVsMeasured) > 0 {
		pw.heading("Plan vs measured", 11)
		rows := make([][]string, len(port.PlanVsMeasured))
		for i, pc := range port.PlanVsMeasured {
			rows[i] = []string{report.QuantityLabel(pc.Quantity), report.FormatValue(pc.Expected, pc.Unit), report.FormatValue(pc.Measured, pc.Unit), report.FormatMargin(pc.Measured-pc.Expected, pc.Unit), escape.Visible(pc.Note)}
		}
		pw.table([]column{
			{title: "quantity", width: 0.22, align: "L"}, {title: "planned", width: 0.15, align: "R"},
			{title: "measured", width: 0.15, align: "R"}, {title: "difference", width: 0.15, align: "R"},
			{title: "note", width: 0.33, align: "L"},
		}, rows, pdfBodySize-0.5)
	}

	pw.heading("Likely causes", 11)
	if len(port.Causes) == 0 {
		pw.para("None: nothing in the telemetry points at a physical fault.", "", pdfBodySize)
	}
	for i, c := range port.Causes {
		pw.ensure(3 * pdfLineH)
		pdf.SetFont("sans", "B", pdfBodySize+0.5)
		pdf.MultiCell(pw.contentW, pdfLineH+0.4, pw.text(fmt.Sprintf("%d. %s — confidence %.0f %%", i+1, c.ID, 100*c.Confidence)), "", "L", false)
		pw.causeList("Evidence", "•", c.Evidence, nil)
		pw.causeList("Recommended actions", "→", c.Actions, c.Cautions)
		pdf.Ln(1.5)
	}
	if port.NextTest != "" {
		pw.para("Next test: "+port.NextTest, "", pdfBodySize)
	}
	if len(port.Risks) > 0 {
		pw.heading("Risks (inside the limits, close to them)", 11)
		for _, r := range port.Risks {
			pw.bullet(0, "•", r)
		}
	}
	if lines := report.BudgetLines(port.Budget); len(lines) > 0 {
		pw.heading("SNR budget", 11)
		for _, l := range lines {
			pw.bullet(0, "•", l)
		}
	}
	if len(port.NotJudged) > 0 {
		pw.heading("Not judged", 11)
		for _, n := range port.NotJudged {
			pw.bullet(0, "•", n)
		}
	}
	if rows := metricRows(port.Metrics); len(rows) > 0 {
		pw.heading("Measurements", 11)
		pw.table([]column{
			{title: "quantity", width: 0.28, align: "L"}, {title: "min", width: 0.18, align: "R"},
			{title: "median", width: 0.18, align: "R"}, {title: "p99", width: 0.18, align: "R"},
			{title: "max", width: 0.18, align: "R"},
		}, rows, pdfBodySize-0.5)
	}

	charts, err := pw.a.portCharts(port.Port, pw.charts)
	pw.charts += len(charts)
	if err != nil {
		return err
	}
	if len(charts) > 0 {
		// The heading stays with the first chart.
		pw.ensure(pw.contentW*charts[0].HeightMM/charts[0].WidthMM + 22)
		pw.heading("Charts — port "+port.Port, 11)
	}
	for i, c := range charts {
		name := fmt.Sprintf("chart-%s-%d", port.Port, i)
		w := pw.contentW
		h := w * c.HeightMM / c.WidthMM
		pdf.SetFont("sans", "I", pdfSmallSize+0.5)
		capLines := pdf.SplitText(pw.text(c.Caption), w)
		pw.ensure(h + float64(len(capLines))*3.6 + 4)
		pdf.RegisterImageOptionsReader(name, fpdf.ImageOptions{ImageType: "PNG"}, bytes.NewReader(c.PNG))
		y := pdf.GetY()
		pdf.ImageOptions(name, pdfMargin, y, w, h, false, fpdf.ImageOptions{ImageType: "PNG"}, 0, "")
		pdf.SetXY(pdfMargin, y+h+0.5)
		pdf.SetFont("sans", "I", pdfSmallSize+0.5)
		pdf.MultiCell(w, 3.6, pw.text(c.Caption), "", "L", false)
		pdf.Ln(3)
	}
	return nil
}

func (pw *pdfWriter) inputsSection() {
	a, pdf := pw.a, pw.pdf
	pw.heading("Inputs", 12)
	rows := make([][]string, len(a.Inputs))
	for i, in := range a.Inputs {
		rows[i] = []string{escape.Visible(in.File) + "\nSHA-256 " + in.SHA256, fmt.Sprint(in.RowsRead), fmt.Sprint(in.RowsUsed), fmt.Sprint(in.RowsRejected)}
	}
	pw.table([]column{
		{title: "file and SHA-256", width: 0.64, align: "L", mono: true}, {title: "rows read", width: 0.12, align: "R"},
		{title: "used", width: 0.12, align: "R"}, {title: "rejected", width: 0.12, align: "R"},
	}, rows, pdfSmallSize+0.5)
	if len(a.Settings) > 0 {
		rows := make([][]string, len(a.Settings))
		for i, f := range a.Settings {
			rows[i] = []string{f.Role, escape.Visible(f.File) + "\nSHA-256 " + f.SHA256}
		}
		pw.table([]column{{title: "judged with", width: 0.2, align: "L"}, {title: "file and SHA-256", width: 0.8, align: "L", mono: true}}, rows, pdfSmallSize+0.5)
	}
	if a.Rejected.Total == 0 {
		pw.para("Every row read was used; none was rejected.", "", pdfBodySize)
		return
	}
	pw.para(fmt.Sprintf("%s rejected and not used. The first %d, with their reasons:", words.Plural(a.Rejected.Total, "row was", "rows were"), len(a.Rejected.First)), "", pdfBodySize)
	for _, r := range a.Rejected.First {
		pw.bullet(2, "•", rejectionLine(r.File, r.Line, r.Field, r.Reason))
	}
	pdf.Ln(1)
}

func (pw *pdfWriter) safetySection() {
	a, pdf := pw.a, pw.pdf
	pdf.SetFont("sans", "", pdfBodySize)
	h := 12.0
	for _, c := range a.Safety.Cautions {
		h += float64(len(pdf.SplitText(pw.text(c), pw.contentW-17))) * pdfLineH
	}
	pw.ensure(h + 12)
	pw.heading("Laser safety", 12)
	y := pdf.GetY()
	// A warning triangle beside the heading text block.
	pdf.SetDrawColor(0x33, 0x33, 0x33)
	pdf.SetLineWidth(0.5)
	pdf.Rect(pdfMargin, y, pw.contentW, h-4, "D")
	pw.warningTriangle(pdfMargin+2, y+2, 7)
	pdf.SetXY(pdfMargin+11, y+2)
	pdf.SetFont("sans", "B", pdfBodySize+1)
	pdf.CellFormat(pw.contentW-13, 5, "Hazard level: "+pw.text(a.Safety.HazardLevel)+" — invisible infrared radiation", "", 2, "L", false, 0, "")
	pdf.Ln(1)
	for _, c := range a.Safety.Cautions {
		pdf.SetX(pdfMargin + 11)
		pdf.SetFont("sans", "", pdfBodySize)
		pdf.CellFormat(4, pdfLineH, "•", "", 0, "L", false, 0, "")
		pdf.MultiCell(pw.contentW-17, pdfLineH, pw.text(c), "", "L", false)
	}
	pdf.SetY(y + h - 1)
}

func (pw *pdfWriter) signOffSection() {
	a, pdf := pw.a, pw.pdf
	so := a.SignOff
	// Table cells break at "\n": every field is one line, except the notes, which keep the
	// lines they were typed on, each escaped.
	notes := strings.Split(so.Notes, "\n")
	for i, l := range notes {
		notes[i] = escape.Visible(strings.TrimSuffix(l, "\r"))
	}
	rows := [][]string{
		{"Technician", escape.Visible(so.Technician)},
		{"Organisation", escape.Visible(so.Organisation)},
		{"Accepting party", escape.Visible(so.AcceptingParty)},
		{"Site, end A", escape.Visible(so.EndA)},
		{"Site, end Z", escape.Visible(so.EndZ)},
		{"Notes", strings.Join(notes, "\n")},
	}
	// The heading, the fields and the signature lines stay together on one page (when they fit
	// on one): signature lines alone on a last page sign nothing visible.
	pdf.SetFont("sans", "", pdfBodySize)
	need := 12.0 + 10.0 + 38.0 // heading, the table header and spacing, the signature lines
	for _, r := range rows {
		need += float64(max(1, len(pdf.SplitText(pw.text(r[1]), 0.78*pw.contentW-2))))*pdfBodySize*0.47 + 2*pdfCellPad*0.6
	}
	if len(pw.missing) > 0 {
		need += 12
	}
	pw.ensure(need)
	pw.heading("Sign-off", 12)
	pw.table([]column{{title: "field", width: 0.22, align: "L"}, {title: "entry", width: 0.78, align: "L"}}, rows, pdfBodySize)
	if len(pw.missing) > 0 {
		rs := make([]rune, 0, len(pw.missing))
		for r := range pw.missing {
			rs = append(rs, r)
		}
		sort.Slice(rs, func(i, j int) bool { return rs[i] < rs[j] })
		codes := make([]string, len(rs))
		for i, r := range rs {
			codes[i] = fmt.Sprintf("U+%04X", r)
		}
		pw.para("Note on characters: the embedded font (Liberation Sans) has no glyph for "+strings.Join(codes, ", ")+
			"; these are printed as <U+XXXX> codes. The Markdown and JSON forms of this report hold the original text.", "I", pdfSmallSize+0.5)
		pdf.Ln(1)
	}
	pw.ensure(38)
	pdf.Ln(8)
	half := (pw.contentW - 10) / 2
	y := pdf.GetY()
	for i, who := range []string{"Handed over by (signature)", "Accepted by (signature)"} {
		x := pdfMargin + float64(i)*(half+10)
		pdf.SetDrawColor(0, 0, 0)
		pdf.SetLineWidth(0.3)
		pdf.Line(x, y+10, x+half, y+10)
		pdf.SetXY(x, y+11)
		pdf.SetFont("sans", "", pdfSmallSize+0.5)
		pdf.CellFormat(half, 4, who, "", 0, "L", false, 0, "")
		pdf.Line(x, y+24, x+half*0.6, y+24)
		pdf.SetXY(x, y+25)
		pdf.CellFormat(half, 4, "Name and date", "", 0, "L", false, 0, "")
	}
	pdf.SetY(y + 30)
}

// criteriaTally counts the judged criteria by verdict, e.g. "16 criteria judged on 1 port:
// 12 pass, 0 marginal, 4 fail."
func criteriaTally(a *Report) string {
	var n, pass, marg, fail int
	for _, p := range a.Ports {
		for _, c := range p.Criteria {
			n++
			switch c.Verdict {
			case diagnose.Pass:
				pass++
			case diagnose.Marginal:
				marg++
			case diagnose.Fail:
				fail++
			}
		}
	}
	if n == 0 {
		return ""
	}
	return fmt.Sprintf("%s judged on %s: %d pass, %d marginal, %d fail.", words.Plural(n, "criterion", "criteria"), words.Plural(len(a.Ports), "port", "ports"), pass, marg, fail)
}

// marginFraction scales a criterion's margin for its bar: +1 is a full bar of headroom (the
// margin equals the limit), −1 a full bar beyond the limit, clipped. The scale is the limit
// itself, except for levels in dBm (10 dB: a power level has no natural full scale), the
// post-FEC BER (3 decades) and a limit of zero (1: a count that must stay at zero). NaN when
// the margin is not a number.
func marginFraction(c diagnose.Criterion) float64 {
	unit := c.Unit
	if c.MarginUnit != "" {
		unit = c.MarginUnit
	}
	scale := math.Abs(c.Limit)
	switch {
	case unit == "dBm":
		scale = 10
	case unit == "decades":
		scale = 3
	case !(scale > 0):
		scale = 1
	}
	return math.Max(-1, math.Min(1, c.Margin/scale))
}
