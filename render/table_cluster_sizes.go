package render

func init() { registerTable("cluster_sizes", 60, tableClusterSizes) }

func tableClusterSizes(st *renderState, f cellFmt) (t table, ok bool, err error) {
	s := st.s
	if s.Clusters == nil || len(s.Clusters.SizeHistogram) == 0 {
		return t, false, nil
	}
	t.Header = []string{"Chain size (cases)", "Chains", "Still growing", "Expected by the model"}
	t.Numeric = []bool{true, true, true, true}
	for _, c := range s.Clusters.SizeHistogram {
		t.Rows = append(t.Rows, []string{f.int(c.Size), f.int(c.Count), f.int(c.Censored), f.numPtr(c.Expected, 1)})
	}
	return t, true, nil
}
