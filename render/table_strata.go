package render

import "fmt"

func init() { registerTable("strata", 40, tableStrata) }

func tableStrata(st *renderState, f cellFmt) (t table, ok bool, err error) {
	s := st.s
	thr := st.threshold()
	if len(s.Strata) == 0 {
		return t, false, nil
	}
	t.Header = []string{"Column", "Value", "Cases", "Mean offspring"}
	t.Numeric = []bool{false, false, true, true}
	for _, x := range s.Strata {
		mean := f.numPtr(x.MeanOffspring, 2)
		switch {
		case x.Cases == nil:
			mean = "withheld"
		case x.MeanOffspring == nil:
			mean = fmt.Sprintf("fewer than %d complete", thr) // too few cases outside the censoring window
		}
		t.Rows = append(t.Rows, []string{x.Column, x.Value, countText(x.Cases, thr), mean})
	}
	return t, true, nil
}
