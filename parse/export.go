package parse

import (
	"bufio"
	"io"
	"math"
	"strconv"
	"strings"
)

// WriteCanonicalCSV writes ds as canonical CSV: header time,port and every quantity some port
// has, in canonical order; one row per port and time, ports in the Dataset's order (by name);
// times in RFC 3339 UTC; numbers in the shortest form that parses back to the same float64;
// missing values empty. Reading the output back yields the same series, and writing those again
// yields the same bytes.
func WriteCanonicalCSV(w io.Writer, ds *Dataset) error {
	var present [NumQuantities]bool
	for _, s := range ds.Series {
		for q := Quantity(0); q < NumQuantities; q++ {
			if s.Values[q] != nil {
				present[q] = true
			}
		}
	}
	var qs []Quantity
	header := []string{"time", "port"}
	for q := Quantity(0); q < NumQuantities; q++ {
		if present[q] {
			qs = append(qs, q)
			header = append(header, q.Column())
		}
	}
	bw := bufio.NewWriterSize(w, 256*1024)
	bw.WriteString(strings.Join(header, ","))
	bw.WriteByte('\n')
	var line []byte
	for _, s := range ds.Series {
		port := csvQuote(s.Port)
		for i, t := range s.TimesMs {
			line = append(line[:0], formatTime(t)...)
			line = append(line, ',')
			line = append(line, port...)
			for _, q := range qs {
				line = append(line, ',')
				if col := s.Values[q]; col != nil && !math.IsNaN(col[i]) {
					line = strconv.AppendFloat(line, col[i], 'g', -1, 64)
				}
			}
			line = append(line, '\n')
			if _, err := bw.Write(line); err != nil {
				return err
			}
		}
	}
	return bw.Flush()
}

// csvQuote quotes a field when it holds a comma, a quote, surrounding spaces or a value that
// would read back as missing.
func csvQuote(s string) string {
	if s == "" || strings.ContainsAny(s, ",\"\r\n;\t") || strings.TrimSpace(s) != s || isMissing([]byte(s)) {
		return `"` + strings.ReplaceAll(s, `"`, `""`) + `"`
	}
	return s
}
