package linelist

import (
	"fmt"
	"strings"
)

// DateFormat says how a line list writes dates that are not ISO 8601. ISO 8601 dates are
// accepted under every format, so a config only has to name the export's other habit.
type DateFormat string

const (
	DateISO DateFormat = "iso" // only ISO 8601; the default ("" means the same)
	DateDMY DateFormat = "dmy" // also day-first: 25/04/2026, 25.04.2026, 25-04-2026
	DateMDY DateFormat = "mdy" // also month-first: 04/25/2026, 04.25.2026, 04-25-2026
)

// Years outside this range are treated as typing or export errors (0000-00-00, 9999-12-31).
const (
	minYear = 1900
	maxYear = 2200
)

// ParseDate reads one date cell. Surrounding spaces are ignored. Accepted always:
// YYYY-MM-DD, YYYY-MM-DD followed by 'T' or a space and a time of day (the time is
// ignored), and the ISO 8601 basic form YYYYMMDD. Under DateDMY or DateMDY, also
// D/M/YYYY or M/D/YYYY with separator '/', '.' or '-' (one kind per date), one- or
// two-digit day and month, a four-digit year, and an optional time after a space.
//
// A non-ISO date is never guessed: without a day-first or month-first format even
// 25/04/2026 is an error, and the error says how to set input.date_format. Impossible
// dates (2026-02-30, 0000-00-00) and years outside 1900..2200 are errors.
func ParseDate(s string, format DateFormat) (Day, error) {
	s = strings.TrimSpace(s)
	if s == "" {
		return 0, fmt.Errorf("date is blank")
	}
	if y, m, d, ok := parseISO(s); ok {
		if err := checkTime(s, timeSuffix(s, 10)); err != nil {
			return 0, err
		}
		return civilDay(s, y, m, d)
	}
	switch format {
	case DateDMY, DateMDY:
		a, b, y, ok := parseSeparated(s)
		if !ok {
			return 0, fmt.Errorf("date %q is neither YYYY-MM-DD nor %s; fix the cell or check input.date_format in the jurisdiction config", clip(s), formatPattern(format))
		}
		if i := strings.IndexAny(s, " T"); i > 0 {
			if err := checkTime(s, s[i:]); err != nil {
				return 0, err
			}
		}
		if format == DateDMY {
			return civilDay(s, y, b, a)
		}
		return civilDay(s, y, a, b)
	case "", DateISO:
		return 0, fmt.Errorf("date %q is not ISO 8601 (YYYY-MM-DD); if the export writes day-first or month-first dates, set input.date_format: dmy or mdy in the jurisdiction config", clip(s))
	default:
		return 0, fmt.Errorf("date format %q is not one of iso, dmy, mdy", string(format))
	}
}

func formatPattern(f DateFormat) string {
	if f == DateDMY {
		return "DD/MM/YYYY (day first; separator / . or -)"
	}
	return "MM/DD/YYYY (month first; separator / . or -)"
}

// parseISO recognises YYYY-MM-DD[(T| )time] and YYYYMMDD.
func parseISO(s string) (y, m, d int, ok bool) {
	if len(s) == 8 && allDigits(s) {
		return atoi(s[:4]), atoi(s[4:6]), atoi(s[6:]), true
	}
	if len(s) < 10 || s[4] != '-' || s[7] != '-' || !allDigits(s[:4]) || !allDigits(s[5:7]) || !allDigits(s[8:10]) {
		return 0, 0, 0, false
	}
	if len(s) > 10 && !isTimeSuffix(s[10:]) {
		return 0, 0, 0, false
	}
	return atoi(s[:4]), atoi(s[5:7]), atoi(s[8:10]), true
}

// parseSeparated recognises A?B?YYYY with one- or two-digit A and B and one separator
// kind, optionally followed by a time of day after a space or 'T'.
func parseSeparated(s string) (a, b, y int, ok bool) {
	i := 0
	for i < len(s) && i < 3 && isDigit(s[i]) {
		i++
	}
	if i == 0 || i > 2 || i >= len(s) {
		return 0, 0, 0, false
	}
	sep := s[i]
	if sep != '/' && sep != '.' && sep != '-' {
		return 0, 0, 0, false
	}
	rest := s[i+1:]
	j := 0
	for j < len(rest) && j < 3 && isDigit(rest[j]) {
		j++
	}
	if j == 0 || j > 2 || j >= len(rest) || rest[j] != sep {
		return 0, 0, 0, false
	}
	yr := rest[j+1:]
	if len(yr) < 4 || !allDigits(yr[:4]) {
		return 0, 0, 0, false
	}
	if len(yr) > 4 && !isTimeSuffix(yr[4:]) {
		return 0, 0, 0, false
	}
	return atoi(s[:i]), atoi(rest[:j]), atoi(yr[:4]), true
}

// timeSuffix is what follows the date at position i of an ISO date cell ("" for none).
func timeSuffix(s string, i int) string {
	if len(s) <= i || len(s) == 8 {
		return ""
	}
	return s[i:]
}

// checkTime rejects a time of day that cannot be one (25:00, 12:61): the time is ignored,
// but an impossible one says the cell is wrong. It accepts hh, hh:mm, hh:mm:ss with an
// optional fraction, and an optional zone (Z or ±hh[:mm]).
func checkTime(cell, t string) error {
	if t == "" {
		return nil
	}
	bad := fmt.Errorf("date %q has an impossible time of day %q; fix the cell (the time is not used, but a wrong one suggests a wrong date)", clip(cell), clip(strings.TrimSpace(t[1:])))
	t = t[1:]
	if i := strings.IndexAny(t, "Z+-"); i >= 0 {
		zone := t[i:]
		t = t[:i]
		if zone != "Z" {
			h, m, ok := hourMinute(zone[1:])
			if !ok || h > 14 || m > 59 {
				return bad
			}
		}
	}
	if i := strings.IndexAny(t, ".,"); i >= 0 {
		if !allDigits(t[i+1:]) || i+1 == len(t) {
			return bad
		}
		t = t[:i]
	}
	parts := strings.Split(t, ":")
	limits := []int{23, 59, 60} // a leap second is 60
	if len(parts) > 3 {
		return bad
	}
	for i, p := range parts {
		if len(p) != 2 || !allDigits(p) || atoi(p) > limits[i] {
			return bad
		}
	}
	return nil
}

// hourMinute reads hh or hh:mm (or hhmm) of a zone offset.
func hourMinute(z string) (h, m int, ok bool) {
	z = strings.ReplaceAll(z, ":", "")
	switch {
	case len(z) == 2 && allDigits(z):
		return atoi(z), 0, true
	case len(z) == 4 && allDigits(z):
		return atoi(z[:2]), atoi(z[2:]), true
	}
	return 0, 0, false
}

// isTimeSuffix accepts "T12:30", " 00:00:00", "T08:00:00.000Z", "T08:00+02:00".
func isTimeSuffix(t string) bool {
	if len(t) < 2 || (t[0] != 'T' && t[0] != ' ') || !isDigit(t[1]) {
		return false
	}
	for i := 1; i < len(t); i++ {
		c := t[i]
		if !isDigit(c) && !strings.ContainsRune(":.,+-Z", rune(c)) {
			return false
		}
	}
	return true
}

// civilDay validates y-m-d and converts it to a Day without going through time.Time,
// because this runs once or twice per row. Algorithm: days_from_civil, H. Hinnant,
// "chrono-Compatible Low-Level Date Algorithms" (2013).
func civilDay(s string, y, m, d int) (Day, error) {
	if y < minYear || y > maxYear {
		return 0, fmt.Errorf("date %q has year %d, outside %d..%d; fix the cell (placeholder dates such as 0000-00-00 or 9999-12-31 should be left blank)", clip(s), y, minYear, maxYear)
	}
	if m < 1 || m > 12 {
		return 0, fmt.Errorf("date %q has month %d; months run 1..12 (check input.date_format if day and month are swapped)", clip(s), m)
	}
	if dim := daysIn(y, m); d < 1 || d > dim {
		return 0, fmt.Errorf("date %q does not exist: month %d of %d has %d days", clip(s), m, y, dim)
	}
	if m <= 2 {
		y--
	}
	era := y / 400 // y >= 1899 here, so no negative-division care is needed
	yoe := y - era*400
	mp := (m + 9) % 12 // March = 0
	doy := (153*mp+2)/5 + d - 1
	doe := yoe*365 + yoe/4 - yoe/100 + doy
	return Day(era*146097 + doe - 719468), nil
}

func daysIn(y, m int) int {
	switch m {
	case 2:
		if y%4 == 0 && (y%100 != 0 || y%400 == 0) {
			return 29
		}
		return 28
	case 4, 6, 9, 11:
		return 30
	}
	return 31
}

func isDigit(c byte) bool { return c >= '0' && c <= '9' }

func allDigits(s string) bool {
	for i := 0; i < len(s); i++ {
		if !isDigit(s[i]) {
			return false
		}
	}
	return s != ""
}

// atoi converts a short all-digit string; callers check allDigits first.
func atoi(s string) int {
	n := 0
	for i := 0; i < len(s); i++ {
		n = n*10 + int(s[i]-'0')
	}
	return n
}

// clip shortens a cell for a message, so a 10 MB cell does not become a 10 MB message.
func clip(s string) string {
	const max = 60
	if len(s) <= max {
		return s
	}
	cut := max
	for cut > 0 && s[cut]&0xC0 == 0x80 { // do not split a UTF-8 sequence
		cut--
	}
	return s[:cut] + "…"
}
