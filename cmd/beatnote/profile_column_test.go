package main

import (
	"bytes"
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/beatnote/beatnote/diagnose"
	"github.com/beatnote/beatnote/parse"
	"github.com/beatnote/beatnote/rules"
	"github.com/beatnote/beatnote/samples/synth"
)

// writeProfiledLog writes healthy synthetic ports into one canonical CSV whose profile column
// names, per port, the first profile in ids; a second one is named by the port's last row. A port of 100g-dp-qpsk gets a measured CD of 20 000 ps/nm: within that class's
// tolerance (50 000 ps/nm) and far over the 400ZR class's (2 400 ps/nm), so the verdict shows
// which class the port was judged on.
func writeProfiledLog(t *testing.T, dir string, ids map[string][]string) string {
	t.Helper()
	ds := &parse.Dataset{}
	for _, port := range []string{"qpsk-1", "zr-1", "mixed-1"} {
		names, ok := ids[port]
		if !ok {
			continue
		}
		c, err := synth.Make(synth.Spec{Seed: 11, Samples: 120, Port: port, ProfileID: names[0]})
		if err != nil {
			t.Fatal(err)
		}
		if names[0] == "100g-dp-qpsk" {
			cd := c.Series.Values[parse.CDpsPerNm]
			for i := range c.Series.TimesMs {
				cd[i] = 20000
			}
			c.Series.Values[parse.CDpsPerNm] = cd[:len(c.Series.TimesMs)]
		}
		c.Series.Profiles = []parse.ProfileMention{{ID: names[0]}}
		ds.Series = append(ds.Series, c.Series)
	}
	var buf bytes.Buffer
	if err := parse.WriteCanonicalCSV(&buf, ds); err != nil {
		t.Fatal(err)
	}
	text := buf.String()
	if two := ids["mixed-1"]; len(two) == 2 {
		// The port's last row names the second profile.
		i := strings.LastIndex(text, "mixed-1,"+two[0]+",")
		text = text[:i] + "mixed-1," + two[1] + "," + text[i+len("mixed-1,"+two[0]+","):]
	}
	path := filepath.Join(dir, "fleet.csv")
	if err := os.WriteFile(path, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	return path
}

type profiledPort struct {
	Port, Profile, Verdict string
	Source                 string `json:"profile_source"`
	Causes                 []struct{ ID string }
}

func triagePorts(t *testing.T, args ...string) (int, map[string]profiledPort, string) {
	t.Helper()
	code, out, errw := runCLI(t, append([]string{"triage", "--format", "json"}, args...)...)
	var doc struct{ Ports []profiledPort }
	if err := json.Unmarshal([]byte(out), &doc); err != nil {
		t.Fatalf("triage %v: exit %d, not JSON: %v\n%s%s", args, code, err, out, errw)
	}
	ports := map[string]profiledPort{}
	for _, p := range doc.Ports {
		ports[p.Port] = p
	}
	return code, ports, errw
}

func hasCause(p profiledPort, id string) bool {
	for _, c := range p.Causes {
		if c.ID == id {
			return true
		}
	}
	return false
}

// A log whose profile column names every port's profile is triaged without --profile or a map,
// each port on its own class; --profile and a map entry win over the column.
func TestTriageProfileColumn(t *testing.T) {
	dir := t.TempDir()
	log := writeProfiledLog(t, dir, map[string][]string{"qpsk-1": {"100g-dp-qpsk"}, "zr-1": {"400g-dp-16qam-cfec"}})

	code, ports, errw := triagePorts(t, log)
	if code != 0 {
		t.Fatalf("triage with a profile column: exit %d, want 0 (both healthy on their class)\n%s", code, errw)
	}
	for port, want := range map[string]string{"qpsk-1": "100g-dp-qpsk", "zr-1": "400g-dp-16qam-cfec"} {
		p := ports[port]
		if p.Profile != want || p.Source != "column" || p.Verdict != "pass" {
			t.Errorf("%s: profile %q source %q verdict %q, want %s from the column, pass", port, p.Profile, p.Source, p.Verdict, want)
		}
	}

	// --profile is an operator's statement: it wins, and the disagreement is noted.
	code, ports, errw = triagePorts(t, log, "--profile", "400g-dp-16qam-cfec")
	q := ports["qpsk-1"]
	if code != 1 || q.Source != "flag" || q.Profile != "400g-dp-16qam-cfec" || !hasCause(q, "cd-over-limit") {
		t.Errorf("--profile over the column: exit %d, qpsk-1 %+v; want flag, cd-over-limit on the 400ZR class", code, q)
	}
	if !strings.Contains(errw, `port "qpsk-1": judged on 400g-dp-16qam-cfec (from --profile or --plan) while `+log+` line 2 names "100g-dp-qpsk"`) {
		t.Errorf("no note of the overridden column:\n%s", errw)
	}

	// A map entry wins too.
	mapPath := filepath.Join(dir, "map.yaml")
	if err := os.WriteFile(mapPath, []byte("ports:\n  - port: qpsk-1\n    profile: 400g-dp-16qam-cfec\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	_, ports, _ = triagePorts(t, log, "--map", mapPath)
	if q, z := ports["qpsk-1"], ports["zr-1"]; q.Source != "map" || !hasCause(q, "cd-over-limit") || z.Source != "column" {
		t.Errorf("map over the column: qpsk-1 %+v, zr-1 %+v", q, z)
	}

	// The check header says where the profile came from.
	code, out, _ := runCLI(t, "check", log, "--soak", "1h")
	if code != 0 || !strings.Contains(out, "Profile 100g-dp-qpsk (named by the telemetry's profile column)") {
		t.Errorf("check: exit %d, header without the column's profile\n%s", code, out)
	}
}

func TestTriageProfileColumnRefusals(t *testing.T) {
	// A port whose rows name two profiles: the data does not say which, so triage refuses
	// (as with no profile at all) and names the port, both profiles and where.
	dir := t.TempDir()
	log := writeProfiledLog(t, dir, map[string][]string{"zr-1": {"400g-dp-16qam-cfec"}, "mixed-1": {"400g-dp-16qam-cfec", "800g-dp-16qam"}})
	code, out, errw := runCLI(t, "triage", log)
	if code != 2 || out != "" || !strings.Contains(errw, "1 of 2 ports have no known profile") ||
		!strings.Contains(errw, `port "mixed-1": "400g-dp-16qam-cfec" (`+log+` line `) || !strings.Contains(errw, `"800g-dp-16qam" (`+log+` line 241)`) {
		t.Errorf("mixed port: exit %d, want 2 naming the port's two profiles\n%s%s", code, out, errw)
	}
	// check judges it on the assumed default and says so.
	code, out, errw = runCLI(t, "check", log, "--soak", "1h", "--format", "json")
	if code == 2 || !strings.Contains(out, `"profile_source": "default"`) || !strings.Contains(errw, "1 port names two profiles in their rows") {
		t.Errorf("check of a mixed port: exit %d\n%s%s", code, out, errw)
	}

	// An unknown profile id is an error naming the file, the line and the known ids.
	bad := filepath.Join(dir, "bad.csv")
	if err := os.WriteFile(bad, []byte("time,port,profile,q_db\n2026-03-14T08:00:00Z,a,zr400,9\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	for _, cmd := range []string{"triage", "check"} {
		code, _, errw = runCLI(t, cmd, bad)
		if code != 2 || !strings.Contains(errw, bad+` line 2: the profile column of port "a": unknown profile "zr400" (known: 100g-dp-qpsk, `) ||
			!strings.Contains(errw, "module types: 400ZR") {
			t.Errorf("%s with an unknown profile id: exit %d\n%s", cmd, code, errw)
		}
	}
}

// A module type column naming a profile's module type (ignoring case) picks that profile.
func TestTriageModuleTypeColumn(t *testing.T) {
	dir := t.TempDir()
	log := writeProfiledLog(t, dir, map[string][]string{"zr-1": {"400g-dp-16qam-cfec"}})
	data, err := os.ReadFile(log)
	if err != nil {
		t.Fatal(err)
	}
	text := strings.Replace(string(data), "time,port,profile,", "time,port,Module type,", 1)
	text = strings.ReplaceAll(text, ",zr-1,400g-dp-16qam-cfec,", ",zr-1,400zr,")
	if err := os.WriteFile(log, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	code, ports, errw := triagePorts(t, log)
	if z := ports["zr-1"]; code != 0 || z.Profile != "400g-dp-16qam-cfec" || z.Source != "column" {
		t.Errorf("module type 400zr: exit %d, zr-1 %+v\n%s", code, z, errw)
	}
}

// scan shows what the profile column names per port, and a port whose rows disagree, escaped.
func TestScanShowsProfiles(t *testing.T) {
	dir := t.TempDir()
	p := writeFile(t, dir, "m.csv", "time,port,profile,q_db\n1,a,p1,9\n2,a,p2,9\n1,b,\"x\u202ey\",9\n")
	out, err := runScan(t, ScanCmd{Paths: []string{p}})
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(out, "rows name two profiles, p1 ("+p+" line 2) and p2 ("+p+" line 3)") || strings.Contains(out, "\u202e") {
		t.Errorf("scan text:\n%s", out)
	}
	out, err = runScan(t, ScanCmd{Paths: []string{p}, Format: "json"})
	if err != nil || !strings.Contains(out, `"profiles": [`) {
		t.Errorf("scan JSON: %v\n%s", err, out)
	}
}

// The order of profileFromData: a setup from the map, --profile or --plan stands; the column
// places a port nothing else named, unless its rows disagree.
func TestProfileFromDataPrecedence(t *testing.T) {
	profiles, err := rules.BuiltinProfiles()
	if err != nil {
		t.Fatal(err)
	}
	byID := func(id string) rules.Profile {
		p, err := rules.ProfileByID(profiles, id)
		if err != nil {
			t.Fatal(err)
		}
		return p
	}
	assumed := diagnose.Setup{Profile: byID("400g-dp-16qam-cfec"), ProfileSource: diagnose.ProfileAssumed}
	flag := diagnose.Setup{Profile: byID("200g-dp-16qam"), ProfileSource: diagnose.ProfileFromFlag}
	mapped := diagnose.Setup{Profile: byID("800g-dp-16qam"), ProfileSource: diagnose.ProfileFromMap}
	one := []parse.ProfileMention{{ID: "100g-dp-qpsk", File: "f.csv", Line: 2}}
	same := []parse.ProfileMention{{ID: "200G-DP-16QAM", File: "f.csv", Line: 2}}
	zr := []parse.ProfileMention{{ID: "400zr", File: "f.csv", Line: 2}}
	two := []parse.ProfileMention{{ID: "100g-dp-qpsk", File: "f.csv", Line: 2}, {ID: "800g-dp-16qam", File: "g.csv", Line: 9}}
	for _, tc := range []struct {
		name              string
		st                diagnose.Setup
		named             []parse.ProfileMention
		profile, source   string
		noteHas, errorHas string
	}{
		{"no column: the setup stands", assumed, nil, "400g-dp-16qam-cfec", "default", "", ""},
		{"column over the default", assumed, one, "100g-dp-qpsk", "column", "", ""},
		{"module type over the default", assumed, zr, "400g-dp-16qam-cfec", "column", "", ""},
		{"flag over the column, noted", flag, one, "200g-dp-16qam", "flag", `judged on 200g-dp-16qam (from --profile or --plan) while f.csv line 2 names "100g-dp-qpsk"`, ""},
		{"map over the column, noted", mapped, one, "800g-dp-16qam", "map", "(from the port map)", ""},
		{"rows that disagree: nothing from the data", assumed, two, "400g-dp-16qam-cfec", "default", `"100g-dp-qpsk" (f.csv line 2) and "800g-dp-16qam" (g.csv line 9)`, ""},
		{"rows that disagree under a flag: no note", flag, two, "200g-dp-16qam", "flag", "", ""},
		{"unknown id", assumed, same, "", "", "", `f.csv line 2: the profile column of port "p": unknown profile "200G-DP-16QAM" (known: `},
		{"unknown id under a flag: noted, not an error", flag, same, "200g-dp-16qam", "flag", `names "200G-DP-16QAM"`, ""},
	} {
		t.Run(tc.name, func(t *testing.T) {
			st, note, err := profileFromData(&parse.Series{Port: "p", Profiles: tc.named}, tc.st, profiles)
			if tc.errorHas != "" {
				if err == nil || !strings.Contains(err.Error(), tc.errorHas) {
					t.Fatalf("err %v, want %q", err, tc.errorHas)
				}
				return
			}
			if err != nil || st.Profile.ID != tc.profile || st.ProfileSource != tc.source {
				t.Errorf("%s from %s (%v), want %s from %s", st.Profile.ID, st.ProfileSource, err, tc.profile, tc.source)
			}
			if tc.noteHas == "" && note != "" || !strings.Contains(note, tc.noteHas) {
				t.Errorf("note %q, want %q", note, tc.noteHas)
			}
		})
	}
}
