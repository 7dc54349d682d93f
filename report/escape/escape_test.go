package escape

import (
	"bytes"
	"encoding/csv"
	"html"
	"regexp"
	"strings"
	"testing"
	"unicode/utf8"

	"github.com/yuin/goldmark"
	"github.com/yuin/goldmark/extension"
	rhtml "github.com/yuin/goldmark/renderer/html"
)

// hostile are strings an attacker can put in a port name, a plan field or a file name.
var hostile = []string{
	"\x1b[2J\x1b[1;1HVERIFIED",          // clear the screen, home the cursor
	"\x1b]0;title\x07",                  // set the window title (OSC)
	"port\rVERIFIED",                    // overwrite the line
	"port\nFAKE ROW\tpass",              // a new line and a column
	"\u009b31m",                         // C1 CSI
	"abc\u202edcba",                     // right-to-left override
	"x\u2066y\u2069\u200b\u2028z\ufeff", // isolates, zero width space, line separator, BOM
	"bad\xffutf8\xc3",                   // not UTF-8
	"=HYPERLINK(\"http://x\",\"y\")",    // spreadsheet formula
	"+1", "-2+3", "@SUM(A1)", "\t=1", "\r=1", "＝1",
	"| x | y |\n|---|---|", // Markdown table row
	"# heading", "- item", "1. item", "> quote", "===",
	"<script>alert(1)</script>", "<img src=x onerror=y>", "&lt;b&gt;", "&#x202E;",
	"[link](http://x)", "![img](x)", "**bold** _em_ ~~del~~ `code` $x$ @team",
	`back\slash \| \*`, "x #", "x ##", "tail\\", "a_b_c", "1) x", "12. x", "  lead",
	"",
}

func TestVisible(t *testing.T) {
	for _, tc := range []struct{ in, want string }{
		{"Ethernet1/1/1", "Ethernet1/1/1"},
		{"Tollavén–Ruskhollow ✓", "Tollavén–Ruskhollow ✓"},
		{"a\x1b[31mb", `a\x1b[31mb`},
		{"a\rb\nc\td", `a\rb\nc\td`},
		{"\x00\x7f", `\x00\x7f`},
		{"\u0085", `\u0085`},
		{"abc\u202edcba", `abc\u202edcba`},
		{"\u2066\u2069\u200e\u061c", `\u2066\u2069\u200e\u061c`},
		{"\u2028\u2029", `\u2028\u2029`},
		{"\xff\xc3", `\xff\xc3`},
		{`C:\logs\a.csv`, `C:\logs\a.csv`},
	} {
		if got := Visible(tc.in); got != tc.want {
			t.Errorf("Visible(%q) = %q, want %q", tc.in, got, tc.want)
		}
	}
}

// TestVisibleIsOneLineOfPrintableText checks the property every terminal and PDF line relies
// on: nothing Visible returns moves the cursor, changes the terminal state or reorders text.
func TestVisibleIsOneLineOfPrintableText(t *testing.T) {
	for _, s := range hostile {
		v := Visible(s)
		if !utf8.ValidString(v) {
			t.Errorf("Visible(%q) = %q is not UTF-8", s, v)
		}
		for _, r := range v {
			if r < 0x20 || r == 0x7f || (r >= 0x80 && hidden(r)) {
				t.Errorf("Visible(%q) = %q keeps %U", s, v, r)
			}
		}
	}
}

func TestCSVCell(t *testing.T) {
	for _, tc := range []struct{ in, want string }{
		{"Ethernet1/1/1", "Ethernet1/1/1"},
		{"=1+2", "'=1+2"},
		{"+1", "'+1"},
		{"-2", "'-2"},
		{"@SUM(A1)", "'@SUM(A1)"},
		{"\t=1", `\t=1`}, // the tab is shown, so no longer a formula start
		{"\r=1", `\r=1`},
		{"＝1", "'＝1"},
		{"a=b", "a=b"},
		{"", ""},
	} {
		if got := CSVCell(tc.in); got != tc.want {
			t.Errorf("CSVCell(%q) = %q, want %q", tc.in, got, tc.want)
		}
	}
	// Written with encoding/csv and read back, every hostile cell stays one cell of one record
	// and never starts a formula (OWASP "CSV Injection": = + - @ tab carriage return).
	var buf bytes.Buffer
	w := csv.NewWriter(&buf)
	for _, s := range hostile {
		_ = w.Write([]string{CSVCell(s), "end"})
	}
	w.Flush()
	recs, err := csv.NewReader(&buf).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	if len(recs) != len(hostile) {
		t.Fatalf("%d records read back, want %d", len(recs), len(hostile))
	}
	for i, rec := range recs {
		if len(rec) != 2 || rec[1] != "end" {
			t.Errorf("record %d = %q: the cell %q split the record", i, rec, hostile[i])
		}
		if c := rec[0]; c != "" && strings.ContainsAny(c[:1], "=+-@\t\r") {
			t.Errorf("cell %q starts a formula", c)
		}
		if strings.ContainsAny(rec[0], "\r\n") {
			t.Errorf("cell %q holds a line break", rec[0])
		}
	}
}

var (
	tagRe     = regexp.MustCompile(`<(/?)([a-zA-Z0-9]+)[^>]*>`)
	allowTags = map[string]bool{"table": true, "thead": true, "tbody": true, "tr": true, "th": true, "td": true,
		"ul": true, "li": true, "h2": true, "p": true}
)

// TestMarkdownRendersAsText renders escaped text in a table cell, a list item and a heading
// with goldmark (a CommonMark 0.31 renderer with the GitHub Flavored Markdown table and
// strikethrough extensions, raw HTML allowed) and checks that the HTML holds only the elements
// of the surrounding document, and that each place shows exactly Visible(s).
func TestMarkdownRendersAsText(t *testing.T) {
	md := goldmark.New(goldmark.WithExtensions(extension.Table, extension.Strikethrough),
		goldmark.WithRendererOptions(rhtml.WithUnsafe()))
	for _, s := range hostile {
		if s == "" {
			continue
		}
		e := Markdown(s)
		doc := "| a | b |\n| --- | --- |\n| " + e + " | end |\n\n- " + e + "\n\n## Port " + e + "\n"
		var out bytes.Buffer
		if err := md.Convert([]byte(doc), &out); err != nil {
			t.Fatal(err)
		}
		got := out.String()
		counts := map[string]int{}
		for _, m := range tagRe.FindAllStringSubmatch(got, -1) {
			if !allowTags[m[2]] {
				t.Errorf("Markdown(%q) renders the element <%s>:\n%s", s, m[2], got)
			}
			if m[1] == "" {
				counts[m[2]]++
			}
		}
		if counts["tr"] != 2 || counts["td"] != 2 || counts["li"] != 1 || counts["h2"] != 1 || counts["table"] != 1 {
			t.Errorf("Markdown(%q) changes the document's shape %v:\n%s", s, counts, got)
		}
		want := strings.TrimSpace(Visible(s)) // Markdown trims the spaces around a cell, item or heading
		for _, el := range []string{"td", "li", "h2"} {
			re := regexp.MustCompile(`<` + el + `>(.*?)</` + el + `>`)
			m := re.FindStringSubmatch(got)
			if m == nil {
				t.Errorf("Markdown(%q): no <%s> in\n%s", s, el, got)
				continue
			}
			text := html.UnescapeString(tagRe.ReplaceAllString(m[1], ""))
			text = strings.TrimSpace(strings.TrimPrefix(text, "Port "))
			if text != want {
				t.Errorf("Markdown(%q) in <%s> shows %q, want %q", s, el, text, want)
			}
		}
	}
}

// FuzzEscape checks the promise of each sink on any input: Visible leaves one line of
// printable text (and plain text unchanged), CSVCell a cell that starts no formula and stays
// one cell, Markdown text that renders in a table cell without adding a cell, row or element.
func FuzzEscape(f *testing.F) {
	for _, s := range hostile {
		f.Add(s)
	}
	md := goldmark.New(goldmark.WithExtensions(extension.Table, extension.Strikethrough),
		goldmark.WithRendererOptions(rhtml.WithUnsafe()))
	f.Fuzz(func(t *testing.T, s string) {
		v := Visible(s)
		if !utf8.ValidString(v) {
			t.Fatalf("Visible(%q) = %q is not UTF-8", s, v)
		}
		for _, r := range v {
			if r < 0x20 || r == 0x7f || (r >= 0x80 && hidden(r)) {
				t.Fatalf("Visible(%q) = %q keeps %U", s, v, r)
			}
		}
		if isPlain(s) && v != s {
			t.Fatalf("Visible changed plain text %q to %q", s, v)
		}

		c := CSVCell(s)
		if c != "" && strings.ContainsAny(c[:1], "=+-@\t\r") {
			t.Fatalf("CSVCell(%q) = %q starts a formula", s, c)
		}
		var buf bytes.Buffer
		w := csv.NewWriter(&buf)
		_ = w.Write([]string{c, "end"})
		w.Flush()
		recs, err := csv.NewReader(&buf).ReadAll()
		if err != nil || len(recs) != 1 || len(recs[0]) != 2 || recs[0][1] != "end" {
			t.Fatalf("CSVCell(%q) = %q does not stay one cell: %q %v", s, c, recs, err)
		}

		var out bytes.Buffer
		doc := "| a | b |\n| --- | --- |\n| " + Markdown(s) + " | end |\n"
		if err := md.Convert([]byte(doc), &out); err != nil {
			t.Fatal(err)
		}
		html := out.String()
		for _, m := range tagRe.FindAllStringSubmatch(html, -1) {
			if !allowTags[m[2]] {
				t.Fatalf("Markdown(%q) renders <%s>:\n%s", s, m[2], html)
			}
		}
		if n := strings.Count(html, "<td>") + strings.Count(html, "<td "); n != 2 || strings.Count(html, "<tr>") != 2 {
			t.Fatalf("Markdown(%q) changes the table:\n%s", s, html)
		}
	})
}
