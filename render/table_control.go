package render

import "github.com/caseweave/caseweave/pipeline/analysis"

func init() {
	registerTable("control", 82, func(st *renderState, f cellFmt) (table, bool, error) {
		return tableControl(st, f, "Chance a new chain dies out", 3, func(s analysis.ControlStrategy) []analysis.Estimate { return s.Extinction })
	})
	registerTable("control_r", 83, func(st *renderState, f cellFmt) (table, bool, error) {
		return tableControl(st, f, "Reproduction number", 2, func(s analysis.ControlStrategy) []analysis.Estimate { return s.R })
	})
}

// controlRows are the efforts the tables show (the chart draws every one).
var controlRows = []float64{0, 0.1, 0.2, 0.3, 0.5, 0.7, 0.9}

// tableControl has one row per effort of controlRows and one column per strategy, each cell
// the estimate of what with its headline interval.
func tableControl(st *renderState, f cellFmt, what string, digits int, of func(analysis.ControlStrategy) []analysis.Estimate) (t table, ok bool, err error) {
	c := st.s.Control
	if c == nil || len(c.Strategies) == 0 {
		return t, false, nil
	}
	t.Header = []string{"Control effort"}
	for _, s := range c.Strategies {
		t.Header = append(t.Header, what+": "+controlLabel(s.Name))
	}
	for range t.Header {
		t.Numeric = append(t.Numeric, true)
	}
	for i, e := range c.Efforts {
		if !containsEffort(e) {
			continue
		}
		row := []string{f.num(100*e, 0) + "%"}
		for _, s := range c.Strategies {
			v := ""
			if es := of(s); i < len(es) {
				v = f.numPtr(es[i].Estimate, digits)
				if iv := f.interval(st.headline(es[i]), digits); iv != "" {
					v += " (" + iv + ")"
				}
			}
			row = append(row, v)
		}
		t.Rows = append(t.Rows, row)
	}
	return t, true, nil
}

func containsEffort(e float64) bool {
	for _, r := range controlRows {
		if r > e-1e-9 && r < e+1e-9 {
			return true
		}
	}
	return false
}
