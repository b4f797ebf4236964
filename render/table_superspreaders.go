package render

import (
	"fmt"
)

func init() { registerTable("superspreaders", 50, tableSuperspreaders) }

func tableSuperspreaders(st *renderState, f cellFmt) (t table, ok bool, err error) {
	s := st.s
	if s.Offspring == nil || len(s.Offspring.Superspreaders) == 0 {
		return t, false, nil
	}
	// The cases who infected most, capped so that a national list does not print tens of
	// thousands of rows; the last row says how many more there are.
	t.Header = []string{"Case", "People infected"}
	t.Numeric = []bool{false, true}
	o := s.Offspring
	for k, id := range o.Superspreaders {
		if k == superspreadersShown {
			t.Rows = append(t.Rows, []string{fmt.Sprintf("and %s more", f.int(len(o.Superspreaders)-k)), fmt.Sprintf("more than %d each", o.SSEThreshold)})
			break
		}
		n := fmt.Sprintf("more than %d", o.SSEThreshold)
		if k < len(o.SuperspreaderOffspring) {
			n = f.int(o.SuperspreaderOffspring[k])
		}
		t.Rows = append(t.Rows, []string{id, n})
	}
	return t, true, nil
}

// superspreadersShown caps the superspreader table.
const superspreadersShown = 25
