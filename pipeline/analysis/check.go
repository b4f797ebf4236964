package analysis

import (
	"sort"

	"github.com/caseweave/caseweave/pipeline/forest"
	"github.com/caseweave/caseweave/pipeline/linelist"
)

// ToolName and Version identify caseweave in every summary and report.
const (
	ToolName = "caseweave"
	Version  = "0.1.0"
)

// firstRowsShown caps the line numbers listed per problem code in ProblemCounts.
const firstRowsShown = 5

// CheckSummary gathers the data-quality part of a Summary: the input's row accounting, every
// problem (the reader's and the forest's, sorted by line), their tallies and the forest's
// statistics.
func CheckSummary(path string, ll *linelist.LineList, f *forest.Forest, asOf linelist.Day) *Summary {
	s := &Summary{
		Tool: Tool{Name: ToolName, Version: Version},
		AsOf: asOf,
		Input: Input{
			Path: path, Rows: ll.Rows,
			Used: len(ll.Cases), Rejected: ll.Rejected,
			Files: make([]InputFile, len(ll.Sources)),
		},
	}
	for i, src := range ll.Sources {
		f := InputFile{Path: src.Name(), SHA256: src.SHA256, Format: src.Format, Gzip: src.Gzip, Sheet: src.Sheet,
			SheetReason: src.SheetReason, HeaderRow: src.HeaderRow, Note: src.Note, Rows: count(src.Rows), Used: count(src.Used), Rejected: count(src.Rows - src.Used)}
		if src.Format == linelist.FormatWorkbook {
			f.DateSystem = "1900"
			if src.Date1904 {
				f.DateSystem = "1904"
			}
		}
		s.Input.Files[i] = f
	}
	if len(ll.Sources) == 1 {
		s.Input.SHA256 = ll.Sources[0].SHA256
	}
	all := make([]linelist.Problem, 0, len(ll.Problems)+len(f.Problems))
	all = append(all, ll.Problems...)
	all = append(all, f.Problems...)
	linelist.SortProblems(all)
	s.Problems = make([]Problem, len(all))
	for i, p := range all {
		q := Problem{Row: p.Row, Column: p.Column, Code: p.Code, Severity: p.Severity, Message: p.Message}
		if p.Source >= 0 && p.Source < len(ll.Sources) {
			q.File, q.Place = ll.Sources[p.Source].Name(), ll.Sources[p.Source].At(p.Row, p.Column)
		}
		s.Problems[i] = q
	}
	s.ProblemCounts = countProblems(s.Problems, len(ll.Sources) > 1)
	s.Tree = TreeStats(ll.Cases, f)
	return s
}

// TreeStats summarises a forest.
func TreeStats(cases []linelist.Case, f *forest.Forest) Tree {
	t := Tree{
		Cases: len(cases), Linked: f.Linked, Roots: f.Roots(), Clusters: len(f.Clusters),
		LargestCluster: f.LargestCluster(), MaxGeneration: f.MaxGeneration(),
	}
	for i := range cases {
		if cases[i].Imported {
			t.Imported++
		}
	}
	return t
}

// countProblems tallies problems by code; with several files each first place names its
// file's base name.
func countProblems(ps []Problem, files bool) []ProblemCount {
	byCode := map[linelist.Code]*ProblemCount{}
	for _, p := range ps {
		pc := byCode[p.Code]
		if pc == nil {
			pc = &ProblemCount{Code: p.Code, Severity: p.Severity, FirstRows: []int{}, FirstPlaces: []string{}}
			byCode[p.Code] = pc
		}
		pc.Count++
		if p.Severity == linelist.SeverityError {
			pc.Severity = linelist.SeverityError
		}
		if len(pc.FirstRows) < firstRowsShown && p.Row > 0 {
			pc.FirstRows = append(pc.FirstRows, p.Row)
			place := p.Place
			if files {
				place = baseName(p.File) + " " + place
			}
			pc.FirstPlaces = append(pc.FirstPlaces, place)
		}
	}
	out := make([]ProblemCount, 0, len(byCode))
	for _, pc := range byCode {
		out = append(out, *pc)
	}
	sort.Slice(out, func(i, j int) bool {
		if out[i].Severity != out[j].Severity {
			return out[i].Severity == linelist.SeverityError
		}
		if out[i].Count != out[j].Count {
			return out[i].Count > out[j].Count
		}
		return out[i].Code < out[j].Code
	})
	return out
}

// HasErrors reports whether any problem has error severity (check --strict fails then).
func (s *Summary) HasErrors() bool {
	for _, p := range s.ProblemCounts {
		if p.Severity == linelist.SeverityError {
			return true
		}
	}
	return false
}
