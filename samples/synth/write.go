package synth

import (
	"bufio"
	"bytes"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"slices"
	"strconv"
	"time"

	"github.com/beatnote/beatnote/diagnose/optics"
	"github.com/beatnote/beatnote/parse"
)

// Column is one column of a written CSV: its header text, the quantity it holds and how the
// stored value is converted to the column's unit.
type Column struct {
	Header   string
	Quantity parse.Quantity
	// Convert maps the stored (canonical-unit) value to the column's unit; nil = as stored.
	Convert func(float64) float64
	// Digits is the significant digits printed after conversion; 0 = shortest exact form.
	Digits int
}

// CanonicalColumns are all fourteen quantities under their canonical names and units
// (with time and port, the sixteen columns of the canonical CSV).
func CanonicalColumns() []Column {
	cols := make([]Column, 0, parse.NumQuantities)
	for q := range parse.NumQuantities {
		cols = append(cols, Column{Header: q.Column(), Quantity: q})
	}
	return cols
}

// FriendlyColumns are the quantities under spreadsheet-style headers in other units, as element
// managers export them: received power in mW, CD in ns/nm, DGD in fs, SOP rate in rad/s, carrier
// offset in GHz, channel as a wavelength in nm, linear Q. Each is a unit DESIGN.md says the
// reader converts.
func FriendlyColumns() []Column {
	return []Column{
		{Header: "Pre-FEC BER", Quantity: parse.PreFECBER},
		{Header: "Post-FEC BER", Quantity: parse.PostFECBER},
		{Header: "Uncorrectable blocks", Quantity: parse.UncorrectedBlocks},
		{Header: "Q", Quantity: parse.QdB, Convert: func(db float64) float64 { return math.Pow(10, db/20) }, Digits: 5},
		{Header: "eSNR [dB]", Quantity: parse.ESNRdB},
		{Header: "OSNR (dB)", Quantity: parse.OSNRdB},
		{Header: "CD (ns/nm)", Quantity: parse.CDpsPerNm, Convert: func(ps float64) float64 { return ps / 1000 }},
		{Header: "DGD [fs]", Quantity: parse.DGDps, Convert: func(ps float64) float64 { return ps * 1000 }},
		{Header: "PDL [dB]", Quantity: parse.PDLdB},
		{Header: "SOP rate (rad/s)", Quantity: parse.SOPRateKradPerS, Convert: func(k float64) float64 { return k * 1000 }},
		{Header: "LO offset [GHz]", Quantity: parse.LOOffsetMHz, Convert: func(m float64) float64 { return m / 1000 }},
		{Header: "Rx power [mW]", Quantity: parse.RxPowerDBm, Convert: optics.DBmToMW, Digits: 5},
		{Header: "Tx power [mW]", Quantity: parse.TxPowerDBm, Convert: optics.DBmToMW, Digits: 5},
		{Header: "Wavelength [nm]", Quantity: parse.FrequencyTHz, Convert: optics.WavelengthNmFromTHz, Digits: 8},
	}
}

// TimeStyle is how sample times are written.
type TimeStyle int

// The time styles DESIGN.md accepts.
const (
	TimeRFC3339     TimeStyle = iota // 2026-03-14T08:30:00Z
	TimeSpaceUTC                     // 2026-03-14 08:30:00
	TimeUnixSeconds                  // 1773477000
	TimeUnixMillis                   // 1773477000000
)

// CSVStyle says how a CSV is laid out.
type CSVStyle struct {
	Delimiter byte // ',', ';' or '\t'; default ','
	// DecimalComma writes 0,001 for 0.001 (only with ';').
	DecimalComma bool
	TimeHeader   string // default "time"
	PortHeader   string // default "port"
	Time         TimeStyle
	Columns      []Column // default CanonicalColumns()
	CRLF, BOM    bool
	// Missing is written for a missing value (default empty).
	Missing string
	// ByPort writes each series' rows together, series after series, instead of in time order.
	ByPort bool
}

// formatTime appends t (Unix ms) in style ts.
func formatTime(b []byte, ms int64, ts TimeStyle) []byte {
	switch ts {
	case TimeSpaceUTC:
		return time.UnixMilli(ms).UTC().AppendFormat(b, "2006-01-02 15:04:05")
	case TimeUnixSeconds:
		return strconv.AppendInt(b, ms/1000, 10)
	case TimeUnixMillis:
		return strconv.AppendInt(b, ms, 10)
	}
	return time.UnixMilli(ms).UTC().AppendFormat(b, time.RFC3339)
}

// appendValue appends v converted for column c.
func appendValue(b []byte, v float64, c Column, decimalComma bool) []byte {
	if c.Convert != nil {
		v = c.Convert(v)
	}
	start := len(b)
	if c.Digits > 0 {
		b = strconv.AppendFloat(b, v, 'g', c.Digits, 64)
	} else {
		b = strconv.AppendFloat(b, v, 'g', -1, 64)
	}
	if decimalComma {
		for i := start; i < len(b); i++ {
			if b[i] == '.' {
				b[i] = ','
			}
		}
	}
	return b
}

// WriteCSV writes the series as one CSV: a header, then one row per port per sample time, in
// time order, ports in the given order at equal times.
func WriteCSV(w io.Writer, series []*parse.Series, st CSVStyle) error {
	if st.Delimiter == 0 {
		st.Delimiter = ','
	}
	if st.TimeHeader == "" {
		st.TimeHeader = "time"
	}
	if st.PortHeader == "" {
		st.PortHeader = "port"
	}
	if st.Columns == nil {
		st.Columns = CanonicalColumns()
	}
	eol := "\n"
	if st.CRLF {
		eol = "\r\n"
	}
	bw := bufio.NewWriterSize(w, 1<<16)
	if st.BOM {
		bw.WriteString("\ufeff")
	}
	line := []byte(st.TimeHeader)
	line = append(line, st.Delimiter)
	line = append(line, st.PortHeader...)
	for _, c := range st.Columns {
		line = append(line, st.Delimiter)
		line = append(line, c.Header...)
	}
	line = append(line, eol...)
	bw.Write(line)
	visit := forEachRow
	if st.ByPort {
		visit = forEachPortRow
	}
	visit(series, func(s *parse.Series, i int) {
		line = formatTime(line[:0], s.TimesMs[i], st.Time)
		line = append(line, st.Delimiter)
		line = append(line, s.Port...)
		for _, c := range st.Columns {
			line = append(line, st.Delimiter)
			vals := s.Values[c.Quantity]
			if vals == nil || math.IsNaN(vals[i]) {
				line = append(line, st.Missing...)
				continue
			}
			line = appendValue(line, vals[i], c, st.DecimalComma)
		}
		line = append(line, eol...)
		bw.Write(line)
	})
	return bw.Flush()
}

// forEachPortRow visits every (series, index) series after series.
func forEachPortRow(series []*parse.Series, fn func(*parse.Series, int)) {
	for _, s := range series {
		for i := range s.Len() {
			fn(s, i)
		}
	}
}

// forEachRow visits every (series, index) in time order, series order at equal times.
func forEachRow(series []*parse.Series, fn func(*parse.Series, int)) {
	if aligned(series) {
		for i := range series[0].Len() {
			for _, s := range series {
				fn(s, i)
			}
		}
		return
	}
	next := make([]int, len(series))
	for {
		best := -1
		for k, s := range series {
			if next[k] < s.Len() && (best < 0 || s.TimesMs[next[k]] < series[best].TimesMs[next[best]]) {
				best = k
			}
		}
		if best < 0 {
			return
		}
		fn(series[best], next[best])
		next[best]++
	}
}

// WriteJSONLines writes one JSON object per port per sample time with the canonical field
// names; times in RFC 3339; a missing value is written as null.
func WriteJSONLines(w io.Writer, series []*parse.Series) error {
	bw := bufio.NewWriter(w)
	var line []byte
	forEachRow(series, func(s *parse.Series, i int) {
		line = append(line[:0], `{"time":"`...)
		line = formatTime(line, s.TimesMs[i], TimeRFC3339)
		line = append(line, `","port":`...)
		line = strconv.AppendQuote(line, s.Port)
		for q := range parse.NumQuantities {
			vals := s.Values[q]
			if vals == nil {
				continue
			}
			line = append(line, `,"`...)
			line = append(line, q.Column()...)
			line = append(line, `":`...)
			if math.IsNaN(vals[i]) {
				line = append(line, "null"...)
			} else {
				line = strconv.AppendFloat(line, vals[i], 'g', -1, 64)
			}
		}
		line = append(line, "}\n"...)
		bw.Write(line)
	})
	return bw.Flush()
}

// OpenConfigPort names the OpenConfig objects of one port: its logical channel index and its
// optical-channel component (the component name is the port id the reader reports).
type OpenConfigPort struct {
	Series *parse.Series
	// ChannelIndex is the logical channel's index; 0 puts the FEC statistics on the optical
	// channel itself (modules without OTN framing, e.g. the 400ZR class).
	ChannelIndex int
}

// WriteOpenConfig writes OpenConfig-shaped telemetry as JSON Lines, one document per sample
// time holding every port sampled then (docs/formats.md): terminal-device logical channels with
// their OTN state (pre-FEC BER, post-FEC BER, Q, eSNR, uncorrectable blocks) assigned to an
// optical channel, and optical-channel components (frequency in MHz, input/output power, CD,
// PMD, PDL, OSNR, carrier-frequency-offset, sop-roc). Decimal values are written as JSON
// strings where RFC 7951 encodes decimal64 that way (BER, frequency), numbers elsewhere.
func WriteOpenConfig(w io.Writer, ports []OpenConfigPort) error {
	bw := bufio.NewWriter(w)
	type stat = map[string]any
	inst := func(v float64) any {
		if math.IsNaN(v) {
			return nil
		}
		return stat{"instant": v}
	}
	instStr := func(v float64) any {
		if math.IsNaN(v) {
			return nil
		}
		return stat{"instant": strconv.FormatFloat(v, 'g', -1, 64)}
	}
	// Group by time.
	times := map[int64][]int{}
	var order []int64
	for k, p := range ports {
		for i, t := range p.Series.TimesMs {
			if _, ok := times[t]; !ok {
				order = append(order, t)
			}
			times[t] = append(times[t], k*1_000_000+i)
		}
	}
	slices.Sort(order)
	for _, t := range order {
		var channels, components []any
		for _, ki := range times[t] {
			p, i := ports[ki/1_000_000], ki%1_000_000
			s := p.Series
			val := func(q parse.Quantity) float64 {
				if s.Values[q] == nil {
					return math.NaN()
				}
				return s.Values[q][i]
			}
			fec := stat{
				"pre-fec-ber":  instStr(val(parse.PreFECBER)),
				"post-fec-ber": instStr(val(parse.PostFECBER)),
				"q-value":      inst(val(parse.QdB)),
				"esnr":         inst(val(parse.ESNRdB)),
			}
			if b := val(parse.UncorrectedBlocks); !math.IsNaN(b) {
				fec["fec-uncorrectable-blocks"] = strconv.FormatFloat(b, 'f', 0, 64)
			}
			och := stat{
				"input-power":                  inst(val(parse.RxPowerDBm)),
				"output-power":                 inst(val(parse.TxPowerDBm)),
				"chromatic-dispersion":         inst(val(parse.CDpsPerNm)),
				"polarization-mode-dispersion": inst(val(parse.DGDps)),
				"polarization-dependent-loss":  inst(val(parse.PDLdB)),
				"osnr":                         inst(val(parse.OSNRdB)),
				"carrier-frequency-offset":     inst(val(parse.LOOffsetMHz)),
				"sop-roc":                      inst(val(parse.SOPRateKradPerS)),
			}
			if f := val(parse.FrequencyTHz); !math.IsNaN(f) {
				och["frequency"] = strconv.FormatFloat(math.Round(f*1e6), 'f', 0, 64)
			}
			if p.ChannelIndex == 0 {
				for k, v := range fec {
					och[k] = v
				}
			} else {
				channels = append(channels, stat{
					"index": p.ChannelIndex,
					"state": stat{"index": p.ChannelIndex, "description": "line " + s.Port, "logical-channel-type": "openconfig-transport-types:PROT_OTN"},
					"otn":   stat{"state": fec},
					"logical-channel-assignments": stat{"assignment": []any{stat{
						"index": 1,
						"state": stat{"index": 1, "assignment-type": "OPTICAL_CHANNEL", "optical-channel": s.Port},
					}}},
				})
			}
			components = append(components, stat{
				"name":            s.Port,
				"state":           stat{"name": s.Port, "type": "openconfig-platform-types:OPTICAL_CHANNEL"},
				"optical-channel": stat{"state": och},
			})
		}
		doc := stat{"timestamp": time.UnixMilli(t).UTC().Format(time.RFC3339)}
		if len(channels) > 0 {
			doc["openconfig-terminal-device:terminal-device"] = stat{"logical-channels": stat{"channel": channels}}
		}
		doc["openconfig-platform:components"] = stat{"component": components}
		var buf bytes.Buffer
		enc := json.NewEncoder(&buf)
		enc.SetEscapeHTML(false)
		if err := enc.Encode(doc); err != nil {
			return fmt.Errorf("synth: openconfig: %w", err)
		}
		bw.Write(buf.Bytes())
	}
	return bw.Flush()
}

// aligned reports whether every series has the same sample times (the fleet's common case).
func aligned(series []*parse.Series) bool {
	if len(series) == 0 {
		return false
	}
	for _, s := range series[1:] {
		if !slices.Equal(s.TimesMs, series[0].TimesMs) {
			return false
		}
	}
	return true
}
