package linelist

import (
	"bufio"
	"bytes"
	"cmp"
	"crypto/sha256"
	"encoding/csv"
	"encoding/hex"
	"errors"
	"fmt"
	"io"
	"os"
	"slices"
	"strings"
	"unicode/utf8"
)

// Options control one read.
type Options struct {
	// Input is how the jurisdiction's export is read; the zero value reads with defaults
	// (recognised header variants, ISO dates only, sniffed delimiter, detected encoding).
	Input InputConfig
	// AsOf is the analysis date: onsets after it draw a future_onset warning. The zero Day
	// (1970-01-01, never a plausible analysis date) switches the check off.
	AsOf Day
	// MaxRows limits the number of data rows; 0 means no limit. A file with more rows is
	// a FileError with Code FileTooManyRows, not a silently truncated line list.
	MaxRows int
}

// LineList is the result of reading one export: the cases that survived validation and the
// ledger of problems found. Every data row read is either a Case or counted in Rejected,
// so Rows == len(Cases) + Rejected, and every rejected row has at least one problem of
// severity error on its line.
type LineList struct {
	Cases     []Case            // accepted rows, in file order
	Problems  []Problem         // sorted by row, then code (SortProblems)
	Rows      int               // data rows read (records after the header; blank lines are not rows)
	Rejected  int               // data rows not turned into a Case
	SHA256    string            // hex SHA-256 of the raw file bytes; set by ReadFile, "" from Read
	Header    []string          // the header fields as they appear in the file (BOM removed)
	Mapping   map[string]string // canonical column -> header it was read from
	Delimiter rune              // ',', ';' or '\t'
	Encoding  string            // EncUTF8, EncUTF8BOM, EncLatin1 or EncWindows1252
	CROnly    bool              // the file ends its lines with a carriage return alone
	// ByID lists the indices of Cases in order of their identifiers (byte order), for
	// lookups by binary search: the duplicate check sorts the identifiers anyway, and a
	// sorted index costs 4 bytes a case where a map would cost about 40.
	ByID []int32
}

// FileCode names a fatal problem with a file as a whole.
type FileCode string

const (
	FileEmpty               FileCode = "empty"                // no bytes, or only blank lines
	FileNoHeader            FileCode = "no_header"            // the first line has no column names
	FileNoDataRows          FileCode = "no_data_rows"         // a header and nothing else
	FileNoUsableRows        FileCode = "no_usable_rows"       // data rows, every one rejected
	FileNotCSV              FileCode = "not_csv"              // binary content
	FileUnsupportedEncoding FileCode = "unsupported_encoding" // UTF-16 and other encodings not read
	FileMissingColumn       FileCode = "missing_column"       // a required or configured column is absent
	FileAmbiguousColumn     FileCode = "ambiguous_column"     // two columns could feed one canonical column
	FileTooManyRows         FileCode = "too_many_rows"        // more data rows than Options.MaxRows
	FileBadConfig           FileCode = "bad_config"           // the jurisdiction config cannot be used
	FileReadError           FileCode = "read_error"           // the bytes could not be read
)

// FileError is a problem that stops a file (a line list or a config) from being read at all,
// in the manner of encoding/csv's ParseError: where it is (Path, Line), what kind (Code) and
// the cause, which says what is wrong and what to do about it (Err). The CLI maps it to exit
// status 1.
type FileError struct {
	Path string // file the error is about, when known
	Line int    // 1-based line of the file, 0 for the file as a whole
	Code FileCode
	Err  error
}

func (e *FileError) Error() string {
	var b strings.Builder
	if e.Path != "" {
		b.WriteString(e.Path)
		b.WriteString(": ")
	}
	if e.Line > 0 {
		fmt.Fprintf(&b, "line %d: ", e.Line)
	}
	fmt.Fprintf(&b, "%s: %v", e.Code, e.Err)
	return b.String()
}

func (e *FileError) Unwrap() error { return e.Err }

// prefixSize is how much of the file is inspected before reading (binary content, BOM,
// delimiter). It is also the read buffer's size.
const prefixSize = 64 << 10

var utf8BOM = []byte{0xEF, 0xBB, 0xBF}

// ReadFile reads the line list at path, computing the SHA-256 of its raw bytes in the
// same pass. Fatal problems are a *FileError with Path set.
func ReadFile(path string, opts Options) (*LineList, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, &FileError{Path: path, Code: FileReadError, Err: fmt.Errorf("cannot open the file: %v", err)}
	}
	defer f.Close()
	size := int64(-1)
	if st, err := f.Stat(); err == nil && st.Mode().IsRegular() {
		size = st.Size()
	}
	h := sha256.New()
	ll, err := read(io.TeeReader(f, h), size, opts)
	if err != nil {
		var fe *FileError
		if errors.As(err, &fe) {
			fe.Path = path
		}
		return nil, err
	}
	// The CSV reader stops at end of input, so nothing should remain; hash any remainder
	// anyway so the checksum always covers the whole file.
	if _, err := io.Copy(h, f); err != nil {
		return nil, &FileError{Path: path, Code: FileReadError, Err: fmt.Errorf("cannot read the file: %v", err)}
	}
	ll.SHA256 = hex.EncodeToString(h.Sum(nil))
	return ll, nil
}

// Read reads a line list from r. See the package documentation for what is accepted and
// which problems are reported. Fatal problems are a *FileError.
func Read(r io.Reader, opts Options) (*LineList, error) {
	size := int64(-1)
	if s, ok := r.(interface{ Size() int64 }); ok { // bytes.Reader, strings.Reader
		size = s.Size()
	}
	return read(r, size, opts)
}

// reader holds the state of one read; nothing outlives it except the LineList.
type reader struct {
	ll     *LineList
	idx    []int // header column per canonical column (Columns order), -1 if absent
	in     InputConfig
	asOf   Day
	intern map[string]string
	strata map[Strata]*Strata
	// encName is the decoder's decision as of the batch being read (the decoder itself
	// runs on the splitting goroutine).
	encName string
}

func read(src io.Reader, size int64, opts Options) (*LineList, error) {
	in := opts.Input
	br := bufio.NewReaderSize(src, prefixSize)
	prefix, err := br.Peek(prefixSize)
	if err != nil && err != io.EOF && err != bufio.ErrBufferFull {
		return nil, &FileError{Code: FileReadError, Err: fmt.Errorf("cannot read the file: %v", err)}
	}
	atEOF := err == io.EOF
	bom := bytes.HasPrefix(prefix, utf8BOM)
	if bom {
		_, _ = br.Discard(len(utf8BOM))
		prefix = prefix[len(utf8BOM):]
	}
	if bytes.HasPrefix(prefix, []byte{0xFF, 0xFE}) || bytes.HasPrefix(prefix, []byte{0xFE, 0xFF}) {
		return nil, &FileError{Code: FileUnsupportedEncoding, Err: errors.New("the file is UTF-16 (it starts with a UTF-16 byte-order mark); export it again as UTF-8 CSV")}
	}
	if atEOF && len(bytes.TrimSpace(prefix)) == 0 {
		return nil, &FileError{Code: FileEmpty, Err: errors.New("the file is empty; export the line list again with its header and rows")}
	}
	// An export with carriage returns alone for line ends (the "CSV (Macintosh)" format of
	// older spreadsheets) is read with each CR as a line break; the decision rests on the
	// prefix holding CRs and no LF.
	crOnly := bytes.IndexByte(prefix, '\r') >= 0 && bytes.IndexByte(prefix, '\n') < 0
	if crOnly {
		br = bufio.NewReaderSize(crAsLF{br}, prefixSize)
		prefix = bytes.ReplaceAll(prefix, []byte{'\r'}, []byte{'\n'})
	}
	if looksBinary(prefix) {
		return nil, &FileError{Code: FileNotCSV, Err: errors.New("the file is not text (it has NUL or control bytes near its start); export the line list as CSV (a spreadsheet file such as .xlsx, or a UTF-16 export, cannot be read)")}
	}

	var delim rune
	switch in.Delimiter {
	case ",", ";":
		delim = rune(in.Delimiter[0])
	case "tab":
		delim = '\t'
	default:
		delim = sniffDelimiter(prefix)
	}

	dec := newTextDecoder(br, in.Encoding, bom)
	cr := csv.NewReader(dec)
	cr.Comma = delim
	cr.FieldsPerRecord = -1 // field counts are checked here, one problem per row
	cr.ReuseRecord = true

	rec, err := cr.Read()
	switch {
	case err == io.EOF:
		return nil, &FileError{Code: FileEmpty, Err: errors.New("the file has only blank lines; export the line list again with its header and rows")}
	case err != nil:
		var pe *csv.ParseError
		if errors.As(err, &pe) {
			return nil, &FileError{Code: FileNoHeader, Err: fmt.Errorf("the header line cannot be split into column names (%v at line %d, byte %d); fix the quotes in the header", pe.Err, pe.Line, pe.Column)}
		}
		return nil, readErr(err)
	}
	header := make([]string, len(rec))
	blank := true
	for i, h := range rec {
		header[i] = strings.Clone(h)
		if strings.TrimSpace(h) != "" {
			blank = false
		}
	}
	if blank {
		return nil, &FileError{Code: FileNoHeader, Err: errors.New("the first line has no column names; the file must start with a header line such as case_id,infector_id,onset_date")}
	}
	idx, mapping, err := mapHeader(header, in, delim)
	if err != nil {
		return nil, err
	}

	rd := &reader{
		ll:     &LineList{Header: header, Mapping: mapping, Delimiter: delim, CROnly: crOnly},
		idx:    idx,
		in:     in,
		asOf:   opts.AsOf,
		intern: map[string]string{},
		strata: map[Strata]*Strata{},
	}
	ll := rd.ll
	// Splitting records (encoding/csv and the text decoder) runs on its own goroutine, a
	// batch ahead of turning them into cases; the batches arrive in file order, so the
	// result is that of one sequential pass.
	stop := make(chan struct{})
	defer close(stop)
	batches := splitRecords(cr, dec, stop)
	for b := range batches {
		if b.err != nil {
			return nil, readErr(b.err)
		}
		rd.encName = b.enc
		for _, r := range b.recs {
			ll.Rows++
			if opts.MaxRows > 0 && ll.Rows > opts.MaxRows {
				return nil, &FileError{Code: FileTooManyRows, Err: fmt.Errorf("the file has more than %d data rows, the limit set for this run; raise the limit or split the file", opts.MaxRows)}
			}
			switch {
			case r.pe != nil:
				// encoding/csv resumes at the next line, so one malformed record is one row.
				rd.quoteProblem(r.pe)
			case len(r.fields) != len(header):
				rd.fieldCount(r.fields, r.line, r.last, len(header))
			default:
				rd.row(r.fields, r.line)
			}
			if ll.Rows == presizeAt && size > 0 {
				rd.presize(size, b.offset, opts.MaxRows)
			}
		}
		recycle(b)
	}
	if ll.Rows == 0 {
		return nil, &FileError{Code: FileNoDataRows, Err: errors.New("the file has a header but no data rows; check that the export included the cases")}
	}
	rd.dropDuplicates()
	if len(ll.Cases) == 0 {
		return nil, rd.noUsableRows()
	}
	ll.Encoding = dec.encoding()
	SortProblems(ll.Problems)
	return ll, nil
}

func readErr(err error) error {
	return &FileError{Code: FileReadError, Err: fmt.Errorf("cannot read the file: %v", err)}
}

// presize grows Cases once to the row count the file size suggests, so a large file does
// not pay for repeated doubling (which briefly holds two copies of the slice).
func (rd *reader) presize(size, offset int64, maxRows int) {
	if offset <= 0 {
		return
	}
	est := size/offset*int64(rd.ll.Rows) + size%offset*int64(rd.ll.Rows)/offset
	est += est/50 + 1024
	if maxRows > 0 && est > int64(maxRows) {
		est = int64(maxRows)
	}
	if est > int64(cap(rd.ll.Cases)) && est < 1<<31 {
		rd.ll.Cases = slices.Grow(rd.ll.Cases, int(est)-len(rd.ll.Cases))
	}
}

func (rd *reader) problem(line int, col string, code Code, sev Severity, msg string) {
	rd.ll.Problems = append(rd.ll.Problems, Problem{Row: line, Column: col, Code: code, Severity: sev, Message: msg})
}

// quoteProblem reports a record encoding/csv could not split. Quotes are read strictly:
// with LazyQuotes a quote left open would silently swallow every later row into one field.
func (rd *reader) quoteProblem(pe *csv.ParseError) {
	rd.ll.Rejected++
	var msg string
	switch {
	case errors.Is(pe.Err, csv.ErrBareQuote):
		msg = fmt.Sprintf("a quote appears inside a field that does not start with one (line %d, byte %d); quote the whole field and double the inner quote, e.g. \"5'10\"\"\", or remove it; row rejected", pe.Line, pe.Column)
	case pe.Line > pe.StartLine:
		msg = fmt.Sprintf("a quoted field that starts on line %d is not closed properly (found at line %d, byte %d); everything up to there was read as this one row; close the quote or double quotes inside the field; row rejected", pe.StartLine, pe.Line, pe.Column)
	default:
		msg = fmt.Sprintf("a quoted field is not closed properly (byte %d): a quote inside a quoted field must be doubled (\"\"); row rejected", pe.Column)
	}
	rd.problem(pe.StartLine, "", CodeFieldCount, SeverityError, msg)
}

func (rd *reader) fieldCount(rec []string, line, last, want int) {
	rd.ll.Rejected++
	msg := fmt.Sprintf("the row has %d fields but the header has %d; check for a delimiter inside an unquoted value or a missing or extra field; row rejected", len(rec), want)
	if last > line {
		msg = fmt.Sprintf("the row has %d fields but the header has %d, and the record runs from line %d to line %d, so a quote is probably unbalanced; fix the quoting; row rejected", len(rec), want, line, last)
	}
	if slices.ContainsFunc(rec, func(f string) bool { return strings.ContainsRune(f, '\r') }) {
		msg += "; a carriage return (CR) inside it suggests two rows run together (a line ended by a CR alone): end every line the same way"
	}
	rd.problem(line, "", CodeFieldCount, SeverityError, msg)
}

// cell returns the trimmed value of canonical column ci, or "" when the file lacks it.
func (rd *reader) cell(rec []string, ci int) string {
	if i := rd.idx[ci]; i >= 0 {
		return strings.TrimSpace(rec[i])
	}
	return ""
}

// badText explains why a cell cannot be used as text, or returns "".
func (rd *reader) badText(s string) string {
	if !utf8.ValidString(s) {
		return fmt.Sprintf("contains bytes that are not valid UTF-8, although the file was read as %s (decided at its first non-ASCII character); export the file again as UTF-8, or set input.encoding in the config if the whole file is Latin-1 or Windows-1252", rd.encName)
	}
	if strings.IndexByte(s, 0) >= 0 {
		return "contains a NUL byte; remove it or export the file again"
	}
	return ""
}

func (rd *reader) row(rec []string, line int) {
	r := rowState{line: line, c: Case{Row: line}}
	for ci := range columns {
		columns[ci].decode(rd, &r, rd.cell(rec, ci))
	}
	c := r.c
	c.Strata = rd.strata[r.st]
	if c.Strata == nil {
		st := r.st
		c.Strata = &st
		rd.strata[st] = c.Strata
	}
	if r.reject {
		rd.ll.Rejected++
		return
	}
	c.ID = strings.Clone(r.id)
	if c.InfectorID != "" && c.InfectorID == r.id {
		c.InfectorID = c.ID // a self link, reported by forest; share the string
	}
	rd.ll.Cases = append(rd.ll.Cases, c)
}

// stratum reads a descriptive column's value, interned so that repeated values share storage.
func (rd *reader) stratum(v, col string, line int) string {
	if v == "" {
		return ""
	}
	if s, ok := rd.intern[v]; ok {
		return s
	}
	if why := rd.badText(v); why != "" {
		rd.problem(line, col, CodeBadValue, SeverityError, col+" "+why+"; the value was dropped and the case kept")
		return ""
	}
	s := strings.Clone(v)
	rd.intern[s] = s
	return s
}

// dropDuplicates rejects every row whose case_id appeared on an earlier row. It sorts an
// index rather than keeping a map from identifier to row during the read, which for ten
// million rows saves several hundred megabytes.
func (rd *reader) dropDuplicates() {
	cs := rd.ll.Cases
	if len(cs) < 2 {
		rd.ll.ByID = make([]int32, len(cs))
		return
	}
	order := make([]int32, len(cs))
	for i := range order {
		order[i] = int32(i)
	}
	slices.SortFunc(order, func(a, b int32) int {
		if c := strings.Compare(cs[a].ID, cs[b].ID); c != 0 {
			return c
		}
		return cmp.Compare(a, b)
	})
	drop := make([]bool, len(cs))
	dups := 0
	first := order[0]
	for _, i := range order[1:] {
		if cs[i].ID != cs[first].ID {
			first = i
			continue
		}
		drop[i] = true
		dups++
		rd.problem(cs[i].Row, ColCaseID, CodeDuplicateID, SeverityError, fmt.Sprintf("case_id %q was already used on line %d, whose row is kept; give this case its own identifier or delete the repeated row; row rejected", clip(cs[i].ID), cs[first].Row))
	}
	if dups == 0 {
		rd.ll.ByID = order
		return
	}
	// Renumber: newIndex[i] is case i's position once the duplicates are gone.
	newIndex := make([]int32, len(cs))
	kept := cs[:0]
	for i, c := range cs {
		if !drop[i] {
			newIndex[i] = int32(len(kept))
			kept = append(kept, c)
		}
	}
	clear(cs[len(kept):])
	byID := order[:0]
	for _, i := range order {
		if !drop[i] {
			byID = append(byID, newIndex[i])
		}
	}
	rd.ll.Cases = kept
	rd.ll.ByID = byID
	rd.ll.Rejected += dups
}

// crAsLF reads a source whose lines end in a carriage return alone, turning each CR into a
// line feed; such a file has no LF of its own.
type crAsLF struct{ r io.Reader }

func (c crAsLF) Read(p []byte) (int, error) {
	n, err := c.r.Read(p)
	for i, b := range p[:n] {
		if b == '\r' {
			p[i] = '\n'
		}
	}
	return n, err
}

// noUsableRows is the error for a file whose every data row was rejected: it names the most
// frequent reasons with their first line and the delimiter the file was read with, the
// usual cause when every row has the wrong number of fields.
func (rd *reader) noUsableRows() error {
	type reason struct {
		code  Code
		n     int
		first Problem
	}
	var reasons []*reason
	by := map[Code]*reason{}
	for _, p := range rd.ll.Problems {
		if p.Severity != SeverityError {
			continue
		}
		r := by[p.Code]
		if r == nil {
			r = &reason{code: p.Code, first: p}
			by[p.Code] = r
			reasons = append(reasons, r)
		}
		r.n++
	}
	slices.SortStableFunc(reasons, func(a, b *reason) int { return cmp.Compare(b.n, a.n) })
	var parts []string
	for i, r := range reasons {
		if i == 3 {
			break
		}
		parts = append(parts, fmt.Sprintf("%d × %s (first on line %d: %s)", r.n, r.code, r.first.Row, clip(r.first.Message)))
	}
	return &FileError{Code: FileNoUsableRows, Err: fmt.Errorf("none of the %d data rows could be used: %s; the file was read with delimiter %s (set input.delimiter in the config if that is wrong)",
		rd.ll.Rows, strings.Join(parts, "; "), delimName(rd.ll.Delimiter))}
}
