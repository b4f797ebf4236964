package analysis

import (
	"bytes"
	"encoding/json"
	"fmt"
	"strings"
	"testing"

	"github.com/caseweave/caseweave/pipeline/linelist"
)

// smallStrata is a hostile line list for disclosure: eight settings of 1 to 4 cases spread
// over weeks, beside two large ones, in two age groups, so that almost every stratified
// count is small and many could be recovered by subtraction.
func smallStrata(t *testing.T) []linelist.Case {
	t.Helper()
	var cases []linelist.Case
	add := func(setting, age string, onset linelist.Day, infector string) string {
		id := fmt.Sprintf("P-%03d", len(cases)+1)
		cases = append(cases, linelist.Case{ID: id, InfectorID: infector, Onset: onset, Row: len(cases) + 2,
			Strata: &linelist.Strata{Setting: setting, AgeGroup: age, Jurisdiction: "Tarn"}})
		return id
	}
	start := day("2026-09-07")
	root := add("household", "18-64", start, "")
	for i := 0; i < 30; i++ {
		add("household", []string{"18-64", "65+"}[i%2], start+linelist.Day(2+i%20), root)
		add("school", "5-17", start+linelist.Day(3+i%25), root)
	}
	for s := 1; s <= 8; s++ {
		for j := 0; j < 1+s%4; j++ {
			add(fmt.Sprintf("site-%d", s), []string{"18-64", "65+", "0-4"}[(s+j)%3], start+linelist.Day(7*j+s), root)
		}
	}
	return cases
}

func released(t *testing.T, s *Summary, p Policy) *Released {
	t.Helper()
	r, err := Release(s, p)
	if err != nil {
		t.Fatal(err)
	}
	return r
}

// On the hostile fixture and on a simulated outbreak, the released view shows no
// stratified count below the threshold and gives none away by subtraction (CheckDisclosure
// is the oracle); the full summary is unchanged.
func TestReleaseGivesNoSmallCountAway(t *testing.T) {
	sim, _ := outbreak(t, 0.9, 0.5, 60, 8, "2026-12-31")
	for name, cases := range map[string][]linelist.Case{"small strata": smallStrata(t), "simulated": sim} {
		for _, thr := range []int{3, 5, 11} {
			s := analyse(t, cases, Options{AsOf: day("2027-01-01"), Replicates: 20, Seed: 1})
			before, _ := json.Marshal(s)
			r := released(t, s, Policy{SuppressBelow: thr, Pseudonyms: NewPseudonyms("")})
			if leaks := CheckDisclosure(s, r.Summary()); len(leaks) > 0 {
				t.Errorf("%s, threshold %d: %d disclosures, first: %s", name, thr, len(leaks), leaks[0])
			}
			if after, _ := json.Marshal(s); !bytes.Equal(before, after) {
				t.Fatalf("%s: Release changed the full summary", name)
			}
			withheld := 0
			for _, st := range r.Summary().Strata {
				if st.Cases == nil {
					withheld++
				}
				if st.Counted != nil {
					t.Error("a released stratum carries its counted cases")
				}
			}
			if name == "small strata" && thr == 5 && withheld < 8 { // every site has 1 to 4 cases
				t.Errorf("threshold %d: only %d strata withheld on the hostile fixture", thr, withheld)
			}
		}
	}
}

// A worked example of complementary suppression: a week of 24 cases in six settings
// (5, 6, 5, 6, 1, 1) withholds the two 1s, whose sum, 2, the total would give away, so the
// smallest shown count (the first 5) is withheld as well: 7 withheld cases can no longer be
// split by subtraction.
func TestSuppressTablesWorkedExample(t *testing.T) {
	tab := &countTableSet{}
	vals := []int{5, 6, 5, 6, 1, 1}
	l := countLine{what: "week", total: tab.fixed(24, "the week")}
	for i, v := range vals {
		v := v
		p := &v
		l.cells = append(l.cells, tab.add(&p, fmt.Sprint("cell ", i)))
	}
	tab.lines = []countLine{l}
	suppressTables(tab, 5)
	var got []bool
	for _, i := range l.cells {
		got = append(got, tab.entries[i].held)
	}
	if fmt.Sprint(got) != "[true false false false true true]" {
		t.Errorf("withheld %v, want the two 1s and the first 5", got)
	}
	// One withheld cell alone is given away by subtraction: a second is withheld.
	tab = &countTableSet{}
	l = countLine{what: "row", total: tab.fixed(20, "the row")}
	for _, v := range []int{9, 8, 3} {
		v := v
		p := &v
		l.cells = append(l.cells, tab.add(&p, "cell"))
	}
	tab.lines = []countLine{l}
	suppressTables(tab, 5)
	if !tab.entries[l.cells[2]].held || !tab.entries[l.cells[1]].held || tab.entries[l.cells[0]].held {
		t.Errorf("withheld %+v, want the 3 and the 8", tab.entries)
	}
}

// The check catches what it should: a withheld count put back, a second withheld count of
// a line shown again, and a weekly count the curve withholds.
func TestCheckDisclosureCatchesPlantedLeaks(t *testing.T) {
	s := analyse(t, smallStrata(t), Options{AsOf: day("2027-01-01"), Replicates: 20, Seed: 1})
	plant := func(name string, edit func(r *Summary) bool) {
		r := released(t, s, Policy{SuppressBelow: 5})
		if !edit(r.Summary()) {
			t.Fatalf("%s: nothing to plant", name)
		}
		if leaks := CheckDisclosure(s, r.Summary()); len(leaks) == 0 {
			t.Errorf("%s: the check found nothing", name)
		}
	}
	plant("a small setting count shown", func(r *Summary) bool {
		for i, st := range r.Strata {
			if st.Cases == nil {
				r.Strata[i].Cases = s.Strata[i].Cases
				return true
			}
		}
		return false
	})
	plant("an epidemic-curve cell shown", func(r *Summary) bool {
		for i, sr := range r.EpiCurve.Series {
			for k, c := range sr.Counts {
				if c == nil && *s.EpiCurve.Series[i].Counts[k] > 0 {
					r.EpiCurve.Series[i].Counts[k] = s.EpiCurve.Series[i].Counts[k]
					return true
				}
			}
		}
		return false
	})
	plant("a weekly count the curve withholds", func(r *Summary) bool {
		for i, w := range r.TimeVarying {
			if w.Cases == nil {
				r.TimeVarying[i].Cases = s.TimeVarying[i].Cases
				return true
			}
		}
		return false
	})
}

// Identifiers become one label per person for a whole batch: two releases that share the
// pseudonyms label a case alike, with a key the label is the same in any batch, and neither
// the key nor any identifier is in the released JSON.
func TestReleasePseudonyms(t *testing.T) {
	cases, _ := outbreak(t, 1.3, 0.3, 20, 2, "2026-04-01")
	north := analyse(t, cases, Options{AsOf: day("2026-04-01"), Replicates: 50, Seed: 1, ForecastWeeks: NoForecast})
	all := analyse(t, cases, Options{AsOf: day("2026-04-01"), Replicates: 50, Seed: 2, ForecastWeeks: NoForecast})
	const key = "sekrit-key-123"
	for _, k := range []string{"", key} {
		batch := NewPseudonyms(k)
		a := released(t, north, Policy{Pseudonyms: batch}).Summary()
		b := released(t, all, Policy{Pseudonyms: batch}).Summary()
		if a.Clusters.Largest[0].Root != b.Clusters.Largest[0].Root || !a.Settings.Pseudonymised {
			t.Errorf("key %q: one case, two labels: %s and %s", k, a.Clusters.Largest[0].Root, b.Clusters.Largest[0].Root)
		}
		j, _ := json.Marshal(a)
		if k != "" && bytes.Contains(j, []byte(k)) {
			t.Fatal("the key leaked")
		}
		for _, c := range cases {
			if bytes.Contains(j, []byte(`"`+c.ID+`"`)) {
				t.Fatalf("identifier %s leaked", c.ID)
			}
		}
	}
	first := released(t, north, Policy{Pseudonyms: NewPseudonyms(key)}).Summary().Clusters.Largest[0].Root
	again := released(t, north, Policy{Pseudonyms: NewPseudonyms(key)}).Summary().Clusters.Largest[0].Root
	if first != again || !strings.HasPrefix(first, "case-") || len(first) != len("case-")+10 {
		t.Errorf("keyed pseudonyms %q, %q", first, again)
	}
	if shown := released(t, north, Policy{}).Summary(); shown.Clusters.Largest[0].Root != north.Clusters.Largest[0].Root || shown.Settings.Pseudonymised {
		t.Error("without pseudonyms the identifiers should stay")
	}
}

// A drawn chain carries no exact onset date and no rare setting; the input is named by its
// file name only; problem messages are the codes' meanings.
func TestReleaseCoarsensCaseDetails(t *testing.T) {
	s := analyse(t, smallStrata(t), Options{AsOf: day("2027-01-01"), Replicates: 20, Seed: 1})
	s.Input.Path = "/home/analyst/exports/tarn-week-48.csv"
	s.Problems = []Problem{{Row: 7, Code: linelist.CodeDuplicateID, Severity: linelist.SeverityError, Message: `case_id "P-001" was already used`}}
	r := released(t, s, Policy{SuppressBelow: 5}).Summary()
	if r.Input.Path != "tarn-week-48.csv" || r.Problems[0].Message != linelist.CodeDuplicateID.Meaning() || r.Problems[0].Row != 7 {
		t.Errorf("input %q, problem %+v", r.Input.Path, r.Problems[0])
	}
	for _, tv := range r.Clusters.Largest {
		if tv.Start != tv.Start.ISOWeekStart() {
			t.Errorf("chain start %s is not a week", tv.Start)
		}
		for _, n := range tv.Nodes {
			if n.Onset != n.Onset.ISOWeekStart() {
				t.Errorf("node onset %s is not a week", n.Onset)
			}
			if strings.HasPrefix(n.Setting, "site-") {
				t.Errorf("a setting of fewer than 5 cases (%s) is drawn", n.Setting)
			}
		}
	}
	if r.Clusters.Largest[0].Nodes[1].Setting == "" {
		t.Error("a common setting was dropped")
	}
}
