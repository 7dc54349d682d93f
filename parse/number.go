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
// allocating. Only the characters 0-9 + - . e E are accepted: "Inf", "NaN", hex floats and
// underscores are not numbers here. ok is false for non-numbers and for values that overflow
// float64. Results are always correctly rounded: scanFloat's exact fast path, else
// strconv.ParseFloat.
func parseFloat(b []byte) (v float64, ok bool) {
	if v, n, ok := scanFloat(b, 0, '.'); ok && n == len(b) {
		return v, true
	}
	return slowFloat(b)
}

// scanDigits reads the decimal digits of b from i on into mant (mant·10 + digit each) and
// returns where they end.
func scanDigits(b []byte, i int, mant uint64) (int, uint64) {
	for ; i < len(b); i++ {
		d := b[i] - '0'
		if d > 9 {
			break
		}
		mant = mant*10 + uint64(d)
	}
	return i, mant
}

// scanFloat reads the decimal number at b[i:] — an optional sign, digits with at most one
// decimal mark ('.' or mark), an optional exponent — and returns its value and where it ends, n;
// what follows (b[n:]) is the caller's to judge. It takes the exact fast path of Clinger (1990), also
// used by strconv: when the decimal mantissa m < 2^53 and the decimal exponent e satisfies
// |e| ≤ 22, m·10^e (or m/10^-e) is correctly rounded because both operands are exact. ok is
// false when b does not start with a number or the number is outside the fast path (more than
// 19 digits, leading zeros included, or a larger exponent); slowFloat decides those.
func scanFloat(b []byte, i int, mark byte) (v float64, n int, ok bool) {
	d, n, ok := scanDecimal(b, i, mark)
	if !ok {
		return 0, n, false
	}
	return d.value(), n, true
}

// decimal is a number as written: (-1)^neg · mant · 10^exp.
type decimal struct {
	mant uint64
	exp  int
	neg  bool
}

// value is the float64 of d, which scanDecimal accepted: one correctly rounded operation.
func (d decimal) value() float64 {
	if d.mant == 0 {
		if d.neg {
			return math.Copysign(0, -1)
		}
		return 0
	}
	f := float64(d.mant)
	if d.exp < 0 {
		f /= exactPow10[-d.exp]
	} else {
		f *= exactPow10[d.exp]
	}
	if d.neg {
		f = -f
	}
	return f
}

// code returns the value code of d (see packValue) when the digits give it at once: d fits a
// code after dropping the mantissa's trailing zeros. The code is m·10^-k with the fewest
// decimals, which decodes, like d.value(), to the correctly rounded value of the same decimal:
// the same float64. ok is false for -0 and for numbers outside the code's range; packValue
// decides those from the value.
func (d decimal) code() (uint32, bool) {
	m, k := d.mant, -d.exp
	if m == 0 {
		return codeOf(0, 0), !d.neg
	}
	for m%10 == 0 && k > codeMinK {
		m /= 10
		k--
	}
	if m > codeMaxMant || k < codeMinK || k > codeMaxK {
		return 0, false
	}
	if d.neg {
		return codeOf(-int32(m), k), true
	}
	return codeOf(int32(m), k), true
}

// scanDecimal is scanFloat's reader: it returns the number's digits and exponent, which
// scanFloat's fast path accepts when ok.
func scanDecimal(b []byte, i int, mark byte) (d decimal, n int, ok bool) {
	if i < len(b) && (b[i] == '+' || b[i] == '-') {
		d.neg = b[i] == '-'
		i++
	}
	// Integer digits, then the fraction's; every digit goes into the mantissa, leading zeros
	// too, so more than 19 digits in all (which could overflow it) leave the fast path.
	start := i
	i, mant := scanDigits(b, i, 0)
	nd := i - start
	dexp := 0
	if i < len(b) && (b[i] == '.' || b[i] == mark) {
		i++
		fs := i
		i, mant = scanDigits(b, i, mant)
		dexp = fs - i
		nd -= dexp
	}
	if nd == 0 || nd > 19 {
		return d, i, false
	}
	if i < len(b) && b[i]|0x20 == 'e' {
		i++
		eneg := false
		if i < len(b) && (b[i] == '+' || b[i] == '-') {
			eneg = b[i] == '-'
			i++
		}
		e, es := 0, i
		for ; i < len(b); i++ {
			d := b[i] - '0'
			if d > 9 {
				break
			}
			if e < 100000 {
				e = e*10 + int(d)
			}
		}
		if i == es {
			return d, i, false
		}
		if eneg {
			e = -e
		}
		dexp += e
	}
	d.mant, d.exp = mant, dexp
	if mant != 0 && (mant >= 1<<53 || dexp < -22 || dexp > 22) {
		return d, i, false
	}
	return d, i, true
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
