package linelist

import (
	"strings"
	"testing"
	"time"
)

func TestParseDate(t *testing.T) {
	tests := []struct {
		in     string
		format DateFormat
		want   string // "" means an error whose message contains errHas
		errHas string
	}{
		{"2026-03-04", "", "2026-03-04", ""},
		{" 2026-03-04 ", DateISO, "2026-03-04", ""},
		{"2026-03-04T10:15:00Z", "", "2026-03-04", ""},
		{"2026-03-04 00:00:00", "", "2026-03-04", ""},
		{"2026-03-04T08:00+02:00", "", "2026-03-04", ""},
		{"20260304", "", "2026-03-04", ""},
		{"2024-02-29", "", "2024-02-29", ""},
		{"2000-02-29", "", "2000-02-29", ""},
		{"1900-01-01", "", "1900-01-01", ""},
		{"2200-12-31", "", "2200-12-31", ""},
		{"1970-01-01", "", "1970-01-01", ""},
		{"03/04/2026", DateDMY, "2026-04-03", ""},
		{"3.4.2026", DateDMY, "2026-04-03", ""},
		{"25-04-2026", DateDMY, "2026-04-25", ""},
		{"03/04/2026", DateMDY, "2026-03-04", ""},
		{"04/25/2026 13:00", DateMDY, "2026-04-25", ""},
		{"2026-03-04", DateDMY, "2026-03-04", ""},
		{"03/04/2026", "", "", "date_format"},
		{"25/04/2026", "", "", "date_format"},
		{"25/04/2026", DateMDY, "", "month 25"},
		{"03/04/26", DateDMY, "", "neither"},
		{"03/04-2026", DateDMY, "", "neither"},
		{"2026/03/04", DateDMY, "", "neither"},
		{"0000-00-00", "", "", "outside 1900..2200"},
		{"9999-12-31", "", "", "outside 1900..2200"},
		{"1899-12-31", "", "", "outside"},
		{"2201-01-01", "", "", "outside"},
		{"2026-02-30", "", "", "does not exist"},
		{"2025-02-29", "", "", "does not exist"},
		{"1900-02-29", "", "", "does not exist"},
		{"2026-04-31", "", "", "does not exist"},
		{"2026-13-01", "", "", "month 13"},
		{"2026-00-10", "", "", "month 0"},
		{"2026-1-5", "", "", "ISO 8601"},
		{"2026-03-04x", "", "", "ISO 8601"},
		{"46000", "", "", "ISO 8601"},
		{"", "", "", "blank"},
		{"   ", DateDMY, "", "blank"},
		{"2026-03-04", "ymd", "2026-03-04", ""},
		{"03/04/2026", "ymd", "", "not one of"},
	}
	for _, tt := range tests {
		d, err := ParseDate(tt.in, tt.format)
		switch {
		case tt.want != "" && (err != nil || d.String() != tt.want):
			t.Errorf("ParseDate(%q, %q) = %s, %v; want %s", tt.in, tt.format, d, err, tt.want)
		case tt.want == "" && (err == nil || !strings.Contains(err.Error(), tt.errHas)):
			t.Errorf("ParseDate(%q, %q) = %s, %v; want an error mentioning %q", tt.in, tt.format, d, err, tt.errHas)
		}
	}
}

// TestCivilDayMatchesTime checks the hand-written day count against the standard library
// for every day of the accepted range.
func TestCivilDayMatchesTime(t *testing.T) {
	for tm := time.Date(minYear, 1, 1, 0, 0, 0, 0, time.UTC); tm.Year() <= maxYear; tm = tm.AddDate(0, 0, 1) {
		got, err := civilDay("", tm.Year(), int(tm.Month()), tm.Day())
		if err != nil || got != DayOf(tm) {
			t.Fatalf("%s: civilDay = %d, %v; want %d", tm.Format("2006-01-02"), got, err, DayOf(tm))
		}
	}
}
