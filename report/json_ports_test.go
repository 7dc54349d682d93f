package report

import (
	"bytes"
	"encoding/json"
	"fmt"
	"math"
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

// The parallel writer produces the Encoder's bytes exactly, for port counts below, at and
// above the cut-over and not a multiple of the worker count.
func TestWriteResultJSONMatchesEncoder(t *testing.T) {
	for _, n := range []int{0, 1, 63, 64, 65, 201} {
		res := manyPorts(n)
		want, err := encoderJSON(res)
		if err != nil {
			t.Fatal(err)
		}
		var got bytes.Buffer
		if err := WriteResultJSON(&got, res); err != nil {
			t.Fatal(err)
		}
		if !bytes.Equal(got.Bytes(), want) {
			t.Errorf("%d ports: output differs from json.Encoder (%d vs %d bytes)", n, got.Len(), len(want))
		}
	}
}

// A value JSON cannot hold fails the write, as with the Encoder, and writes nothing.
func TestWriteResultJSONError(t *testing.T) {
	res := manyPorts(100)
	res.Ports[77].Metrics["bad"] = diagnose.Metric{Min: math.NaN()}
	if _, err := encoderJSON(res); err == nil {
		t.Fatal("the Encoder accepted NaN")
	}
	var got bytes.Buffer
	if err := WriteResultJSON(&got, res); err == nil || got.Len() != 0 {
		t.Fatalf("err %v, %d bytes written", err, got.Len())
	}
}
