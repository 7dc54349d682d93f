package gnmisub

import (
	"bytes"
	"encoding/json"
	"math"
	"testing"

	"github.com/beatnote/beatnote/parse"
	gpb "github.com/openconfig/gnmi/proto/gnmi"
)

func dbl(v float64) *gpb.TypedValue {
	return &gpb.TypedValue{Value: &gpb.TypedValue_DoubleVal{DoubleVal: v}}
}

// The notifications of one sample time become one document that the OpenConfig reader reads
// as a file of the same content: a component's leaves, a logical channel's OTN statistics
// (JSON_IETF) assigned to it, decimal64 and uint values.
func TestDocumentReadsAsOpenConfig(t *testing.T) {
	d := &docBuilder{root: map[string]any{}}
	ts := int64(1773446400) * 1e9
	err := d.add(&gpb.Notification{Timestamp: ts, Prefix: StringPath("/openconfig-platform:components/component[name=och-1/1/1]/optical-channel/state"),
		Update: []*gpb.Update{
			{Path: StringPath("input-power/instant"), Val: dbl(-8.15)},
			{Path: StringPath("chromatic-dispersion/instant"), Val: &gpb.TypedValue{Value: &gpb.TypedValue_DecimalVal{DecimalVal: &gpb.Decimal64{Digits: 17025, Precision: 1}}}},
			{Path: StringPath("frequency"), Val: &gpb.TypedValue{Value: &gpb.TypedValue_UintVal{UintVal: 193100000}}},
		}})
	if err != nil {
		t.Fatal(err)
	}
	err = d.add(&gpb.Notification{Timestamp: ts + 2e6, Prefix: StringPath("/terminal-device/logical-channels/channel[index=10101]"),
		Update: []*gpb.Update{
			{Path: StringPath("otn/state"), Val: &gpb.TypedValue{Value: &gpb.TypedValue_JsonIetfVal{JsonIetfVal: []byte(`{"pre-fec-ber": {"instant": "0.00091"}}`)}}},
			{Path: StringPath("logical-channel-assignments/assignment[index=1]/state/optical-channel"), Val: &gpb.TypedValue{Value: &gpb.TypedValue_StringVal{StringVal: "och-1/1/1"}}},
		}})
	if err != nil {
		t.Fatal(err)
	}
	doc, err := d.document()
	if err != nil {
		t.Fatal(err)
	}
	ds, err := parse.ReadFile("doc", bytes.NewReader(doc), parse.Options{})
	if err != nil || len(ds.Series) != 1 {
		t.Fatalf("%v %+v\n%s", err, ds.Inputs, doc)
	}
	s := ds.Series[0].Decoded()
	want := map[parse.Quantity]float64{parse.RxPowerDBm: -8.15, parse.CDpsPerNm: 1702.5, parse.FrequencyTHz: 193.1, parse.PreFECBER: 0.00091}
	for q, w := range want {
		if s.Values[q] == nil || s.Values[q][0] != w {
			t.Errorf("%s = %v, want %g\n%s", q, s.Values[q], w, doc)
		}
	}
	if s.Port != "och-1/1/1" || s.TimesMs[0] != 1773446400002 {
		t.Errorf("port %q at %d", s.Port, s.TimesMs[0])
	}
}

// FuzzDocument feeds hostile notifications (any path, keys holding any text, any JSON_IETF
// blob, any number) through the document builder and the OpenConfig reader: nothing panics,
// the document is valid JSON, and every record is used or rejected.
func FuzzDocument(f *testing.F) {
	f.Add("components/component[name=och-1/1/1]/optical-channel/state", "input-power/instant", []byte(`{"x": 1}`), -8.15, "och-1/1/1")
	f.Add("terminal-device/logical-channels/channel[index=1]", "otn/state", []byte(`{"pre-fec-ber": {"instant": "0.7"}}`), 1e308, "")
	f.Add("/", "", []byte(`[`), math.NaN(), "\x1b[2J")
	f.Fuzz(func(t *testing.T, prefix, leaf string, blob []byte, v float64, s string) {
		d := &docBuilder{root: map[string]any{}}
		err := d.add(&gpb.Notification{Timestamp: 1773446400e9, Prefix: StringPath(prefix), Update: []*gpb.Update{
			{Path: StringPath(leaf), Val: dbl(v)},
			{Path: StringPath(leaf + "/a"), Val: &gpb.TypedValue{Value: &gpb.TypedValue_JsonIetfVal{JsonIetfVal: blob}}},
			{Path: StringPath(leaf + "[name=" + s + "]/b"), Val: &gpb.TypedValue{Value: &gpb.TypedValue_StringVal{StringVal: s}}},
			{Path: StringPath(leaf), Val: &gpb.TypedValue{Value: &gpb.TypedValue_DecimalVal{DecimalVal: &gpb.Decimal64{Digits: int64(len(s)) - 5, Precision: uint32(len(blob) % 20)}}}},
		}})
		if err != nil {
			return
		}
		doc, err := d.document()
		if err != nil {
			t.Fatalf("document: %v", err)
		}
		if !json.Valid(doc) {
			t.Fatalf("not JSON: %s", doc)
		}
		ds, _ := parse.ReadFile("doc", bytes.NewReader(doc), parse.Options{})
		for _, in := range ds.Inputs {
			if in.RowsRead != in.RowsUsed+in.RowsRejected {
				t.Fatalf("accounting %+v", in)
			}
		}
	})
}
