// Package words writes counts for people to read: a number grouped by thousands and a count
// with its noun in the singular or plural as the count asks ("1 burst", "3 bursts"). It imports
// nothing of beatnote, so the diagnosis engine and every writer share it.
package words

import (
	"fmt"
	"math"
	"strings"
)

// Group writes n with thin grouping for readability: 12345 → "12 345", -12345 → "-12 345";
// four digits stay together (1234).
func Group(n int) string {
	if n < 0 && n != math.MinInt {
		return "-" + Group(-n)
	}
	s := fmt.Sprint(n)
	if n < 0 || len(s) <= 4 {
		return s
	}
	var b strings.Builder
	for i, c := range s {
		if i > 0 && (len(s)-i)%3 == 0 {
			b.WriteByte(' ')
		}
		b.WriteRune(c)
	}
	return b.String()
}

// Plural writes a count with its noun: "1 row", "12 345 rows".
func Plural(n int, one, many string) string {
	if n == 1 {
		return "1 " + one
	}
	return Group(n) + " " + many
}
