package render

func init() { registerTable("forecast_check", 18, tableForecastCheck) }

// tableForecastCheck lists each archived forecast of a past week against what was observed.
func tableForecastCheck(st *renderState, f cellFmt) (t table, ok bool, err error) {
	fc := st.s.ForecastCheck
	if fc == nil || len(fc.Weeks) == 0 {
		return t, false, nil
	}
	thr := st.threshold()
	t.Header = []string{"ISO week", "Forecast on", "Median", "50% range", "90% range", "Observed", "In 50%?", "In 90%?", "Interval score"}
	t.Numeric = []bool{false, false, true, true, true, true, false, false, true}
	yes := func(b bool, shown bool) string {
		switch {
		case !shown:
			return ""
		case b:
			return "yes"
		}
		return "no"
	}
	for _, w := range fc.Weeks {
		med := "not known"
		if w.Median != nil {
			med = f.int(*w.Median)
		}
		shown := w.Observed != nil
		t.Rows = append(t.Rows, []string{weekText(w.WeekStart), w.Made.String(), med, f.countRange(w.P50), f.countRange(w.P90),
			countText(w.Observed, thr), yes(w.Within50, shown), yes(w.Within90, shown), f.numPtr(w.WIS, 2)})
	}
	return t, true, nil
}
