package render

func init() { registerTable("forecast", 15, tableForecast) }

func tableForecast(st *renderState, f cellFmt) (t table, ok bool, err error) {
	fc := st.s.Forecast
	if fc == nil || len(fc.Weeks) == 0 {
		return t, false, nil
	}
	t.Header = []string{"ISO week", "Week starting", "Median", "50% prediction interval", "90% prediction interval"}
	t.Numeric = []bool{false, false, true, true, true}
	for _, w := range fc.Weeks {
		med := "not known"
		if w.Median != nil {
			med = f.int(*w.Median)
		}
		t.Rows = append(t.Rows, []string{weekText(w.WeekStart), w.WeekStart.String(), med, f.countRange(w.P50), f.countRange(w.P90)})
	}
	return t, true, nil
}
