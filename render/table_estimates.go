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
	// The profile-likelihood column, when R and k have one (not with inferred infectors).
	profile := o.R.Profile[0] != nil || o.R.Profile[1] != nil
	if profile {
		t.Header = append(t.Header, lv+" interval, profile likelihood")
		t.Numeric = append(t.Numeric, true)
	}
	row := func(cells ...string) {
		for len(cells) < len(t.Header) {
			cells = append(cells, "")
		}
		t.Rows = append(t.Rows, cells[:len(t.Header)])
	}
	add := func(q string, e analysis.Estimate, d int) {
		row(q, f.numPtr(e.Estimate, d), f.interval(e.Percentile, d), f.interval(e.BCa, d), f.interval(e.Profile, d))
	}
	add("Reproduction number R (mean offspring)", o.R, 2)
	if o.PoissonLimit {
		row("Dispersion k", "no finite value (variance ≤ mean)", f.interval(o.K.Percentile, 2), f.interval(o.K.BCa, 2), f.interval(o.K.Profile, 2))
	} else {
		add("Dispersion k", o.K, 2)
	}
	if out := s.Outlook; out != nil {
		add("Chance one introduction dies out", out.ExtinctionProbability, 3)
		add("Chance one introduction starts a major outbreak", out.MajorOutbreakProbability, 3)
		add("Share of cases causing 80% of transmission (model)", out.ShareCausing80pct, 3)
	}
	if o.ShareCausing80pctObserved != nil {
		row("Share of cases causing 80% of transmission (observed)", f.num(*o.ShareCausing80pctObserved, 3), "", "")
	}
	row("Share of cases who infected no one", f.num(o.ZeroShare, 3), "", "")
	return t, true, nil
}
