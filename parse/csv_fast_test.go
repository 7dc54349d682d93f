package parse

import (
	"math"
	"math/rand/v2"
	"slices"
	"testing"
)

// fastRowHeaders are layouts csvParser.fastRow reads: comma with an unknown column and a unit
// to convert, semicolon with decimal commas, tab.
var fastRowHeaders = []string{
	"time,port,pre_fec_ber,notes,rx_power_mw,cd_ps_nm,q",
	"time;port;pre_fec_ber;osnr_db;rx_power_dbm;frequency_thz",
	"port\tpre_fec_ber\ttime\tlo_offset_ghz\tdgd_ps",
}

// fastRowSeeds are rows of the headers above, good and bad, that the mutations start from.
var fastRowSeeds = [][]string{
	{"2026-03-14T08:30:00Z,1/1/C1,1.2e-3,x,0.5,1702,7.5", "2026-03-14 08:31:00,\"1/1/C2\",NA,,1e-3,-8.15,-", "1773477000,a b,0.001, \"q,r\" ,2,3,4", "2026-02-29T00:00:00Z,p,0.6,,0,1,1", `"2026-03-14T08:30:00Z","1/1/C1","1,2e-3","x,y",0.5,"1,702",""`, `"2026-03-14T08:30:00Z","a""b",1e-3,"",1,2,3`},
	{"2026-03-14T08:30:00Z;1/1/C1;0,0012;20,5;-8,1;193,1", "2026-03-14T08:30:00Z;p;1.2e-3;n/a;-8.1;193.1", "14.03.2026 08:30;p; 0,1 ;1,2,3;31;193", "2026/03/14 23:59:59;p;0;0;0;150", `"2026-03-14 08:30:00";"p;q";"0,001";"NA";"-8";193`},
	{"1/1/C1\t1.2e-3\t2026-03-14T08:30:00Z\t1.5\t0.3", "p\t-\t2026-03-14 08:30:00 UTC\t-1e2\t-0.1", "\"p\tq\"\t0.1\t1773477000000\t0\t1e400", "\"p\"\t\"0.1\"\t\"2026-03-14T08:30:00Z\"\t\"1\"\t\" 2\""},
}

// fastRowAlphabet is what mutations insert: delimiters, quotes, blanks, signs, marks and the
// bytes of times and missing values.
const fastRowAlphabet = "0123456789.,;\t \"-+eENAn/a:TZz\r"

// checkFastRow feeds lines to two parsers of the header h, one through row (fastRow first) and
// one through splitRow alone, and fails unless both keep the same rows, values and rejections
// after every line. It returns how many lines fastRow took.
func checkFastRow(t *testing.T, h string, lines []string) int {
	t.Helper()
	lay, _, err := parseHeader("f.csv", 1, []byte(h))
	if err != nil {
		t.Fatalf("header %q: %v", h, err)
	}
	if !lay.fast {
		t.Fatalf("header %q: not a fastRow layout", h)
	}
	a := &csvParser{file: "f.csv", lay: lay}
	b := &csvParser{file: "f.csv", lay: lay}
	a.startBlock()
	b.startBlock()
	ja, jb := &csvJob{}, &csvJob{}
	fast := 0
	for i, s := range lines {
		ln := []byte(s)
		before, wbefore := len(ja.codes), len(ja.wideAt)
		if a.fastRow(ja, ln) {
			fast++
		} else if len(ja.codes) != before || len(ja.wideAt) != wbefore || len(ja.times) != len(jb.times) {
			t.Fatalf("%q: fastRow refused the row but kept part of it", s)
		} else if pe := a.splitRow(ja, ln, i+2); pe != nil {
			ja.codes, ja.wideAt, ja.wideVals = ja.codes[:before], ja.wideAt[:wbefore], ja.wideVals[:wbefore]
		}
		base, wbase := len(jb.codes), len(jb.wideAt)
		if pe := b.splitRow(jb, ln, i+2); pe != nil {
			jb.codes, jb.wideAt, jb.wideVals = jb.codes[:base], jb.wideAt[:wbase], jb.wideVals[:wbase]
		}
		va, vb := jobValues(ja), jobValues(jb)
		if !slices.Equal(ja.names, jb.names) || !slices.Equal(ja.rowPort, jb.rowPort) || !slices.Equal(ja.times, jb.times) ||
			!slices.EqualFunc(va, vb, func(x, y float64) bool { return math.Float64bits(x) == math.Float64bits(y) }) {
			t.Fatalf("header %q, line %q: fast path %v %v %v %v, split path %v %v %v %v", h, s,
				ja.names, ja.rowPort, ja.times, va, jb.names, jb.rowPort, jb.times, vb)
		}
	}
	return fast
}

// jobValues decodes the values a parser stored in a CSV job (codes, and the values without one).
func jobValues(j *csvJob) []float64 {
	vs := make([]float64, len(j.codes))
	w := 0
	for i, c := range j.codes {
		if w < len(j.wideAt) && int(j.wideAt[w]) == i {
			vs[i] = j.wideVals[w]
			w++
			continue
		}
		vs[i] = unpackValue(c)
	}
	return vs
}

// fastRow reads every row exactly as splitRow does, on rows mutated at random from good and bad
// ones (splitRow is checked against the definition of the format by the other read tests).
func TestFastRowMatchesSplitRow(t *testing.T) {
	rng := rand.New(rand.NewPCG(11, 12))
	for hi, h := range fastRowHeaders {
		var lines []string
		for range 20000 {
			ln := []byte(fastRowSeeds[hi][rng.IntN(len(fastRowSeeds[hi]))])
			for range rng.IntN(3) {
				at := rng.IntN(len(ln) + 1)
				switch c := fastRowAlphabet[rng.IntN(len(fastRowAlphabet))]; rng.IntN(3) {
				case 0:
					ln = slices.Insert(ln, at, c)
				case 1:
					if at < len(ln) {
						ln = slices.Delete(ln, at, at+1)
					}
				default:
					if at < len(ln) {
						ln[at] = c
					}
				}
			}
			lines = append(lines, string(ln))
		}
		if fast := checkFastRow(t, h, lines); fast < len(lines)/10 {
			t.Errorf("header %q: fastRow took only %d of %d rows", h, fast, len(lines))
		}
	}
}

func FuzzFastRow(f *testing.F) {
	for hi, seeds := range fastRowSeeds {
		for _, s := range seeds {
			f.Add(uint8(hi), s, s)
		}
	}
	f.Fuzz(func(t *testing.T, which uint8, l1, l2 string) {
		checkFastRow(t, fastRowHeaders[int(which)%len(fastRowHeaders)], []string{l1, l2, l1})
	})
}
