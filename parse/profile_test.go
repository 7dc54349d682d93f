package parse

import (
	"bytes"
	"errors"
	"fmt"
	"os"
	"reflect"
	"strings"
	"testing"
)

// profilesOf maps each port to the profiles its rows name.
func profilesOf(ds *Dataset) map[string][]ProfileMention {
	out := map[string][]ProfileMention{}
	for _, s := range ds.Series {
		if s.Profiles != nil {
			out[s.Port] = s.Profiles
		}
	}
	return out
}

func TestProfileColumn(t *testing.T) {
	tests := []struct {
		name, file, content string
		want                map[string][]ProfileMention
		rejected            []string // reason fragments, in line order
	}{
		{"one profile per port", "a.csv",
			"time,port,profile,q_db\n1,a,400g-dp-16qam-cfec,9\n1,b,100g-dp-qpsk,12\n2,a,400g-dp-16qam-cfec,9\n2,b,100g-dp-qpsk,12\n",
			map[string][]ProfileMention{"a": {{"400g-dp-16qam-cfec", "a.csv", 2}}, "b": {{"100g-dp-qpsk", "a.csv", 3}}}, nil},
		{"header alias, missing values name nothing", "b.csv",
			"Time;Port;Module profile;Q [dB]\n1;a;NA;9\n2;a;;9\n3;a; 200g-dp-16qam ;9\n4;a;-;9\n5;c;;9\n",
			map[string][]ProfileMention{"a": {{"200g-dp-16qam", "b.csv", 4}}}, nil},
		{"rows that disagree: the first two names kept", "c.csv",
			"time,port,profile_id,q_db\n1,a,p1,9\n2,a,p1,9\n3,a,p2,9\n4,a,p3,9\n5,a,p1,9\n",
			map[string][]ProfileMention{"a": {{"p1", "c.csv", 2}, {"p2", "c.csv", 4}}}, nil},
		{"a bad profile name rejects its row", "d.csv",
			"time,port,profile,q_db\n1,a,p1,9\n2,a,\"x\ty\",9\n3,a," + strings.Repeat("z", 65) + ",9\n4,a,\xff,9\n",
			map[string][]ProfileMention{"a": {{"p1", "d.csv", 2}}},
			[]string{"control character", "longer than 64 bytes", "profile name"}},
		{"JSON Lines field", "e.jsonl",
			"{\"time\":1,\"port\":\"a\",\"profile\":\"p1\",\"q_db\":9}\n{\"time\":2,\"port\":\"a\",\"profile\":null,\"q_db\":9}\n{\"time\":3,\"port\":\"a\",\"profile\":{\"x\":1},\"q_db\":9}\n{\"time\":4,\"port\":\"b\",\"q_db\":9,\"profile\":\"p2\"}\n{\"time\":5,\"port\":\"b\",\"profile\":\"p3\",\"q_db\":9}\n",
			map[string][]ProfileMention{"a": {{"p1", "e.jsonl", 1}}, "b": {{"p2", "e.jsonl", 4}, {"p3", "e.jsonl", 5}}},
			[]string{"not an object or array"}},
		{"a rejected row names nothing", "f.csv",
			"time,port,profile,q_db\n1,a,p9,abc\n2,a,p1,9\n",
			map[string][]ProfileMention{"a": {{"p1", "f.csv", 3}}}, []string{"not a number"}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			ds, err := ReadFile(tc.file, strings.NewReader(tc.content), Options{})
			if err != nil {
				t.Fatal(err)
			}
			in := ds.Inputs[0]
			if in.RowsRead != in.RowsUsed+in.RowsRejected || in.RowsRejected != len(tc.rejected) {
				t.Fatalf("accounting %+v, want %d rejected: %v", in, len(tc.rejected), ds.Rejected)
			}
			for i, r := range ds.Rejected {
				if !strings.Contains(r.Reason, tc.rejected[i]) {
					t.Errorf("rejection %d %q, want it to say %q", i, r.Reason, tc.rejected[i])
				}
			}
			if got := profilesOf(ds); !reflect.DeepEqual(got, tc.want) {
				t.Errorf("profiles %v, want %v", got, tc.want)
			}
			for _, s := range ds.Series {
				want := ""
				if len(tc.want[s.Port]) == 1 {
					want = tc.want[s.Port][0].ID
				}
				if s.Profile() != want {
					t.Errorf("port %s: Profile() %q, want %q", s.Port, s.Profile(), want)
				}
			}
		})
	}
}

// A port's rows that disagree are found across the blocks of a large input (parsed in
// parallel) and across inputs; the first name met in input order comes first.
func TestProfileAcrossBlocksAndFiles(t *testing.T) {
	var b strings.Builder
	b.WriteString("time,port,profile,pre_fec_ber,q_db,osnr_db,cd_ps_nm,rx_power_dbm\n")
	rows := 60000
	for i := range rows {
		prof := "p1"
		if i == rows-1 {
			prof = "p2" // the last row of port-000 names another profile
		}
		fmt.Fprintf(&b, "%d,port-000,%s,1.25e-03,9.5,21.25,1702.5,-9.75\n", 1773477000+i, prof)
	}
	big := b.String()
	if len(big) < 2*chunkSize {
		t.Fatalf("input too small to span blocks: %d bytes", len(big))
	}
	ds, err := ReadFile("big.csv", strings.NewReader(big), Options{Workers: 4})
	if err != nil {
		t.Fatal(err)
	}
	want := []ProfileMention{{"p1", "big.csv", 2}, {"p2", "big.csv", rows + 1}}
	if got := ds.Series[0].Profiles; !reflect.DeepEqual(got, want) {
		t.Fatalf("profiles %v, want %v", got, want)
	}

	dir := t.TempDir()
	write := func(name, content string) string {
		t.Helper()
		p := dir + "/" + name
		if err := os.WriteFile(p, []byte(content), 0o600); err != nil {
			t.Fatal(err)
		}
		return p
	}
	f1 := write("1.csv", "time,port,q_db\n1,a,9\n1,b,9\n")
	f2 := write("2.csv", "time,port,profile,q_db\n2,a,p1,9\n2,b,p1,9\n")
	f3 := write("3.csv", "time,port,profile,q_db\n3,a,p1,9\n3,b,p2,9\n")
	ds, err = ReadPaths([]string{f1, f2, f3}, Options{})
	if err != nil {
		t.Fatal(err)
	}
	wantFiles := map[string][]ProfileMention{
		"a": {{"p1", f2, 2}},
		"b": {{"p1", f2, 3}, {"p2", f3, 3}},
	}
	if got := profilesOf(ds); !reflect.DeepEqual(got, wantFiles) {
		t.Errorf("profiles %v, want %v", got, wantFiles)
	}
}

// The export writes each port's one profile on its rows and reads back the same; a port whose
// rows disagree is written without one.
func TestProfileExport(t *testing.T) {
	in := "time,port,profile,q_db\n2026-03-14T08:00:00Z,b,\"p;1\",9\n2026-03-14T08:00:00Z,a,p2,9\n2026-03-14T08:01:00Z,a,p3,9\n2026-03-14T08:00:00Z,c,,9\n"
	ds, err := ReadFile("in.csv", strings.NewReader(in), Options{})
	if err != nil {
		t.Fatal(err)
	}
	var out bytes.Buffer
	if err := WriteCanonicalCSV(&out, ds); err != nil {
		t.Fatal(err)
	}
	want := "time,port,profile,q_db\n2026-03-14T08:00:00Z,a,,9\n2026-03-14T08:01:00Z,a,,9\n2026-03-14T08:00:00Z,b,\"p;1\",9\n2026-03-14T08:00:00Z,c,,9\n"
	if out.String() != want {
		t.Fatalf("export\n%s\nwant\n%s", out.String(), want)
	}
	ds2, err := ReadFile("out.csv", &out, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if got := profilesOf(ds2); !reflect.DeepEqual(got, map[string][]ProfileMention{"b": {{"p;1", "out.csv", 4}}}) {
		t.Errorf("read back %v", got)
	}
	// Without any port profile, no profile column.
	ds.Series[1].Profiles = nil
	out.Reset()
	if err := WriteCanonicalCSV(&out, ds); err != nil {
		t.Fatal(err)
	}
	if strings.Contains(out.String(), "profile") {
		t.Errorf("profile column without a profile:\n%s", out.String())
	}
}

func TestProfileColumnDuplicate(t *testing.T) {
	_, err := ReadFile("d.csv", strings.NewReader("time,port,profile,Profile ID,q_db\n1,a,p,p,9\n"), Options{})
	if !errors.Is(err, ErrDuplicateColumn) {
		t.Errorf("err %v, want ErrDuplicateColumn", err)
	}
}
