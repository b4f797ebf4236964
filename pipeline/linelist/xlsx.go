package linelist

import (
	"archive/zip"
	"bufio"
	"bytes"
	"errors"
	"fmt"
	"io"
	"strconv"
	"strings"

	"github.com/xuri/excelize/v2"
)

// headerSearchRows is how many spreadsheet rows from the top of a sheet are searched for
// the header: title rows, notes and blank rows above it are common in exports.
const headerSearchRows = 100

// rawCells asks excelize for each cell's stored value (the cached value of a formula, a
// date cell's serial number) rather than the text its number format would display, which
// depends on the spreadsheet program's locale.
var rawCells = excelize.Options{RawCellValue: true}

// readWorkbook reads the current file as an .xlsx workbook. The archive is held in memory
// (its directory is at its end); excelize streams the chosen sheet row by row, spilling a
// large sheet to a temporary file rather than to memory.
func (rd *reader) readWorkbook(br *bufio.Reader) error {
	b, err := io.ReadAll(io.LimitReader(br, maxWorkbook+1))
	if err != nil {
		return readErr(err)
	}
	if len(b) > maxWorkbook {
		return &FileError{Code: FileTooLarge, Err: fmt.Errorf("the workbook is larger than %d MiB, the most read at once; export the line list as CSV (compressed with gzip if need be)", maxWorkbook>>20)}
	}
	zr, err := zip.NewReader(bytes.NewReader(b), int64(len(b)))
	if err != nil {
		return &FileError{Code: FileNotWorkbook, Err: fmt.Errorf("the file starts like a zip archive (as .xlsx workbooks do) but cannot be opened (%v); save the workbook again, or export CSV", err)}
	}
	// The sizes a zip declares bind its entries: archive/zip fails an entry that inflates
	// beyond its declared size, so the sum below bounds what excelize can unpack.
	var total int64
	workbook, smallSheets := false, true
	for _, f := range zr.File {
		if strings.HasPrefix(strings.ToLower(f.Name), "xl/worksheets/") && f.UncompressedSize64 > formulaLookupMax {
			smallSheets = false
		}
		if f.UncompressedSize64 > maxUnzipped {
			return bombError(maxUnzipped, int64(len(b)), zipRatio)
		}
		total += int64(f.UncompressedSize64)
		if strings.EqualFold(f.Name, "xl/workbook.xml") {
			workbook = true
		}
	}
	if tooInflated(total, int64(len(b)), zipFloor, zipRatio) {
		return bombError(total, int64(len(b)), zipRatio)
	}
	// excelize reads an entry only as far as its declared size and ignores a sheet's XML
	// errors, so an entry that inflates past its size or fails its checksum (a damaged or
	// forged archive) would read as a short sheet; archive/zip checks both on a full read.
	for _, f := range zr.File {
		if err := checkEntry(f); err != nil {
			return &FileError{Code: FileNotWorkbook, Err: fmt.Errorf("the workbook is damaged: its part %q does not match its declared size or checksum (%v); save it again from the spreadsheet program, or export CSV", clip(f.Name), err)}
		}
	}
	if !workbook {
		return &FileError{Code: FileNotWorkbook, Err: errors.New("the file is a zip archive but not an .xlsx workbook (it has no xl/workbook.xml; an OpenDocument .ods, or another archive?); save it from the spreadsheet program as .xlsx, or export CSV")}
	}
	f, err := excelize.OpenReader(bytes.NewReader(b), excelize.Options{UnzipSizeLimit: maxUnzipped, UnzipXMLSizeLimit: 16 << 20})
	if err != nil {
		return &FileError{Code: FileNotWorkbook, Err: fmt.Errorf("the workbook cannot be opened (%v); save it again from the spreadsheet program, or export CSV", err)}
	}
	defer f.Close()
	src := rd.cur()
	src.Format = FormatWorkbook
	if props, err := f.GetWorkbookProps(); err == nil && props.Date1904 != nil {
		src.Date1904 = *props.Date1904
	}

	sheets := f.GetSheetList()
	if len(sheets) == 0 {
		return &FileError{Code: FileNoSheet, Err: errors.New("the workbook has no worksheets")}
	}
	var candidates []string
	switch {
	case rd.sheet != "":
		name, ok := pickSheet(sheets, rd.sheet)
		if !ok {
			return &FileError{Code: FileNoSheet, Err: fmt.Errorf("the workbook has no sheet %q; its sheets are %s; give --sheet a name or a position from 1 to %d", clip(rd.sheet), quoteList(sheets), len(sheets))}
		}
		candidates, src.SheetReason = []string{name}, rd.sheetBy
	case len(sheets) == 1:
		candidates, src.SheetReason = sheets, "the only sheet"
	default:
		// Visible sheets first: a hidden one is more often a lookup table than the list.
		var hidden []string
		for _, name := range sheets {
			if v, err := f.GetSheetVisible(name); err == nil && !v {
				hidden = append(hidden, name)
			} else {
				candidates = append(candidates, name)
			}
		}
		candidates = append(candidates, hidden...)
	}
	var skipped []string
	for _, name := range candidates {
		rows, hdr, err := rd.findHeader(f, name)
		if err != nil {
			var fe *FileError
			if len(candidates) > 1 && errors.As(err, &fe) && (fe.Code == FileMissingColumn || fe.Code == FileNoHeader) {
				skipped = append(skipped, name)
				continue
			}
			return err
		}
		if src.SheetReason == "" {
			src.SheetReason = "the first sheet whose header has the required columns"
			if v, err := f.GetSheetVisible(name); err == nil && !v {
				src.SheetReason = "the first sheet whose header has the required columns, a hidden one, as no visible sheet has them"
			}
			if len(skipped) > 0 {
				src.SheetReason += "; passed over " + quoteList(skipped)
			}
		}
		src.Sheet = name
		var formulas *excelize.File
		if smallSheets {
			formulas = f
		}
		err = rd.readSheet(rows, hdr, formulas)
		if cerr := rows.Close(); err == nil && cerr != nil {
			err = readErr(cerr)
		}
		return err
	}
	return &FileError{Code: FileNoSheet, Err: fmt.Errorf("no sheet of the workbook (%s) has a row with the required columns case_id and onset_date among its first %d rows; choose the sheet with --sheet, or map the headers in the config (input.columns)", quoteList(sheets), headerSearchRows)}
}

// checkEntry reads a zip entry to its end, so archive/zip verifies its size and CRC-32.
func checkEntry(f *zip.File) error {
	rc, err := f.Open()
	if err != nil {
		return err
	}
	defer rc.Close()
	_, err = io.Copy(io.Discard, rc)
	return err
}

// pickSheet finds a sheet by its exact name, its name ignoring case, or its 1-based position.
func pickSheet(sheets []string, want string) (string, bool) {
	for _, s := range sheets {
		if s == want {
			return s, true
		}
	}
	for _, s := range sheets {
		if strings.EqualFold(s, want) {
			return s, true
		}
	}
	if n, err := strconv.Atoi(want); err == nil && n >= 1 && n <= len(sheets) {
		return sheets[n-1], true
	}
	return "", false
}

func quoteList(names []string) string {
	q := make([]string, len(names))
	for i, n := range names {
		q[i] = strconv.Quote(clip(n))
	}
	return strings.Join(q, ", ")
}

// sheetHeader is the header row found on a sheet.
type sheetHeader struct {
	row     int
	cells   []string
	idx     []int
	mapping map[string]string
}

// findHeader opens sheet's rows and advances them to the first row, among the first
// headerSearchRows, whose cells map to the required columns.
func (rd *reader) findHeader(f *excelize.File, sheet string) (*excelize.Rows, sheetHeader, error) {
	rows, err := f.Rows(sheet)
	if err != nil {
		return nil, sheetHeader{}, &FileError{Code: FileNotWorkbook, Err: fmt.Errorf("sheet %q cannot be read (%v)", clip(sheet), err)}
	}
	var first error
	firstRow := 0
	for n := 1; n <= headerSearchRows && rows.Next(); n++ {
		cells, err := rows.Columns(rawCells)
		if err != nil {
			rows.Close()
			return nil, sheetHeader{}, &FileError{Code: FileReadError, Err: fmt.Errorf("sheet %q row %d cannot be read (%v)", clip(sheet), n, err)}
		}
		if blankCells(cells) {
			continue
		}
		idx, mapping, err := mapHeader(cells, rd.in, 0)
		if err == nil {
			return rows, sheetHeader{row: n, cells: cells, idx: idx, mapping: mapping}, nil
		}
		var fe *FileError
		if errors.As(err, &fe) && fe.Code == FileAmbiguousColumn {
			rows.Close()
			fe.Err = fmt.Errorf("sheet %q row %d: %w", clip(sheet), n, fe.Err)
			return nil, sheetHeader{}, fe
		}
		if first == nil {
			first, firstRow = err, n
		}
	}
	rerr := rows.Error()
	rows.Close()
	if rerr != nil {
		return nil, sheetHeader{}, &FileError{Code: FileReadError, Err: fmt.Errorf("sheet %q cannot be read (%v)", clip(sheet), rerr)}
	}
	if first == nil {
		return nil, sheetHeader{}, &FileError{Code: FileNoHeader, Err: fmt.Errorf("sheet %q has no filled row among its first %d rows; the header must be near the top", clip(sheet), headerSearchRows)}
	}
	return nil, sheetHeader{}, &FileError{Code: FileMissingColumn, Err: fmt.Errorf("no row among the first %d of sheet %q has the required columns; its first filled row, row %d, gives: %v", headerSearchRows, clip(sheet), firstRow, first)}
}

// blankCells says whether a spreadsheet row holds nothing but empty or white-space cells;
// such rows (often only formatted) are not data rows, as blank lines in a CSV file are not.
func blankCells(cells []string) bool {
	for _, c := range cells {
		if strings.TrimSpace(c) != "" {
			return false
		}
	}
	return true
}

// formulaLookupMax bounds the sheets whose formulas are looked up to explain a blank cell:
// excelize loads the whole sheet for that, which costs several times its XML in memory.
const formulaLookupMax = 8 << 20

// readSheet turns the rows after the header into cases. With formulas (a workbook whose
// sheets are at most formulaLookupMax bytes), a problem on a blank cell that is a formula
// without a stored value says so.
func (rd *reader) readSheet(rows *excelize.Rows, h sheetHeader, formulas *excelize.File) error {
	src := rd.cur()
	header := make([]string, len(h.cells))
	for i, c := range h.cells {
		header[i] = strings.Clone(c)
	}
	src.Header, src.Mapping, src.HeaderRow, src.cols = header, h.mapping, h.row, h.idx
	rd.idx = h.idx
	var dates []int
	for ci, c := range columns {
		if (c.Name == ColOnsetDate || c.Name == ColReportDate) && h.idx[ci] >= 0 {
			dates = append(dates, h.idx[ci])
		}
	}
	rec := make([]string, len(header))
	for n := h.row + 1; rows.Next(); n++ {
		cells, err := rows.Columns(rawCells)
		if err != nil {
			return &FileError{Code: FileReadError, Err: fmt.Errorf("sheet %q row %d cannot be read (%v)", clip(src.Sheet), n, err)}
		}
		if blankCells(cells) {
			continue
		}
		if err := rd.countRow(); err != nil {
			return err
		}
		if extra := lastFilled(cells); extra >= len(header) {
			rd.ll.Rejected++
			col, _ := excelize.ColumnNumberToName(extra + 1)
			rd.problem(n, "", CodeFieldCount, SeverityError, fmt.Sprintf("the row has a value in column %s, right of the header's last column; give that column a header or clear the cell; row rejected", col))
			continue
		}
		clear(rec)
		copy(rec, cells)
		for _, i := range dates {
			rec[i] = serialDate(rec[i], src.Date1904)
		}
		before := len(rd.ll.Problems)
		rd.row(rec, n)
		if formulas != nil {
			rd.explainFormulas(formulas, rec, before)
		}
	}
	if err := rows.Error(); err != nil {
		return &FileError{Code: FileReadError, Err: fmt.Errorf("sheet %q cannot be read to its end (%v)", clip(src.Sheet), err)}
	}
	if src.Rows == 0 {
		return &FileError{Code: FileNoDataRows, Err: fmt.Errorf("sheet %q has a header (row %d) but no data rows below it; check that the export included the cases", clip(src.Sheet), h.row)}
	}
	return nil
}

// explainFormulas adds to each problem of the row just read (problems from index from on)
// that concerns a blank cell what excelize says is the cell's formula, when it has one: a
// formula saved without its value (by a program that does not calculate) reads as blank.
func (rd *reader) explainFormulas(f *excelize.File, rec []string, from int) {
	src := rd.cur()
	for i := from; i < len(rd.ll.Problems); i++ {
		p := &rd.ll.Problems[i]
		ci, ok := columnIndex(p.Column)
		if !ok || rd.idx[ci] < 0 || strings.TrimSpace(rec[rd.idx[ci]]) != "" {
			continue
		}
		ref, err := excelize.CoordinatesToCellName(rd.idx[ci]+1, p.Row)
		if err != nil {
			continue
		}
		if fm, err := f.GetCellFormula(src.Sheet, ref); err == nil && fm != "" {
			p.Message += fmt.Sprintf("; the cell holds the formula =%s but no stored value (the workbook was saved by a program that does not calculate): open it in a spreadsheet program, let it calculate, and save it again", clip(fm))
		}
	}
}

// lastFilled is the index of the last cell that is not blank, -1 if none.
func lastFilled(cells []string) int {
	for i := len(cells) - 1; i >= 0; i-- {
		if strings.TrimSpace(cells[i]) != "" {
			return i
		}
	}
	return -1
}

// Serial dates: the Day of serial 0 in each date system. In the 1900 system serial 1 is
// 1900-01-01 and serial 60 is 29 February 1900, a day that did not exist (kept for
// compatibility with Lotus 1-2-3), so from serial 61 (1900-03-01) on, the serial counts from
// 1899-12-30; in the 1904 system serial 0 is 1904-01-01. ECMA-376 Part 1 (5th ed., 2016),
// §18.17.4.1 "Date Conversion for Serial Date-Times". 1970-01-01 is serial 25569 in the 1900
// system and 24107 (1462 fewer) in the 1904 system.
const (
	serial1900 = -25569 // Day(1899-12-30), the origin for serials from 61
	serial1904 = -24107 // Day(1904-01-01)
	// serialMax1900 is 9999-12-31, the last serial the 1900 system defines; 1904's is 1462 less.
	serialMax1900 = 2958465
)

// serialDate turns a workbook's numeric date cell (its serial number, a time of day in the
// fraction ignored) into ISO 8601 text for ParseDate; any other text is returned as it is,
// for ParseDate to read in the configured date order. Serial 60 of the 1900 system becomes
// 1900-02-29, which ParseDate rejects as a date that does not exist.
func serialDate(v string, date1904 bool) string {
	t := strings.TrimSpace(v)
	if t == "" || !isDigit(t[0]) {
		return v
	}
	f, err := strconv.ParseFloat(t, 64)
	if err != nil {
		return v
	}
	n := int64(f) // f ≥ 0: truncation is the floor
	switch {
	case date1904 && n <= serialMax1900-1462:
		return Day(serial1904 + n).String()
	case date1904:
		return v
	case n == 60:
		return "1900-02-29"
	case n >= 1 && n < 60:
		return Day(serial1900 + 1 + n).String()
	case n > 60 && n <= serialMax1900:
		return Day(serial1900 + n).String()
	}
	return v
}
