package render

func init() { registerTable("cluster_sizes", 60, tableClusterSizes) }

// tableClusterSizes lists the chains by size; the model's expectation is a column only when
// the chain-size fit was informative enough to give one.
func tableClusterSizes(st *renderState, f cellFmt) (t table, ok bool, err error) {
	s := st.s
	if s.Clusters == nil || len(s.Clusters.SizeHistogram) == 0 {
		return t, false, nil
	}
	expected := false
	for _, c := range s.Clusters.SizeHistogram {
		expected = expected || c.Expected != nil
	}
	t.Header = []string{"Chain size (cases)", "Chains", "Still growing"}
	t.Numeric = []bool{true, true, true}
	if expected {
		t.Header = append(t.Header, "Expected by the model")
		t.Numeric = append(t.Numeric, true)
	}
	for _, c := range s.Clusters.SizeHistogram {
		row := []string{f.int(c.Size), f.int(c.Count), f.int(c.Censored)}
		if expected {
			row = append(row, f.numPtr(c.Expected, 1))
		}
		t.Rows = append(t.Rows, row)
	}
	return t, true, nil
}
