package gnmisub

import (
	"bytes"
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
	s := ds.Series[0]
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
