package linelist

import (
	"encoding/csv"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/xuri/excelize/v2"
)

const workbookDir = "../../testdata/linelist/workbook"

// caseText is a case without its place, for comparing the same rows read from two formats.
func caseText(c Case) string {
	return fmt.Sprintf("%s|%s|%s|%v|%s|%v|%s|%s|%s", c.ID, c.InfectorID, c.Onset, c.HasReport, c.Report, c.Imported, c.Setting, c.AgeGroup, c.Jurisdiction)
}

// The workbooks of testdata/linelist/workbook were written from cases.csv by openpyxl and
// re-saved by LibreOffice (make_workbooks.py there): a notes sheet first, two title rows,
// dates as serial numbers in the 1900 and the 1904 date system, and report dates as
// formulas with the values LibreOffice cached. Read from either, the cases and problems are
// those of the CSV, with the places the spreadsheet shows.
func TestWorkbookEqualsItsCSV(t *testing.T) {
	want, err := ReadFile(filepath.Join(workbookDir, "cases.csv"), Options{})
	if err != nil {
		t.Fatal(err)
	}
	if len(want.Cases) != 14 || want.Rows != 16 {
		t.Fatalf("CSV: %d cases of %d rows, want 14 of 16", len(want.Cases), want.Rows)
	}
	for _, tt := range []struct {
		file     string
		date1904 bool
	}{{"regions-1900.xlsx", false}, {"regions-1904.xlsx", true}} {
		t.Run(tt.file, func(t *testing.T) {
			got, err := ReadFile(filepath.Join(workbookDir, tt.file), Options{})
			if err != nil {
				t.Fatal(err)
			}
			checkLedger(t, got)
			s := got.Sources[0]
			if s.Format != FormatWorkbook || s.Sheet != "Cases" || s.HeaderRow != 3 || s.Date1904 != tt.date1904 || !strings.Contains(s.SheetReason, `passed over "Notes"`) {
				t.Errorf("source %+v: want sheet Cases, header row 3, 1904 system %v, Notes skipped", s, tt.date1904)
			}
			if len(got.Cases) != len(want.Cases) || got.Rows != want.Rows {
				t.Fatalf("%d cases of %d rows, want %d of %d", len(got.Cases), got.Rows, len(want.Cases), want.Rows)
			}
			for i := range want.Cases {
				if g, w := caseText(got.Cases[i]), caseText(want.Cases[i]); g != w {
					t.Errorf("case %d: %s, want %s", i, g, w)
				}
				// CSV line L (header line 1) is spreadsheet row L+2 (header row 3).
				if got.Cases[i].Row != want.Cases[i].Row+2 {
					t.Errorf("case %s on row %d, want %d", got.Cases[i].ID, got.Cases[i].Row, want.Cases[i].Row+2)
				}
			}
			if len(got.Problems) != len(want.Problems) {
				t.Fatalf("problems %v, want those of the CSV %v", got.Problems, want.Problems)
			}
			for i, p := range got.Problems {
				w := want.Problems[i]
				if p.Code != w.Code || p.Column != w.Column || p.Row != w.Row+2 {
					t.Errorf("problem %v, want %v two rows down", p, w)
				}
			}
			// W-06's onset "unknown" is CSV line 7, cell C9 of the sheet.
			if g := got.Place(got.Problems[0]); g != "Cases!C9" || want.Place(want.Problems[0]) != "line 7" {
				t.Errorf("first problem at %q (CSV: %q), want Cases!C9 (line 7)", g, want.Place(want.Problems[0]))
			}
		})
	}
}

// Serial dates against excelize's own conversion (ExcelDateToTime, a separate
// implementation by Julian day numbers before March 1900), on every day from 1900 to 2100,
// and the fixed points of ECMA-376 Part 1 §18.17.4.1 (recalled from memory of the
// standard's text): serial 1 of the 1900 system is 1900-01-01, serial 60 the nonexistent
// 1900-02-29, serial 61 is 1900-03-01; serial 0 of the 1904 system is 1904-01-01.
func TestSerialDate(t *testing.T) {
	for _, tt := range []struct {
		v        string
		date1904 bool
		want     string
	}{
		{"1", false, "1900-01-01"}, {"59", false, "1900-02-28"}, {"60", false, "1900-02-29"},
		{"61", false, "1900-03-01"}, {"25569", false, "1970-01-01"}, {"46031.75", false, "2026-01-09"},
		{"0", true, "1904-01-01"}, {"24107", true, "1970-01-01"}, {"44569", true, "2026-01-09"},
		{"0", false, "0"}, {"20260105", false, "20260105"}, {"2026-01-05", false, "2026-01-05"},
		{"05/01/2026", true, "05/01/2026"}, {"-3", false, "-3"}, {"1e400", false, "1e400"},
	} {
		if got := serialDate(tt.v, tt.date1904); got != tt.want {
			t.Errorf("serialDate(%q, 1904=%v) = %q, want %q", tt.v, tt.date1904, got, tt.want)
		}
	}
	for _, date1904 := range []bool{false, true} {
		for n := 1; n < 73051; n++ {
			if n == 60 && !date1904 {
				continue
			}
			tm, err := excelize.ExcelDateToTime(float64(n), date1904)
			if err != nil {
				t.Fatal(err)
			}
			if got, want := serialDate(fmt.Sprint(n), date1904), tm.Format("2006-01-02"); got != want {
				t.Fatalf("serial %d (1904=%v): %s, excelize %s", n, date1904, got, want)
			}
		}
	}
}

// Serial dates against openpyxl's from_excel (a Python implementation, independent of
// excelize), in both date systems up to 9999-12-31: serials.csv, written by serials.py
// beside it with Debian 12's python3-openpyxl 3.0.9.
func TestSerialDateAgainstOpenpyxl(t *testing.T) {
	f, err := os.Open(filepath.Join(workbookDir, "serials.csv"))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	recs, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	if len(recs) < 7000 {
		t.Fatalf("%d reference rows", len(recs))
	}
	for _, r := range recs[1:] {
		if got := serialDate(r[1], r[0] == "1904"); got != r[2] {
			t.Errorf("serial %s, %s system: %s, openpyxl %s", r[1], r[0], got, r[2])
		}
	}
}
