package promapi

import (
	"context"
	"net/http"
	"net/http/httptest"
	"strings"
	"sync/atomic"
	"testing"
	"time"
)

// FuzzQueryRangeAnswer serves a hostile answer to every query_range call: nothing panics, and
// when the read succeeds every series' samples are used or rejected.
func FuzzQueryRangeAnswer(f *testing.F) {
	f.Add(`{"status":"success","data":{"resultType":"matrix","result":[{"metric":{"component_name":"och-1"},"values":[[1773446400,"-8.15"],[1773446460,"NaN"],[1773446520,"+Inf"]]}]}}`)
	f.Add(`{"status":"success","data":{"resultType":"matrix","result":[{"metric":{},"values":[[1,"1"],["x",2],[3]]}]}}`)
	f.Add(`{"status":"error","errorType":"bad_data","error":"\u001b[2Jgone"}`)
	f.Add(`{"status":"success","data":{"resultType":"vector","result":[]}}`)
	// One server for every input (a server per input would use up the loopback ports).
	var body atomic.Pointer[string]
	srv := httptest.NewServer(http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		if strings.HasPrefix(r.URL.Path, "/api/v1/label/") {
			w.Write([]byte(`{"status":"success","data":["och-1","och-2"]}`))
			return
		}
		w.Write([]byte(*body.Load()))
	}))
	defer srv.Close()
	f.Fuzz(func(t *testing.T, b string) {
		body.Store(&b)
		m, err := ParseMapping("m.yaml", []byte("metrics:\n  - {column: rx_power_dbm, metric: m, port_label: component_name}\n  - {column: pre_fec_ber, metric: b, port_label: component_name}\n"))
		if err != nil {
			t.Fatal(err)
		}
		start := time.Unix(1773446400, 0)
		ds, err := Read(context.Background(), Query{URL: srv.URL, Start: start, End: start.Add(time.Hour), Step: time.Minute, Mapping: m})
		if err != nil {
			if strings.ContainsAny(err.Error(), "\x1b\n") {
				t.Fatalf("error carries control characters: %q", err)
			}
			return
		}
		for _, in := range ds.Inputs {
			if in.RowsRead != in.RowsUsed+in.RowsRejected {
				t.Fatalf("accounting %+v", in)
			}
		}
	})
}
