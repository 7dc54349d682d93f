// Package parse reads coherent-transceiver telemetry exports (canonical CSV, JSON Lines and
// OpenConfig-shaped telemetry JSON) into normalised per-port time series, accounting for every
// input row: each is used, or rejected with its file, line and reason.
//
// Units are normalised once, on read, to the units of the canonical CSV (see docs/formats.md).
package parse

import (
	"fmt"
	"math"
	"strings"
)

// Quantity identifies one measured quantity of the canonical CSV (every column but time and port).
type Quantity uint8

// The quantities, in canonical column order. Each is stored in the unit its column name carries.
const (
	PreFECBER         Quantity = iota // pre-FEC bit error ratio, 0…0.5
	PostFECBER                        // post-FEC bit error ratio
	UncorrectedBlocks                 // uncorrectable FEC blocks in the interval, count
	QdB                               // Q-factor, dB (20·log10 Q)
	ESNRdB                            // electrical SNR estimate, dB
	OSNRdB                            // OSNR in 0.1 nm (12.5 GHz), dB
	CDpsPerNm                         // chromatic dispersion, ps/nm
	DGDps                             // differential group delay, ps
	PDLdB                             // polarization dependent loss, dB
	SOPRateKradPerS                   // state-of-polarization rate of change, krad/s
	LOOffsetMHz                       // carrier frequency offset, MHz
	RxPowerDBm                        // received optical power, dBm
	TxPowerDBm                        // transmitted optical power, dBm
	FrequencyTHz                      // channel centre frequency, THz
	NumQuantities                     // number of quantities; not a quantity
)

var quantityColumns = [NumQuantities]string{
	"pre_fec_ber", "post_fec_ber", "uncorrected_blocks", "q_db", "esnr_db", "osnr_db",
	"cd_ps_nm", "dgd_ps", "pdl_db", "sop_rate_krad_s", "lo_offset_mhz", "rx_power_dbm",
	"tx_power_dbm", "frequency_thz",
}

var quantityUnits = [NumQuantities]string{
	"", "", "blocks", "dB", "dB", "dB", "ps/nm", "ps", "dB", "krad/s", "MHz", "dBm", "dBm", "THz",
}

// Column is the canonical CSV column name of q, e.g. "rx_power_dbm".
func (q Quantity) Column() string {
	if q >= NumQuantities {
		return fmt.Sprintf("quantity(%d)", q)
	}
	return quantityColumns[q]
}

// String is the canonical column name.
func (q Quantity) String() string { return q.Column() }

// Unit is the unit q is stored and printed in ("" for ratios).
func (q Quantity) Unit() string {
	if q >= NumQuantities {
		return ""
	}
	return quantityUnits[q]
}

// QuantityByColumn finds a quantity by its exact canonical column name.
func QuantityByColumn(name string) (Quantity, bool) {
	for i, c := range quantityColumns {
		if c == strings.ToLower(name) {
			return Quantity(i), true
		}
	}
	return 0, false
}

// Series is the time-ordered telemetry of one port. TimesMs holds Unix milliseconds (UTC),
// strictly ascending. Values[q] is nil when the port never reported q, otherwise it has the
// length of TimesMs with NaN where a sample lacks q.
//
// A series read by this package keeps its times and values in a compact store instead, with
// TimesMs and Values nil: Decoded gives them. Len, Has and Present work on both.
type Series struct {
	Port    string
	TimesMs []int64
	Values  [NumQuantities][]float64
	// Bins is set when some samples are performance-monitoring bins (see Bins); nil otherwise.
	Bins *Bins
	// Profiles are the distinct module profiles the port's rows name (a profile column), in
	// input order, each with where it is first named; at most two are kept. Two mean the rows
	// disagree; Profile gives the port's one profile.
	Profiles []ProfileMention
	// Inputs are the inputs the port's rows came from, as indices into Dataset.Inputs in
	// ascending order: what a report on some ports only lists and signs.
	Inputs []int

	packed *packedSeries // the compact store of a series read from input; nil otherwise
}

// Bins are the worst-case companions of samples that summarise a bin (a 15-minute or 24-hour
// performance-monitoring interval): Series.Values holds each bin's average, Low and High its
// minimum and maximum. Every slice has the length of the series' TimesMs.
type Bins struct {
	// LengthMs is each bin's length, from the input's bin-length column or else the port's
	// median sample spacing; 0 for samples that are not bins.
	LengthMs []int64
	// Low[q] and High[q] are nil when no input gave the minimum (maximum) of q; otherwise NaN
	// where a sample has none.
	Low, High [NumQuantities][]float64
}

// Len is the number of sample times.
func (s *Series) Len() int {
	if s.packed != nil {
		return s.packed.times.n
	}
	return len(s.TimesMs)
}

// Has reports whether the port has at least one finite value of q.
func (s *Series) Has(q Quantity) bool {
	if s.packed != nil {
		return s.packed.finite&(1<<q) != 0
	}
	for _, v := range s.Values[q] {
		if !math.IsNaN(v) {
			return true
		}
	}
	return false
}

// HasColumn reports whether the port has a column for q (Values[q] not nil once decoded), even
// one with no finite value.
func (s *Series) HasColumn(q Quantity) bool {
	if s.packed != nil {
		return s.packed.has&(1<<q) != 0
	}
	return s.Values[q] != nil
}

// Present returns the finite values of q, in time order, with their times.
func (s *Series) Present(q Quantity) (timesMs []int64, values []float64) {
	s = s.Decoded()
	for i, v := range s.Values[q] {
		if !math.IsNaN(v) {
			timesMs = append(timesMs, s.TimesMs[i])
			values = append(values, v)
		}
	}
	return timesMs, values
}

// Dataset is everything read from a set of inputs: the per-port series, sorted by port, and the
// accounting of every input.
type Dataset struct {
	Series   []*Series
	Inputs   []InputStats
	Rejected []Rejection // in input order; at most MaxRejectionsKept are kept, the counts stay complete
	// Skipped lists files found while walking folders that are not telemetry: hidden, a name
	// that does not look like telemetry, or content that is not (empty, not text, no header
	// naming time, port and a quantity). See docs/formats.md.
	Skipped []Skip
	// Continued says that Inputs[0] is the input last handed over, read in parts (see
	// Options.PortParts and ReadEach): its accounting here, the input's so far, replaces that
	// of the Dataset before, and the Series and Rejected here follow that Dataset's.
	Continued bool
}

// JoinAccounting adds the accounting of next, a Dataset ReadEach handed over after those joined
// into d so far, to d: its inputs (a Continued one replacing d's last), its rejections (while d
// keeps fewer than MaxRejectionsKept) and its skipped files. Series are the caller's to keep
// or drop.
func (d *Dataset) JoinAccounting(next *Dataset) {
	if next.Continued && len(d.Inputs) > 0 {
		d.Inputs = d.Inputs[:len(d.Inputs)-1]
	}
	d.Inputs = append(d.Inputs, next.Inputs...)
	d.Rejected = append(d.Rejected, next.Rejected[:min(len(next.Rejected), max(MaxRejectionsKept-len(d.Rejected), 0))]...)
	d.Skipped = append(d.Skipped, next.Skipped...)
}

// Skip is a file found in a folder that was not taken as telemetry, and why.
type Skip struct {
	File   string `json:"file"`
	Reason string `json:"reason"`
}

// MaxRejectionsKept bounds the rejections a Dataset keeps in memory; the counts in Inputs stay
// complete. Output writers show at most the first 1000.
const MaxRejectionsKept = 10000

// InputStats accounts for one input file: RowsRead = RowsUsed + RowsRejected always holds.
// RowsRead counts data records, not the header and not blank lines.
type InputStats struct {
	File         string `json:"file"`
	SHA256       string `json:"sha256"`
	Format       string `json:"format"`
	RowsRead     int    `json:"rows_read"`
	RowsUsed     int    `json:"rows_used"`
	RowsRejected int    `json:"rows_rejected"`
	// Duplicates counts used rows whose (port, time) an earlier row already had; the later row wins.
	Duplicates int `json:"duplicates_replaced"`
	// Notes are things worth knowing that reject nothing, e.g. an unknown column ignored.
	Notes []string `json:"notes,omitempty"`
	// Error is set when the input could not be read completely (unreadable, damaged, no usable
	// header); the counts cover what was read before it.
	Error string `json:"error,omitempty"`
}

// Rejection says why one input row was not used.
type Rejection struct {
	File   string `json:"file"`
	Line   int    `json:"line"`
	Column int    `json:"column,omitempty"`
	Field  string `json:"field,omitempty"`
	Reason string `json:"reason"`
}
