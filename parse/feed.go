package parse

import (
	"errors"
	"strings"
)

// ColumnSpec is a quantity as a column header names it, with the conversion from the unit the
// name carries to the stored unit: "rx_power_mw" is RxPowerDBm read in mW. Sources that are not
// files (a time-series store, a live subscription) name their quantities this way so that they
// convert and check values exactly as the file readers do.
type ColumnSpec struct{ c column }

// LookupColumnSpec matches name as a CSV header cell is matched (docs/formats.md, "Header
// matching"); ok is false when name is not a measured quantity (time, port or unknown).
func LookupColumnSpec(name string) (spec ColumnSpec, ok bool) {
	c := lookupColumn(name)
	return ColumnSpec{c}, c.kind == colQuantity
}

// Quantity is the quantity the column holds.
func (s ColumnSpec) Quantity() Quantity { return s.c.q }

// Value converts v from the column's unit to the stored unit and applies the physical range
// check every reader applies; the error wraps ErrImpossible. NaN is returned as is (missing).
func (s ColumnSpec) Value(v float64) (float64, error) {
	if v != v {
		return v, nil
	}
	out, ok := s.c.convert(v)
	if !ok {
		return 0, s.c.convFailure(v)
	}
	if err := checkRange(s.c.q, out); err != nil {
		return 0, err
	}
	return out, nil
}

// Feed builds a Dataset from a source that is not a file: rows go through the same row building
// (sorting by time, last of equal times wins) and the same accounting as the file readers'.
// A source declares its inputs (e.g. one per series of a store), counts each input's records as
// used or rejected, and adds whole rows — one port at one time, with every quantity it has
// then. Not safe for concurrent use.
type Feed struct {
	// Strict makes the first rejection an error of Dataset (as Options.Strict does for files).
	Strict bool
	res    []*fileResult
}

// AddInput declares an input and returns its index. format is what scan shows (e.g.
// "prometheus").
func (f *Feed) AddInput(name, format string) int {
	f.res = append(f.res, &fileResult{stats: InputStats{File: name, Format: format}, fb: newFileBuilder()})
	return len(f.res) - 1
}

// Used counts n records of input in as read and used. An input that a strict read stopped
// takes no more records.
func (f *Feed) Used(in, n int) {
	if f.Stopped(in) {
		return
	}
	st := &f.res[in].stats
	st.RowsRead += n
	st.RowsUsed += n
}

// Reject counts one record of input in as read and rejected, for the reason r (whose File
// should name the input). When Strict, the first rejection stops the input as it stops a file:
// the record is counted, the input's Error says reading stopped there, and the input takes no
// more records (see Stopped).
func (f *Feed) Reject(in int, r Rejection) {
	if f.Stopped(in) {
		return
	}
	res := f.res[in]
	res.stats.RowsRead++
	res.stats.RowsRejected++
	res.addRejection(r)
	if f.Strict {
		pe := &ParseError{File: r.File, Line: r.Line, Column: r.Column, Err: errors.New(r.Reason)}
		if !strings.HasPrefix(r.Reason, r.Field+": ") {
			pe.Field = r.Field // the reason does not name its field already
		}
		res.stopStrict(pe)
	}
}

// Stopped reports whether a strict read stopped input in at a rejected record. A source reads
// on only to finish its digest: what follows is neither counted nor added.
func (f *Feed) Stopped(in int) bool { return f.res[in].strictErr != nil }

// Note adds a note to input in.
func (f *Feed) Note(in int, note string) {
	f.res[in].stats.Notes = append(f.res[in].stats.Notes, note)
}

// SetSHA256 records the digest (hex) of what input in delivered.
func (f *Feed) SetSHA256(in int, hexDigest string) { f.res[in].stats.SHA256 = hexDigest }

// Row adds one row to input in: port at tMs (Unix ms) with vals[j] for qs[j], already converted
// and checked (ColumnSpec.Value); NaN is missing. It counts nothing: the caller counts records.
func (f *Feed) Row(in int, port string, tMs int64, qs []Quantity, vals []float64) {
	var mask uint32
	for _, q := range qs {
		mask |= 1 << q
	}
	f.res[in].fb.port([]byte(port)).addDense(tMs, qs, vals, mask)
}

// Inputs is the number of inputs declared so far.
func (f *Feed) Inputs() int { return len(f.res) }

// Dataset assembles what was fed, as ReadPaths assembles files. err is the strict-mode error
// when Strict and something was rejected.
func (f *Feed) Dataset() (*Dataset, error) {
	return assemble(f.res, 1)
}
