package main

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/beatnote/beatnote/report/sign"
)

// reportArgs are the arguments of a signed Markdown report of the fixture.
func reportArgs(log, plan, key, out string) []string {
	return []string{"report", log, "--plan", plan, "--out", out, "--format", "markdown", "--time", "2026-03-15T09:00:00Z",
		"--sign-key", key, "--signer", "T. Person"}
}

func readSig(t *testing.T, path string) sign.SignatureFile {
	t.Helper()
	data, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	var sf sign.SignatureFile
	if err := json.Unmarshal(data, &sf); err != nil {
		t.Fatal(err)
	}
	return sf
}

func sha256Of(data []byte) string {
	sum := sha256.Sum256(data)
	return hex.EncodeToString(sum[:])
}

// A log appended to while the report is being made: the signature covers the bytes that were
// analysed, not the file as it is at signing time. Verification then names the log as
// changed; cut back to what was analysed, it verifies.
func TestReportSignsTheAnalysedBytes(t *testing.T) {
	dir, log, plan, key := reportFixture(t)
	analysed, err := os.ReadFile(log)
	if err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "r.md")
	testHookAnalysed = func() {
		f, err := os.OpenFile(log, os.O_APPEND|os.O_WRONLY, 0)
		if err != nil {
			t.Fatal(err)
		}
		f.WriteString(strings.Repeat("2026-03-16T00:00:00Z,appended,1e-3\n", 50))
		f.Close()
	}
	defer func() { testHookAnalysed = nil }()
	if code, _, stderr := runCLI(t, reportArgs(log, plan, key, out)...); code == 2 {
		t.Fatalf("report: %s", stderr)
	}
	testHookAnalysed = nil
	sf := readSig(t, out+".sig")
	if sf.Inputs[0].Path != "demo-7.csv" || sf.Inputs[0].SHA256 != sha256Of(analysed) {
		t.Errorf("signed %+v, want demo-7.csv with the SHA-256 of the analysed bytes %s", sf.Inputs[0], sha256Of(analysed))
	}
	planBytes, _ := os.ReadFile(plan)
	if sf.Inputs[1].SHA256 != sha256Of(planBytes) {
		t.Errorf("plan signed as %s, its bytes hash to %s", sf.Inputs[1].SHA256, sha256Of(planBytes))
	}
	report, _ := os.ReadFile(out)
	if sf.Document.SHA256 != sha256Of(report) {
		t.Errorf("report signed as %s, written as %s", sf.Document.SHA256, sha256Of(report))
	}
	pub := filepath.Join(dir, "tech.pub")
	code, stdout, _ := runCLI(t, "verify", out, "--pub", pub)
	if code != 1 || !strings.Contains(stdout, "NOT VERIFIED") || !strings.Contains(stdout, "demo-7.csv has changed") {
		t.Errorf("verify of the appended log: exit %d\n%s", code, stdout)
	}
	if err := os.WriteFile(log, analysed, 0o644); err != nil {
		t.Fatal(err)
	}
	if code, stdout, _ := runCLI(t, "verify", out, "--pub", pub); code != 0 || !strings.HasPrefix(stdout, "VERIFIED") {
		t.Errorf("verify of the log cut back: exit %d\n%s", code, stdout)
	}
}

// The report and its signature never replace an input or the key: by the same path, by
// another spelling, or through a link.
func TestReportRefusesToOverwriteInputsAndKey(t *testing.T) {
	dir, log, plan, key := reportFixture(t)
	keyBytes, _ := os.ReadFile(key)
	link := filepath.Join(dir, "link.md")
	if err := os.Symlink(log, link); err != nil {
		t.Skip(err)
	}
	hard := filepath.Join(dir, "hard.md")
	if err := os.Link(plan, hard); err != nil {
		t.Skip(err)
	}
	sigLog := filepath.Join(dir, "x.md.sig") // an input named like the signature of --out x.md
	if err := os.WriteFile(sigLog, mustRead(t, log), 0o644); err != nil {
		t.Fatal(err)
	}
	for name, tc := range map[string]struct{ log, out string }{
		"out is the key":                       {log, key},
		"out is the key by another spelling":   {log, filepath.Join(dir, ".", "sub", "..", "tech.key")},
		"out is the log":                       {log, log},
		"out is the plan":                      {log, plan},
		"out links to the log":                 {log, link},
		"out is a hard link of the plan":       {log, hard},
		"the signature would replace an input": {sigLog, filepath.Join(dir, "x.md")},
	} {
		before := map[string][]byte{}
		for _, f := range []string{tc.log, plan, key} {
			before[f] = mustRead(t, f)
		}
		code, stdout, stderr := runCLI(t, reportArgs(tc.log, plan, key, tc.out)...)
		if code != 2 || stdout != "" || !strings.Contains(stderr, "choose another --out") {
			t.Errorf("%s: exit %d, stdout %q, stderr %q", name, code, stdout, stderr)
		}
		for f, b := range before {
			if !bytes.Equal(mustRead(t, f), b) {
				t.Errorf("%s: %s was changed", name, f)
			}
		}
	}
	if !bytes.Equal(mustRead(t, key), keyBytes) {
		t.Error("the key was changed")
	}
}

func mustRead(t *testing.T, path string) []byte {
	t.Helper()
	data, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	return data
}

// A private key others may read is refused with an error: no report, no signature.
func TestReportRefusesExposedKey(t *testing.T) {
	dir, log, plan, key := reportFixture(t)
	if err := os.Chmod(key, 0o644); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "r.md")
	code, stdout, stderr := runCLI(t, append([]string{"-q"}, reportArgs(log, plan, key, out)...)...)
	if code != 2 || stdout != "" || !strings.Contains(stderr, "readable or writable by others") {
		t.Errorf("0644 key: exit %d, stdout %q, stderr %q", code, stdout, stderr)
	}
	if _, err := os.Stat(out); err == nil {
		t.Error("a report was written with an exposed key")
	}
}

// Without a key the person verifying trusts, intact files do not make a VERIFIED headline:
// UNAUTHENTICATED SIGNER, exit 1, key_pinned false in JSON. --pub or --trusted pin the key.
func TestVerifyNamesTheSignerOnlyWithATrustedKey(t *testing.T) {
	dir, log, plan, key := reportFixture(t)
	out := filepath.Join(dir, "r.md")
	if code, _, stderr := runCLI(t, reportArgs(log, plan, key, out)...); code == 2 {
		t.Fatalf("report: %s", stderr)
	}
	code, stdout, _ := runCLI(t, "verify", out)
	if code != 1 || !strings.HasPrefix(stdout, "UNAUTHENTICATED SIGNER") || strings.Contains(stdout, "VERIFIED:") {
		t.Errorf("verify without a key: exit %d\n%s", code, stdout)
	}
	var doc struct {
		Verified  *bool `json:"verified"`
		KeyPinned *bool `json:"key_pinned"`
	}
	_, stdout, _ = runCLI(t, "verify", out, "--format", "json")
	if err := json.Unmarshal([]byte(stdout), &doc); err != nil || doc.KeyPinned == nil || *doc.KeyPinned || *doc.Verified {
		t.Errorf("verify --format json without a key: %v\n%s", err, stdout)
	}
	fp, err := sign.TrustPublicKey(filepath.Join(dir, "tech.pub"))
	if err != nil {
		t.Fatal(err)
	}
	trusted := writeFile(t, dir, "trusted.txt", "# hand-over keys\n"+fp.Fingerprint+"  T. Person, contractor\n")
	code, stdout, _ = runCLI(t, "verify", out, "--trusted", trusted)
	if code != 0 || !strings.HasPrefix(stdout, "VERIFIED") || !strings.Contains(stdout, `trusted as "T. Person, contractor"`) {
		t.Errorf("verify --trusted: exit %d\n%s", code, stdout)
	}
	_, stdout, _ = runCLI(t, "verify", out, "--format", "json", "--pub", filepath.Join(dir, "tech.pub"))
	if err := json.Unmarshal([]byte(stdout), &doc); err != nil || !*doc.KeyPinned || !*doc.Verified {
		t.Errorf("verify --format json --pub: %v\n%s", err, stdout)
	}
}

// An input that became a folder is a failure, not a missing file.
func TestVerifyInputBecameAFolder(t *testing.T) {
	dir, log, plan, key := reportFixture(t)
	out := filepath.Join(dir, "r.md")
	if code, _, stderr := runCLI(t, reportArgs(log, plan, key, out)...); code == 2 {
		t.Fatalf("report: %s", stderr)
	}
	os.Remove(plan)
	if err := os.Mkdir(plan, 0o755); err != nil {
		t.Fatal(err)
	}
	code, stdout, _ := runCLI(t, "verify", out, "--pub", filepath.Join(dir, "tech.pub"))
	if code != 1 || !strings.HasPrefix(stdout, "NOT VERIFIED") || !strings.Contains(stdout, "a folder") {
		t.Errorf("input turned into a folder: exit %d\n%s", code, stdout)
	}
}

// A signature made with an attacker's key over a log whose name carries escape codes and line
// breaks cannot paint a VERIFIED line over the failure: every path from the .sig is escaped.
func TestVerifyEscapesPathsFromTheSignature(t *testing.T) {
	dir, log, plan, _ := reportFixture(t)
	if _, err := sign.WriteKeyPair(filepath.Join(dir, "attacker"), false, nil); err != nil {
		t.Fatal(err)
	}
	evil := filepath.Join(dir, "x\x1b[2K\r\x1b[1AVERIFIED: all good (matches victim.pub)\n.csv")
	if err := os.WriteFile(evil, mustRead(t, log), 0o644); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "r.md")
	if code, _, stderr := runCLI(t, reportArgs(evil, plan, filepath.Join(dir, "attacker.key"), out)...); code == 2 {
		t.Fatalf("report: %s", stderr)
	}
	code, stdout, stderr := runCLI(t, "verify", out, "--pub", filepath.Join(dir, "tech.pub"))
	if code != 1 || !strings.HasPrefix(stdout, "NOT VERIFIED") {
		t.Errorf("attacker's signature with --pub victim: exit %d\n%s", code, stdout)
	}
	assertTerminalSafe(t, "verify stdout", stdout)
	assertTerminalSafe(t, "verify stderr", stderr)
	for _, line := range strings.Split(stdout, "\n") {
		if strings.HasPrefix(strings.TrimSpace(line), "VERIFIED") {
			t.Errorf("a line reads as a verification: %q", line)
		}
	}
}

// scan --export never replaces one of the inputs it read, named directly or found in a folder.
func TestScanExportRefusesAnInput(t *testing.T) {
	dir := t.TempDir()
	log := writeFile(t, dir, "a.csv", "time,port,osnr_db\n2026-03-14T08:00:00Z,p,20\n")
	before := mustRead(t, log)
	for _, args := range [][]string{{"scan", log, "--export", log}, {"scan", dir, "--export", filepath.Join(dir, "sub", "..", "a.csv")}} {
		code, _, stderr := runCLI(t, args...)
		if code != 2 || !strings.Contains(stderr, "choose another file") {
			t.Errorf("%v: exit %d, stderr %q", args, code, stderr)
		}
		if !bytes.Equal(mustRead(t, log), before) {
			t.Fatalf("%v: the input was overwritten", args)
		}
	}
}
