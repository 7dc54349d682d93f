package parse

import (
	"errors"
	"strings"
	"testing"
	"time"
)

// Expected times come from the standard library's time.Date, independent of the reader.
func TestTimeOptions(t *testing.T) {
	berlin, err := time.LoadLocation("Europe/Berlin")
	if err != nil {
		t.Fatal(err)
	}
	utc := func(y, mo, d, h, mi, s int) int64 {
		return time.Date(y, time.Month(mo), d, h, mi, s, 0, time.UTC).UnixMilli()
	}
	tests := []struct {
		name     string
		format   string
		dayFirst bool
		zone     string
		in       string
		want     int64 // -1: rejected
	}{
		{"no seconds, space", "", false, "", "2026-03-14 08:30", utc(2026, 3, 14, 8, 30, 0)},
		{"no seconds, T and zone", "", false, "", "2026-03-14T08:30Z", utc(2026, 3, 14, 8, 30, 0)},
		{"no seconds, offset", "", false, "", "2026-03-14T09:30+01:00", utc(2026, 3, 14, 8, 30, 0)},
		{"compact offset", "", false, "", "2026-03-14T09:30:00+0100", utc(2026, 3, 14, 8, 30, 0)},
		{"year-first slashes", "", false, "", "2026/03/14 08:30:15", utc(2026, 3, 14, 8, 30, 15)},
		{"mixed separators", "", false, "", "2026-03/14 08:30", -1},
		{"day-first dots need the option", "", false, "", "14.03.2026 08:30", -1},
		{"day-first dots", "", true, "", "14.03.2026 08:30", utc(2026, 3, 14, 8, 30, 0)},
		{"day-first slashes with seconds", "", true, "", "14/03/2026 08:30:15.5", utc(2026, 3, 14, 8, 30, 15) + 500},
		{"day-first dashes", "", true, "", "14-03-2026 08:30:15", utc(2026, 3, 14, 8, 30, 15)},
		{"day-first, impossible month", "", true, "", "03.14.2026 08:30", -1},
		{"day-first keeps ISO", "", true, "", "2026-03-14T08:30:00Z", utc(2026, 3, 14, 8, 30, 0)},
		{"zone for zoneless times", "", false, "Europe/Berlin", "2026-03-14 09:30:00", utc(2026, 3, 14, 8, 30, 0)},
		{"zone in summer time", "", false, "Europe/Berlin", "2026-07-14 10:30", utc(2026, 7, 14, 8, 30, 0)},
		{"zone lets T go without offset", "", false, "Europe/Berlin", "2026-03-14T09:30:00", utc(2026, 3, 14, 8, 30, 0)},
		{"written zone wins", "", false, "Europe/Berlin", "2026-03-14T08:30:00Z", utc(2026, 3, 14, 8, 30, 0)},
		{"fixed offset zone", "", false, "-05:00", "2026-03-14 03:30", utc(2026, 3, 14, 8, 30, 0)},
		{"Unix time ignores zone", "", false, "Europe/Berlin", "1773477000", utc(2026, 3, 14, 8, 30, 0)},
		{"strftime", "%d.%m.%Y %H:%M", false, "", "14.03.2026 08:30", utc(2026, 3, 14, 8, 30, 0)},
		{"strftime fraction", "%m/%d/%Y %I:%M:%S.%f %p", false, "", "03/14/2026 08:30:15.25 PM", utc(2026, 3, 14, 20, 30, 15) + 250},
		{"strftime month name, zone", "%d %b %Y %H:%M", false, "Europe/Berlin", "14 Mar 2026 09:30", time.Date(2026, 3, 14, 9, 30, 0, 0, berlin).UnixMilli()},
		{"Go layout", "2006.01.02 15h04", false, "", "2026.03.14 08h30", utc(2026, 3, 14, 8, 30, 0)},
		{"Go layout without leading zeros", "2.1.2006 15:04", false, "", "4.3.2026 8:30", utc(2026, 3, 4, 8, 30, 0)},
		{"layout is exclusive", "%d.%m.%Y %H:%M", false, "", "2026-03-14T08:30:00Z", -1},
		{"layout, year out of range", "%d.%m.%Y %H:%M", false, "", "14.03.1899 08:30", -1},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			tr, err := newTimeReader(tc.format, tc.dayFirst, tc.zone)
			if err != nil {
				t.Fatal(err)
			}
			got, ok := tr.parse([]byte(tc.in))
			switch {
			case tc.want == -1 && ok:
				t.Errorf("parse(%q) = %d, want rejection", tc.in, got)
			case tc.want != -1 && (!ok || got != tc.want):
				t.Errorf("parse(%q) = %d, %v; want %d", tc.in, got, ok, tc.want)
			}
		})
	}
}

func TestTimeOptionErrors(t *testing.T) {
	for _, tc := range []struct{ format, zone, want string }{
		{"%Y-%m-%d", "", "does not read back a date and time"},
		{"%H:%M", "", "does not read back"},
		{"%Y-%m-%d %H:%M %Q", "", "unknown directive %Q"},
		{"%Y-%m-%d %H:%M:%S%f", "", "%f must follow"},
		{"%Y-%m-%d %H:%M%", "", "lone %"},
		{"", "Mars/Olympus", "unknown time zone"},
	} {
		t.Run(tc.format+tc.zone, func(t *testing.T) {
			_, err := newTimeReader(tc.format, false, tc.zone)
			if err == nil || !strings.Contains(err.Error(), tc.want) {
				t.Errorf("err = %v, want it to say %q", err, tc.want)
			}
		})
	}
	if tr, err := newTimeReader("", false, ""); tr != nil || err != nil {
		t.Errorf("defaults: %v, %v; want the nil fast path", tr, err)
	}
}

// A rejected time says what was read, hints at the option that reads it, and lists the
// accepted formats.
func TestBadTimeMessage(t *testing.T) {
	for _, tc := range []struct {
		tr   *timeReader
		in   string
		want []string
	}{
		{nil, "14.03.2026 08:30", []string{`"14.03.2026 08:30"`, "--day-first", "RFC 3339", "Unix"}},
		{nil, "2026-03-14T08:30:00", []string{"--timezone", "accepted"}},
		{nil, "yesterday", []string{"accepted: RFC 3339, YYYY-MM-DD HH:MM[:SS[.fff]]", "--time-format"}},
		{&timeReader{dayFirst: true}, "yesterday", []string{"DD.MM.YYYY"}},
		{&timeReader{layout: "02.01.2006 15:04", spelled: "%d.%m.%Y %H:%M"}, "x", []string{`does not match --time-format "%d.%m.%Y %H:%M"`}},
	} {
		err := tc.tr.badTime([]byte(tc.in))
		if !errors.Is(err, ErrBadTime) {
			t.Errorf("%q: %v does not wrap ErrBadTime", tc.in, err)
		}
		for _, w := range tc.want {
			if !strings.Contains(err.Error(), w) {
				t.Errorf("%q: message %q lacks %q", tc.in, err, w)
			}
		}
	}
}

// fuzzLayouts are the built-in formats written as the standard library's layouts, with the
// options that make the reader accept them.
var fuzzLayouts = []struct {
	layout   string
	dayFirst bool
	zone     string
}{
	{time.RFC3339, false, ""},
	{time.RFC3339Nano, false, ""},
	{"2006-01-02T15:04Z07:00", false, ""},
	{"2006-01-02 15:04:05", false, ""},
	{"2006-01-02 15:04", false, ""},
	{"2006/01/02 15:04:05.000", false, ""},
	{"2006-01-02T15:04:05-0700", false, ""},
	{"02.01.2006 15:04:05", true, ""},
	{"02/01/2006 15:04", true, ""},
	{"02-01-2006 15:04:05.999999999", true, ""},
	{"2006-01-02 15:04:05", false, "Europe/Berlin"},
	{"2006-01-02T15:04:05", false, "America/New_York"},
	{"02.01.2006 15:04", true, "+05:30"},
}

// FuzzTimeAgainstStdlib checks the time reader against time.Parse on the formats both
// accept, both ways: a time written by time.Format in one of the built-in formats reads back
// to the same millisecond, and any text the reader accepts in a date-time shape is read by
// time.Parse (with the layout of that shape) as the same instant.
func FuzzTimeAgainstStdlib(f *testing.F) {
	f.Add(int64(1773477015), int64(250000000), uint8(0), "2026-03-14T08:30:15Z")
	f.Add(int64(-2208988800), int64(0), uint8(7), "01.01.1900 00:00:00")
	f.Add(int64(7258118399), int64(999999999), uint8(10), "2026-03-29 02:30:00")
	f.Add(int64(951782400), int64(1), uint8(9), "29-02-2000 00:00:00.000000001")
	f.Add(int64(0), int64(0), uint8(3), "2026-03-14T09:30:00+0100")
	f.Fuzz(func(t *testing.T, sec, nsec int64, which uint8, text string) {
		lf := fuzzLayouts[int(which)%len(fuzzLayouts)]
		tr, err := newTimeReader("", lf.dayFirst, lf.zone)
		if err != nil {
			t.Fatal(err)
		}
		loc := tr.location()

		// Direction 1: written by the standard library, read by us.
		sec = minTimeMs/1000 + floorMod(sec, (maxTimeMs-minTimeMs)/1000)
		nsec = floorMod(nsec, 1e9)
		tm := time.Unix(sec, nsec).In(loc)
		if !strings.Contains(lf.layout, "Z07") && !strings.Contains(lf.layout, "-07") && lf.zone == "" {
			tm = tm.UTC()
		}
		s := tm.Format(lf.layout)
		want, err := time.ParseInLocation(lf.layout, s, loc) // what the text says: fields cut by the layout
		if err != nil {
			t.Fatalf("time.Parse(%q, %q): %v", lf.layout, s, err)
		}
		got, ok := tr.parse([]byte(s))
		if !ok || got != want.UnixMilli() {
			t.Fatalf("layout %q: parse(%q) = %d, %v; time.Parse gives %d", lf.layout, s, got, ok, want.UnixMilli())
		}

		// Direction 2: any text we accept in a date-time shape, time.Parse reads alike.
		ms, ok := tr.parse([]byte(text))
		if !ok {
			return
		}
		// RFC 3339 (section 5.6) allows a lower-case t and z, which time.Parse does not read:
		// compare those in upper case.
		upper := text
		if len(text) >= 16 && (text[10] == 't' || strings.HasSuffix(text, "z")) {
			upper = text[:10] + strings.ToUpper(text[10:11]) + text[11:len(text)-1] + strings.ToUpper(text[len(text)-1:])
		}
		layout, shaped := layoutOf(upper, lf.dayFirst)
		if !shaped {
			return // a Unix number: no layout to compare with
		}
		if strings.HasSuffix(strings.ToUpper(upper), " UTC") {
			loc = time.UTC // a written UTC is UTC whatever the zone option; for time.Parse it is literal text
		}
		ref, err := time.ParseInLocation(layout, upper, loc)
		if err != nil {
			t.Fatalf("we read %q as %d; time.Parse(%q) fails: %v", text, ms, layout, err)
		}
		if ref.UnixMilli() != ms {
			t.Fatalf("we read %q as %d; time.Parse(%q) gives %d", text, ms, layout, ref.UnixMilli())
		}
	})
}

func floorMod(a, m int64) int64 {
	r := a % m
	if r < 0 {
		r += m
	}
	return r
}

// layoutOf writes the standard-library layout of a date-time text of the built-in shapes:
// the date part, the separator, HH:MM, optional :SS and fraction, and the zone as written.
func layoutOf(s string, dayFirst bool) (string, bool) {
	if len(s) < 16 {
		return "", false
	}
	var b strings.Builder
	switch {
	case s[4] == '-' || s[4] == '/':
		b.WriteString("2006" + s[4:5] + "01" + s[4:5] + "02")
	case dayFirst && (s[2] == '.' || s[2] == '/' || s[2] == '-'):
		b.WriteString("02" + s[2:3] + "01" + s[2:3] + "2006")
	default:
		return "", false
	}
	b.WriteByte(s[10])
	b.WriteString("15:04")
	rest := s[16:]
	if strings.HasPrefix(rest, ":") {
		b.WriteString(":05")
		rest = rest[3:]
		if strings.HasPrefix(rest, ".") {
			n := 1
			for n < len(rest) && rest[n] >= '0' && rest[n] <= '9' {
				n++
			}
			b.WriteString("." + strings.Repeat("9", n-1))
			rest = rest[n:]
		}
	}
	switch {
	case rest == "":
	case rest == "Z" || rest == "z" || len(rest) == 6:
		b.WriteString("Z07:00")
	case len(rest) == 5:
		b.WriteString("-0700")
	case strings.EqualFold(rest, " UTC"):
		b.WriteString(" " + rest[1:])
	}
	return b.String(), true
}
