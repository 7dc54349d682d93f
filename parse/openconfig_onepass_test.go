package parse

import (
	"bytes"
	"encoding/json"
	"fmt"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
	"time"
)

// ocExportDoc is one OpenConfig document of the shape samples/fleetgen writes (docs/formats.md):
// every port's optical channel as a component, the FEC statistics of every port but each
// fifth on a logical channel assigned to it (each fifth carries them on its optical channel,
// as 400ZR-class modules do), members in sorted order as encoding/json writes maps, BER and
// frequency as strings (RFC 7951 decimal64). Invented values, for the tests only.
func ocExportDoc(t int64, ports int, r *rand.Rand) []byte {
	type obj = map[string]any
	inst := func(v float64) any { return obj{"instant": v} }
	var channels, components []any
	for p := range ports {
		name := fmt.Sprintf("NE%03d-%d/%d/C1", p/16+1, p%16/4+1, p%4+1)
		fec := obj{
			"pre-fec-ber":              obj{"instant": strconv.FormatFloat(float64(100+r.IntN(900))*1e-6, 'g', -1, 64)},
			"post-fec-ber":             obj{"instant": "0"},
			"q-value":                  inst(float64(800+r.IntN(400)) / 100),
			"esnr":                     inst(float64(1400+r.IntN(600)) / 100),
			"fec-uncorrectable-blocks": strconv.Itoa(r.IntN(3)),
		}
		och := obj{
			"frequency":                    strconv.Itoa(191_700_000 + 50_000*(p%80)),
			"input-power":                  inst(float64(-900+r.IntN(600)) / 100),
			"output-power":                 inst(float64(-400+r.IntN(100)) / 100),
			"chromatic-dispersion":         inst(float64(1000 + r.IntN(4000))),
			"polarization-mode-dispersion": inst(float64(r.IntN(30)) / 10),
			"polarization-dependent-loss":  inst(float64(r.IntN(10)) / 10),
			"osnr":                         inst(float64(250+r.IntN(150)) / 10),
			"carrier-frequency-offset":     inst(float64(r.IntN(600) - 300)),
			"sop-roc":                      inst(float64(r.IntN(20)) / 10),
		}
		if p%5 == 4 {
			for k, v := range fec {
				och[k] = v
			}
		} else {
			channels = append(channels, obj{
				"index": p + 1,
				"state": obj{"index": p + 1, "description": "line " + name, "logical-channel-type": "openconfig-transport-types:PROT_OTN"},
				"otn":   obj{"state": fec},
				"logical-channel-assignments": obj{"assignment": []any{obj{
					"index": 1,
					"state": obj{"index": 1, "assignment-type": "OPTICAL_CHANNEL", "optical-channel": name},
				}}},
			})
		}
		components = append(components, obj{
			"name":            name,
			"state":           obj{"name": name, "type": "openconfig-platform-types:OPTICAL_CHANNEL"},
			"optical-channel": obj{"state": och},
		})
	}
	doc := obj{
		"timestamp":                      time.UnixMilli(t).UTC().Format(time.RFC3339),
		"openconfig-platform:components": obj{"component": components},
	}
	if len(channels) > 0 {
		doc["openconfig-terminal-device:terminal-device"] = obj{"logical-channels": obj{"channel": channels}}
	}
	var b bytes.Buffer
	enc := json.NewEncoder(&b)
	enc.SetEscapeHTML(false)
	if err := enc.Encode(doc); err != nil {
		panic(err)
	}
	return bytes.TrimSuffix(b.Bytes(), []byte("\n"))
}

// ocExportLines is docs documents of ports ports, one a minute, as JSON Lines.
func ocExportLines(docs, ports int, seed uint64) []byte {
	r := rand.New(rand.NewPCG(seed, 1))
	var b bytes.Buffer
	for d := range docs {
		b.Write(ocExportDoc(1773446400000+int64(d)*60000, ports, r))
		b.WriteByte('\n')
	}
	return b.Bytes()
}

// sameAsTree reads data with the one-pass reader and with the tree reader only and fails
// unless the two give the same Dataset (series value by value, accounting, notes,
// rejections) and the same error, with each of opts.
func sameAsTree(t *testing.T, name string, data []byte, opts ...Options) {
	t.Helper()
	if len(opts) == 0 {
		opts = []Options{{Workers: 2}}
	}
	for _, opt := range opts {
		fast, err1 := ReadFile(name, bytes.NewReader(data), opt)
		opt.treeOnly = true
		tree, err2 := ReadFile(name, bytes.NewReader(data), opt)
		if fmt.Sprint(err1) != fmt.Sprint(err2) {
			t.Fatalf("%s %+v: error %v, tree reader %v", name, opt, err1, err2)
		}
		if (fast == nil) != (tree == nil) {
			t.Fatalf("%s: dataset %v, tree reader %v", name, fast != nil, tree != nil)
		}
		if fast != nil && !sameDataset(fast, tree) {
			t.Fatalf("%s %+v: the one-pass reader differs from the tree reader:\n%+v\n%+v\n%+v\n%+v",
				name, opt, fast.Inputs, fast.Rejected, tree.Inputs, tree.Rejected)
		}
	}
}

// takesOnePass reports whether the one-pass reader reads doc (a whole document) itself.
func takesOnePass(doc []byte, stat string) bool {
	jp := &jsonParser{stat: stat}
	end, ok := jp.ocOnePass(doc, 0)
	return ok && end == len(doc)
}

// The exported shape is read by the one-pass reader, not handed to the tree reader: the
// documents samples/fleetgen writes, and the document of docs/formats.md.
func TestOnePassTakesTheExportedShape(t *testing.T) {
	for _, doc := range bytes.Split(bytes.TrimSpace(ocExportLines(3, 40, 7)), []byte("\n")) {
		if !takesOnePass(doc, "instant") || !takesOnePass(doc, "avg") {
			t.Fatalf("exported document not taken: %.200s", doc)
		}
	}
	if !takesOnePass([]byte(ocSample), "instant") {
		t.Fatal("the document of docs/formats.md is not taken")
	}
}

// ocVariants are documents that differ from the exported shape in one way each, with whether
// the one-pass reader reads them itself (the others are handed to the tree reader).
var ocVariants = func() []struct {
	name string
	doc  string
	fast bool
} {
	base := string(ocExportDoc(1773446400000, 3, rand.New(rand.NewPCG(3, 3))))
	comp0 := `{"name":"NE001-1/1/C1",`
	v := []struct {
		name string
		doc  string
		fast bool
	}{{"base", base, true}}
	add := func(name string, fast bool, pairs ...string) {
		doc := base
		for i := 0; i+1 < len(pairs); i += 2 {
			if !strings.Contains(doc, pairs[i]) {
				panic("variant " + name + ": no " + pairs[i])
			}
			doc = strings.Replace(doc, pairs[i], pairs[i+1], 1)
		}
		v = append(v, struct {
			name string
			doc  string
			fast bool
		}{name, doc, fast})
	}
	add("duplicate leaf", false, `"osnr":{`, `"osnr":{"instant":1},"osnr":{`)
	add("prefixed duplicate leaf", false, `"osnr":{`, `"oc:osnr":{"instant":1},"osnr":{`)
	add("prefixed leaf", true, `"osnr":{`, `"oc:osnr":{`)
	add("duplicate instant", false, `"osnr":{"instant":`, `"osnr":{"instant":1,"instant":`)
	add("statistics", true, `"osnr":{"instant":`, `"osnr":{"avg":31.5,"min":null,"max":"NA","instant":`)
	add("null leaf", true, `"osnr":{"instant":`, `"osnr":null,"x":{"instant":`)
	add("null instant", true, `"osnr":{"instant":`, `"osnr":{"instant":null,"y":`)
	add("missing spelling", true, `"osnr":{"instant":`, `"osnr":{"instant":" n/a ","y":`)
	add("blank value", true, `"osnr":{"instant":`, `"osnr":{"instant":"   ","y":`)
	add("spaced number", true, `"osnr":{"instant":`, `"osnr":{"instant":" 30.5 ","y":`)
	add("not a number", true, `"osnr":{"instant":`, `"osnr":{"instant":"x","y":`)
	add("huge number", true, `"osnr":{"instant":`, `"osnr":{"instant":1e999,"y":`)
	add("out of range", true, `"input-power":{"instant":`, `"input-power":{"instant":45,"y":`)
	add("two bad leaves", true, `"input-power":{"instant":`, `"input-power":{"instant":45,"y":`, `"osnr":{"instant":`, `"osnr":{"instant":"x","y":`)
	add("boolean leaf", true, `"osnr":{"instant":`, `"osnr":{"instant":true,"y":`)
	add("array leaf", false, `"osnr":{"instant":`, `"osnr":{"instant":[1],"y":`)
	add("object leaf", false, `"osnr":{"instant":`, `"osnr":{"instant":{},"y":`)
	add("plain leaf", true, `"osnr":{"instant":`, `"osnr":12.5,"z":{"instant":`)
	add("escaped name", false, comp0, `{"name":"NE001-1\/1/C1",`)
	add("non-ASCII name", false, comp0, `{"name":"NE001-1/1/C1é",`)
	add("escaped member name", false, `"osnr":`, `"osn\u0072":`)
	add("escaped skipped string", false, `"openconfig-platform-types:OPTICAL_CHANNEL"`, `"openconfig-platform-types:OPTICAL\u005fCHANNEL"`)
	add("non-ASCII skipped string", true, `"openconfig-platform-types:OPTICAL_CHANNEL"`, `"openconfig-platform-types:OPTICAL_CHANNEL é"`)
	add("invalid UTF-8 skipped string", true, `"openconfig-platform-types:OPTICAL_CHANNEL"`, "\"openconfig-platform-types:OPTICAL_CHANNEL \xff\"")
	add("control byte in string", false, `"openconfig-platform-types:OPTICAL_CHANNEL"`, "\"OPTICAL\x01\"")
	add("keyed components", false, `"component":[`+comp0, `"component":{"x":{"name":"NE001-1/1/C1",`, `]},"openconfig-terminal-device`, `}},"openconfig-terminal-device`)
	add("name in state only", false, comp0, `{`)
	add("null name", false, comp0, `{"name":null,`)
	add("empty name", false, comp0, `{"name":"",`)
	add("name with spaces", true, comp0, `{"name":" NE001-1/1/C1 ",`)
	add("number name", true, comp0, `{"name":17,`)
	add("duplicate name", false, comp0, `{"name":"a","name":"NE001-1/1/C1",`)
	add("same component twice", true, `"component":[`+comp0, `"component":[{"name":"NE001-1/1/C1","optical-channel":{"state":{"osnr":{"instant":12}}}},`+comp0)
	add("not an optical channel", true, `"component":[`, `"component":[{"name":"fan-1","state":{"type":"FAN"}},`)
	add("non-object component", false, `"component":[`, `"component":[7,`)
	add("null optical channel", false, comp0+`"optical-channel":{`, comp0+`"optical-channel":null,"x":{`)
	add("optical channel without state", true, comp0+`"optical-channel":{"state":`, comp0+`"optical-channel":{"other":`)
	add("component FEC", true, comp0, comp0+`"fec-uncorrectable-blocks":"5",`)
	add("prefixed component FEC", true, comp0, comp0+`"oc:fec-uncorrectable-blocks":{"instant":"5"},`)
	add("component FEC twice", false, comp0, comp0+`"fec-uncorrectable-blocks":"5","oc:fec-uncorrectable-blocks":"6",`)
	add("reverse assignment", true, `"carrier-frequency-offset":`, `"logical-channel-assignment":2,"carrier-frequency-offset":`)
	add("reverse assignment only", true, `"carrier-frequency-offset":`, `"logical-channel-assignment":"1","carrier-frequency-offset":`,
		`"optical-channel":"NE001-1/1/C1"`, `"optical-channel":null`)
	add("reverse assignment object", false, `"carrier-frequency-offset":`, `"logical-channel-assignment":{},"carrier-frequency-offset":`)
	add("unassigned channel", true, `"optical-channel":"NE001-1/1/C1"`, `"optical-channel":"NA"`)
	add("assignment in config", true, `"state":{"assignment-type"`, `"config":{"assignment-type"`)
	add("assignment in config and state", true, `"state":{"assignment-type"`, `"config":{"assignment-type":"OPTICAL_CHANNEL","optical-channel":"other"},"state":{"assignment-type"`)
	add("logical assignment", true, `"assignment-type":"OPTICAL_CHANNEL"`, `"assignment-type":"LOGICAL_CHANNEL"`)
	add("prefixed assignment type", true, `"assignment-type":"OPTICAL_CHANNEL"`, `"assignment-type":"openconfig-transport-types:OPTICAL_CHANNEL"`)
	add("number assignment type", true, `"assignment-type":"OPTICAL_CHANNEL"`, `"assignment-type":3`)
	add("escaped assignment type", false, `"assignment-type":"OPTICAL_CHANNEL"`, `"assignment-type":"OPTICAL\u005fCHANNEL"`)
	add("two assignments", true, `"assignment":[`, `"assignment":[{"index":0,"state":{"optical-channel":"NE001-1/2/C1"}},`)
	add("keyed assignments", false, `"assignment":[`, `"assignment":{"a":`, `}]}`, `}}}`)
	add("unassigned channel without leaves", true, `"logical-channel-assignments":{"assignment":[{"index":1,"state":{"assignment-type":"OPTICAL_CHANNEL","index":1,"optical-channel":"NE001-1/1/C1"}}]},"otn":{"state":{`,
		`"otn":{"state":{"fec-uncorrectable-blocks":null},"x":{`)
	add("unassigned channel without the statistic", true, `"logical-channel-assignments":{"assignment":[{"index":1,"state":{"assignment-type":"OPTICAL_CHANNEL","index":1,"optical-channel":"NE001-1/1/C1"}}]},"otn":{"state":{`,
		`"otn":{"state":{"q-value":{"max":1}},"x":{`)
	add("channel without OTN state", true, `"otn":{"state":`, `"otn":{"other":`)
	add("other port without OTN state", true, `"otn":{"state":`, `"otn":{"other":`, `"optical-channel":"NE001-1/1/C1"`, `"optical-channel":"elsewhere"`)
	add("channel without index", false, `{"index":1,"logical-channel-assignments"`, `{"logical-channel-assignments"`)
	add("string index", true, `{"index":1,"logical-channel-assignments"`, `{"index":" 1 ","logical-channel-assignments"`)
	add("no timestamp", true, `,"timestamp":"2026-03-14T00:00:00Z"`, ``)
	add("time", true, `"timestamp":`, `"time":`)
	add("time and timestamp", false, `"timestamp":`, `"time":1,"timestamp":`)
	add("null timestamp", false, `"timestamp":"2026-03-14T00:00:00Z"`, `"timestamp":null`)
	add("number timestamp", true, `"timestamp":"2026-03-14T00:00:00Z"`, `"timestamp":1773477000000000000`)
	add("bad timestamp", true, `"timestamp":"2026-03-14T00:00:00Z"`, `"timestamp":"yesterday"`)
	add("missing timestamp", true, `"timestamp":"2026-03-14T00:00:00Z"`, `"timestamp":"NA"`)
	add("object timestamp", false, `"timestamp":"2026-03-14T00:00:00Z"`, `"timestamp":{}`)
	add("other root member", false, `"timestamp":`, `"source":"x","timestamp":`)
	add("null components", false, `{"openconfig-platform:components":{`, `{"openconfig-platform:components":null,"x":{`)
	add("unprefixed", true, `"openconfig-platform:components"`, `"components"`, `"openconfig-terminal-device:terminal-device"`, `"terminal-device"`)
	add("components twice", false, `"openconfig-terminal-device:terminal-device"`, `"components":{},"openconfig-terminal-device:terminal-device"`)
	add("deep skipped value", false, comp0, comp0+`"x":`+strings.Repeat("[", 100)+strings.Repeat("]", 100)+`,`)
	add("too deep", false, comp0, comp0+`"x":`+strings.Repeat("[", maxJSONDepth+1)+strings.Repeat("]", maxJSONDepth+1)+`,`)
	add("nested skipped value", true, comp0, comp0+`"x":[1,{"a":[true,false,null,"s",-0.5e+3]},[]],`)
	add("truncated", false, `"otn":{"state":`, `"otn":{"state`)
	add("bad number", false, `"osnr":{"instant":`, `"osnr":{"instant":01,"y":`)
	add("bad literal", false, `"osnr":{"instant":`, `"osnr":{"instant":nul,"y":`)
	add("missing comma", false, `},{"name"`, `}{"name"`)
	add("trailing comma", false, `}]},"openconfig-terminal-device`, `},]},"openconfig-terminal-device`)
	add("white space", true, `{"name":`, "{ \r\n\t\"name\" :\n ", `"osnr":{"instant":`, "\"osnr\" : { \"instant\" : ")
	add("long port name", true, comp0, `{"name":"`+strings.Repeat("x", 300)+`",`)
	add("bad port name", true, comp0, `{"name":"a,b",`)
	add("empty components", true, `"component":[`+comp0, `"component":[],"x":[`+comp0)
	return v
}()

// TestOnePassMatchesTree reads documents of the exported shape and documents that differ
// from it in one way each, alone and together, as JSON Lines, a stream and an array, with
// each statistic and in strict mode: the one-pass reader (with the tree reader for what it
// hands over) gives what the tree reader alone gives.
func TestOnePassMatchesTree(t *testing.T) {
	opts := []Options{{Workers: 2}, {Workers: 1, Statistic: "avg"}, {Workers: 2, Strict: true}}
	fastVariants := 0
	for _, v := range ocVariants {
		if got := takesOnePass([]byte(v.doc), "instant"); got != v.fast {
			t.Errorf("%s: taken by the one-pass reader %v, want %v", v.name, got, v.fast)
		}
		if v.fast {
			fastVariants++
		}
		sameAsTree(t, v.name+".json", []byte(v.doc), opts...)
		sameAsTree(t, v.name+" lines.json", []byte(ocSample+"\n"+v.doc+"\n"+v.doc), opts...)
	}
	var lines, stream, array bytes.Buffer
	array.WriteString("[")
	for i, v := range ocVariants {
		// JSON Lines can hold neither a document with a line break nor one the tree reader
		// cannot parse (it would stop a stream)
		if !strings.ContainsAny(v.doc, "\r\n") {
			lines.WriteString(v.doc + "\n")
		}
		var d any
		if json.Unmarshal([]byte(v.doc), &d) != nil {
			continue
		}
		stream.WriteString(v.doc + "\n")
		if i > 0 {
			array.WriteString(",\n")
		}
		array.WriteString(v.doc)
	}
	array.WriteString("]")
	lines.WriteString(`{"time":"2026-03-14T00:00:00Z","port":"c1","osnr_db":20}` + "\n" + ocVariants[0].doc + "\n")
	sameAsTree(t, "variants.json", lines.Bytes(), opts...)
	sameAsTree(t, "variants-stream.json", stream.Bytes(), opts...)
	sameAsTree(t, "variants-array.json", array.Bytes(), opts...)
	if fastVariants < len(ocVariants)/2 {
		t.Fatalf("only %d of %d variants are read by the one-pass reader", fastVariants, len(ocVariants))
	}
}

// A fleet of documents over several blocks, as JSON Lines and as an indented array.
func TestOnePassMatchesTreeOverBlocks(t *testing.T) {
	data := ocExportLines(60, 120, 11)
	if len(data) < 5*chunkSize {
		t.Fatalf("%d bytes: not several blocks", len(data))
	}
	sameAsTree(t, "fleet.json", data, Options{Workers: 3})
	var array bytes.Buffer
	array.WriteString("[\n")
	for i, doc := range bytes.Split(bytes.TrimSpace(data), []byte("\n")) {
		if i > 0 {
			array.WriteString(",\n")
		}
		json.Indent(&array, doc, "  ", "  ")
	}
	array.WriteString("\n]\n")
	sameAsTree(t, "fleet-array.json", array.Bytes(), Options{Workers: 2})
}

// FuzzOpenConfigOnePass checks on any input that the one-pass reader and the tree reader agree.
// Its seeds are the exported shape, its variants, and the corpus of FuzzOpenConfig.
func FuzzOpenConfigOnePass(f *testing.F) {
	f.Add([]byte(ocSample))
	f.Add(ocExportLines(2, 3, 5))
	for _, v := range ocVariants {
		f.Add([]byte(v.doc))
	}
	files, _ := filepath.Glob(filepath.Join("testdata", "fuzz", "FuzzOpenConfig", "*"))
	for _, name := range files {
		b, err := os.ReadFile(name)
		if err != nil {
			f.Fatal(err)
		}
		// go test fuzz v1 / []byte("...")
		lit := strings.TrimSpace(string(b[bytes.IndexByte(b, '\n')+1:]))
		s, err := strconv.Unquote(strings.TrimSuffix(strings.TrimPrefix(lit, "[]byte("), ")"))
		if err != nil {
			f.Fatalf("%s: %v", name, err)
		}
		f.Add([]byte(s))
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		sameAsTree(t, "fuzz.json", data, Options{Workers: 1}, Options{Workers: 1, Statistic: "max"})
	})
}
