package render

func init() { registerTable("weekly_r", 120, tableWeeklyR) }

func tableWeeklyR(st *renderState, f cellFmt) (t table, ok bool, err error) {
	s := st.s
	if len(s.TimeVarying) == 0 {
		return t, false, nil
	}
	t.Header = []string{"ISO week", "Week starting", "Cases", "R", "Lower", "Upper", "Complete?"}
	t.Numeric = []bool{false, false, true, true, true, true, false}
	for _, w := range s.TimeVarying {
		c := w.Cases
		done := "yes"
		if w.Censored {
			done = "no: recent, still counting"
		}
		r := f.numPtr(w.R, 2)
		if c == nil {
			r = "withheld"
		}
		t.Rows = append(t.Rows, []string{weekText(w.WeekStart), w.WeekStart.String(), countText(c, st.threshold()), r, f.numPtr(w.Lower, 2), f.numPtr(w.Upper, 2), done})
	}
	return t, true, nil
}
