package linelist

import (
	"bufio"
	"bytes"
	"cmp"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
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
	// Stdin is what the path StdinPath reads; nil means os.Stdin.
	Stdin io.Reader
	// Sheet chooses the worksheet of a workbook by name or by 1-based position, over
	// Input.Sheet; when both are "" the only sheet, or the first whose header holds the
	// required columns, is read.
	Sheet string
}

// LineList is the result of reading one or more exports: the cases that survived
// validation and the ledger of problems found. Every data row read is either a Case or
// counted in Rejected, so Rows == len(Cases) + Rejected, and every rejected row has at least
// one problem of severity error on its line.
type LineList struct {
	Cases    []Case    // accepted rows, in file order (the files in the order given)
	Problems []Problem // sorted by file, row, then code (SortProblems)
	Rows     int       // data rows read (records after the header; blank lines are not rows)
	Rejected int       // data rows not turned into a Case
	// Sources are the files read, in order; Case.Source and Problem.Source index them.
	Sources []Source
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
	FileNotWorkbook         FileCode = "not_workbook"         // a zip that is not a readable .xlsx workbook
	FileEncrypted           FileCode = "encrypted"            // a password-protected workbook (or a legacy .xls)
	FileNoSheet             FileCode = "no_sheet"             // --sheet names no sheet, or no sheet has the required columns
	FileTooLarge            FileCode = "too_large"            // uncompressed content beyond the reader's limits (a compression bomb)
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

// ReadFile reads the line list at path ("-" for standard input), computing the SHA-256 of
// its raw bytes in the same pass. Fatal problems are a *FileError with Path set.
func ReadFile(path string, opts Options) (*LineList, error) {
	return ReadFiles([]string{path}, opts)
}

// ReadFiles reads several exports as one line list: rows of every file are validated
// together, so a case_id present in two files is a duplicate_id naming both places, and
// Options.MaxRows limits the rows of all files together. Each file's format is decided by
// its content (see the package documentation). Fatal problems are a *FileError with Path set.
func ReadFiles(paths []string, opts Options) (*LineList, error) {
	if len(paths) > maxSources {
		return nil, &FileError{Code: FileReadError, Err: fmt.Errorf("%d files given; at most %d can be read in one run", len(paths), maxSources)}
	}
	stdin := 0
	for _, p := range paths {
		if p == StdinPath {
			stdin++
		}
	}
	if stdin > 1 {
		return nil, &FileError{Path: StdinPath, Code: FileReadError, Err: errors.New("standard input (-) is given more than once; it can be read only once")}
	}
	rd := newReader(opts)
	for _, p := range paths {
		if err := rd.readPath(p); err != nil {
			return nil, err
		}
	}
	ll, err := rd.finish()
	var fe *FileError
	if len(paths) == 1 && errors.As(err, &fe) {
		fe.Path = rd.ll.Sources[0].Name()
	}
	return ll, err
}

// Read reads a line list from r. See the package documentation for what is accepted and
// which problems are reported. Fatal problems are a *FileError.
func Read(r io.Reader, opts Options) (*LineList, error) {
	size := int64(-1)
	if s, ok := r.(interface{ Size() int64 }); ok { // bytes.Reader, strings.Reader
		size = s.Size()
	}
	rd := newReader(opts)
	rd.startSource("")
	if err := rd.readStream(r, size, false); err != nil {
		return nil, err
	}
	return rd.finish()
}

// reader holds the state of one read; nothing outlives it except the LineList.
type reader struct {
	ll      *LineList
	src     int   // index in ll.Sources of the file being read
	idx     []int // header column per canonical column (Columns order), -1 if absent
	in      InputConfig
	asOf    Day
	maxRows int
	sheet   string // Options.Sheet, else Input.Sheet
	sheetBy string // which of the two chose it, for Source.SheetReason
	stdin   io.Reader
	intern  map[string]string
	strata  map[Strata]*Strata
	// encName is the decoder's decision as of the batch being read (the decoder itself
	// runs on the splitting goroutine).
	encName string
}

func newReader(opts Options) *reader {
	sheet, by := opts.Sheet, "chosen with --sheet"
	if sheet == "" && opts.Input.Sheet != "" {
		sheet, by = opts.Input.Sheet, "chosen by input.sheet in the config"
	}
	return &reader{
		sheetBy: by,
		ll:      &LineList{},
		in:      opts.Input,
		asOf:    opts.AsOf,
		maxRows: opts.MaxRows,
		sheet:   sheet,
		stdin:   opts.Stdin,
		intern:  map[string]string{},
		strata:  map[Strata]*Strata{},
	}
}

// cur is the Source being read.
func (rd *reader) cur() *Source { return &rd.ll.Sources[rd.src] }

// startSource appends the Source of the next file.
func (rd *reader) startSource(path string) {
	rd.ll.Sources = append(rd.ll.Sources, Source{Path: path})
	rd.src = len(rd.ll.Sources) - 1
}

// countRow counts one data row of the current file and enforces Options.MaxRows.
func (rd *reader) countRow() error {
	rd.ll.Rows++
	rd.cur().Rows++
	if rd.maxRows > 0 && rd.ll.Rows > rd.maxRows {
		return &FileError{Code: FileTooManyRows, Err: fmt.Errorf("the line list has more than %d data rows (counting every file of the run), the limit set for this run; raise the limit or split the file", rd.maxRows)}
	}
	return nil
}

// finish validates what every file contributed together: duplicates across all rows, the
// per-file counts and the order of the problems.
func (rd *reader) finish() (*LineList, error) {
	ll := rd.ll
	rd.dropDuplicates()
	if len(ll.Cases) == 0 {
		return nil, rd.noUsableRows()
	}
	for i := range ll.Cases {
		ll.Sources[ll.Cases[i].Source].Used++
	}
	SortProblems(ll.Problems)
	return ll, nil
}

// readCSV reads the current file as delimited text from br, whose size is known when
// size > 0.
func (rd *reader) readCSV(br *bufio.Reader, size int64) error {
	in := rd.in
	prefix, err := br.Peek(prefixSize)
	if err != nil && err != io.EOF && err != bufio.ErrBufferFull {
		return &FileError{Code: FileReadError, Err: fmt.Errorf("cannot read the file: %v", err)}
	}
	atEOF := err == io.EOF
	bom := bytes.HasPrefix(prefix, utf8BOM)
	if bom {
		_, _ = br.Discard(len(utf8BOM))
		prefix = prefix[len(utf8BOM):]
	}
	if bytes.HasPrefix(prefix, []byte{0xFF, 0xFE}) || bytes.HasPrefix(prefix, []byte{0xFE, 0xFF}) {
		return &FileError{Code: FileUnsupportedEncoding, Err: errors.New("the file is UTF-16 (it starts with a UTF-16 byte-order mark); export it again as UTF-8 CSV")}
	}
	if atEOF && len(bytes.TrimSpace(prefix)) == 0 {
		return &FileError{Code: FileEmpty, Err: errors.New("the file is empty; export the line list again with its header and rows")}
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
		return &FileError{Code: FileNotCSV, Err: errors.New("the file is not text (it has NUL or control bytes near its start); export the line list as CSV or as an .xlsx workbook")}
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
		return &FileError{Code: FileEmpty, Err: errors.New("the file has only blank lines; export the line list again with its header and rows")}
	case err != nil:
		var pe *csv.ParseError
		if errors.As(err, &pe) {
			return &FileError{Code: FileNoHeader, Err: fmt.Errorf("the header line cannot be split into column names (%v at line %d, byte %d); fix the quotes in the header", pe.Err, pe.Line, pe.Column)}
		}
		return readErr(err)
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
		return &FileError{Code: FileNoHeader, Err: errors.New("the first line has no column names; the file must start with a header line such as case_id,infector_id,onset_date")}
	}
	idx, mapping, err := mapHeader(header, in, delim)
	if err != nil {
		return err
	}

	rd.idx = idx
	src := rd.cur()
	src.Format, src.Header, src.Mapping, src.Delimiter, src.CROnly, src.HeaderRow, src.cols = FormatCSV, header, mapping, delim, crOnly, 1, idx
	// Splitting records (encoding/csv and the text decoder) runs on its own goroutine, a
	// batch ahead of turning them into cases; the batches arrive in file order, so the
	// result is that of one sequential pass.
	stop := make(chan struct{})
	defer close(stop)
	batches := splitRecords(cr, dec, stop)
	for b := range batches {
		if b.err != nil {
			return readErr(b.err)
		}
		rd.encName = b.enc
		for _, r := range b.recs {
			if err := rd.countRow(); err != nil {
				return err
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
			if src.Rows == presizeAt && size > 0 {
				rd.presize(size, b.offset)
			}
		}
		recycle(b)
	}
	if src.Rows == 0 {
		return &FileError{Code: FileNoDataRows, Err: errors.New("the file has a header but no data rows; check that the export included the cases")}
	}
	src.Encoding = dec.encoding()
	return nil
}

func readErr(err error) error {
	var fe *FileError
	if errors.As(err, &fe) { // a limit of the decompressing reader
		return fe
	}
	return &FileError{Code: FileReadError, Err: fmt.Errorf("cannot read the file: %v", err)}
}

// presize grows Cases once to the row count the file size suggests, so a large file does
// not pay for repeated doubling (which briefly holds two copies of the slice).
func (rd *reader) presize(size, offset int64) {
	if offset <= 0 {
		return
	}
	maxRows := rd.maxRows
	n := int64(rd.cur().Rows)
	est := size/offset*n + size%offset*n/offset + int64(len(rd.ll.Cases)-rd.cur().Rows)
	est += est/50 + 1024
	if maxRows > 0 && est > int64(maxRows) {
		est = int64(maxRows)
	}
	if est > int64(cap(rd.ll.Cases)) && est < 1<<31 {
		rd.ll.Cases = slices.Grow(rd.ll.Cases, int(est)-len(rd.ll.Cases))
	}
}

func (rd *reader) problem(line int, col string, code Code, sev Severity, msg string) {
	rd.ll.Problems = append(rd.ll.Problems, Problem{Source: rd.src, Row: line, Column: col, Code: code, Severity: sev, Message: msg})
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
	r := rowState{line: line, c: Case{Row: line, Source: uint16(rd.src)}}
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
		rd.ll.Problems = append(rd.ll.Problems, Problem{Source: int(cs[i].Source), Row: cs[i].Row, Column: ColCaseID, Code: CodeDuplicateID, Severity: SeverityError,
			Message: fmt.Sprintf("case_id %q was already used at %s, whose row is kept; give this case its own identifier or delete the repeated row; row rejected", clip(cs[i].ID), rd.ll.PlaceOf(int(cs[first].Source), cs[first].Row, ColCaseID))})
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
		parts = append(parts, fmt.Sprintf("%d × %s (first at %s: %s)", r.n, r.code, rd.ll.Place(r.first), clip(r.first.Message)))
	}
	hint := ""
	for _, s := range rd.ll.Sources {
		if s.Format != FormatWorkbook {
			hint = fmt.Sprintf("; the file was read with delimiter %s (set input.delimiter in the config if that is wrong)", delimName(s.Delimiter))
			break
		}
	}
	return &FileError{Code: FileNoUsableRows, Err: fmt.Errorf("none of the %d data rows could be used: %s%s",
		rd.ll.Rows, strings.Join(parts, "; "), hint)}
}
