package render

import (
	"strconv"
	"strings"

	"github.com/caseweave/caseweave/pipeline/linelist"
)

func init() { registerTable("problems", 10, tableProblems) }

func tableProblems(st *renderState, f cellFmt) (t table, ok bool, err error) {
	s := st.s
	if len(s.ProblemCounts) == 0 {
		return t, false, nil
	}
	t.Header = []string{"Problem", "What it means", "Severity", "Rows", "First rows"}
	t.Numeric = []bool{false, false, false, true, false}
	// Line numbers alone say where a problem is in one CSV file; with several files or a
	// workbook the places name the file and the cell ("north.csv line 4", "Cases!C12").
	places := len(s.Input.Files) > 1 || (len(s.Input.Files) == 1 && s.Input.Files[0].Format != linelist.FormatCSV)
	for _, p := range s.ProblemCounts {
		rows := make([]string, len(p.FirstRows))
		for i, r := range p.FirstRows {
			rows[i] = strconv.Itoa(r)
		}
		first := strings.Join(rows, " ")
		if places {
			first = strings.Join(p.FirstPlaces, "; ")
		}
		t.Rows = append(t.Rows, []string{string(p.Code), p.Code.Meaning(), string(p.Severity), f.int(p.Count), first})
	}
	return t, true, nil
}
