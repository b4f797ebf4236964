package render

func init() { registerTable("control_thresholds", 81, tableControlThresholds) }

func tableControlThresholds(st *renderState, f cellFmt) (t table, ok bool, err error) {
	c := st.s.Control
	if c == nil || len(c.Strategies) == 0 {
		return t, false, nil
	}
	t.Header = []string{"Strategy", "Effort that brings R below 1", "Interval"}
	t.Numeric = []bool{false, true, true}
	pct := func(p *float64) string {
		if p == nil {
			return ""
		}
		return f.num(100**p, 1) + "%"
	}
	for _, s := range c.Strategies {
		b := st.headline(s.Threshold)
		iv := ""
		if b[0] != nil || b[1] != nil {
			iv = pct(b[0]) + " to " + pct(b[1])
		}
		t.Rows = append(t.Rows, []string{controlLabel(s.Name), pct(s.Threshold.Estimate), iv})
	}
	return t, true, nil
}
