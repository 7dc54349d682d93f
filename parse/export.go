package parse

import (
	"bufio"
	"io"
	"math"
	"slices"
	"strconv"
	"strings"
)

// WriteCanonicalCSV writes ds as canonical CSV: header time,port, profile when some port's rows
// name one module profile (a port whose rows disagree is written without one: its profile is
// unknown either way), and every quantity some port has, in canonical order; one row per port and time, ports in the Dataset's order (by name);
// times in RFC 3339 UTC; numbers in the shortest form that parses back to the same float64;
// missing values empty. Performance-monitoring bins add their companions after the quantities:
// <column>_min for every quantity some bin gives a minimum for, then the <column>_max, then
// bin_length_s.
// Reading the output back yields the same series, and writing those again yields the same bytes.
func WriteCanonicalCSV(w io.Writer, ds *Dataset) error {
	var present [NumQuantities]bool
	var bc *binColumns
	var low, high [NumQuantities]bool
	for _, s := range ds.Series {
		for q := Quantity(0); q < NumQuantities; q++ {
			if s.HasColumn(q) {
				present[q] = true
			}
			if b := s.Bins; b != nil {
				low[q] = low[q] || b.Low[q] != nil
				high[q] = high[q] || b.High[q] != nil
			}
		}
		if s.Bins != nil {
			bc = &binColumns{}
		}
	}
	var qs []Quantity
	header := []string{"time", "port"}
	withProfile := slices.ContainsFunc(ds.Series, func(s *Series) bool { return s.Profile() != "" })
	if withProfile {
		header = append(header, "profile")
	}
	for q := Quantity(0); q < NumQuantities; q++ {
		if present[q] {
			qs = append(qs, q)
			header = append(header, q.Column())
		}
	}
	if bc != nil {
		for q := Quantity(0); q < NumQuantities; q++ {
			if low[q] {
				bc.low = append(bc.low, q)
				header = append(header, q.Column()+"_min")
			}
		}
		for q := Quantity(0); q < NumQuantities; q++ {
			if high[q] {
				bc.high = append(bc.high, q)
				header = append(header, q.Column()+"_max")
			}
		}
		header = append(header, "bin_length_s")
	}
	bw := bufio.NewWriterSize(w, 256*1024)
	bw.WriteString(strings.Join(header, ","))
	bw.WriteByte('\n')
	var line []byte
	for _, s := range ds.Series {
		port := csvQuote(s.Port)
		if withProfile {
			port += ","
			if p := s.Profile(); p != "" {
				port += csvQuote(p)
			}
		}
		s := s.Decoded()
		for i := range s.TimesMs {
			line = appendCanonicalRow(line[:0], s, i, port, qs, bc)
			if _, err := bw.Write(line); err != nil {
				return err
			}
		}
	}
	return bw.Flush()
}

// binColumns are the bin companion columns of an export: the minima of low, the maxima of high,
// then the bin length in seconds.
type binColumns struct {
	low, high []Quantity
}

// appendCanonicalRow appends row i of s (port: the port's cells after the time, quoted) with the columns qs, the bin
// columns bc (nil: none) and a line end.
func appendCanonicalRow(line []byte, s *Series, i int, port string, qs []Quantity, bc *binColumns) []byte {
	line = append(line, formatTime(s.TimesMs[i])...)
	line = append(line, ',')
	line = append(line, port...)
	cell := func(col []float64) {
		line = append(line, ',')
		if col != nil && !math.IsNaN(col[i]) {
			line = strconv.AppendFloat(line, col[i], 'g', -1, 64)
		}
	}
	for _, q := range qs {
		cell(s.Values[q])
	}
	if bc != nil {
		var b Bins
		if s.Bins != nil {
			b = *s.Bins
		}
		for _, q := range bc.low {
			cell(b.Low[q])
		}
		for _, q := range bc.high {
			cell(b.High[q])
		}
		line = append(line, ',')
		if b.LengthMs != nil && b.LengthMs[i] > 0 {
			line = strconv.AppendFloat(line, float64(b.LengthMs[i])/1000, 'f', -1, 64)
		}
	}
	return append(line, '\n')
}

// CSVRecorder writes canonical CSV as samples arrive: the header names every quantity, and
// each call writes its rows to the underlying writer at once (no buffering), so a session cut
// short leaves a file that ends with a whole row and reads back like any export.
type CSVRecorder struct {
	w    io.Writer
	qs   []Quantity
	line []byte
}

// NewCSVRecorder writes the header to w.
func NewCSVRecorder(w io.Writer) (*CSVRecorder, error) {
	r := &CSVRecorder{w: w}
	header := []string{"time", "port"}
	for q := Quantity(0); q < NumQuantities; q++ {
		r.qs = append(r.qs, q)
		header = append(header, q.Column())
	}
	_, err := io.WriteString(w, strings.Join(header, ",")+"\n")
	return r, err
}

// WriteSeries writes every row of s in one write.
func (r *CSVRecorder) WriteSeries(s *Series) error {
	r.line = r.line[:0]
	port := csvQuote(s.Port)
	s = s.Decoded()
	for i := range s.TimesMs {
		r.line = appendCanonicalRow(r.line, s, i, port, r.qs, nil)
	}
	_, err := r.w.Write(r.line)
	return err
}

// csvQuote quotes a field when it holds a comma, a quote, surrounding spaces or a value that
// would read back as missing.
func csvQuote(s string) string {
	if s == "" || strings.ContainsAny(s, ",\"\r\n;\t") || strings.TrimSpace(s) != s || isMissing([]byte(s)) {
		return `"` + strings.ReplaceAll(s, `"`, `""`) + `"`
	}
	return s
}
