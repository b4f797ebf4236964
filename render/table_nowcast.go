package render

func init() { registerTable("nowcast", 14, tableNowcast) }

func tableNowcast(st *renderState, f cellFmt) (t table, ok bool, err error) {
	nc := st.s.Nowcast
	if nc == nil || len(nc.Weeks) == 0 {
		return t, false, nil
	}
	t.Header = []string{"ISO week", "Week starting", "Cases listed", "Expected in the end", "50% prediction interval", "90% prediction interval"}
	t.Numeric = []bool{false, false, true, true, true, true}
	for _, w := range nc.Weeks {
		obs := "withheld"
		if w.Observed != nil {
			obs = f.int(*w.Observed)
		}
		exp := f.num(w.Expected, 0)
		if w.Unknown > 0 {
			exp = "at least " + exp
		}
		t.Rows = append(t.Rows, []string{weekText(w.WeekStart), w.WeekStart.String(), obs, exp,
			f.countRange([2]*int{&w.P50[0], &w.P50[1]}), f.countRange([2]*int{&w.P90[0], &w.P90[1]})})
	}
	return t, true, nil
}
