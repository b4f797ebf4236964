// Package linelist reads outbreak line list exports (CSV, .xlsx workbooks, either
// gzip-compressed; one file or several) into cases and a ledger of problems, the first
// stage of caseweave's pipeline. No row vanishes silently: every data row becomes a Case or
// is counted as rejected with at least one error Problem on its line, so LineList.Rows ==
// len(Cases) + Rejected.
//
// # Formats
//
// Each file's format is decided by its first bytes, not its name: a gzip stream is
// decompressed as it is read and its content decided again; a zip archive is an .xlsx
// workbook; a Compound File Binary (an encrypted workbook, or a legacy .xls) is a
// FileError with Code FileEncrypted; anything else is delimited text (see Bytes). A Source
// records what was read, with a Note where the name promised another format.
//
// A workbook is read with excelize, streaming the chosen sheet row by row: Options.Sheet (a
// name, or a 1-based position), else the only sheet, else the first whose header holds the
// required columns, visible sheets before hidden ones. The header is the first of the top
// 100 rows whose cells map to the canonical columns, so title rows above it are passed
// over. Cells are read as stored: a formula as its cached value (one without is a blank
// cell, and a problem on it quotes the formula: explainFormulas), a number in a date column
// (or text of digits alone: excelize streams cell values without their types) as a serial
// date in the workbook's date system (1900 or 1904; serialDate), text in a date column by
// ParseDate in the configured order. Rows with no filled cell are not data rows; a filled
// cell right of the header's last column is a field_count problem. Rows are numbered as the
// spreadsheet shows them, and LineList.Place gives "Cases!C12".
//
// Compressed content is bounded (gzipFloor and the constants beside it), so a compression
// bomb is a FileError with Code FileTooLarge rather than an exhausted machine.
//
// # Several files
//
// ReadFiles validates the rows of every file together: a case_id present in two files is
// a duplicate_id on the later row, its message naming the earlier place; Options.MaxRows
// counts all rows. Case.Source and Problem.Source index LineList.Sources.
//
// # Columns
//
// The canonical columns are case_id (required), infector_id, onset_date (required),
// report_date, setting, age_group, jurisdiction and imported: the table Columns, which says
// for each its header variants, how it is decoded and written, and whether a report can be
// split by it. Without a config, headers are recognised by their variants, ignoring case,
// spaces, hyphens, underscores and dots ("Case ID", "Date of onset", "infected_by"). The
// input section of a jurisdiction config (InputConfig, read by ParseInput) maps any other
// header. Columns outside the canonical set are skipped: their values are
// never copied out of the CSV reader's buffer, so personal data in an export (names, phone
// numbers) never reach a Case. (A workbook's rows come from excelize as strings, the shared
// text table of the workbook whole; only canonical cells are kept from them.)
//
// # Bytes
//
// UTF-8 with or without a byte-order mark (stripped), CRLF or LF line ends, quoted fields
// with embedded delimiters, doubled quotes and newlines. Quotes are read strictly: a quote
// inside an unquoted field, or a quoted field that is never closed, makes that one record a
// field_count problem naming the lines involved, and reading resumes at the next line.
// (Lenient quoting would let one unclosed quote swallow every later row silently.) The delimiter is the most frequent of ',', ';'
// and tab outside quotes on the header line, unless input.delimiter says otherwise. With
// input.encoding auto, the encoding is decided at the file's first non-ASCII byte: UTF-8
// if that byte starts a valid UTF-8 sequence, Windows-1252 otherwise. The bytes before it
// are ASCII and mean the same in every supported encoding, so the decision needs neither a
// second pass nor a guess from a prefix. Invalid UTF-8 found later in a file read as UTF-8
// is reported as bad_value on the cell it lands in (see Problems). UTF-16 and binary files
// (NUL bytes on the header line, or more than 10% control bytes in the first 64 KiB) are
// FileErrors.
//
// # Dates
//
// ParseDate accepts ISO 8601 (YYYY-MM-DD, with an optional time of day that is ignored,
// and YYYYMMDD) always, and day-first or month-first dates only when input.date_format
// says dmy or mdy; an ambiguous 03/04/2026 is never guessed, and without a format even
// 25/04/2026 is a bad_date whose message says how to set date_format. Impossible dates
// and years outside 1900..2200 (0000-00-00, 9999-12-31) are bad_date.
//
// # Problems
//
//   - field_count (error): the row has a different number of fields from the header, or
//     its quotes are malformed so it cannot be split into fields; rejected.
//   - missing_id (error): case_id is blank; rejected.
//   - duplicate_id (error): case_id seen on an earlier row; the first row is kept, this one
//     rejected, and the message names the first row's line.
//   - bad_date on onset_date (error, blank or unreadable; rejected: onset is required);
//     on report_date (error: the report date is dropped and the case kept).
//   - bad_value (error: a value was dropped): imported outside
//     yes/no/true/false/1/0/y/n/blank (read as not imported); a cell that is not valid UTF-8
//     or holds a NUL byte (in case_id the row is rejected, in infector_id the link dropped,
//     in setting, age_group or jurisdiction the value dropped; the case is kept).
//   - future_onset (warning): onset after Options.AsOf; the case is kept.
//
// CSV rows are numbered by the physical line on which the record starts (header = line 1), so
// a row after a quoted field spanning three lines gets the right number. A row that is
// rejected may also carry warnings about its other cells, so all of them can be fixed at once.
//
// # Identifiers
//
// Identifiers are trimmed of surrounding white space and otherwise kept byte for byte:
// inner spaces, quotes and non-ASCII letters stay, and no Unicode normalisation is
// applied, so look-alikes (Latin "A" and Cyrillic "А", composed and decomposed "é") remain
// distinct cases; a mismatch between a case's identifier and its infectee's infector_id
// then shows up downstream as an unknown infector rather than as a silent merge.
//
// # Memory
//
// Kept strings are cloned out of the CSV record, descriptive values are interned per read,
// duplicate identifiers are found by sorting an index after the read rather than with a
// map, and for inputs of known size the case slice is grown once to the estimated row
// count. A Case is 104 bytes; identifiers add their length.
package linelist
