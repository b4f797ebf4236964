package linelist

import (
	"fmt"
	"sort"
)

// Severity says whether a problem cost data (Error: a row, a value or a link was dropped)
// or only deserves a look (Warning: the data were kept as they are).
type Severity string

const (
	SeverityError   Severity = "error"
	SeverityWarning Severity = "warning"
)

// Code names a kind of problem. The set is part of caseweave's interface: the JSON summary,
// the check output and the report all use these words.
type Code string

const (
	CodeFieldCount          Code = "field_count"           // row has a different number of fields from the header; row rejected
	CodeMissingID           Code = "missing_id"            // blank case_id; row rejected
	CodeDuplicateID         Code = "duplicate_id"          // case_id seen before; later row rejected, first kept
	CodeBadDate             Code = "bad_date"              // a date that cannot be read; onset rejects the row, report date is dropped
	CodeBadValue            Code = "bad_value"             // a value outside its column's vocabulary (e.g. imported = maybe); value dropped
	CodeUnknownInfector     Code = "unknown_infector"      // infector_id names no case; link dropped, case kept unlinked
	CodeSelfInfector        Code = "self_infector"         // infector_id equals case_id; link dropped
	CodeCycle               Code = "cycle"                 // case lies on a cycle of links; links on the cycle dropped
	CodeOnsetBeforeInfector Code = "onset_before_infector" // infectee's onset precedes infector's; warning, link kept
	CodeFutureOnset         Code = "future_onset"          // onset after the analysis date; warning, case kept
)

// Problem is one thing wrong with the input, with its place in the file. Row is the 1-based
// physical line on which the record starts, counting the header as line 1, as encoding/csv
// counts lines; in a workbook it is the row number the spreadsheet shows. Row is 0 for a
// problem with the file as a whole. LineList.Place says where it is in the analyst's words.
type Problem struct {
	Source   int // index in LineList.Sources of the file concerned (0 when one was read)
	Row      int
	Column   string
	Code     Code
	Severity Severity
	Message  string
}

func (p Problem) String() string {
	if p.Row == 0 {
		return fmt.Sprintf("%s %s: %s", p.Severity, p.Code, p.Message)
	}
	if p.Column == "" {
		return fmt.Sprintf("line %d: %s %s: %s", p.Row, p.Severity, p.Code, p.Message)
	}
	return fmt.Sprintf("line %d, column %s: %s %s: %s", p.Row, p.Column, p.Severity, p.Code, p.Message)
}

// SortProblems orders problems by file, row, then code, so that output is deterministic.
func SortProblems(ps []Problem) {
	sort.SliceStable(ps, func(i, j int) bool {
		if ps[i].Source != ps[j].Source {
			return ps[i].Source < ps[j].Source
		}
		if ps[i].Row != ps[j].Row {
			return ps[i].Row < ps[j].Row
		}
		return ps[i].Code < ps[j].Code
	})
}

// Meaning says in plain words what the problem code means and what was done, without
// quoting any value of the row (reports show it in place of the message).
func (c Code) Meaning() string {
	switch c {
	case CodeFieldCount:
		return "the row has a different number of fields from the header; the row was not used"
	case CodeMissingID:
		return "the case identifier is blank; the row was not used"
	case CodeDuplicateID:
		return "the case identifier appeared on an earlier row or in an earlier file; this row was not used"
	case CodeBadDate:
		return "a date could not be read; an unreadable onset date means the row was not used"
	case CodeBadValue:
		return "a value could not be read; it was dropped and the case kept"
	case CodeUnknownInfector:
		return "the infector named matches no case; the link was dropped and the case kept as unlinked"
	case CodeSelfInfector:
		return "the case names itself as its infector; the link was dropped"
	case CodeCycle:
		return "the case lies on a cycle of infector links; the links on the cycle were dropped"
	case CodeOnsetBeforeInfector:
		return "the onset precedes the infector's onset; the link was kept (pre-symptomatic transmission can do this)"
	case CodeFutureOnset:
		return "the onset is after the analysis date; the case was kept"
	}
	return "a problem with this row"
}
