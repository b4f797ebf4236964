package linelist

import (
	"fmt"
	"math"
	"strconv"
	"time"
)

// Day is a calendar date counted in whole days since 1970-01-01 (UTC, proleptic Gregorian).
// Onset dates in a line list are whole days, so every interval between two cases is an
// integer number of days and arithmetic on Day needs no time zones.
type Day int32

// DayOf returns the Day of t's calendar date (its year, month and day, whatever its zone).
func DayOf(t time.Time) Day {
	y, m, d := t.Date()
	return Day(time.Date(y, m, d, 0, 0, 0, 0, time.UTC).Unix() / 86400)
}

// Time returns midnight UTC of d.
func (d Day) Time() time.Time { return time.Unix(int64(d)*86400, 0).UTC() }

// String formats d as ISO 8601 (YYYY-MM-DD).
func (d Day) String() string { return d.Time().Format("2006-01-02") }

// MarshalText writes d as YYYY-MM-DD, so a Day in JSON is a plain date string.
func (d Day) MarshalText() ([]byte, error) { return []byte(d.String()), nil }

// UnmarshalText reads what MarshalText writes: YYYY-MM-DD, with the longer or signed year
// that days outside years 0–9999 format to, so every Day survives a JSON round trip.
func (d *Day) UnmarshalText(b []byte) error {
	s := string(b)
	bad := fmt.Errorf("date %q is not YYYY-MM-DD", clip(s))
	if t, err := time.Parse("2006-01-02", s); err == nil {
		*d = DayOf(t)
		return nil
	}
	if len(s) < 10 || len(s) > 16 || s[len(s)-3] != '-' || s[len(s)-6] != '-' {
		return bad
	}
	y, err1 := strconv.Atoi(s[:len(s)-6])
	m, err2 := strconv.Atoi(s[len(s)-5 : len(s)-3])
	dd, err3 := strconv.Atoi(s[len(s)-2:])
	if err1 != nil || err2 != nil || err3 != nil || m < 1 || m > 12 || dd < 1 || dd > 31 {
		return bad
	}
	t := time.Date(y, time.Month(m), dd, 0, 0, 0, 0, time.UTC)
	if t.Day() != dd {
		return bad // no such day in that month
	}
	days := t.Unix() / 86400
	if days < math.MinInt32 || days > math.MaxInt32 {
		return bad
	}
	*d = Day(days)
	return nil
}

// ISOWeekStart returns the Monday that starts d's ISO 8601 week.
func (d Day) ISOWeekStart() Day {
	// 1970-01-01 was a Thursday: weekday index with Monday = 0 is (d+3) mod 7.
	wd := (int64(d) + 3) % 7
	if wd < 0 {
		wd += 7
	}
	return d - Day(wd)
}

// ISOWeek returns d's ISO 8601 year and week number.
func (d Day) ISOWeek() (year, week int) { return d.Time().ISOWeek() }

// ParseISODay parses a YYYY-MM-DD date given on the command line (an analysis date, a start
// date) by the rule that applies to the dates of a line list: a real calendar date with a
// year from 1900 to 2200.
func ParseISODay(s string) (Day, error) {
	if len(s) != 10 {
		return 0, fmt.Errorf("date %q is not YYYY-MM-DD", clip(s))
	}
	return ParseDate(s, DateISO)
}
