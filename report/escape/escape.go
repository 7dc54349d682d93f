// Package escape makes text that came from an input file safe to print in each of beatnote's
// output sinks. A port name, a plan field, a file name or a rejected value quoted back is hostile
// until escaped: it may carry terminal escape sequences, line breaks that forge a table row or a
// "VERIFIED" line, bidirectional overrides that reorder what is shown, spreadsheet formulas or
// Markdown and HTML. There is one function per sink:
//
//   - Visible, for a terminal line and for a PDF text line: every control character and every
//     invisible formatting character is shown as a Go-style escape (\x1b, \r, \n, \u202e), so
//     the text stays on one line and shows exactly what it holds.
//   - CSVCell, for a text cell of a CSV file opened in a spreadsheet: Visible, then a cell that
//     would start a formula is prefixed with an apostrophe (OWASP, "CSV Injection").
//   - Markdown, for inline Markdown (table cells, headings, list items) that may be rendered as
//     HTML: Visible, then every character with an inline Markdown or HTML meaning is
//     backslash-escaped (CommonMark 0.31, section 2.4 "Backslash escapes").
//
// JSON needs none of these: encoding/json escapes what JSON requires, and JSON consumers treat
// its strings as data.
package escape

import (
	"fmt"
	"strings"
	"unicode"
	"unicode/utf8"
)

// Visible returns s with every character that is not printable text shown as an escape:
// tab, line feed and carriage return as \t, \n, \r; other C0 controls, DEL and bytes that are
// not UTF-8 as \xHH; C1 controls (U+0080…U+009F), format characters (Unicode category Cf:
// bidirectional embeddings, overrides and isolates such as U+202E, zero-width characters) and
// the line and paragraph separators U+2028 and U+2029 as \uHHHH. Everything else, backslashes
// included, is kept as it is, so ordinary text prints unchanged.
func Visible(s string) string {
	if isPlain(s) {
		return s
	}
	var b strings.Builder
	b.Grow(len(s) + 8)
	for i := 0; i < len(s); {
		r, size := utf8.DecodeRuneInString(s[i:])
		switch {
		case r == utf8.RuneError && size == 1:
			fmt.Fprintf(&b, `\x%02x`, s[i])
		case r == '\t':
			b.WriteString(`\t`)
		case r == '\n':
			b.WriteString(`\n`)
		case r == '\r':
			b.WriteString(`\r`)
		case r < 0x20 || r == 0x7f:
			fmt.Fprintf(&b, `\x%02x`, r)
		case hidden(r):
			fmt.Fprintf(&b, `\u%04x`, r)
		default:
			b.WriteString(s[i : i+size])
		}
		i += size
	}
	return b.String()
}

// hidden reports whether r (not ASCII) changes or hides what is shown instead of showing
// itself.
func hidden(r rune) bool {
	return unicode.In(r, unicode.Cc, unicode.Cf, unicode.Zl, unicode.Zp)
}

// isPlain reports whether Visible would return s unchanged: printable ASCII, or non-ASCII
// text without hidden characters.
func isPlain(s string) bool {
	for i := 0; i < len(s); i++ {
		c := s[i]
		if c < 0x20 || c == 0x7f {
			return false
		}
		if c >= 0x80 {
			for _, r := range s[i:] {
				if r == utf8.RuneError || r < 0x20 || r == 0x7f || (r >= 0x80 && hidden(r)) {
					return false
				}
			}
			return true
		}
	}
	return true
}

// formulaStarts are the first characters with which a spreadsheet reads a cell as a formula:
// = + - @ (tab and carriage return, the other two OWASP names, never survive Visible). The
// fullwidth forms are added because some spreadsheet locales normalise them (from memory).
const formulaStarts = "=+-@\uff1d\uff0b\uff0d\uff20"

// CSVCell returns s ready for a text cell of a CSV file: Visible(s), prefixed with an
// apostrophe when it starts with a character in formulaStarts, as the OWASP "CSV Injection"
// guidance recommends. Quoting the cell is left to encoding/csv. Numbers the program formats
// itself (a negative margin) belong in numeric columns and are not passed through CSVCell.
func CSVCell(s string) string {
	v := Visible(s)
	if r, _ := utf8.DecodeRuneInString(v); v != "" && strings.ContainsRune(formulaStarts, r) {
		return "'" + v
	}
	return v
}

// markdownInline are the ASCII characters with an inline meaning in CommonMark, GitHub
// Flavored Markdown or HTML: escapes and code (\ `), emphasis and strikethrough (* _ ~), links
// and images ([ ]; with the brackets escaped "(", ")" and "!" mean nothing), raw HTML, autolinks
// and entities (< > &), table cells (|), maths in some renderers ($), mentions (@) and a
// heading's closing sequence (#). Each is backslash-escaped wherever it stands.
const markdownInline = "\\`*_~[]<>&|$@#"

// markdownLineStart are the characters that open a block (heading, list item, block quote,
// setext underline, thematic break) when they start a line or a list item's text; they are
// escaped at the start of the text only.
const markdownLineStart = "+-=>"

// Markdown returns s as inline Markdown text that renders as exactly the characters of
// Visible(s) (less leading and trailing spaces, which Markdown trims): no raw HTML, no link, no
// emphasis, no extra table cell or row, no heading or list.
// Every escape is a CommonMark backslash escape of ASCII punctuation (CommonMark 0.31,
// section 2.4), which also holds inside GitHub Flavored Markdown table cells.
func Markdown(s string) string {
	v := Visible(s)
	var b strings.Builder
	b.Grow(len(v) + 8)
	for i := 0; i < len(v); i++ {
		c := v[i]
		switch {
		case strings.IndexByte(markdownInline, c) >= 0:
			b.WriteByte('\\')
		case i == 0 && strings.IndexByte(markdownLineStart, c) >= 0:
			b.WriteByte('\\')
		case (c == '.' || c == ')') && i > 0 && allDigits(v[:i]):
			b.WriteByte('\\') // "1." or "1)" would start an ordered list
		}
		b.WriteByte(c)
	}
	return b.String()
}

func allDigits(s string) bool {
	for i := 0; i < len(s); i++ {
		if s[i] < '0' || s[i] > '9' {
			return false
		}
	}
	return true
}
