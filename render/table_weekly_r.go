package render

func init() { registerTable("weekly_r", 120, tableWeeklyR) }

func tableWeeklyR(st *renderState, f cellFmt) (t table, ok bool, err error) {
	s := st.s
	thr := st.cfg.suppress()
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
		r, lo, hi := f.num(w.R, 2), f.numPtr(w.Lower, 2), f.numPtr(w.Upper, 2)
		if c > 0 && c < thr {
			r, lo, hi = "withheld", "", ""
		}
		t.Rows = append(t.Rows, []string{weekText(w.WeekStart), w.WeekStart.String(), countText(&c, thr), r, lo, hi, done})
	}
	return t, true, nil
}
