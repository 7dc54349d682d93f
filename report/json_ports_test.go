package report

import (
	"bytes"
	"encoding/json"
	"fmt"
	"math"
	"reflect"
	"slices"
	"strings"
	"testing"

	"github.com/beatnote/beatnote/diagnose"
	"github.com/beatnote/beatnote/parse"
)

// encoderJSON is the reference: the standard library's Encoder with two-space indentation.
func encoderJSON(res *diagnose.Result) ([]byte, error) {
	var b bytes.Buffer
	enc := json.NewEncoder(&b)
	enc.SetIndent("", "  ")
	err := enc.Encode(res)
	return b.Bytes(), err
}

func manyPorts(n int) *diagnose.Result {
	res := &diagnose.Result{Tool: "beatnote", Version: "test", Inputs: []parse.InputStats{{File: "a<b>&c.csv", RowsRead: n}},
		Rejected: []parse.Rejection{{File: "x", Line: 3, Reason: "\"ports\": [] in a reason, with\ttab"}}}
	for i := range n {
		lim, mar := 2.5, -0.125*float64(i)
		p := diagnose.PortResult{Port: fmt.Sprintf("P%04d-é/%d", i, i%7), Profile: "prof", Samples: i, Verdict: diagnose.Pass,
			Causes: []diagnose.Cause{}, Metrics: map[string]diagnose.Metric{}}
		if i%3 == 0 {
			p.Verdict = diagnose.Fail
			p.Causes = append(p.Causes, diagnose.Cause{ID: "pmd", Confidence: 0.5, Evidence: []string{"DGD <28 ps> & more", ""}})
			p.Criteria = []diagnose.Criterion{{Name: "n", Measured: 1e-300, Limit: math.MaxFloat64}}
		}
		p.Metrics["dgd_ps"] = diagnose.Metric{Min: 0.1 * float64(i), Limit: &lim, Margin: &mar, Unit: "ps"}
		if i%5 == 0 {
			p.Metrics["q_db"] = diagnose.Metric{Derived: true}
			p.NotJudged = []string{}
		}
		res.Ports = append(res.Ports, p)
	}
	return res
}

// The streamed writer produces the Encoder's bytes exactly: with no ports, one and many, with
// nil and empty lists, and with the optional members present or not.
func TestWriteResultJSONMatchesEncoder(t *testing.T) {
	cases := map[string]*diagnose.Result{}
	for _, n := range []int{0, 1, 64, 201} {
		cases[fmt.Sprintf("%d ports", n)] = manyPorts(n)
	}
	cases["nil lists"] = &diagnose.Result{Tool: "beatnote"}
	withLines := manyPorts(3)
	withLines.Lines = []diagnose.LineResult{{}, {}}
	cases["lines"] = withLines
	withDirections := manyPorts(2)
	withDirections.Directions = []diagnose.DirectionPair{{}}
	cases["directions"] = withDirections
	both := manyPorts(5)
	both.Lines = []diagnose.LineResult{{}}
	both.Directions = []diagnose.DirectionPair{{}, {}}
	both.Rejected = nil
	cases["lines and directions"] = both
	for name, res := range cases {
		want, err := encoderJSON(res)
		if err != nil {
			t.Fatal(err)
		}
		var got bytes.Buffer
		if err := WriteResultJSON(&got, res); err != nil {
			t.Fatal(err)
		}
		if !bytes.Equal(got.Bytes(), want) {
			t.Errorf("%s: output differs from json.Encoder (%d vs %d bytes)", name, got.Len(), len(want))
		}
	}
}

// The writer names each member of diagnose.Result itself: a member added to the type must be
// added to the writer (and to the cases above).
func TestWriteResultJSONKnowsEveryMember(t *testing.T) {
	written := []string{"tool", "version", "inputs", "ports", "rejected", "lines", "directions"}
	typ := reflect.TypeFor[diagnose.Result]()
	var names []string
	for i := range typ.NumField() {
		names = append(names, strings.Split(typ.Field(i).Tag.Get("json"), ",")[0])
	}
	if !slices.Equal(names, written) {
		t.Errorf("diagnose.Result's members are %v, the writer writes %v", names, written)
	}
}

// A value JSON cannot hold fails the write, as with the Encoder; what reached the writer before
// it is not a whole JSON document, for a small result (nothing past the buffer) and a large one.
func TestWriteResultJSONError(t *testing.T) {
	for _, n := range []int{100, 2000} {
		res := manyPorts(n)
		res.Ports[n*3/4].Metrics["bad"] = diagnose.Metric{Min: math.NaN()}
		if _, err := encoderJSON(res); err == nil {
			t.Fatal("the Encoder accepted NaN")
		}
		var got bytes.Buffer
		if err := WriteResultJSON(&got, res); err == nil || json.Valid(got.Bytes()) {
			t.Fatalf("%d ports: err %v, %d bytes written, valid JSON %v", n, err, got.Len(), json.Valid(got.Bytes()))
		}
	}
}

// The ports given back as their PortEncoder bytes and line findings give the Encoder's bytes of the
// whole result: with no ports, and with ports with and without line findings (the splice of the
// line findings holds only while they are a port's last member).
func TestWriteResultJSONPortsMatchesEncoder(t *testing.T) {
	for _, n := range []int{0, 1, 7, 64} {
		res := manyPorts(n)
		res.Ports = slices.Clip(res.Ports)
		if res.Ports == nil {
			res.Ports = []diagnose.PortResult{}
		}
		for i := range res.Ports {
			if i%2 == 1 {
				res.Ports[i].Line = "L<1>"
				res.Ports[i].LineFindings = []diagnose.LineRef{{Line: "L<1>", ID: diagnose.LineOSNRDrop, From: "t", Explains: diagnose.CauseOSNRLow}}
				if i%4 == 3 {
					res.Ports[i].LineFindings = append(res.Ports[i].LineFindings, diagnose.LineRef{Line: "L<1>", ID: diagnose.LineOutage})
				}
			}
		}
		res.Lines = []diagnose.LineResult{{Line: "L<1>", Ports: []string{"a"}}}
		want, err := encoderJSON(res)
		if err != nil {
			t.Fatal(err)
		}
		var got bytes.Buffer
		var enc PortEncoder
		err = WriteResultJSONPorts(&got, &diagnose.Result{Tool: res.Tool, Version: res.Version, Inputs: res.Inputs, Rejected: res.Rejected, Lines: res.Lines},
			len(res.Ports), func(i int) ([]byte, []diagnose.LineRef, error) {
				js, err := enc.Encode(&res.Ports[i])
				return js, res.Ports[i].LineFindings, err
			})
		if err != nil {
			t.Fatal(err)
		}
		if !bytes.Equal(got.Bytes(), want) {
			t.Errorf("%d ports: output differs from json.Encoder (%d vs %d bytes)", n, got.Len(), len(want))
		}
	}
}

// appendIndent indents compact JSON byte for byte as the standard library's json.Indent does:
// checked on the encoded results of manyPorts and on hand-made documents (empty lists and
// objects, escaped quotes and backslashes, nesting, literals).
func TestAppendIndentMatchesIndent(t *testing.T) {
	docs := []string{`{}`, `[]`, `{"a":[]}`, `[{},[],{"b":{}}]`, `"x"`, `1.5e-7`, `null`, `[true,false,null]`,
		`{"q\"uote":"back\\slash\\","":"\u003c\u0026\u003e","e":[[[1]],-0.1]}`, `{"a":"[{,:}]","b":{"c":[1,2,{"d":"\\\""}]}}`}
	for _, n := range []int{1, 7} {
		b, err := json.Marshal(manyPorts(n))
		if err != nil {
			t.Fatal(err)
		}
		docs = append(docs, string(b))
	}
	for _, doc := range docs {
		for _, pre := range []string{"", "    "} {
			var want bytes.Buffer
			if err := json.Indent(&want, []byte(doc), pre, "  "); err != nil {
				t.Fatalf("%s: %v", doc, err)
			}
			if got := appendIndent([]byte("x"), []byte(doc), pre, "  "); !bytes.Equal(got, append([]byte("x"), want.Bytes()...)) {
				t.Errorf("%s with prefix %q:\ngot  %s\nwant %s", doc, pre, got[1:], want.Bytes())
			}
		}
	}
}

// FuzzAppendIndent: for any valid JSON, made compact by json.Compact, appendIndent gives what
// json.Indent gives.
func FuzzAppendIndent(f *testing.F) {
	f.Add([]byte(`{"a": [1, {"b": "c\"]"}], "d": {}}`))
	f.Fuzz(func(t *testing.T, data []byte) {
		var compact, want bytes.Buffer
		if json.Compact(&compact, data) != nil {
			return
		}
		if err := json.Indent(&want, compact.Bytes(), "  ", "\t"); err != nil {
			t.Fatal(err)
		}
		if got := appendIndent(nil, compact.Bytes(), "  ", "\t"); !bytes.Equal(got, want.Bytes()) {
			t.Fatalf("%q:\ngot  %q\nwant %q", compact.Bytes(), got, want.Bytes())
		}
	})
}
