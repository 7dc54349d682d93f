package parse

import (
	"math"
	"strconv"
	"time"
	"unsafe"
)

// bytesString views b as a string without copying. The string must not outlive b's contents
// and must not be retained: callers only pass it to functions that do not keep it.
func bytesString(b []byte) string {
	if len(b) == 0 {
		return ""
	}
	return unsafe.String(&b[0], len(b))
}

// exactPow10 holds the powers of ten that float64 represents exactly (10^0 … 10^22).
var exactPow10 = [...]float64{1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10,
	1e11, 1e12, 1e13, 1e14, 1e15, 1e16, 1e17, 1e18, 1e19, 1e20, 1e21, 1e22}

// parseFloat parses a decimal number ("-1.25", "1e-3", "+.5", "1.0E-03") from b without
// allocating. It takes the exact fast path of Clinger (1990), also used by strconv: when the
// decimal mantissa m < 2^53 and the decimal exponent e satisfies |e| ≤ 22, m·10^e (or m/10^-e)
// is correctly rounded because both operands are exact. Anything else goes to strconv.ParseFloat,
// so results are always correctly rounded. Only the characters 0-9 + - . e E are accepted:
// "Inf", "NaN", hex floats and underscores are not numbers here. ok is false for non-numbers and
// for values that overflow float64.
func parseFloat(b []byte) (v float64, ok bool) {
	i, n := 0, len(b)
	if n == 0 {
		return 0, false
	}
	neg := false
	if b[0] == '+' || b[0] == '-' {
		neg = b[0] == '-'
		i++
	}
	var mant uint64
	digits, dexp := 0, 0
	sawDigit, sawDot := false, false
	for ; i < n; i++ {
		c := b[i]
		if c >= '0' && c <= '9' {
			sawDigit = true
			if mant == 0 && c == '0' {
				if sawDot {
					dexp--
				}
				continue
			}
			if digits < 19 {
				mant = mant*10 + uint64(c-'0')
				digits++
				if sawDot {
					dexp--
				}
			} else {
				return slowFloat(b)
			}
			continue
		}
		if c == '.' && !sawDot {
			sawDot = true
			continue
		}
		break
	}
	if !sawDigit {
		return 0, false
	}
	if i < n {
		if b[i] != 'e' && b[i] != 'E' {
			return 0, false
		}
		i++
		eneg := false
		if i < n && (b[i] == '+' || b[i] == '-') {
			eneg = b[i] == '-'
			i++
		}
		if i == n {
			return 0, false
		}
		e := 0
		for ; i < n; i++ {
			c := b[i]
			if c < '0' || c > '9' {
				return 0, false
			}
			if e < 100000 {
				e = e*10 + int(c-'0')
			}
		}
		if eneg {
			e = -e
		}
		dexp += e
	}
	if mant == 0 {
		if neg {
			return math.Copysign(0, -1), true
		}
		return 0, true
	}
	if mant < 1<<53 && dexp >= -22 && dexp <= 22 {
		f := float64(mant)
		if dexp < 0 {
			f /= exactPow10[-dexp]
		} else {
			f *= exactPow10[dexp]
		}
		if neg {
			f = -f
		}
		return f, true
	}
	return slowFloat(b)
}

// slowFloat is parseFloat's exact fallback; b has passed no validation yet.
func slowFloat(b []byte) (float64, bool) {
	for _, c := range b {
		if !(c >= '0' && c <= '9' || c == '.' || c == 'e' || c == 'E' || c == '+' || c == '-') {
			return 0, false
		}
	}
	v, err := strconv.ParseFloat(bytesString(b), 64)
	if err != nil || math.IsInf(v, 0) {
		return 0, false
	}
	return v, true
}

// isMissing reports whether a (trimmed) field spells a missing value: empty, NA, NaN, n/a or -,
// in any case.
func isMissing(b []byte) bool {
	switch len(b) {
	case 0:
		return true
	case 1:
		return b[0] == '-'
	case 2:
		return lower(b[0]) == 'n' && lower(b[1]) == 'a'
	case 3:
		return lower(b[0]) == 'n' && (lower(b[1]) == 'a' && lower(b[2]) == 'n' || b[1] == '/' && lower(b[2]) == 'a')
	}
	return false
}

func lower(c byte) byte {
	if c >= 'A' && c <= 'Z' {
		return c + 'a' - 'A'
	}
	return c
}

// parseTime reads a sample time and returns Unix milliseconds (UTC), truncated toward the past.
// Accepted: RFC 3339 ("2026-03-14T08:30:00.25+01:00"), "YYYY-MM-DD HH:MM:SS[.fff]" (UTC unless a
// zone follows), and Unix time as a number whose magnitude decides the unit: below 1e11 seconds,
// below 1e14 milliseconds, below 1e17 microseconds, else nanoseconds.
//
// Times before 1900 or from 2200 on are refused: no telemetry comes from there, and the bound
// keeps every accepted time writable as a four-digit-year RFC 3339 stamp.
func parseTime(b []byte) (ms int64, ok bool) {
	if len(b) >= 19 && b[4] == '-' {
		ms, ok = parseDateTime(b)
	} else {
		ms, ok = parseUnixTime(b)
	}
	return ms, ok && ms >= minTimeMs && ms < maxTimeMs
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

// parseDateTime reads "YYYY-MM-DDTHH:MM:SS[.frac](Z|±HH:MM)" or the same with a space instead of
// T, whose zone is optional (UTC when absent).
func parseDateTime(b []byte) (int64, bool) {
	num := func(s []byte) (int, bool) {
		n := 0
		for _, c := range s {
			if c < '0' || c > '9' {
				return 0, false
			}
			n = n*10 + int(c-'0')
		}
		return n, true
	}
	year, ok1 := num(b[0:4])
	month, ok2 := num(b[5:7])
	day, ok3 := num(b[8:10])
	hour, ok4 := num(b[11:13])
	minute, ok5 := num(b[14:16])
	sec, ok6 := num(b[17:19])
	if !(ok1 && ok2 && ok3 && ok4 && ok5 && ok6) || b[7] != '-' || b[13] != ':' || b[16] != ':' {
		return 0, false
	}
	sep := b[10]
	zoneRequired := sep == 'T' || sep == 't'
	if !zoneRequired && sep != ' ' {
		return 0, false
	}
	if month < 1 || month > 12 || day < 1 || day > daysIn(year, month) || hour > 23 || minute > 59 || sec > 59 {
		return 0, false
	}
	rest := b[19:]
	frac := int64(0)
	if len(rest) > 0 && rest[0] == '.' {
		j := 1
		scale := int64(100)
		for ; j < len(rest) && rest[j] >= '0' && rest[j] <= '9'; j++ {
			frac += int64(rest[j]-'0') * scale
			scale /= 10
		}
		if j == 1 {
			return 0, false
		}
		rest = rest[j:]
	}
	offsetSec := 0
	switch {
	case len(rest) == 0:
		if zoneRequired {
			return 0, false
		}
	case len(rest) == 1 && (rest[0] == 'Z' || rest[0] == 'z'):
	case len(rest) == 6 && (rest[0] == '+' || rest[0] == '-') && rest[3] == ':':
		oh, okh := num(rest[1:3])
		om, okm := num(rest[4:6])
		if !okh || !okm || oh > 23 || om > 59 {
			return 0, false
		}
		offsetSec = oh*3600 + om*60
		if rest[0] == '-' {
			offsetSec = -offsetSec
		}
	case !zoneRequired && len(rest) == 4 && (rest[0] == ' ') && lower(rest[1]) == 'u' && lower(rest[2]) == 't' && lower(rest[3]) == 'c':
	default:
		return 0, false
	}
	days := daysFromCivil(year, month, day)
	secs := days*86400 + int64(hour*3600+minute*60+sec) - int64(offsetSec)
	return secs*1000 + frac, true
}

func daysIn(year, month int) int {
	switch month {
	case 2:
		if year%4 == 0 && (year%100 != 0 || year%400 == 0) {
			return 29
		}
		return 28
	case 4, 6, 9, 11:
		return 30
	}
	return 31
}

// daysFromCivil is the number of days from 1970-01-01 to the proleptic Gregorian date y-m-d
// (H. Hinnant, "chrono-Compatible Low-Level Date Algorithms", days_from_civil).
func daysFromCivil(y, m, d int) int64 {
	if m <= 2 {
		y--
	}
	era := y / 400
	if y < 0 && y%400 != 0 {
		era = (y - 399) / 400
	}
	yoe := y - era*400
	mp := (m + 9) % 12
	doy := (153*mp+2)/5 + d - 1
	doe := yoe*365 + yoe/4 - yoe/100 + doy
	return int64(era)*146097 + int64(doe) - 719468
}

// formatTime writes ms as RFC 3339 UTC, with milliseconds only when not zero.
func formatTime(ms int64) string {
	t := time.UnixMilli(ms).UTC()
	if ms%1000 == 0 {
		return t.Format("2006-01-02T15:04:05Z")
	}
	return t.Format("2006-01-02T15:04:05.000Z")
}
