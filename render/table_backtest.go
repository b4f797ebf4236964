package render

func init() { registerTable("backtest", 16, tableBacktest) }

func tableBacktest(st *renderState, f cellFmt) (t table, ok bool, err error) {
	bt := st.s.Backtest
	if bt == nil || len(bt.Horizons) == 0 {
		return t, false, nil
	}
	t.Header = []string{"Weeks ahead", "Forecasts scored", "Outcome in the 50% range", "Outcome in the 90% range", "Weighted interval score", "Error of the median"}
	t.Numeric = []bool{true, true, true, true, true, true}
	pct := func(p *float64) string {
		if p == nil {
			return "–"
		}
		return f.num(100**p, 0) + "%"
	}
	for _, h := range bt.Horizons {
		t.Rows = append(t.Rows, []string{f.int(h.Horizon), f.int(h.Scored), pct(h.Cover50), pct(h.Cover90), f.numPtr(h.WIS, 1), f.numPtr(h.AbsError, 1)})
	}
	return t, true, nil
}
