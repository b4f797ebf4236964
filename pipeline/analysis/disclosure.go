package analysis

import (
	"fmt"

	"github.com/caseweave/caseweave/pipeline/linelist"
)

// The stratified counts of a Summary form a few tables whose lines each add up to a total
// that is also shown: a week's count is the sum of its settings' counts, a setting's count
// the sum of its weeks, the report's cases the sum of the weeks, of the settings and of the
// age groups, the age-mixing links the sum of the matrix. A count withheld in one place
// must not be recoverable from the others by subtraction. The same tables serve Release,
// which withholds, and CheckDisclosure, which audits what a released view shows.

// countEntry is one count of a table: where it lives in the Summary (nil for a total that is
// always shown, such as the report's number of cases), its value and what it is.
type countEntry struct {
	ref   **int
	value int
	fixed bool // shown in any case (a headline total): never withheld
	what  string
	held  bool
}

// countLine is one equation total = Σ cells of a table.
type countLine struct {
	what  string
	cells []int
	total int // index into entries
}

type countTableSet struct {
	entries []countEntry
	lines   []countLine
}

func (t *countTableSet) add(ref **int, what string) int {
	e := countEntry{ref: ref, what: what}
	if *ref != nil {
		e.value = **ref
	} else {
		e.held = true // already withheld (an audit of a released view)
	}
	t.entries = append(t.entries, e)
	return len(t.entries) - 1
}

func (t *countTableSet) fixed(v int, what string) int {
	t.entries = append(t.entries, countEntry{value: v, fixed: true, what: what})
	return len(t.entries) - 1
}

// countTables collects the stratified counts of s and their lines.
func countTables(s *Summary) *countTableSet {
	t := &countTableSet{}
	cases := t.fixed(s.Tree.Cases, "cases in the report")
	strata := map[string]map[string]int{} // column → value → entry
	for i := range s.Strata {
		st := &s.Strata[i]
		if strata[st.Column] == nil {
			strata[st.Column] = map[string]int{}
		}
		strata[st.Column][st.Value] = t.add(&st.Cases, fmt.Sprintf("cases with %s %q", st.Column, st.Value))
	}
	for _, col := range []string{linelist.ColSetting, linelist.ColAgeGroup} {
		if m := strata[col]; len(m) > 0 {
			l := countLine{what: "cases by " + col, total: cases}
			for i := range s.Strata {
				if s.Strata[i].Column == col {
					l.cells = append(l.cells, m[s.Strata[i].Value])
				}
			}
			t.lines = append(t.lines, l)
		}
	}
	if e := s.EpiCurve; e != nil {
		weeks := countLine{what: "cases by week", total: cases}
		rows := make([]countLine, len(e.Weeks))
		for k, w := range e.Weeks {
			weeks.cells = append(weeks.cells, t.add(&e.Total[k], "cases in the week of "+w.String()))
			rows[k] = countLine{what: "cases in the week of " + w.String() + " by setting", total: weeks.cells[k]}
		}
		t.lines = append(t.lines, weeks)
		for _, sr := range e.Series {
			col := countLine{what: fmt.Sprintf("cases with setting %q by week", sr.Name), total: -1}
			if j, ok := strata[linelist.ColSetting][sr.Name]; ok {
				col.total = j
			}
			for k := range sr.Counts {
				i := t.add(&sr.Counts[k], fmt.Sprintf("cases with setting %q in the week of %s", sr.Name, e.Weeks[k]))
				col.cells = append(col.cells, i)
				rows[k].cells = append(rows[k].cells, i)
			}
			if col.total >= 0 {
				t.lines = append(t.lines, col)
			}
		}
		t.lines = append(t.lines, rows...)
	}
	if fs := s.Input.Files; len(fs) > 1 {
		rows := countLine{what: "rows read by input file", total: t.fixed(s.Input.Rows, "rows read")}
		used := countLine{what: "rows used by input file", total: t.fixed(s.Input.Used, "rows used")}
		rejected := countLine{what: "rows rejected by input file", total: t.fixed(s.Input.Rejected, "rows rejected")}
		for i := range fs {
			f := &fs[i]
			r := t.add(&f.Rows, "rows read from "+f.Path)
			u := t.add(&f.Used, "rows used from "+f.Path)
			j := t.add(&f.Rejected, "rows rejected from "+f.Path)
			rows.cells, used.cells, rejected.cells = append(rows.cells, r), append(used.cells, u), append(rejected.cells, j)
			t.lines = append(t.lines, countLine{what: "rows of " + f.Path, cells: []int{u, j}, total: r})
		}
		t.lines = append(t.lines, rows, used, rejected)
	}
	if am := s.AgeMixing; am != nil {
		l := countLine{what: "links by age group", total: t.fixed(am.Links, "links")}
		for r := range am.Counts {
			for c := range am.Counts[r] {
				l.cells = append(l.cells, t.add(&am.Counts[r][c], fmt.Sprintf("links from age group %q to %q", am.Groups[r], am.Groups[c])))
			}
		}
		t.lines = append(t.lines, l)
	}
	return t
}

// suppressTables withholds every count from 1 to thr − 1, then, line by line until nothing
// changes, more counts wherever a line would give one away (common practice of statistical
// disclosure control, e.g. primary and complementary cell suppression; there is no single
// standard):
//
//   - a line with exactly one withheld count gives it away by subtraction;
//   - a line whose total is shown gives away the sum of its withheld counts, which must then
//     reach the threshold too (unless every non-zero count of the line is withheld, when the
//     sum is the total itself).
//
// The fix is to withhold the line's smallest shown non-zero count (the earliest on a tie),
// or, when none is left, its total. Totals shown in any case (the report's cases, the links)
// are never withheld. Each pass withholds at least one more count, so it ends. It audits
// lines one at a time: a withheld count can still be bounded by combining several lines,
// but not recovered exactly in the patterns it leaves.
func suppressTables(t *countTableSet, thr int) {
	for i := range t.entries {
		e := &t.entries[i]
		if !e.fixed && e.value > 0 && e.value < thr {
			e.held = true
		}
	}
	for changed := true; changed; {
		changed = false
		for _, l := range t.lines {
			if leak := t.lineLeak(l, thr); leak != "" && t.withholdMore(l) {
				changed = true
			}
		}
	}
}

// held counts the withheld entries.
func (t *countTableSet) held() int {
	n := 0
	for _, e := range t.entries {
		if e.held {
			n++
		}
	}
	return n
}

// lineLeak says how a line gives a withheld count away, or "" when it does not.
func (t *countTableSet) lineLeak(l countLine, thr int) string {
	held, sum, shownNonZero := 0, 0, 0
	for _, i := range l.cells {
		e := t.entries[i]
		switch {
		case e.held:
			held++
			sum += e.value
		case e.value > 0:
			shownNonZero++
		}
	}
	total := t.entries[l.total]
	switch {
	case total.held && held == 0:
		return fmt.Sprintf("%s is withheld but is the sum of the counts shown", total.what)
	case total.held:
		return ""
	case held == 1:
		return fmt.Sprintf("the one withheld count of %s is %s minus the others", l.what, total.what)
	case held > 1 && sum > 0 && sum < thr && shownNonZero > 0:
		return fmt.Sprintf("the withheld counts of %s add up to %d, %s minus the others", l.what, sum, total.what)
	}
	return ""
}

// withholdMore withholds the smallest shown non-zero count of the line, or its total; it
// reports false when nothing more can be withheld.
func (t *countTableSet) withholdMore(l countLine) bool {
	best := -1
	for _, i := range l.cells {
		e := t.entries[i]
		if !e.held && !e.fixed && e.value > 0 && (best < 0 || e.value < t.entries[best].value) {
			best = i
		}
	}
	if best < 0 {
		if tot := &t.entries[l.total]; !tot.held && !tot.fixed {
			tot.held = true
			return true
		}
		return false
	}
	t.entries[best].held = true
	return true
}

// withhold sets every withheld count's place in the Summary to null.
func (t *countTableSet) withhold() {
	for _, e := range t.entries {
		if e.held && e.ref != nil {
			*e.ref = nil
		}
	}
}

// Disclosure is one way a released view gives away a count below the threshold.
type Disclosure struct {
	What string
}

func (d Disclosure) String() string { return d.What }

// CheckDisclosure audits a released view (a Released's Summary, or one read back from the
// JSON written beside a report) against the full Summary it came from: every
// count of a stratified table it shows below the threshold, every count its lines give away
// by subtraction, and every sum of withheld counts a shown total gives away below the
// threshold, by the rules of suppressTables; weekly counts must be the epidemic curve's. It
// is the oracle of the disclosure tests and returns nil for a view that gives nothing away.
func CheckDisclosure(full, r *Summary) []Disclosure {
	thr := r.Settings.SuppressBelow
	var out []Disclosure
	ft, rt := countTables(full), countTables(r)
	if len(ft.entries) != len(rt.entries) {
		return []Disclosure{{What: "the released view's tables do not match the summary's"}}
	}
	for i := range rt.entries {
		rt.entries[i].value = ft.entries[i].value // the exact counts, from the full summary
		if e := rt.entries[i]; !e.held && !e.fixed && e.value > 0 && e.value < thr {
			out = append(out, Disclosure{What: fmt.Sprintf("%s is shown: %d", e.what, e.value)})
		}
	}
	for _, l := range rt.lines {
		if leak := rt.lineLeak(l, thr); leak != "" {
			out = append(out, Disclosure{What: leak})
		}
	}
	weeks := map[linelist.Day]*int{}
	if e := r.EpiCurve; e != nil {
		for k, w := range e.Weeks {
			weeks[w] = e.Total[k]
		}
	}
	for _, w := range r.TimeVarying {
		if w.Cases != nil && (weeks[w.WeekStart] == nil || *weeks[w.WeekStart] != *w.Cases) {
			out = append(out, Disclosure{What: "the weekly reproduction number of " + w.WeekStart.String() + " shows a count the epidemic curve withholds"})
		}
	}
	return out
}
