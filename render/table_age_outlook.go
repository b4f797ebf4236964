package render

func init() {
	registerTable("age_outlook", 92, tableAgeOutlook)
	registerTable("age_shares", 93, tableAgeShares)
}

// tableAgeOutlook is the next-generation matrix by age group with each type's dispersion and
// the chance that a chain from one case of the type dies out.
func tableAgeOutlook(st *renderState, f cellFmt) (t table, ok bool, err error) {
	m := st.s.Multitype
	if m == nil || len(m.Groups) == 0 || len(m.Matrix) != len(m.Groups) {
		return t, false, nil
	}
	t.Header = []string{"One case aged"}
	for _, g := range m.Groups {
		t.Header = append(t.Header, "infects, aged "+g)
	}
	t.Header = append(t.Header, "Dispersion k", "Chance its chain dies out")
	t.Numeric = []bool{false}
	for range t.Header[1:] {
		t.Numeric = append(t.Numeric, true)
	}
	for i, g := range m.Groups {
		row := []string{g}
		for j := range m.Groups {
			v := ""
			if j < len(m.Matrix[i]) {
				v = f.num(m.Matrix[i][j], 2)
			}
			row = append(row, v)
		}
		k := "no finite k"
		if i < len(m.K) && m.K[i] != nil {
			k = f.num(*m.K[i], 2)
		}
		q := ""
		if i < len(m.Extinction) {
			q = f.num(m.Extinction[i], 3)
		}
		t.Rows = append(t.Rows, append(row, k, q))
	}
	return t, true, nil
}

// tableAgeShares is the expected share of each age group among the cases of the next
// generations and in the long run.
func tableAgeShares(st *renderState, f cellFmt) (t table, ok bool, err error) {
	m := st.s.Multitype
	if m == nil || len(m.Groups) == 0 || (len(m.GenerationShares) == 0 && m.StableShares == nil) {
		return t, false, nil
	}
	t.Header = append([]string{"Cases of"}, m.Groups...)
	t.Numeric = []bool{false}
	for range m.Groups {
		t.Numeric = append(t.Numeric, true)
	}
	add := func(label string, sh []float64) {
		row := []string{label}
		for j := range m.Groups {
			v := ""
			if j < len(sh) {
				v = f.num(100*sh[j], 0) + "%"
			}
			row = append(row, v)
		}
		t.Rows = append(t.Rows, row)
	}
	for g, sh := range m.GenerationShares {
		add("Generation +"+f.int(g+1), sh) // a cell starting with "+" would read as a formula
	}
	if m.StableShares != nil {
		add("In the long run", m.StableShares)
	}
	return t, true, nil
}
