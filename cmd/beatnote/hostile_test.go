package main

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"slices"
	"strconv"
	"strings"
	"testing"
	"unicode"

	"github.com/yuin/goldmark"
	"github.com/yuin/goldmark/extension"
	rhtml "github.com/yuin/goldmark/renderer/html"
)

// The hostile corpus (testdata/hostile, see its README) is copied to files whose names are
// hostile too; every output format of every command that prints what it read must show it as
// inert text.
type hostileCorpus struct {
	dir, ports, values, plan string
	broken                   string   // a YAML file that does not parse, with a hostile name
	portNames                []string // every port name of ports.jsonl
}

func newHostileCorpus(t *testing.T) hostileCorpus {
	t.Helper()
	dir := t.TempDir()
	c := hostileCorpus{dir: dir,
		ports:  filepath.Join(dir, "ports\x1b[31m\nFORGED-file-name | x |.jsonl"),
		values: filepath.Join(dir, "=cmd|' -FAKE-file'!A0\u202e.csv"),
		plan:   filepath.Join(dir, "plan\r\nFORGED-plan-name.yaml"),
	}
	c.broken = filepath.Join(dir, "broken\x1b]0;FAKE\a\r\nFORGED-config.yaml")
	if err := os.WriteFile(c.broken, []byte("circuit: [\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	for src, dst := range map[string]string{"ports.jsonl": c.ports, "values.csv": c.values, "plan.yaml": c.plan} {
		data, err := os.ReadFile(filepath.Join("testdata", "hostile", src))
		if err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(dst, data, 0o644); err != nil {
			t.Fatal(err)
		}
		if src == "ports.jsonl" {
			for _, line := range strings.Split(strings.TrimSpace(string(data)), "\n") {
				var rec struct{ Port string }
				if err := json.Unmarshal([]byte(line), &rec); err != nil {
					t.Fatal(err)
				}
				if len(c.portNames) == 0 || c.portNames[len(c.portNames)-1] != rec.Port {
					c.portNames = append(c.portNames, rec.Port)
				}
			}
		}
	}
	return c
}

// forgedLine matches a line that a hostile string started: in the corpus, a marker that
// follows a line break is spelt FORGED (other markers FAKE), so no line may start with it.
var forgedLine = regexp.MustCompile(`(?m)^[\s|#>*-]*FORGED`)

// assertTerminalSafe checks text meant for a terminal: no control character but the line
// feed, no invisible or reordering character, and no line begun by a hostile string.
func assertTerminalSafe(t *testing.T, what, text string) {
	t.Helper()
	for _, r := range text {
		if (r < 0x20 && r != '\n') || r == 0x7f || (r >= 0x80 && unicode.In(r, unicode.Cc, unicode.Cf, unicode.Zl, unicode.Zp)) {
			t.Errorf("%s holds %U:\n%s", what, r, text)
			return
		}
	}
	if m := forgedLine.FindString(text); m != "" {
		t.Errorf("%s has a line begun by a hostile string (%q):\n%s", what, m, text)
	}
}

func TestHostileInputTerminal(t *testing.T) {
	c := newHostileCorpus(t)
	for _, args := range [][]string{
		{"scan", c.ports, c.values},
		{"scan", c.dir},
		{"check", c.ports, c.values, "--plan", c.plan},
		{"triage", c.ports, c.values, "--plan", c.plan},
		{"triage", c.dir, "--profile", "400g-dp-16qam-cfec"},
		{"report", c.values, "--plan", c.plan, "--format", "markdown", "--out", filepath.Join(c.dir, "r\x1b[2J.md")},
		{"check", filepath.Join(c.dir, "missing\x1b[2J\nFORGED-missing.csv")},
		{"check", c.ports, "--port", "\x1b[2J\nFORGED-port-flag"},
		// Errors that name a hostile file: a configuration file that is not valid, or not a
		// regular file; a strict read stopped at a hostile row.
		{"check", c.values, "--plan", c.broken},
		{"check", c.values, "--rules", c.broken},
		{"check", c.values, "--profiles", c.broken},
		{"triage", c.values, "--map", c.broken},
		{"check", c.values, "--plan", c.dir},
		{"scan", "--strict", c.ports, c.values},
		{"check", "--strict", c.ports, c.values},
	} {
		code, stdout, stderr := runCLI(t, args...)
		what := args[0] + " " + strings.Join(args[1:], " ")
		failing := slices.Contains(args, c.broken) || slices.Contains(args, c.dir) && args[0] == "check" || slices.Contains(args, "--strict")
		if failing && code != 2 {
			t.Errorf("%q: exit %d, want 2", what, code)
		}
		assertTerminalSafe(t, strconv.Quote(what)+" stdout", stdout)
		assertTerminalSafe(t, strconv.Quote(what)+" stderr", stderr)
		if code == 2 && args[0] != "check" && !failing || stdout == "" && code != 2 {
			t.Errorf("%q: exit %d, stdout %q, stderr %q", what, code, stdout, stderr)
		}
	}
}

// numericColumns of the triage CSV hold numbers the program formats; every other cell is text.
var numericColumns = map[string]bool{"rank": true, "confidence": true, "q_margin_db": true, "rx_power_p50_dbm": true, "samples": true}

func TestHostileInputCSV(t *testing.T) {
	c := newHostileCorpus(t)
	_, stdout, stderr := runCLI(t, "triage", c.ports, c.values, "--plan", c.plan, "--format", "csv")
	assertTerminalSafe(t, "triage csv stderr", stderr)
	r := csv.NewReader(strings.NewReader(stdout))
	recs, err := r.ReadAll() // also fails on a record of another length than the header's
	if err != nil {
		t.Fatal(err)
	}
	if len(recs) != 1+len(c.portNames)+3 { // the header, the ports of ports.jsonl, the 3 of values.csv
		t.Errorf("%d records, want %d", len(recs), 1+len(c.portNames)+3)
	}
	header := recs[0]
	for _, rec := range recs[1:] {
		for i, cell := range rec {
			if numericColumns[header[i]] {
				if _, err := strconv.ParseFloat(cell, 64); err != nil && cell != "" {
					t.Errorf("numeric column %s holds %q", header[i], cell)
				}
				continue
			}
			// OWASP "CSV Injection": no text cell starts with = + - @ tab or carriage return.
			if cell != "" && strings.ContainsAny(cell[:1], "=+-@\t\r") {
				t.Errorf("column %s: cell %q starts a formula", header[i], cell)
			}
			assertTerminalSafe(t, "CSV cell", cell)
		}
	}
}

var (
	htmlTag      = regexp.MustCompile(`<(/?)([a-zA-Z0-9]+)[^>]*>`)
	markdownTags = map[string]bool{"h1": true, "h2": true, "h3": true, "p": true, "table": true, "thead": true, "tbody": true,
		"tr": true, "th": true, "td": true, "ul": true, "ol": true, "li": true, "strong": true, "em": true, "code": true, "br": true}
	// No cell, item, paragraph or heading begun by a marker after a line break, and no heading
	// made of a hostile string at all.
	forgedElement = regexp.MustCompile(`<(td|th|li|h[1-6]|p)>\s*FORGED|<h[1-6]>\s*FAKE`)
)

// renderMarkdown renders md with goldmark (CommonMark with the GitHub Flavored Markdown table
// and strikethrough extensions), raw HTML passed through so that any would show.
func renderMarkdown(t *testing.T, md string) string {
	t.Helper()
	var out bytes.Buffer
	conv := goldmark.New(goldmark.WithExtensions(extension.Table, extension.Strikethrough),
		goldmark.WithRendererOptions(rhtml.WithUnsafe()))
	if err := conv.Convert([]byte(md), &out); err != nil {
		t.Fatal(err)
	}
	return out.String()
}

func assertMarkdownSafe(t *testing.T, what, md string) {
	t.Helper()
	html := renderMarkdown(t, md)
	for _, m := range htmlTag.FindAllStringSubmatch(html, -1) {
		if !markdownTags[m[2]] {
			t.Errorf("%s renders the element <%s>", what, m[2])
		}
	}
	if m := forgedElement.FindString(html); m != "" {
		t.Errorf("%s renders an element begun by a hostile string: %q", what, m)
	}
	assertTerminalSafe(t, what, md)
}

func TestHostileInputMarkdown(t *testing.T) {
	c := newHostileCorpus(t)
	_, stdout, _ := runCLI(t, "triage", c.ports, c.values, "--plan", c.plan, "--format", "markdown")
	assertMarkdownSafe(t, "triage markdown", stdout)
	// One table row per port, plus the header: no row forged.
	if got, want := strings.Count(renderMarkdown(t, stdout), "<tr>"), 1+len(c.portNames)+3; got < want || got > want+20 {
		t.Errorf("triage markdown renders %d table rows, want %d plus the cause table", got, want)
	}
}

// JSON needs no escaping of its own: it must parse and give back every hostile port name as
// it was read.
func TestHostileInputJSON(t *testing.T) {
	c := newHostileCorpus(t)
	_, stdout, _ := runCLI(t, "triage", c.ports, "--format", "json", "--profile", "400g-dp-16qam-cfec")
	var doc struct {
		Ports []struct{ Port string } `json:"ports"`
	}
	if err := json.Unmarshal([]byte(stdout), &doc); err != nil {
		t.Fatal(err)
	}
	got := map[string]bool{}
	for _, p := range doc.Ports {
		got[p.Port] = true
	}
	for _, name := range c.portNames {
		if !got[name] {
			t.Errorf("port %q is not in the JSON as read", name)
		}
	}
}

// hostileSignOff are sign-off fields typed (or pasted) with the same hostile content. The
// notes keep the lines they were typed on (each escaped), so their markers are FAKE.
var hostileSignOff = []string{"--technician", "T\x1b[2J\n# FORGED-technician", "--organisation", "=1+2",
	"--notes", "line one\nline two <b>FAKE-notes</b>\r\n| FAKE-notes \x1b[2J|"}

func TestHostileInputAcceptanceMarkdown(t *testing.T) {
	c := newHostileCorpus(t)
	out := filepath.Join(c.dir, "acceptance.md")
	args := append([]string{"report", c.values, "--plan", c.plan, "--format", "markdown", "--out", out}, hostileSignOff...)
	if code, _, stderr := runCLI(t, args...); code == 2 {
		t.Fatalf("report: %s", stderr)
	}
	md, err := os.ReadFile(out)
	if err != nil {
		t.Fatal(err)
	}
	assertMarkdownSafe(t, "acceptance markdown", string(md))
}

// pdfLines extracts the text of a PDF with pdftotext (poppler-utils), keeping the layout, so
// that each line of text on a page is one line of the result.
func pdfLines(t *testing.T, file string) []string {
	t.Helper()
	tool, err := exec.LookPath("pdftotext")
	if err != nil {
		if os.Getenv("CI") != "" {
			t.Fatal("pdftotext is not installed; .ci/run installs poppler-utils")
		}
		t.Skip("pdftotext is not installed (Debian: apt-get install poppler-utils); .ci/run installs it")
	}
	out, err := exec.Command(tool, "-layout", "-enc", "UTF-8", file, "-").Output()
	if err != nil {
		t.Fatalf("pdftotext: %v", err)
	}
	return strings.Split(string(out), "\n")
}

// In the PDF every text from an input stays on its line: no line of a page starts with a
// marker that followed a line break (in any column of a table), and no control character
// reaches the page.
func TestHostileInputAcceptancePDF(t *testing.T) {
	c := newHostileCorpus(t)
	out := filepath.Join(c.dir, "acceptance.pdf")
	args := append([]string{"report", c.values, "--plan", c.plan, "--out", out}, hostileSignOff...)
	if code, _, stderr := runCLI(t, args...); code == 2 {
		t.Fatalf("report: %s", stderr)
	}
	lines := pdfLines(t, out)
	text := strings.Join(lines, "\n")
	if !strings.Contains(text, `\nFORGED-circuit`) {
		t.Errorf("the PDF does not show the circuit's line break as \\n:\n%s", text)
	}
	for _, line := range lines {
		// pdftotext -layout separates table columns by runs of spaces.
		for _, col := range regexp.MustCompile(`\s{2,}`).Split(strings.TrimSpace(line), -1) {
			if forgedLine.MatchString(strings.TrimLeft(col, "•→ ")) {
				t.Errorf("PDF line begun by a hostile string: %q", line)
			}
		}
		for _, r := range line {
			if (r < 0x20 && r != '\f') || r == 0x7f || (r >= 0x80 && unicode.In(r, unicode.Cc, unicode.Cf)) {
				t.Errorf("PDF line %q holds %U", line, r)
			}
		}
	}
}

// Circuit ids become report file names in --by-circuit: no id can climb out of the folder or
// make two circuits share one file, even ids chosen to collide with an earlier suffixed name or
// to differ only in case.
func TestByCircuitFileNamesAreUnique(t *testing.T) {
	used := map[string]bool{}
	ids := []string{"A/1", "A_1", "A_1-2", "a_1", "../../etc/passwd", "..", ".hidden", "", "\x1b[2J",
		strings.Repeat("é", 300), strings.Repeat("x", 300)}
	seen := map[string]string{}
	for _, id := range ids {
		name := uniqueFileName(used, id)
		if strings.ContainsAny(name, `/\`) || strings.HasPrefix(name, ".") || name == "" || len(name) > 128 {
			t.Errorf("id %q: file name %q leaves the folder or hides", id, name)
		}
		if prev, dup := seen[strings.ToLower(name)]; dup {
			t.Errorf("ids %q and %q share the file name %q", prev, id, name)
		}
		seen[strings.ToLower(name)] = id
	}
}
