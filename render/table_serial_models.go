package render

import (
	"slices"
	"strings"
)

func init() { registerTable("serial_models", 110, tableSerialModels) }

func tableSerialModels(st *renderState, f cellFmt) (t table, ok bool, err error) {
	s := st.s
	si := s.SerialInterval
	if si == nil || len(si.Models) == 0 {
		return t, false, nil
	}
	t.Header = []string{"Model", "Mean (days)", "SD (days)", "Parameters", "Log-likelihood", "AIC"}
	t.Numeric = []bool{false, true, true, false, true, true}
	for _, m := range si.Models {
		keys := make([]string, 0, len(m.Params))
		for k := range m.Params {
			keys = append(keys, k)
		}
		slices.Sort(keys)
		ps := make([]string, len(keys))
		for i, k := range keys {
			ps[i] = k + " = " + f.num(m.Params[k], 3)
		}
		n := modelName(m.Name)
		if m.Name == si.BestModel {
			n += " (best)"
		}
		t.Rows = append(t.Rows, []string{n, f.num(m.Mean, 2), f.num(m.SD, 2), strings.Join(ps, "; "), f.num(m.LogLik, 2), f.num(m.AIC, 2)})
	}
	return t, true, nil
}
