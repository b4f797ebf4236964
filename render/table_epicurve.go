package render

func init() { registerTable("epicurve", 100, tableEpicurve) }

func tableEpicurve(st *renderState, f cellFmt) (t table, ok bool, err error) {
	s := st.s
	thr := st.threshold()
	e := s.EpiCurve
	if e == nil || len(e.Weeks) == 0 {
		return t, false, nil
	}
	t.Header = []string{"ISO week", "Week starting", "All cases"}
	t.Numeric = []bool{false, false, true}
	for _, sr := range e.Series {
		t.Header = append(t.Header, sr.Name)
		t.Numeric = append(t.Numeric, true)
	}
	for i, w := range e.Weeks {
		row := []string{weekText(w), w.String(), ""}
		if i < len(e.Total) {
			row[2] = countText(e.Total[i], thr)
		}
		for _, sr := range e.Series {
			var c *int
			if i < len(sr.Counts) {
				c = sr.Counts[i]
			}
			row = append(row, countText(c, thr))
		}
		t.Rows = append(t.Rows, row)
	}
	return t, true, nil
}
