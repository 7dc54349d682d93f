package parse

import (
	"errors"
	"fmt"
	"unicode/utf8"
)

// Sentinel errors wrapped by ParseError.Err; test for them with errors.Is.
var (
	ErrEmpty           = errors.New("empty input")
	ErrNoHeader        = errors.New("no header row")
	ErrMissingColumn   = errors.New("required column missing")
	ErrDuplicateColumn = errors.New("duplicate column")
	ErrFieldCount      = errors.New("wrong number of fields")
	ErrQuote           = errors.New("unterminated quoted field")
	ErrMissingValue    = errors.New("required value missing")
	ErrNotNumber       = errors.New("not a number")
	ErrBadTime         = errors.New("unparsable time")
	ErrImpossible      = errors.New("physically impossible value")
	ErrEncoding        = errors.New("not valid UTF-8")
	ErrTruncated       = errors.New("input truncated")
	ErrJSON            = errors.New("invalid JSON")
	ErrNoData          = errors.New("no optical-channel or OTN data")
	ErrNotText         = errors.New("not a text file")
	ErrTooLarge        = errors.New("input over the reading limit")
	// ErrOption is matched (errors.Is) by the error of a reading option or a list of paths that
	// cannot be used — a bad --time-format or --timezone, "-" twice — found before anything is
	// read: a caller can report it as a usage error.
	ErrOption = errors.New("bad reading option")
)

// optionError is an error of the reading options (ErrOption); it reads as its message alone.
type optionError struct{ err error }

func (e optionError) Error() string        { return e.err.Error() }
func (e optionError) Unwrap() error        { return e.err }
func (e optionError) Is(target error) bool { return target == ErrOption }

// ParseError says where an input went wrong, like encoding/csv's ParseError. Line is 1-based;
// Column is the 1-based field number in a CSV row (0 when not known); Field is the column or
// leaf name as written in the input.
type ParseError struct {
	File   string
	Line   int
	Column int
	Field  string
	Err    error
}

func (e *ParseError) Error() string {
	loc := e.File
	if e.Line > 0 {
		loc = fmt.Sprintf("%s:%d", loc, e.Line)
		if e.Column > 0 {
			loc = fmt.Sprintf("%s:%d", loc, e.Column)
		}
	}
	if e.Field != "" {
		return fmt.Sprintf("%s: %s: %v", loc, e.Field, e.Err)
	}
	return fmt.Sprintf("%s: %v", loc, e.Err)
}

// Unwrap returns the underlying error, usually wrapping one of the sentinel errors.
func (e *ParseError) Unwrap() error { return e.Err }

// rejection turns e into the Rejection recorded for its row.
func (e *ParseError) rejection() Rejection {
	reason := e.Err.Error()
	if e.Field != "" {
		reason = e.Field + ": " + reason
	}
	return Rejection{File: e.File, Line: e.Line, Column: e.Column, Field: e.Field, Reason: reason}
}

// MaxPortNameBytes bounds a port name. Real ones (an interface name, an OpenConfig component
// path, a store's label) are tens of bytes; a bound keeps one row from carrying a name of
// megabytes that every port table, report and index would then hold and print, which would
// break the memory ceiling the row limit sets.
const MaxPortNameBytes = 256

// CheckPortName returns why name cannot name a port — longer than MaxPortNameBytes, or not
// UTF-8 (wrapping ErrEncoding) — or nil. Every reader rejects such a row with this reason.
func CheckPortName(name string) error {
	if len(name) <= MaxPortNameBytes && utf8.ValidString(name) {
		return nil // the message is built only for a rejection: readers call this per block
	}
	short := fmt.Sprintf("%q", name)
	if len(name) > 40 {
		short = fmt.Sprintf("%q…", name[:40])
	}
	if len(name) > MaxPortNameBytes {
		return fmt.Errorf("port name of %d bytes %s: longer than the %d-byte limit for a port name", len(name), short, MaxPortNameBytes)
	}
	if !utf8.ValidString(name) {
		return fmt.Errorf("%w: port name %s", ErrEncoding, short)
	}
	return nil
}

// MaxNotesListed bounds the notes of one kind an input lists — unknown columns (CSV) or members
// (JSON), logical channels read as ports (OpenConfig): the first ones are listed and the rest
// summed up in one note, so that an export with hundreds of thousands of them neither floods
// the output nor takes time or memory without bound.
const MaxNotesListed = 20
