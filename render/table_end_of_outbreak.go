package render

import (
	"fmt"

	"github.com/caseweave/caseweave/pipeline/analysis"
	"github.com/caseweave/caseweave/pipeline/linelist"
)

func init() { registerTable("end_of_outbreak", 130, tableEndOfOutbreak) }

func tableEndOfOutbreak(st *renderState, f cellFmt) (t table, ok bool, err error) {
	s := st.s
	e := s.EndOfOutbreak
	if e == nil {
		return t, false, nil
	}
	t.Header = []string{"Milestone", "Date"}
	t.Rows = append(t.Rows, []string{"Last onset", e.LastOnset.String()})
	if e.P95Date != nil {
		t.Rows = append(t.Rows, []string{"95% chance no further cases", e.P95Date.String()})
	}
	if e.P99Date != nil {
		t.Rows = append(t.Rows, []string{"99% chance no further cases", e.P99Date.String()})
	}
	if rt := st.ruleOfThumb(); rt != nil {
		t.Rows = append(t.Rows, []string{fmt.Sprintf("Twice the longest incubation period (%d days) after the last onset", rt.LongestIncubationDays), rt.Date.String()})
	}
	return t, true, nil
}

// ruleOfThumb is the Summary's rule-of-thumb date, or one computed from config.yaml's
// incubation_days (twice the longest incubation period after the last onset; common practice).
func (st *renderState) ruleOfThumb() *analysis.RuleOfThumb {
	e := st.s.EndOfOutbreak
	if e == nil {
		return nil
	}
	if e.RuleOfThumb != nil {
		return e.RuleOfThumb
	}
	if st.cfg.IncubationDays == nil {
		return nil
	}
	d := *st.cfg.IncubationDays
	return &analysis.RuleOfThumb{LongestIncubationDays: d, Date: e.LastOnset + linelist.Day(2*d)}
}
