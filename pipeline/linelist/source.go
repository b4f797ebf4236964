package linelist

import (
	"bufio"
	"bytes"
	"compress/gzip"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"
	"unicode"

	"github.com/xuri/excelize/v2"
)

// Formats a Source can have. A file's format is decided by its first bytes, never by its
// name alone: a gzip stream is decompressed and its content decided again, a zip archive is
// a workbook, anything else is delimited text.
const (
	FormatCSV      = "csv"  // delimited text (comma, semicolon or tab)
	FormatWorkbook = "xlsx" // an Office Open XML spreadsheet workbook
)

// StdinPath is the path that names standard input.
const StdinPath = "-"

// maxSources is the number of files one run can read; Case.Source is a uint16.
const maxSources = 1 << 16

// Limits on compressed input, so that a compression bomb ends in a FileError instead of
// exhausting memory, disk or time. A CSV line list compresses about 5 to 20 times and a
// workbook's verbose XML about 10 to 50 times (common practice); deflate cannot exceed about
// 1032 to 1, which is what a bomb aims for. A gzip stream is refused once it passes
// gzipFloor bytes uncompressed at more than gzipRatio times the compressed bytes read; a
// workbook when its entries declare more than zipFloor bytes at more than zipRatio times
// the archive's size; either when it passes maxUnzipped whatever the ratio. The gzip floor
// is low because every row it lets through can become a case in memory.
const (
	gzipFloor   = 16 << 20
	gzipRatio   = 100
	zipFloor    = 256 << 20
	zipRatio    = 200
	maxUnzipped = 4 << 30
	// maxWorkbook is the largest workbook file read: a zip archive is read into memory,
	// as its directory sits at its end, and excelize copies it once more. A sheet holds at
	// most 1,048,576 rows, which compress to well under this.
	maxWorkbook = 256 << 20
)

// Source describes one file read into a LineList.
type Source struct {
	Path   string // as given; StdinPath is standard input
	SHA256 string // hex SHA-256 of the raw bytes as stored (compressed, for gzip); "" from Read
	Format string // FormatCSV or FormatWorkbook
	Gzip   bool   // the bytes were a gzip stream, decompressed while reading
	// Note says where the content and the file's name disagree (a .xlsx that holds CSV
	// text), so the analyst sees what was read.
	Note string
	// Sheet is the workbook sheet read and SheetReason why it was chosen.
	Sheet, SheetReason string
	// Date1904 says the workbook counts serial dates from 1904-01-01 (the 1904 date
	// system) rather than from 1899-12-31.
	Date1904 bool
	// HeaderRow is the header's line (CSV) or spreadsheet row (workbook), 1-based.
	HeaderRow int
	Rows      int               // data rows read from this file
	Used      int               // of which kept as cases; the rest were rejected
	Header    []string          // the header fields as they appear in the file (BOM removed)
	Mapping   map[string]string // canonical column -> header it was read from
	Delimiter rune              // ',', ';' or '\t' (CSV only)
	Encoding  string            // EncUTF8, EncUTF8BOM, EncLatin1 or EncWindows1252 (CSV only)
	CROnly    bool              // the file ends its lines with a carriage return alone
	cols      []int             // header column per canonical column, -1 if absent
}

// Name is how messages name the file: its path, or "standard input".
func (s *Source) Name() string {
	if s.Path == StdinPath {
		return "standard input"
	}
	return s.Path
}

// Place says where a problem is, in the words the analyst's tools use: "line 12" in a CSV
// file, "Cases!C12" (sheet, column letter, spreadsheet row) in a workbook, preceded by the
// file's name when the line list was read from several files. A problem with no row (the
// file as a whole) is placed by its file alone.
func (ll *LineList) Place(p Problem) string { return ll.PlaceOf(p.Source, p.Row, p.Column) }

// PlaceOf is Place for a row of source src and a canonical column ("" for the whole row).
func (ll *LineList) PlaceOf(src, row int, column string) string {
	if src < 0 || src >= len(ll.Sources) {
		return fmt.Sprintf("line %d", row)
	}
	s := &ll.Sources[src]
	if row == 0 {
		return s.Name()
	}
	if len(ll.Sources) > 1 {
		return s.Name() + " " + s.At(row, column)
	}
	return s.At(row, column)
}

// At is the place of a row and canonical column ("" for the whole row) within the file,
// without its name: "line 12", or "Cases!C12" in a workbook (the column of the row's first
// cell when the column is "" or absent). Row 0 is "" (the file as a whole).
func (s *Source) At(row int, column string) string {
	switch {
	case row <= 0:
		return ""
	case s.Format == FormatWorkbook:
		col := 0
		if ci, ok := columnIndex(column); ok && s.cols != nil && s.cols[ci] >= 0 {
			col = s.cols[ci]
		}
		name, _ := excelize.ColumnNumberToName(col + 1)
		return fmt.Sprintf("%s!%s%d", sheetRef(s.Sheet), name, row)
	}
	return fmt.Sprintf("line %d", row)
}

// columnIndex is the position of a canonical column in Columns.
func columnIndex(name string) (int, bool) {
	for i := range columns {
		if columns[i].Name == name {
			return i, true
		}
	}
	return 0, false
}

// readPath reads one file ("-": standard input) as the next Source, hashing its raw bytes.
func (rd *reader) readPath(path string) error {
	rd.startSource(path)
	src := rd.cur()
	var f io.Reader
	size := int64(-1)
	if path == StdinPath {
		f = rd.stdin
		if f == nil {
			f = os.Stdin
		}
	} else {
		fh, err := os.Open(path)
		if err != nil {
			return &FileError{Path: path, Code: FileReadError, Err: fmt.Errorf("cannot open the file: %v", err)}
		}
		defer fh.Close()
		if st, err := fh.Stat(); err == nil && st.Mode().IsRegular() {
			size = st.Size()
		}
		f = fh
	}
	h := sha256.New()
	if err := rd.readStream(io.TeeReader(f, h), size, false); err != nil {
		var fe *FileError
		if errors.As(err, &fe) {
			fe.Path = src.Name()
		}
		return err
	}
	// The readers stop at end of input, so nothing should remain; hash any remainder
	// anyway so the checksum always covers the whole file.
	if _, err := io.Copy(h, f); err != nil {
		return &FileError{Path: src.Name(), Code: FileReadError, Err: fmt.Errorf("cannot read the file: %v", err)}
	}
	rd.cur().SHA256 = hex.EncodeToString(h.Sum(nil))
	rd.noteName()
	return nil
}

// noteName records where a file's name promises another format than its content has.
func (rd *reader) noteName() {
	s := rd.cur()
	ext := strings.ToLower(filepath.Ext(s.Path))
	switch {
	case (ext == ".xlsx" || ext == ".xlsm") && s.Format != FormatWorkbook:
		s.Note = fmt.Sprintf("the name ends in %s but the content is delimited text, so it was read as CSV", ext)
	case (ext == ".csv" || ext == ".txt" || ext == ".tsv") && s.Format == FormatWorkbook:
		s.Note = fmt.Sprintf("the name ends in %s but the content is a workbook, so it was read as .xlsx", ext)
	case ext == ".gz" && !s.Gzip:
		s.Note = "the name ends in .gz but the content is not compressed, so it was read as it is"
	}
}

var (
	gzipMagic = []byte{0x1f, 0x8b}
	zipMagic  = []byte("PK\x03\x04")
	// oleMagic starts a Compound File Binary: an encrypted .xlsx or a legacy .xls.
	oleMagic = []byte{0xD0, 0xCF, 0x11, 0xE0, 0xA1, 0xB1, 0x1A, 0xE1}
)

// readStream decides the current file's format from its first bytes and reads it.
func (rd *reader) readStream(r io.Reader, size int64, unzipped bool) error {
	br := bufio.NewReaderSize(r, prefixSize)
	magic, err := br.Peek(len(oleMagic))
	if err != nil && err != io.EOF {
		return readErr(err)
	}
	switch {
	case bytes.HasPrefix(magic, gzipMagic):
		if unzipped {
			return &FileError{Code: FileNotCSV, Err: errors.New("the file is compressed twice (gzip inside gzip); decompress it once and read the result")}
		}
		cr := &countingReader{r: br}
		zr, err := gzip.NewReader(cr)
		if err != nil {
			return &FileError{Code: FileReadError, Err: fmt.Errorf("the file starts like gzip but cannot be decompressed (%v); compress it again or give the uncompressed file", err)}
		}
		rd.cur().Gzip = true
		return rd.readStream(&inflateGuard{r: zr, in: cr}, -1, true)
	case bytes.HasPrefix(magic, zipMagic):
		return rd.readWorkbook(br)
	case bytes.HasPrefix(magic, oleMagic):
		return &FileError{Code: FileEncrypted, Err: errors.New("the file is a password-protected (encrypted) workbook or a legacy .xls workbook, which cannot be read; open it in the spreadsheet program, remove the password, and save it as .xlsx (or export CSV)")}
	}
	return rd.readCSV(br, size)
}

// countingReader counts the bytes read through it.
type countingReader struct {
	r io.Reader
	n int64
}

func (c *countingReader) Read(p []byte) (int, error) {
	n, err := c.r.Read(p)
	c.n += int64(n)
	return n, err
}

// inflateGuard passes decompressed bytes on until they betray a compression bomb (see
// gzipFloor).
type inflateGuard struct {
	r   io.Reader
	in  *countingReader
	out int64
}

func (g *inflateGuard) Read(p []byte) (int, error) {
	n, err := g.r.Read(p)
	g.out += int64(n)
	if tooInflated(g.out, g.in.n, gzipFloor, gzipRatio) {
		return n, bombError(g.out, g.in.n, gzipRatio)
	}
	return n, err
}

// tooInflated says whether out bytes uncompressed from in pass the limits (see gzipFloor).
func tooInflated(out, in, floor, ratio int64) bool {
	return out > maxUnzipped || (out > floor && out > ratio*in)
}

func bombError(out, in, ratio int64) error {
	return &FileError{Code: FileTooLarge, Err: fmt.Errorf("the compressed content expands to more than %d MiB from %d KiB (a ratio above %d to 1, or beyond %d GiB), the mark of a compression bomb rather than a line list; the file was not read. Check where it came from, or decompress it yourself and read the plain file",
		out>>20, in>>10, ratio, maxUnzipped>>30)}
}

// sheetRef writes a sheet name as a cell reference does: quoted ('Region 2'!B7, with inner
// quotes doubled) unless it is letters, digits and underscores.
func sheetRef(name string) string {
	for _, r := range name {
		if !(r == '_' || unicode.IsLetter(r) || unicode.IsDigit(r)) {
			return "'" + strings.ReplaceAll(name, "'", "''") + "'"
		}
	}
	return name
}
