package render

func init() { registerTable("age_mixing", 90, tableAgeMixing) }

func tableAgeMixing(st *renderState, f cellFmt) (t table, ok bool, err error) {
	s := st.s
	thr := st.threshold()
	a := s.AgeMixing
	if a == nil || len(a.Groups) == 0 {
		return t, false, nil
	}
	t.Header = append([]string{"Infector age \u2192 infectee age"}, a.Groups...)
	t.Numeric = []bool{false}
	for range a.Groups {
		t.Numeric = append(t.Numeric, true)
	}
	for i, g := range a.Groups {
		row := []string{g}
		for j := range a.Groups {
			var c *int
			if i < len(a.Counts) && j < len(a.Counts[i]) {
				c = a.Counts[i][j]
			}
			row = append(row, countText(c, thr))
		}
		t.Rows = append(t.Rows, row)
	}
	return t, true, nil
}
