package linelist

import (
	"math"
	"testing"
)

// Every Day, including those outside years 0–9999, reads back from the text it writes: the
// release copies a Summary through JSON, and a date must not be lost on the way.
func TestDayTextRoundTrip(t *testing.T) {
	for _, d := range []Day{0, 19806, 2932896, 2932897, -719528, -719529, -800000, math.MaxInt32, math.MinInt32} {
		b, _ := d.MarshalText()
		var back Day
		if err := back.UnmarshalText(b); err != nil || back != d {
			t.Errorf("Day %d wrote %q, read back %d (%v)", d, b, back, err)
		}
	}
	var x Day
	for _, s := range []string{"2026-02-30", "10000-13-01", "x0000-01-01", "2026-1-01"} {
		if err := x.UnmarshalText([]byte(s)); err == nil {
			t.Errorf("%q was read as a date", s)
		}
	}
}
