package linelist

import (
	"bytes"
	"compress/gzip"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/xuri/excelize/v2"
)

func gzipped(t *testing.T, b []byte) []byte {
	t.Helper()
	var buf bytes.Buffer
	zw := gzip.NewWriter(&buf)
	if _, err := zw.Write(b); err != nil {
		t.Fatal(err)
	}
	if err := zw.Close(); err != nil {
		t.Fatal(err)
	}
	return buf.Bytes()
}

func writeTemp(t *testing.T, name string, b []byte) string {
	t.Helper()
	p := filepath.Join(t.TempDir(), name)
	if err := os.WriteFile(p, b, 0o644); err != nil {
		t.Fatal(err)
	}
	return p
}

func sameCases(t *testing.T, got, want *LineList) {
	t.Helper()
	if len(got.Cases) != len(want.Cases) {
		t.Fatalf("%d cases, want %d", len(got.Cases), len(want.Cases))
	}
	for i := range want.Cases {
		if g, w := caseText(got.Cases[i]), caseText(want.Cases[i]); g != w || got.Cases[i].Row != want.Cases[i].Row {
			t.Errorf("case %d: %s row %d, want %s row %d", i, g, got.Cases[i].Row, w, want.Cases[i].Row)
		}
	}
}

// A gzip-compressed CSV is decided by its content, whatever its name, and reads as the
// plain file does; its checksum is that of the bytes as stored.
func TestGzipByContent(t *testing.T) {
	plain := filepath.Join(workbookDir, "cases.csv")
	raw, err := os.ReadFile(plain)
	if err != nil {
		t.Fatal(err)
	}
	want, err := ReadFile(plain, Options{})
	if err != nil {
		t.Fatal(err)
	}
	gz := gzipped(t, raw)
	for _, name := range []string{"cases.csv.gz", "cases.csv", "export.dat"} {
		ll, err := ReadFile(writeTemp(t, name, gz), Options{})
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		checkLedger(t, ll)
		sameCases(t, ll, want)
		sum := sha256.Sum256(gz)
		if s := ll.Sources[0]; !s.Gzip || s.Format != FormatCSV || s.SHA256 != hex.EncodeToString(sum[:]) {
			t.Errorf("%s: source %+v", name, s)
		}
	}
	// A workbook inside gzip is read too; gzip inside gzip is refused.
	xl, err := os.ReadFile(filepath.Join(workbookDir, "regions-1900.xlsx"))
	if err != nil {
		t.Fatal(err)
	}
	if ll, err := ReadFile(writeTemp(t, "r.xlsx.gz", gzipped(t, xl)), Options{}); err != nil || len(ll.Cases) != 14 || ll.Sources[0].Format != FormatWorkbook {
		t.Errorf("gzipped workbook: %v", err)
	}
	var fe *FileError
	if _, err := ReadFile(writeTemp(t, "twice.gz", gzipped(t, gz)), Options{}); !errors.As(err, &fe) || !strings.Contains(err.Error(), "twice") {
		t.Errorf("gzip in gzip: %v", err)
	}
	// A truncated stream is a read error, not a panic or a silent partial read.
	if _, err := ReadFile(writeTemp(t, "cut.gz", gz[:len(gz)/2]), Options{}); !errors.As(err, &fe) || fe.Code != FileReadError {
		t.Errorf("truncated gzip: %v", err)
	}
}

// "-" reads standard input (Options.Stdin here), in any format.
func TestStdin(t *testing.T) {
	xl, err := os.ReadFile(filepath.Join(workbookDir, "regions-1904.xlsx"))
	if err != nil {
		t.Fatal(err)
	}
	want, err := ReadFile(filepath.Join(workbookDir, "regions-1904.xlsx"), Options{})
	if err != nil {
		t.Fatal(err)
	}
	ll, err := ReadFiles([]string{StdinPath}, Options{Stdin: bytes.NewReader(xl)})
	if err != nil {
		t.Fatal(err)
	}
	sameCases(t, ll, want)
	sum := sha256.Sum256(xl)
	if s := ll.Sources[0]; s.Name() != "standard input" || s.SHA256 != hex.EncodeToString(sum[:]) {
		t.Errorf("source %+v", s)
	}
	_, err = ReadFiles([]string{StdinPath, StdinPath}, Options{Stdin: bytes.NewReader(xl)})
	if err == nil || !strings.Contains(err.Error(), "more than once") {
		t.Errorf("stdin twice: %v", err)
	}
	// Errors name standard input.
	_, err = ReadFiles([]string{StdinPath}, Options{Stdin: strings.NewReader("")})
	if err == nil || !strings.HasPrefix(err.Error(), "standard input: ") {
		t.Errorf("empty stdin: %v", err)
	}
}

// Several files are one line list: a case_id in two files is a duplicate_id at the later
// place naming the earlier one, places name their file, and each file keeps its counts.
func TestSeveralFiles(t *testing.T) {
	a := writeTemp(t, "north.csv", []byte("case_id,infector_id,onset_date\nN1,,2026-01-02\nW-03,N1,2026-01-04\nN2,W-01,2026-01-06\n"))
	b := filepath.Join(workbookDir, "regions-1900.xlsx")
	ll, err := ReadFiles([]string{a, b}, Options{})
	if err != nil {
		t.Fatal(err)
	}
	checkLedger(t, ll)
	if len(ll.Sources) != 2 || ll.Sources[0].Rows != 3 || ll.Sources[0].Used != 3 || ll.Sources[1].Rows != 16 || ll.Sources[1].Used != 13 || ll.Rows != 19 {
		t.Fatalf("sources %+v", ll.Sources)
	}
	var dup *Problem
	for i, p := range ll.Problems {
		if p.Code == CodeDuplicateID {
			dup = &ll.Problems[i]
		}
	}
	// W-03 is row 6 of the workbook's Cases sheet, and line 3 of north.csv.
	if dup == nil || ll.Place(*dup) != b+" Cases!A6" || !strings.Contains(dup.Message, a+" line 3") {
		t.Fatalf("duplicate %+v at %q", dup, ll.Place(*dup))
	}
	// Problems sort by file first; the workbook's bad dates keep their cells.
	last := ll.Problems[len(ll.Problems)-1]
	if last.Source != 1 || ll.Place(last) != b+" Cases!C17" {
		t.Errorf("last problem %+v at %q", last, ll.Place(last))
	}
	// Each case points back to its file; W-03 was kept from the first.
	for _, c := range ll.Cases {
		if want := uint16(1); strings.HasPrefix(c.ID, "N") || c.ID == "W-03" {
			want = 0
			if c.Source != want {
				t.Errorf("case %s from source %d", c.ID, c.Source)
			}
		} else if c.Source != want {
			t.Errorf("case %s from source %d", c.ID, c.Source)
		}
	}
	// MaxRows counts every file together.
	var fe *FileError
	if _, err := ReadFiles([]string{a, b}, Options{MaxRows: 10}); !errors.As(err, &fe) || fe.Code != FileTooManyRows || fe.Path != b {
		t.Errorf("max rows: %v", err)
	}
}

// buildWorkbook writes a workbook with excelize, one sheet per entry of sheets (rows of
// cells: a string, or a float64 for a number); formula cells are set from formulas
// (cell -> formula), with no cached value.
func buildWorkbook(t *testing.T, date1904 bool, sheets [][2]any, formulas map[string]string) []byte {
	t.Helper()
	f := excelize.NewFile()
	defer f.Close()
	if date1904 {
		v := true
		if err := f.SetWorkbookProps(&excelize.WorkbookPropsOptions{Date1904: &v}); err != nil {
			t.Fatal(err)
		}
	}
	for i, sh := range sheets {
		name := sh[0].(string)
		if i == 0 {
			if err := f.SetSheetName("Sheet1", name); err != nil {
				t.Fatal(err)
			}
		} else if _, err := f.NewSheet(name); err != nil {
			t.Fatal(err)
		}
		for r, row := range sh[1].([][]any) {
			cell, _ := excelize.CoordinatesToCellName(1, r+1)
			if err := f.SetSheetRow(name, cell, &row); err != nil {
				t.Fatal(err)
			}
		}
	}
	for cell, fm := range formulas {
		if err := f.SetCellFormula(sheets[0][0].(string), cell, fm); err != nil {
			t.Fatal(err)
		}
	}
	var buf bytes.Buffer
	if err := f.Write(&buf); err != nil {
		t.Fatal(err)
	}
	return buf.Bytes()
}

// Text cells are dates in the configured order, number cells serial dates; a formula with
// no cached value reads as a blank cell, so it is a problem on its cell, not a crash; the
// sheet can be chosen by name or position.
func TestWorkbookCells(t *testing.T) {
	rows := [][]any{
		{"case_id", "onset_date", "report_date", "imported"},
		{"A", "15/01/2026", 46040.0, "yes"},
		{"B", 46038.0, "17/01/2026", true},
		{"C", nil, nil, nil},
		{nil, nil, nil, nil},
		{3.0, "2026-01-20", nil, false},
	}
	other := [][]any{{"case_id", "onset_date"}, {"Z", "2026-02-01"}}
	xl := buildWorkbook(t, false, [][2]any{{"Line list", rows}, {"Other", other}}, map[string]string{"B4": "B3+1"})
	p := writeTemp(t, "cells.xlsx", xl)
	ll, err := ReadFile(p, Options{Input: InputConfig{DateFormat: DateDMY}})
	if err != nil {
		t.Fatal(err)
	}
	checkLedger(t, ll)
	got := []string{}
	for _, c := range ll.Cases {
		got = append(got, caseText(c))
	}
	want := []string{
		"A||2026-01-15|true|2026-01-18|true|||",
		"B||2026-01-16|true|2026-01-17|true|||",
		"3||2026-01-20|false|1970-01-01|false|||",
	}
	if strings.Join(got, "\n") != strings.Join(want, "\n") {
		t.Errorf("cases\n%s\nwant\n%s", strings.Join(got, "\n"), strings.Join(want, "\n"))
	}
	if ll.Rows != 4 || len(ll.Problems) != 1 || ll.Problems[0].Code != CodeBadDate || ll.Place(ll.Problems[0]) != "'Line list'!B4" || !strings.Contains(ll.Problems[0].Message, "formula =B3+1 but no stored value") {
		t.Errorf("rows %d, problems %v", ll.Rows, ll.Problems)
	}
	if s := ll.Sources[0]; s.Sheet != "Line list" || s.SheetReason != "the first sheet whose header has the required columns" {
		t.Errorf("source %+v", s)
	}
	for _, sheet := range []string{"Other", "other", "2"} {
		ll, err := ReadFile(p, Options{Sheet: sheet})
		if err != nil || len(ll.Cases) != 1 || ll.Cases[0].ID != "Z" || ll.Sources[0].SheetReason != "chosen with --sheet" {
			t.Errorf("--sheet %s: %v", sheet, err)
		}
	}
	if ll, err := ReadFile(p, Options{Input: InputConfig{Sheet: "Other"}}); err != nil || ll.Cases[0].ID != "Z" || ll.Sources[0].SheetReason != "chosen by input.sheet in the config" {
		t.Errorf("input.sheet: %v", err)
	}
	var fe *FileError
	if _, err := ReadFile(p, Options{Sheet: "3"}); !errors.As(err, &fe) || fe.Code != FileNoSheet || !strings.Contains(err.Error(), `"Line list", "Other"`) {
		t.Errorf("--sheet 3: %v", err)
	}
	// A hidden sheet is passed over while a visible one has the columns.
	f, err := excelize.OpenFile(p)
	if err != nil {
		t.Fatal(err)
	}
	f.SetActiveSheet(1) // the active sheet cannot be hidden
	if err := f.SetSheetVisible("Line list", false); err != nil {
		t.Fatal(err)
	}
	hid := filepath.Join(t.TempDir(), "hidden.xlsx")
	if err := f.SaveAs(hid); err != nil {
		t.Fatal(err)
	}
	f.Close()
	if ll, err := ReadFile(hid, Options{}); err != nil || ll.Sources[0].Sheet != "Other" {
		t.Errorf("hidden first sheet: %v %+v", err, ll.Sources)
	}
	// A value right of the header is a field_count problem on its row, as in a CSV file.
	wide := buildWorkbook(t, true, [][2]any{{"S", [][]any{{"case_id", "onset_date"}, {"A", 0.0, nil, "x"}, {"B", 1.0}}}}, nil)
	ll, err = ReadFile(writeTemp(t, "w.xlsx", wide), Options{})
	if err != nil || len(ll.Cases) != 1 || ll.Cases[0].Onset.String() != "1904-01-02" || ll.Problems[0].Code != CodeFieldCount || ll.Problems[0].Row != 2 {
		t.Fatalf("%v %+v %v", err, ll.Cases, ll.Problems)
	}
}

// The name and the content disagreeing is noted, and the content wins.
func TestNameAndContentDisagree(t *testing.T) {
	p := writeTemp(t, "cases.xlsx", []byte("case_id,onset_date\nA,2026-01-01\n"))
	ll, err := ReadFile(p, Options{})
	if err != nil || ll.Sources[0].Format != FormatCSV || !strings.Contains(ll.Sources[0].Note, "read as CSV") {
		t.Fatalf("%v %+v", err, ll.Sources)
	}
}
