package render

func init() { registerTable("projections", 80, tableProjections) }

func tableProjections(st *renderState, f cellFmt) (t table, ok bool, err error) {
	s := st.s
	if s.Outlook == nil || len(s.Outlook.Projection) == 0 {
		return t, false, nil
	}
	t.Header = []string{"Generations ahead", "Expected cases", "50% prediction interval", "90% prediction interval", "Chance of no cases"}
	t.Numeric = []bool{true, true, true, true, true}
	for _, p := range s.Outlook.Projection {
		p50, p90 := f.countRange(p.P50), f.countRange(p.P90)
		if p.Approximate {
			p50, p90 = "about "+p50, "about "+p90 // from the gamma approximation (Projection.Approximate)
		}
		t.Rows = append(t.Rows, []string{f.int(p.Generation), f.numPtr(p.Mean, 1), p50, p90, f.num(p.PZero, 3)})
	}
	return t, true, nil
}
