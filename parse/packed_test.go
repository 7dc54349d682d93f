package parse

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"strconv"
	"strings"
	"testing"
)

// Every decimal of at most 7 significant digits that telemetry writes (BER, dB, dBm, ps/nm, …)
// has a code, and the code decodes to the same float64 as strconv.ParseFloat (the correctly
// rounded reading, IEEE 754 round to nearest) of its text, bit for bit: the code packValue
// finds from the value, and the one the CSV reader takes from the digits as written.
func TestPackedValuesMatchStrconv(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	for range 200000 {
		digits := 1 + rng.IntN(7)
		m := rng.Int64N(int64(math.Pow10(digits)))
		e := rng.IntN(24) - 20 // 1e-20 … 1e3 scale: BER down to 1e-20, powers, CD
		text := fmt.Sprintf("%de%d", m, e)
		if rng.IntN(2) == 0 {
			text = "-" + text
		}
		v, err := strconv.ParseFloat(text, 64)
		if err != nil {
			t.Fatal(err)
		}
		var hint int8
		c, ok := packValue(v, &hint)
		if v == 0 && math.Signbit(v) {
			if ok {
				t.Fatalf("%s: -0 packed", text)
			}
			continue
		}
		if !ok {
			t.Fatalf("%s (%v): no code", text, v)
		}
		if got := unpackValue(c); math.Float64bits(got) != math.Float64bits(v) {
			t.Fatalf("%s: decoded %v, want %v", text, got, v)
		}
		// The CSV reader takes the code from the digits as written (trailing zeros too).
		written := text
		if f := strconv.FormatFloat(v, 'f', -1, 64); rng.IntN(2) == 0 && len(f) < 18 {
			// as plain decimals, within the reader's 19 digits (leading zeros count)
			if !strings.Contains(f, ".") {
				f += "."
			}
			written = f + strings.Repeat("0", rng.IntN(3))
		}
		d, n, ok := scanDecimal([]byte(written), 0, '.')
		if !ok || n != len(written) {
			t.Fatalf("%s: scanDecimal refused it", written)
		}
		c, ok = d.code()
		if !ok {
			t.Fatalf("%s (%v): no code from its digits", written, v)
		}
		if got := unpackValue(c); math.Float64bits(got) != math.Float64bits(v) {
			t.Fatalf("%s: the code from its digits decodes to %v, want %v", written, got, v)
		}
	}
}

// A value with no code is refused, never approximated: whatever float64 goes in, a code that
// comes out decodes to it exactly.
func TestPackedValuesNeverApproximate(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	refused := 0
	for range 200000 {
		v := math.Float64frombits(rng.Uint64())
		if rng.IntN(2) == 0 {
			v = 10 * math.Log10(rng.Float64()) // a converted power: irrational in general
		}
		var hint int8
		c, ok := packValue(v, &hint)
		if !ok {
			refused++
			continue
		}
		if got := unpackValue(c); !(math.Float64bits(got) == math.Float64bits(v) || math.IsNaN(v) && math.IsNaN(got)) {
			t.Fatalf("%v (%x): decoded %v", v, math.Float64bits(v), got)
		}
	}
	if refused == 0 {
		t.Fatal("no value refused: random doubles and logarithms must mostly have no short code")
	}
}

func FuzzPackValue(f *testing.F) {
	for _, s := range []string{"0.00125", "-5.04", "191.7125", "1.7e12", "1e-22", "0", "67108863", "67108864"} {
		v, _ := strconv.ParseFloat(s, 64)
		f.Add(math.Float64bits(v), int8(0))
	}
	f.Fuzz(func(t *testing.T, bits uint64, hint int8) {
		v := math.Float64frombits(bits)
		c, ok := packValue(v, &hint)
		if !ok {
			return
		}
		if got := unpackValue(c); !(math.Float64bits(got) == bits || math.IsNaN(v) && math.IsNaN(got)) {
			t.Fatalf("%v: decoded %v", v, got)
		}
	})
}

// Times go back out as they came in, whatever their spacing; a regular port keeps one run.
func TestTimeColumn(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 6))
	cases := map[string][]int64{"regular": {}, "jittered": {}, "backwards": {}, "gap": {}}
	for i := range int64(1000) {
		cases["regular"] = append(cases["regular"], 1773446400000+60000*i)
		cases["jittered"] = append(cases["jittered"], 1773446400000+60000*i+rng.Int64N(50))
		cases["backwards"] = append(cases["backwards"], 1773446400000-1000*i)
		g := 1773446400000 + 900000*i
		if i >= 500 {
			g += 7200000
		}
		cases["gap"] = append(cases["gap"], g)
	}
	for name, xs := range cases {
		tc := timesOf(xs)
		if got := tc.decode(nil); !slices.Equal(got, xs) || tc.n != len(xs) || tc.first() != xs[0] {
			t.Errorf("%s: times changed in the column", name)
		}
		var joined timeCol
		half := timesOf(xs[500:])
		joined.pushSlice(xs[:500])
		joined.append(&half)
		if !slices.Equal(joined.decode(nil), xs) {
			t.Errorf("%s: appended column differs", name)
		}
	}
	if r := timesOf(cases["regular"]); len(r.runs) != 1 || r.raw != nil {
		t.Errorf("regular times: %d runs, raw %v; want one run", len(r.runs), r.raw != nil)
	}
	if j := timesOf(cases["jittered"]); j.raw == nil {
		t.Error("jittered times kept as runs")
	}
}

// A column gives back every value it was given, bit for bit, whichever of its forms (narrow,
// codes, plain) the values drive it through: values written with more decimals than the first,
// jumps too large for the narrow form, missing values, values with no code; pushed one by one,
// as codes, overwritten, and appended to another column. The values are strconv.ParseFloat
// readings of decimal texts, the reference the reader's own parsing is checked against.
func TestColumnFormsKeepEveryValue(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 8))
	gen := map[string]func(i int) float64{
		"power 0.01 dB": func(i int) float64 { return parseText(fmt.Sprintf("%.2f", -5+rng.NormFloat64()*0.2)) },
		"more decimals later": func(i int) float64 {
			return parseText(fmt.Sprintf("%.*f", min(i/100, 6), 9.6+rng.Float64()*0.01))
		},
		"BER over decades": func(i int) float64 { return parseText(fmt.Sprintf("%.3g", math.Pow(10, -2-4*rng.Float64()))) },
		"step of 15 dB":    func(i int) float64 { return parseText(fmt.Sprintf("%.2f", -5-15*float64(i/500)+rng.Float64())) },
		"gaps":             func(i int) float64 { return [2]float64{math.NaN(), float64(rng.IntN(3000))}[rng.IntN(2)] },
		"converted mW":     func(i int) float64 { return 10 * math.Log10(0.3+rng.Float64()) },
		"late no-code":     func(i int) float64 { return [2]float64{1.25, math.Pi}[min(i/900, 1)] },
	}
	same := func(a, b float64) bool {
		return math.Float64bits(a) == math.Float64bits(b) || math.IsNaN(a) && math.IsNaN(b)
	}
	for name, f := range gen {
		want := make([]float64, 1000)
		for i := range want {
			want[i] = f(i)
		}
		var one, codes, tail colBuf
		var hint int8
		for i, v := range want {
			one.push(v)
			if c, ok := packValue(v, &hint); ok && i%3 != 0 {
				codes.pushCodes([]uint32{c})
			} else {
				codes.push(v)
			}
		}
		// Overwrite every tenth value with its neighbour, then put it back.
		for i := 0; i+1 < len(want); i += 10 {
			one.set(i, want[i+1])
			one.set(i, want[i])
		}
		tail.pushSlice(want[:400])
		rest := newColBuf(0)
		rest.pushSlice(want[400:])
		tail.appendCol(rest)
		for form, c := range map[string]*colBuf{"pushed": &one, "codes": &codes, "appended": &tail} {
			pc := c.finish()
			if n := max(len(pc.narrow), len(pc.codes), len(pc.wide)); n != len(want) {
				t.Fatalf("%s, %s: %d values, want %d", name, form, n, len(want))
			}
			got := make([]float64, len(want))
			pc.decode(got)
			for i := range want {
				if !same(got[i], want[i]) {
					t.Fatalf("%s, %s: value %d is %v, want %v", name, form, i, got[i], want[i])
				}
			}
		}
	}
	var narrow colBuf
	for range 100 {
		narrow.push(parseText(fmt.Sprintf("%.2f", -5+rng.Float64())))
	}
	if narrow.tier != tierNarrow {
		t.Errorf("a power column within 1 dB left the narrow form (tier %d)", narrow.tier)
	}
}

func parseText(s string) float64 {
	v, err := strconv.ParseFloat(s, 64)
	if err != nil {
		panic(err)
	}
	return v
}

// BenchmarkPackValue packs a day of a port's fourteen columns as the fleet generator writes them.
func BenchmarkPackValue(b *testing.B) {
	rng := rand.New(rand.NewPCG(9, 10))
	texts := []string{"%.3g", "%.2f", "%.1f", "%.0f", "%.4f"}
	vals := make([]float64, 14*1440)
	for i := range vals {
		vals[i] = parseText(fmt.Sprintf(texts[i%len(texts)], math.Pow(10, float64(i%7-4))*(1+rng.Float64())))
	}
	b.SetBytes(int64(len(vals)))
	b.ResetTimer()
	for range b.N {
		var hint [5]int8
		for i, v := range vals {
			if _, ok := packValue(v, &hint[i%len(texts)]); !ok {
				b.Fatal(v)
			}
		}
	}
}
