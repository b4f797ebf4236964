package render

import (
	"slices"
)

func init() { registerTable("models", 30, tableModels) }

func tableModels(st *renderState, f cellFmt) (t table, ok bool, err error) {
	s := st.s
	if s.Offspring == nil || len(s.Offspring.Models) == 0 {
		return t, false, nil
	}
	// One column per parameter any model has (R first), then their standard errors.
	var names []string
	for _, m := range s.Offspring.Models {
		for _, p := range m.Parameters {
			if !slices.Contains(names, p.Name) {
				names = append(names, p.Name)
			}
		}
	}
	t.Header = append([]string{"Model"}, names...)
	for _, n := range names {
		t.Header = append(t.Header, "SE of "+n)
	}
	t.Header = append(t.Header, "Log-likelihood", "AIC", "ΔAIC")
	t.Numeric = []bool{false}
	for range t.Header[1:] {
		t.Numeric = append(t.Numeric, true)
	}
	for _, m := range s.Offspring.Models {
		n := modelName(m.Name)
		if m.Name == s.Offspring.BestModel {
			n += " (best)"
		}
		est, se := make([]string, len(names)), make([]string, len(names))
		for _, p := range m.Parameters {
			i := slices.Index(names, p.Name)
			est[i], se[i] = f.numPtr(p.Estimate, 3), f.numPtr(p.SE, 3)
		}
		row := append(append(append([]string{n}, est...), se...), f.num(m.LogLik, 2), f.num(m.AIC, 2), f.num(m.DeltaAIC, 2))
		t.Rows = append(t.Rows, row)
	}
	return t, true, nil
}
