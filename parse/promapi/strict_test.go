package promapi

import (
	"context"
	"net/http"
	"net/http/httptest"
	"strings"
	"testing"
	"time"
)

// serveAnswer serves body to every query_range call, with the port och-1 to the label query,
// for the life of the test; m maps the pre-FEC BER to metric b with port label component_name.
func serveAnswer(t *testing.T, body string) (url string, m Mapping) {
	t.Helper()
	srv := httptest.NewServer(http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		if strings.HasPrefix(r.URL.Path, "/api/v1/label/") {
			w.Write([]byte(`{"status":"success","data":["och-1"]}`))
			return
		}
		w.Write([]byte(body))
	}))
	t.Cleanup(srv.Close)
	m, err := ParseMapping("m.yaml", []byte("metrics:\n  - {column: pre_fec_ber, metric: b, port_label: component_name}\n"))
	if err != nil {
		t.Fatal(err)
	}
	return srv.URL, m
}

// A strict read from the store stops a series at its first rejected sample exactly as a strict
// file read stops a file at its first rejected row: the samples before it are used, the bad one
// is counted as read and rejected, nothing after it is counted, the input's Error says where
// reading stopped, and Read returns the error.
func TestStrictStopsSeriesLikeAFile(t *testing.T) {
	const start = 1773446400
	// pre_fec_ber samples: two good, one impossible (BER 0.7 > 0.5), two good.
	body := `{"status":"success","data":{"resultType":"matrix","result":[{"metric":{"component_name":"och-1"},"values":[` +
		`[1773446400,"1e-4"],[1773446460,"2e-4"],[1773446520,"0.7"],[1773446580,"3e-4"],[1773446640,"4e-4"]]}]}}`
	url, m := serveAnswer(t, body)
	for _, c := range []struct {
		strict                     bool
		read, used, rejected, kept int
	}{
		{strict: false, read: 5, used: 4, rejected: 1, kept: 4},
		{strict: true, read: 3, used: 2, rejected: 1, kept: 2},
	} {
		ds, err := Read(context.Background(), Query{URL: url, Start: time.Unix(start, 0),
			End: time.Unix(start+600, 0), Step: time.Minute, Mapping: m, Strict: c.strict})
		if ds == nil {
			t.Fatalf("strict %v: no dataset: %v", c.strict, err)
		}
		if len(ds.Inputs) != 1 {
			t.Fatalf("strict %v: %d inputs, want 1", c.strict, len(ds.Inputs))
		}
		in := ds.Inputs[0]
		if in.RowsRead != c.read || in.RowsUsed != c.used || in.RowsRejected != c.rejected {
			t.Errorf("strict %v: read/used/rejected %d/%d/%d, want %d/%d/%d", c.strict,
				in.RowsRead, in.RowsUsed, in.RowsRejected, c.read, c.used, c.rejected)
		}
		kept := 0
		for _, s := range ds.Series {
			kept += s.Len()
		}
		if kept != c.kept {
			t.Errorf("strict %v: %d samples kept, want %d", c.strict, kept, c.kept)
		}
		if !c.strict {
			if err != nil || in.Error != "" {
				t.Errorf("not strict: err %v, input error %q, want none", err, in.Error)
			}
			continue
		}
		if err == nil || !strings.Contains(err.Error(), ":3: ") || !strings.Contains(err.Error(), "0.7") {
			t.Errorf("strict: err %v, want the rejection of record 3 (BER 0.7)", err)
		}
		if !strings.Contains(in.Error, "strict reading stops at the first rejected row") || !strings.Contains(in.Error, ":3: ") {
			t.Errorf("strict: input error %q, want where reading stopped", in.Error)
		}
		if in.SHA256 == "" {
			t.Error("strict: no digest of what the store delivered")
		}
	}
}

// A series whose port label is longer than parse.MaxPortNameBytes names no port: its samples are
// rejected with the reason, as a file's row with such a port name is.
func TestLongPortLabel(t *testing.T) {
	long := strings.Repeat("p", 100_000)
	body := `{"status":"success","data":{"resultType":"matrix","result":[` +
		`{"metric":{"component_name":"` + long + `"},"values":[[1773446400,"1e-4"],[1773446460,"2e-4"]]},` +
		`{"metric":{"component_name":"och-1"},"values":[[1773446400,"1e-4"]]}]}}`
	url, m := serveAnswer(t, body)
	ds, err := Read(context.Background(), Query{URL: url, Start: time.Unix(1773446400, 0),
		End: time.Unix(1773446400+600, 0), Step: time.Minute, Mapping: m})
	if err != nil {
		t.Fatal(err)
	}
	if len(ds.Series) != 1 || ds.Series[0].Port != "och-1" {
		t.Fatalf("%d series, want och-1 alone", len(ds.Series))
	}
	if len(ds.Rejected) != 2 || !strings.Contains(ds.Rejected[0].Reason, "longer than the 256-byte limit for a port name") {
		t.Fatalf("rejected %.400v, want both samples of the long-named series", ds.Rejected)
	}
}
