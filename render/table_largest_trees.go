package render

func init() { registerTable("largest_trees", 70, tableLargestTrees) }

func tableLargestTrees(st *renderState, f cellFmt) (t table, ok bool, err error) {
	s := st.s
	if s.Clusters == nil || len(s.Clusters.Largest) == 0 {
		return t, false, nil
	}
	t.Header = []string{"First case", "Cases here", "Cases in the chain", "Generations", "First onset week", "Cases not drawn"}
	t.Numeric = []bool{false, true, true, true, false, true}
	for _, tr := range s.Clusters.Largest {
		t.Rows = append(t.Rows, []string{tr.Root, f.int(tr.Local), f.int(tr.Size), f.int(tr.Depth), weekText(tr.Start), f.int(tr.Hidden)})
	}
	return t, true, nil
}
