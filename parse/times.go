package parse

import (
	"fmt"
	"math"
	"strings"
	"time"
	_ "time/tzdata" // --timezone names resolve on machines without a zone database
)

// timeReader reads sample times as the reading options say. The nil *timeReader reads the
// built-in formats in UTC; that is the fast path, which never allocates.
//
// Built-in formats (see docs/formats.md, "Times"):
//   - RFC 3339 and ISO 8601 date-times: YYYY-MM-DD, a T or a space, HH:MM, optional :SS and
//     .fraction, then a zone (Z, ±HH:MM, ±HHMM, " UTC") — optional after a space (UTC, or
//     the --timezone zone) and after a T only when a --timezone is given; "/" may replace "-"
//     in the date (YYYY/MM/DD);
//   - with DayFirst: DD.MM.YYYY, DD/MM/YYYY or DD-MM-YYYY, a space or T, then the clock as above;
//   - Unix time as a number, unit decided by magnitude (s, ms, µs, ns).
//
// With Layout set only that layout is read.
type timeReader struct {
	layout   string         // Go layout from --time-format; "" for the built-in formats
	spelled  string         // the --time-format as the user wrote it, for messages
	dayFirst bool           // read DD.MM.YYYY, DD/MM/YYYY and DD-MM-YYYY
	loc      *time.Location // zone of times written without one; nil: UTC
}

// newTimeReader checks the time options: format is a Go layout or a strftime-like format
// (see strftimeLayout), zone an IANA zone name ("Europe/Berlin"), "UTC", "Local" or a fixed
// offset ("+01:00"). It returns nil when every option is at its default.
func newTimeReader(format string, dayFirst bool, zone string) (*timeReader, error) {
	if format == "" && !dayFirst && zone == "" {
		return nil, nil
	}
	tr := &timeReader{spelled: format, dayFirst: dayFirst}
	if zone != "" {
		loc, err := parseZone(zone)
		if err != nil {
			return nil, err
		}
		tr.loc = loc
	}
	if format != "" {
		layout, err := timeLayout(format)
		if err != nil {
			return nil, err
		}
		tr.layout = layout
	}
	return tr, nil
}

// parseZone reads a --timezone value.
func parseZone(zone string) (*time.Location, error) {
	if z := []byte(zone); len(z) == 6 && (z[0] == '+' || z[0] == '-') {
		if off, ok := zoneOffset(z); ok {
			return time.FixedZone(zone, off), nil
		}
	}
	loc, err := time.LoadLocation(zone)
	if err != nil {
		return nil, fmt.Errorf("--timezone %q: unknown time zone; give an IANA zone name such as Europe/Berlin, UTC, or an offset such as +01:00", zone)
	}
	return loc, nil
}

// strftimeDirectives maps the strftime-like directives of --time-format to Go layout elements.
// %f is the fraction of a second and must follow a "." or "," (it reads any number of digits).
var strftimeDirectives = map[byte]string{
	'Y': "2006", 'y': "06", 'm': "01", 'd': "02", 'e': "_2", 'H': "15", 'I': "03", 'M': "04",
	'S': "05", 'p': "PM", 'b': "Jan", 'h': "Jan", 'B': "January", 'a': "Mon", 'A': "Monday",
	'j': "002", 'z': "-0700", 'Z': "MST", 'F': "2006-01-02", 'T': "15:04:05", 'R': "15:04", '%': "%",
}

// timeLayout turns a --time-format into a Go layout and checks that the layout reads back a
// date and a time to the minute. A format with a % is strftime-like (%Y-%m-%d %H:%M:%S);
// anything else is a Go layout (2006-01-02 15:04:05).
func timeLayout(format string) (string, error) {
	layout := format
	if strings.Contains(format, "%") {
		var b strings.Builder
		for i := 0; i < len(format); i++ {
			c := format[i]
			if c != '%' {
				b.WriteByte(c)
				continue
			}
			if i+1 == len(format) {
				return "", fmt.Errorf("--time-format %q ends with a lone %%", format)
			}
			i++
			d := format[i]
			if d == 'f' {
				s := b.String()
				if !strings.HasSuffix(s, ".") && !strings.HasSuffix(s, ",") {
					return "", fmt.Errorf("--time-format %q: %%f must follow a . or a ,", format)
				}
				b.WriteString("999999999")
				continue
			}
			g, ok := strftimeDirectives[d]
			if !ok {
				return "", fmt.Errorf("--time-format %q: unknown directive %%%c (known: %%Y %%y %%m %%d %%e %%H %%I %%M %%S %%f %%p %%b %%B %%a %%A %%j %%z %%Z %%F %%T %%R %%%%)", format, d)
			}
			b.WriteString(g)
		}
		layout = b.String()
	}
	// Read back a reference time whose fields are all distinct: the layout must give year,
	// month, day, hour and minute.
	ref := time.Date(2026, 11, 23, 17, 45, 39, 0, time.UTC)
	got, err := time.Parse(layout, ref.Format(layout))
	if err != nil || got.Year() != 2026 || got.Month() != 11 || got.Day() != 23 || got.Hour() != 17 || got.Minute() != 45 {
		return "", fmt.Errorf("--time-format %q does not read back a date and time (year, month, day, hour and minute); e.g. %%d.%%m.%%Y %%H:%%M or 02.01.2006 15:04", format)
	}
	return layout, nil
}

// parse reads a sample time and returns Unix milliseconds (UTC), truncated toward the past.
// Times before 1900 or from 2200 on are refused: no telemetry comes from there, and the bound
// keeps every accepted time writable as a four-digit-year RFC 3339 stamp.
func (tr *timeReader) parse(b []byte) (ms int64, ok bool) {
	switch {
	case tr != nil && tr.layout != "":
		t, err := time.ParseInLocation(tr.layout, string(b), tr.location())
		if err != nil {
			return 0, false
		}
		ms, ok = t.UnixMilli(), true
	case len(b) >= 16 && (b[4] == '-' || b[4] == '/'):
		ms, ok = tr.parseDateTime(b, false)
	case tr != nil && tr.dayFirst && len(b) >= 16 && (b[2] == '.' || b[2] == '/' || b[2] == '-'):
		ms, ok = tr.parseDateTime(b, true)
	default:
		ms, ok = parseUnixTime(b)
	}
	return ms, ok && ms >= minTimeMs && ms < maxTimeMs
}

func (tr *timeReader) location() *time.Location {
	if tr == nil || tr.loc == nil {
		return time.UTC
	}
	return tr.loc
}

// parseTime reads b with the built-in formats in UTC.
func parseTime(b []byte) (int64, bool) { return (*timeReader)(nil).parse(b) }

// badTime is the rejection of a time field: what was read, a hint when the text looks like a
// format an option would read, and the formats that are accepted.
func (tr *timeReader) badTime(b []byte) error {
	if tr != nil && tr.layout != "" {
		return fmt.Errorf("%w: %s does not match --time-format %q", ErrBadTime, quoteShort(b), tr.spelled)
	}
	hint := ""
	if (tr == nil || !tr.dayFirst) && len(b) >= 10 && (b[2] == '.' || b[2] == '/') && b[5] == b[2] {
		hint = " (a day-first date? give --day-first, or --time-format for another order)"
	} else if len(b) >= 16 && b[10] == 'T' && !strings.ContainsAny(string(b[16:]), "Zz+-") {
		hint = " (a T time without a zone: add the zone, or give --timezone)"
	}
	accepted := "RFC 3339, YYYY-MM-DD HH:MM[:SS[.fff]] (UTC), Unix s/ms/µs/ns"
	if tr != nil && tr.dayFirst {
		accepted += ", DD.MM.YYYY or DD/MM/YYYY HH:MM[:SS]"
	}
	return fmt.Errorf("%w: %s%s; accepted: %s, or any layout given with --time-format", ErrBadTime, quoteShort(b), hint, accepted)
}

// The accepted time range, [1900-01-01, 2200-01-01) UTC, in Unix milliseconds.
var (
	minTimeMs = daysFromCivil(1900, 1, 1) * 86400000
	maxTimeMs = daysFromCivil(2200, 1, 1) * 86400000
)

func parseUnixTime(b []byte) (int64, bool) {
	if len(b) == 0 {
		return 0, false
	}
	// Integers exactly, so nanosecond stamps do not lose precision through float64.
	i, neg := 0, false
	if b[0] == '-' || b[0] == '+' {
		neg = b[0] == '-'
		i++
	}
	if i < len(b) && len(b)-i <= 18 { // 18 digits cannot overflow int64
		var n int64
		j := i
		for ; j < len(b) && b[j] >= '0' && b[j] <= '9'; j++ {
			n = n*10 + int64(b[j]-'0')
		}
		if j == len(b) && j > i {
			if neg {
				n = -n
			}
			return unixIntToMs(n), true
		}
	}
	v, ok := parseFloat(b)
	if !ok {
		return 0, false
	}
	a := math.Abs(v)
	var msf float64
	switch {
	case a < 1e11:
		msf = v * 1e3
	case a < 1e14:
		msf = v
	case a < 1e17:
		msf = v / 1e3
	default:
		msf = v / 1e6
	}
	if !(math.Abs(msf) < 9e15) {
		return 0, false
	}
	return int64(math.Floor(msf)), true
}

func unixIntToMs(n int64) int64 {
	a := n
	if a < 0 {
		a = -a
	}
	switch {
	case a < 1e11:
		return n * 1000
	case a < 1e14:
		return n
	case a < 1e17:
		return floorDiv(n, 1000)
	default:
		return floorDiv(n, 1000000)
	}
}

func floorDiv(a, b int64) int64 {
	q := a / b
	if (a%b != 0) && ((a < 0) != (b < 0)) {
		q--
	}
	return q
}

// digits reads s as an unsigned decimal; ok is false when a byte is not a digit.
func digits(s []byte) (int, bool) {
	n := 0
	for _, c := range s {
		if c < '0' || c > '9' {
			return 0, false
		}
		n = n*10 + int(c-'0')
	}
	return n, true
}

// zoneOffset reads "±HH:MM" or "±HHMM" as seconds east of UTC.
func zoneOffset(z []byte) (int, bool) {
	var hh, mm []byte
	switch {
	case len(z) == 6 && z[3] == ':':
		hh, mm = z[1:3], z[4:6]
	case len(z) == 5:
		hh, mm = z[1:3], z[3:5]
	default:
		return 0, false
	}
	oh, okh := digits(hh)
	om, okm := digits(mm)
	if !okh || !okm || oh > 23 || om > 59 || (z[0] != '+' && z[0] != '-') {
		return 0, false
	}
	off := oh*3600 + om*60
	if z[0] == '-' {
		off = -off
	}
	return off, true
}

// parseDateTime reads "YYYY-MM-DD" or "YYYY/MM/DD" (with dayFirst "DD.MM.YYYY", "DD/MM/YYYY"
// or "DD-MM-YYYY"), a T or a space, "HH:MM", optional ":SS" and ".fraction", and a zone: Z,
// ±HH:MM, ±HHMM or " UTC". A time without a zone is in the --timezone zone (UTC when none);
// after a T a zone is required unless --timezone is given (RFC 3339 requires one).
func (tr *timeReader) parseDateTime(b []byte, dayFirst bool) (int64, bool) {
	var year, month, day int
	var ok1, ok2, ok3 bool
	if dayFirst {
		if b[5] != b[2] {
			return 0, false
		}
		day, ok1 = digits(b[0:2])
		month, ok2 = digits(b[3:5])
		year, ok3 = digits(b[6:10])
	} else {
		if b[7] != b[4] {
			return 0, false
		}
		year, ok1 = digits(b[0:4])
		month, ok2 = digits(b[5:7])
		day, ok3 = digits(b[8:10])
	}
	hour, ok4 := digits(b[11:13])
	minute, ok5 := digits(b[14:16])
	if !(ok1 && ok2 && ok3 && ok4 && ok5) || b[13] != ':' {
		return 0, false
	}
	isT := b[10] == 'T' || b[10] == 't'
	if !isT && b[10] != ' ' {
		return 0, false
	}
	if month < 1 || month > 12 || day < 1 || day > daysIn(year, month) || hour > 23 || minute > 59 {
		return 0, false
	}
	rest := b[16:]
	sec := 0
	frac := int64(0)
	if len(rest) > 0 && rest[0] == ':' {
		if len(rest) < 3 {
			return 0, false
		}
		s, ok := digits(rest[1:3])
		if !ok || s > 59 {
			return 0, false
		}
		sec, rest = s, rest[3:]
		if len(rest) > 0 && rest[0] == '.' {
			j := 1
			for scale := int64(100); j < len(rest) && rest[j] >= '0' && rest[j] <= '9'; j++ {
				frac += int64(rest[j]-'0') * scale
				scale /= 10
			}
			if j == 1 {
				return 0, false
			}
			rest = rest[j:]
		}
	}
	offsetSec := 0
	switch {
	case len(rest) == 0:
		if loc := tr.location(); loc != time.UTC {
			// Civil time in the given zone. In a daylight-saving gap or overlap the
			// standard library picks one reading (time.Date's documented behaviour).
			return time.Date(year, time.Month(month), day, hour, minute, sec, 0, loc).Unix()*1000 + frac, true
		}
		if isT && (tr == nil || tr.loc == nil) {
			return 0, false
		}
	case len(rest) == 1 && (rest[0] == 'Z' || rest[0] == 'z'):
	case rest[0] == '+' || rest[0] == '-':
		off, ok := zoneOffset(rest)
		if !ok {
			return 0, false
		}
		offsetSec = off
	case !isT && len(rest) == 4 && rest[0] == ' ' && lower(rest[1]) == 'u' && lower(rest[2]) == 't' && lower(rest[3]) == 'c':
	default:
		return 0, false
	}
	days := daysFromCivil(year, month, day)
	secs := days*86400 + int64(hour*3600+minute*60+sec) - int64(offsetSec)
	return secs*1000 + frac, true
}
