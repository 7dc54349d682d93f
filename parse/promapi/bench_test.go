package promapi

import (
	"context"
	"fmt"
	"net/http"
	"net/http/httptest"
	"strings"
	"testing"
	"time"
)

// BenchmarkRead reads 64 ports × 1440 one-minute samples of two metrics from a server that
// answers every query_range with the same matrix (the query API's JSON, as Prometheus writes it).
func BenchmarkRead(b *testing.B) {
	const ports, points = 64, 1440
	start := time.Unix(1773446400, 0)
	var sb strings.Builder
	sb.WriteString(`{"status":"success","data":{"resultType":"matrix","result":[`)
	for p := range ports {
		if p > 0 {
			sb.WriteByte(',')
		}
		fmt.Fprintf(&sb, `{"metric":{"component_name":"och-%d"},"values":[`, p)
		for i := range points {
			if i > 0 {
				sb.WriteByte(',')
			}
			fmt.Fprintf(&sb, `[%d,"%g"]`, start.Unix()+int64(60*i), -8.15+float64(i%7)*0.01)
		}
		sb.WriteString(`]}`)
	}
	sb.WriteString(`]}}`)
	body := []byte(sb.String())
	var labels strings.Builder
	labels.WriteString(`{"status":"success","data":[`)
	for p := range ports {
		if p > 0 {
			labels.WriteByte(',')
		}
		fmt.Fprintf(&labels, `"och-%d"`, p)
	}
	labels.WriteString(`]}`)
	srv := httptest.NewServer(http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		if strings.HasPrefix(r.URL.Path, "/api/v1/label/") {
			w.Write([]byte(labels.String()))
			return
		}
		w.Write(body)
	}))
	defer srv.Close()
	m, err := ParseMapping("m.yaml", []byte("metrics:\n  - {column: rx_power_dbm, metric: a, port_label: component_name}\n  - {column: tx_power_dbm, metric: b, port_label: component_name}\n"))
	if err != nil {
		b.Fatal(err)
	}
	q := Query{URL: srv.URL, Start: start, End: start.Add((points - 1) * time.Minute), Step: time.Minute, Mapping: m}
	b.SetBytes(int64(2 * len(body)))
	b.ReportAllocs()
	for b.Loop() {
		ds, err := Read(context.Background(), q)
		if err != nil || len(ds.Series) != ports {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/(2*ports*points), "ns/sample")
}
