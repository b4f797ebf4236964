package render

import "github.com/caseweave/caseweave/pipeline/analysis"

func init() {
	registerTable("since_last", 16, tableSinceLast)
	registerTable("since_changes", 17, tableSinceChanges)
}

// tableSinceLast counts the new cases and the revisions since the last report.
func tableSinceLast(st *renderState, f cellFmt) (t table, ok bool, err error) {
	sl := st.s.SinceLast
	if sl == nil {
		return t, false, nil
	}
	thr := st.threshold()
	r := sl.Revisions
	t.Header = []string{"Since " + sl.Previous.String(), "Cases"}
	t.Numeric = []bool{false, true}
	for _, row := range []struct {
		what string
		n    *int
	}{
		{"New, with onset after " + sl.Previous.String(), sl.NewByOnset},
		{"New, reported after " + sl.Previous.String(), sl.NewByReport},
		{"New, with onset on or before " + sl.Previous.String() + " (reported late)", r.Late},
		{"No longer in the export", r.Removed},
		{"Onset date changed", r.OnsetChanged},
		{"Infector added", r.LinksAdded},
		{"Infector removed", r.LinksRemoved},
		{"Infector changed to another case", r.LinksMoved},
	} {
		t.Rows = append(t.Rows, []string{row.what, countText(row.n, thr)})
	}
	return t, true, nil
}

// changeNames are the estimates of SinceLast.Changes as a reader knows them.
var changeNames = map[string]string{
	"R": "R", "k": "k (dispersion)", "recent_R": "Recent R (latest complete week)", "die_out": "Chance the current chains die out",
}

// tableSinceChanges sets each key estimate now against the last report's.
func tableSinceChanges(st *renderState, f cellFmt) (t table, ok bool, err error) {
	sl := st.s.SinceLast
	if sl == nil || len(sl.Changes) == 0 {
		return t, false, nil
	}
	t.Header = []string{"Estimate", "On " + sl.Previous.String(), "Now", "Change beyond the uncertainty?"}
	t.Numeric = []bool{false, true, true, false}
	for _, c := range sl.Changes {
		beyond := "no"
		switch {
		case c.Beyond:
			beyond = "yes: the intervals do not overlap"
		case c.Now.Lower == nil || c.Then.Lower == nil || c.Now.Upper == nil || c.Then.Upper == nil:
			beyond = "cannot tell: an interval is missing"
		}
		name := changeNames[c.Name]
		if name == "" {
			name = c.Name
		}
		t.Rows = append(t.Rows, []string{name, spanText(f, c.Then), spanText(f, c.Now), beyond})
	}
	return t, true, nil
}

// spanText is "1.23 (0.90 to 1.70)", or "not estimable".
func spanText(f cellFmt, s analysis.Span) string {
	if s.Estimate == nil {
		return "not estimable"
	}
	out := f.num(*s.Estimate, 2)
	if iv := f.interval([2]*float64{s.Lower, s.Upper}, 2); iv != "" {
		out += " (" + iv + ")"
	}
	return out
}

// sinceStatus is the index's words on what changed since the last report, "" without one.
func sinceStatus(s *analysis.Summary) string {
	sl := s.SinceLast
	if sl == nil {
		return ""
	}
	thr := s.Settings.SuppressBelow
	return "; since " + sl.Previous.String() + ": " + countText(sl.NewByOnset, thr) + " new by onset, " +
		countText(sl.Revisions.Late, thr) + " added late, " + countText(sl.Revisions.Removed, thr) + " removed"
}
