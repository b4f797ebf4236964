package render

import (
	"github.com/caseweave/caseweave/pipeline/analysis"
)

func init() { registerTable("estimates", 20, tableEstimates) }

func tableEstimates(st *renderState, f cellFmt) (t table, ok bool, err error) {
	s := st.s
	o := s.Offspring
	if o == nil {
		return t, false, nil
	}
	lv := st.levelText()
	t.Header = []string{"Quantity", "Estimate", lv + " interval, percentile", lv + " interval, BCa"}
	t.Numeric = []bool{false, true, true, true}
	add := func(q string, e analysis.Estimate, d int) {
		t.Rows = append(t.Rows, []string{q, f.numPtr(e.Estimate, d), f.interval(e.Percentile, d), f.interval(e.BCa, d)})
	}
	add("Reproduction number R (mean offspring)", o.R, 2)
	if o.PoissonLimit {
		t.Rows = append(t.Rows, []string{"Dispersion k", "no finite value (variance ≤ mean)", f.interval(o.K.Percentile, 2), f.interval(o.K.BCa, 2)})
	} else {
		add("Dispersion k", o.K, 2)
	}
	if out := s.Outlook; out != nil {
		add("Chance one introduction dies out", out.ExtinctionProbability, 3)
		add("Chance one introduction starts a major outbreak", out.MajorOutbreakProbability, 3)
		add("Share of cases causing 80% of transmission (model)", out.ShareCausing80pct, 3)
	}
	if o.ShareCausing80pctObserved != nil {
		t.Rows = append(t.Rows, []string{"Share of cases causing 80% of transmission (observed)", f.num(*o.ShareCausing80pctObserved, 3), "", ""})
	}
	t.Rows = append(t.Rows, []string{"Share of cases who infected no one", f.num(o.ZeroShare, 3), "", ""})
	return t, true, nil
}
