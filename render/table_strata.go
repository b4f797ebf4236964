package render

func init() { registerTable("strata", 40, tableStrata) }

func tableStrata(st *renderState, f cellFmt) (t table, ok bool, err error) {
	s := st.s
	thr := st.cfg.suppress()
	if len(s.Strata) == 0 {
		return t, false, nil
	}
	t.Header = []string{"Column", "Value", "Cases", "Mean offspring"}
	t.Numeric = []bool{false, false, true, true}
	for _, x := range s.Strata {
		mean := f.numPtr(x.MeanOffspring, 2)
		if x.Cases == nil || x.MeanOffspring == nil {
			mean = "withheld"
		}
		t.Rows = append(t.Rows, []string{x.Column, x.Value, countText(x.Cases, thr), mean})
	}
	return t, true, nil
}
