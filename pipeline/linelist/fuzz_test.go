package linelist

import (
	"bytes"
	"compress/gzip"
	"errors"
	"os"
	"strings"
	"testing"
	"time"
)

// FuzzRead: no input panics, every error is a *FileError, and the row ledger balances.
func FuzzRead(f *testing.F) {
	f.Add([]byte("case_id,infector_id,onset_date\nA,,2026-01-01\nB,A,2026-01-03\n"))
	f.Add([]byte("\xef\xbb\xbfcase_id;onset_date;imported\r\nA;2026-01-01;maybe\r\nA;2026-01-02;yes\r\n"))
	f.Add([]byte("case_id\tonset_date\tsetting\n\"a\nb\"\t2026-01-01\tcaf\xe9\n\t2026-01-01\tx\n"))
	f.Add([]byte("case_id,onset_date\nab\"c,2026-01-01\n\"open,2026-01-02\nx,0000-00-00\n"))
	f.Add([]byte("Case ID,Date of Onset,x\n1,2026-02-30,\x00\n2,20260101\n"))
	// The other formats Read decides by content: gzip, a workbook, and their broken starts.
	var gz bytes.Buffer
	zw := gzip.NewWriter(&gz)
	zw.Write([]byte("case_id,onset_date\nA,2026-01-01\n"))
	zw.Close()
	f.Add(gz.Bytes())
	f.Add(gz.Bytes()[:12])
	if xl, err := os.ReadFile("../../testdata/linelist/workbook/regions-1900.xlsx"); err == nil {
		f.Add(xl)
		f.Add(xl[:len(xl)/2])
	}
	f.Add([]byte("PK\x03\x04"))
	f.Add([]byte("\xD0\xCF\x11\xE0\xA1\xB1\x1A\xE1"))
	f.Fuzz(func(t *testing.T, data []byte) {
		ll, err := Read(bytes.NewReader(data), Options{AsOf: 20500, MaxRows: 10000})
		if err != nil {
			var fe *FileError
			if !errors.As(err, &fe) || fe.Err.Error() == "" {
				t.Fatalf("error %v is not a *FileError with a message", err)
			}
			return
		}
		checkLedger(t, ll)
	})
}

// FuzzParseDate: no panic; an accepted date is in range and, for ISO input, agrees with
// the standard library.
func FuzzParseDate(f *testing.F) {
	for _, s := range []string{"2026-03-04", "20260304", "03/04/2026", "2026-02-30", "0000-00-00", "9999-12-31", "1.1.1900", "2026-03-04T10:00Z"} {
		f.Add(s, uint8(0))
		f.Add(s, uint8(1))
	}
	f.Fuzz(func(t *testing.T, s string, which uint8) {
		format := []DateFormat{DateISO, DateDMY, DateMDY, ""}[which%4]
		d, err := ParseDate(s, format)
		if err != nil {
			if err.Error() == "" {
				t.Fatal("empty error message")
			}
			return
		}
		if y := d.Time().Year(); y < minYear || y > maxYear {
			t.Fatalf("ParseDate(%q) = %s, outside the accepted years", s, d)
		}
		trimmed := strings.TrimSpace(s)
		if len(trimmed) >= 10 && trimmed[4] == '-' {
			tm, terr := time.Parse("2006-01-02", trimmed[:10])
			if terr != nil || DayOf(tm) != d {
				t.Fatalf("ParseDate(%q) = %s; time.Parse says %v, %v", s, d, tm, terr)
			}
		}
	})
}
