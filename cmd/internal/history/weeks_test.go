package history

import (
	"fmt"
	"math"
	"path/filepath"
	"testing"

	"github.com/caseweave/caseweave/pipeline/analysis"
	"github.com/caseweave/caseweave/pipeline/linelist"
	"github.com/caseweave/caseweave/pipeline/simulate"
)

// weeklyExport is a simulated line list as it stood on the Friday asOf: onsets up to two
// days before, no infector yet for onsets in the five days before that, and the planted
// revisions: case changed has its onset one day late on the first two Fridays, and a
// duplicate of case dup is listed until the third.
func weeklyExport(recs []simulate.Record, k int, asOf linelist.Day, changed, dup string) []linelist.Case {
	cut := asOf - 2
	var out []linelist.Case
	for _, r := range recs {
		if r.Onset > cut {
			continue
		}
		c := linelist.Case{ID: r.ID, InfectorID: r.InfectorID, Onset: r.Onset, Report: r.Onset + 2, HasReport: true,
			Strata: &linelist.Strata{Setting: r.Setting, AgeGroup: r.AgeGroup}}
		if r.Onset > cut-5 {
			c.InfectorID = ""
		}
		if r.ID == changed && k <= 1 {
			c.Onset++
			c.Report++
		}
		out = append(out, c)
		if r.ID == dup && k <= 2 {
			d := c
			d.ID, d.InfectorID = r.ID+"-dup", ""
			out = append(out, d)
		}
	}
	return out
}

// TestFourWeeklyReports records four weekly reports over successive truncations of a
// simulated line list with planted revisions, and checks every count of each report's
// comparison with the one before against the planted truth, and the fourth report's forecast
// check against a hand computation.
func TestFourWeeklyReports(t *testing.T) {
	f1 := day(t, "2026-11-06") // a Friday
	fridays := []linelist.Day{f1, f1 + 7, f1 + 14, f1 + 21}
	until := fridays[3] - 2
	recs, err := simulate.Run(simulate.Scenario{R: 1.2, K: 0.4, SerialMean: 5, SerialSD: 2, IndexCases: 20,
		Start: f1 - 42, IndexSpreadDays: 20, Until: &until, Seed: 7, MissingLinks: 0.1,
		Settings: []string{"home", "work"}, AgeGroups: []string{"0-17", "18+"}})
	if err != nil {
		t.Fatal(err)
	}
	// The planted cases: an early case for the changed onset, another for the duplicate.
	var changed, dup string
	for _, r := range recs {
		if r.Onset <= f1-15 {
			switch {
			case changed == "":
				changed = r.ID
			case dup == "":
				dup = r.ID
			}
		}
	}
	if changed == "" || dup == "" {
		t.Fatal("the simulation has too few early cases")
	}
	// The forecast every run makes: the two ISO weeks after its analysis date.
	forecastOf := func(asOf linelist.Day) *analysis.Forecast {
		ip := func(v int) *int { return &v }
		w := asOf.ISOWeekStart() + 7
		return &analysis.Forecast{Weeks: []analysis.ForecastWeek{
			{WeekStart: w, Median: ip(6), P50: [2]*int{ip(4), ip(9)}, P90: [2]*int{ip(2), ip(14)}},
			{WeekStart: w + 7, Median: ip(8), P50: [2]*int{ip(5), ip(12)}, P90: [2]*int{ip(2), ip(20)}},
		}}
	}
	a, err := Open(filepath.Join(t.TempDir(), "a.sqlite"))
	if err != nil {
		t.Fatal(err)
	}
	defer a.Close()
	var last *analysis.Summary
	for k, fri := range fridays {
		cases := weeklyExport(recs, k, fri, changed, dup)
		s := &analysis.Summary{AsOf: fri, Forecast: forecastOf(fri)}
		s.Tree.Cases = len(cases)
		weeks := map[linelist.Day]int{}
		for _, c := range cases {
			weeks[c.Onset.ISOWeekStart()]++
		}
		s.EpiCurve = &analysis.EpiCurve{}
		for w := (f1 - 42).ISOWeekStart(); w <= fri; w += 7 {
			n := weeks[w]
			s.EpiCurve.Weeks, s.EpiCurve.Total = append(s.EpiCurve.Weeks, w), append(s.EpiCurve.Total, &n)
		}
		if err := a.Annotate(s, "Vell", cases, nil); err != nil {
			t.Fatal(err)
		}
		if k == 0 {
			if s.SinceLast != nil {
				t.Fatal("a comparison with no earlier run")
			}
		} else {
			prev, cut := fridays[k-1], fridays[k-1]-2
			// The planted truth, from the rules of weeklyExport.
			var newOnset, late, linksAdded int
			for _, r := range recs {
				switch {
				case r.Onset > prev && r.Onset <= fri-2:
					newOnset++
				case r.Onset > cut && r.Onset <= prev:
					late++
				}
				if r.Onset > cut-5 && r.Onset <= cut && r.InfectorID != "" {
					linksAdded++
				}
			}
			want := map[string]int{"new by onset": newOnset, "new by report": newOnset + late, "late": late,
				"removed": 0, "onset changed": 0, "links added": linksAdded, "links removed": 0, "links moved": 0}
			if k == 2 {
				want["onset changed"] = 1
			}
			if k == 3 {
				want["removed"] = 1
			}
			sl, r := s.SinceLast, s.SinceLast.Revisions
			got := map[string]int{"new by onset": *sl.NewByOnset, "new by report": *sl.NewByReport, "late": *r.Late,
				"removed": *r.Removed, "onset changed": *r.OnsetChanged, "links added": *r.LinksAdded,
				"links removed": *r.LinksRemoved, "links moved": *r.LinksMoved}
			for what, w := range want {
				if got[what] != w {
					t.Errorf("report %d (%s): %s %d, want %d", k+1, fri, what, got[what], w)
				}
			}
			if k == 2 && fmt.Sprint(sl.IDs.OnsetChanged) != "["+changed+"]" {
				t.Errorf("report 3: onset changed %v, want [%s]", sl.IDs.OnsetChanged, changed)
			}
			if len(s.Trend) != k+1 {
				t.Errorf("report %d: %d trend points, want %d", k+1, len(s.Trend), k+1)
			}
		}
		rel, err := analysis.Release(s, analysis.Policy{})
		if err != nil {
			t.Fatal(err)
		}
		if err := a.Record([]Run{{Jurisdiction: "Vell", AsOf: fri, Version: "test", InputSHA256: "00", Released: mustJSON(t, rel.Summary()),
			Summary: rel.Summary(), Cases: cases}}); err != nil {
			t.Fatal(err)
		}
		last = s
	}
	// The fourth report checks the weeks that ended by 2026-11-27: the first run's two weeks
	// (from 2026-11-09 and 2026-11-16) and the second run's first (from 2026-11-16).
	fc := last.ForecastCheck
	if fc == nil || len(fc.Weeks) != 3 {
		t.Fatalf("forecast check %+v, want three weeks", fc)
	}
	observed := func(w linelist.Day) int {
		n := 0
		for _, c := range weeklyExport(recs, 3, fridays[3], changed, dup) {
			if c.Onset.ISOWeekStart() == w {
				n++
			}
		}
		return n
	}
	within50, within90 := 0, 0
	for i, w := range fc.Weeks {
		y := observed(w.WeekStart)
		if *w.Observed != y {
			t.Errorf("week %s: observed %d, want %d", w.WeekStart, *w.Observed, y)
		}
		lo50, hi50, lo90, hi90, m := float64(*w.P50[0]), float64(*w.P50[1]), float64(*w.P90[0]), float64(*w.P90[1]), float64(*w.Median)
		yf := float64(y)
		// By hand (Bracher et al. 2021, eqs. 1–2, K = 2).
		is50 := hi50 - lo50 + 4*math.Max(lo50-yf, 0) + 4*math.Max(yf-hi50, 0)
		is90 := hi90 - lo90 + 20*math.Max(lo90-yf, 0) + 20*math.Max(yf-hi90, 0)
		want := (0.5*math.Abs(yf-m) + 0.25*is50 + 0.05*is90) / 2.5
		if math.Abs(*w.WIS-want) > 1e-9 {
			t.Errorf("week %d: WIS %g, want %g", i, *w.WIS, want)
		}
		if lo50 <= yf && yf <= hi50 {
			within50++
		}
		if lo90 <= yf && yf <= hi90 {
			within90++
		}
	}
	if fc.Scored != 3 || fc.Within50 != within50 || fc.Within90 != within90 {
		t.Errorf("scores %d, %d, %d; want 3, %d, %d", fc.Scored, fc.Within50, fc.Within90, within50, within90)
	}
	t.Logf("cases %d; forecast weeks within 50%%: %d, within 90%%: %d", last.Tree.Cases, within50, within90)
}
