package render

import (
	"strconv"
	"strings"
)

func init() { registerTable("problems", 10, tableProblems) }

func tableProblems(st *renderState, f cellFmt) (t table, ok bool, err error) {
	s := st.s
	if len(s.ProblemCounts) == 0 {
		return t, false, nil
	}
	t.Header = []string{"Problem", "What it means", "Severity", "Rows", "First rows"}
	t.Numeric = []bool{false, false, false, true, false}
	for _, p := range s.ProblemCounts {
		rows := make([]string, len(p.FirstRows))
		for i, r := range p.FirstRows {
			rows[i] = strconv.Itoa(r)
		}
		t.Rows = append(t.Rows, []string{string(p.Code), p.Code.Meaning(), string(p.Severity), f.int(p.Count), strings.Join(rows, " ")})
	}
	return t, true, nil
}
