package analysis

import (
	"fmt"
	"testing"

	"github.com/caseweave/caseweave/pipeline/linelist"
)

// countsText is cs as "3 - 5", "-" for a null count.
func countsText(cs []*int) string {
	out := ""
	for i, c := range cs {
		if i > 0 {
			out += " "
		}
		if c == nil {
			out += "-"
		} else {
			out += fmt.Sprint(*c)
		}
	}
	return out
}

// TestFillBackfill: two archived reports a week apart and this run, with a week that
// grows from report to report (late reports), a withheld archived count, a week absent
// from one curve, and weeks not yet begun; every count by hand.
func TestFillBackfill(t *testing.T) {
	d := func(s string) linelist.Day {
		v, err := linelist.ParseISODay(s)
		if err != nil {
			t.Fatal(err)
		}
		return v
	}
	w1, w2, w3 := d("2026-03-02"), d("2026-03-09"), d("2026-03-16")
	first := &Summary{AsOf: d("2026-03-11"), EpiCurve: &EpiCurve{Weeks: []linelist.Day{w1, w2}, Total: []*int{ip(6), ip(2)}}}
	// The second report's released curve withheld week 2.
	second := &Summary{AsOf: d("2026-03-18"), EpiCurve: &EpiCurve{Weeks: []linelist.Day{w1, w2, w3}, Total: []*int{ip(7), nil, ip(5)}}}
	noCurve := &Summary{AsOf: d("2026-03-04")}
	s := &Summary{AsOf: d("2026-03-25"), Tree: Tree{Cases: 40},
		EpiCurve: &EpiCurve{Weeks: []linelist.Day{w1, w3}, Total: []*int{ip(8), ip(3)}}}
	FillBackfill(s, []*Summary{noCurve, first, second})
	b := s.Backfill
	if b == nil {
		t.Fatal("no backfill")
	}
	if len(b.Weeks) != 3 || b.Weeks[0] != w1 || b.Weeks[1] != w2 || b.Weeks[2] != w3 {
		t.Fatalf("weeks %v, want %v %v %v", b.Weeks, w1, w2, w3)
	}
	want := []struct {
		asOf   linelist.Day
		counts string
	}{
		{noCurve.AsOf, "- - -"}, // no curve: nothing known
		{first.AsOf, "6 2 -"},   // week 3 began after 2026-03-11
		{second.AsOf, "7 - 5"},  // week 2 withheld in its release
		{s.AsOf, "8 0 3"},       // week 2 absent from this curve: no case with onset in it now
	}
	if len(b.Reports) != len(want) {
		t.Fatalf("%d reports, want %d", len(b.Reports), len(want))
	}
	for i, w := range want {
		if got := countsText(b.Reports[i].Counts); b.Reports[i].AsOf != w.asOf || got != w.counts {
			t.Errorf("report %d: %s %s, want %s %s", i, b.Reports[i].AsOf, got, w.asOf, w.counts)
		}
	}
	// The released view takes this run's counts from its released curve, withheld counts
	// withheld (3 is below the default threshold, and the policy may hold back more).
	r, err := Release(s, Policy{})
	if err != nil {
		t.Fatal(err)
	}
	rel := r.Summary()
	if rel.EpiCurve.Total[1] != nil {
		t.Fatalf("the released curve shows %d; the test needs a withheld count", *rel.EpiCurve.Total[1])
	}
	rb := rel.Backfill.Reports
	last := rb[len(rb)-1].Counts
	if want := countsText([]*int{rel.EpiCurve.Total[0], ip(0), rel.EpiCurve.Total[1]}); countsText(last) != want {
		t.Errorf("released last report %s, want the released curve's %s", countsText(last), want)
	}
	if got := countsText(rb[2].Counts); got != "7 - 5" {
		t.Errorf("released archived report %s, want it as archived (7 - 5)", got)
	}
	if got := countsText(s.Backfill.Reports[3].Counts); got != "8 0 3" {
		t.Errorf("Release changed the full summary: %s", got)
	}
	FillBackfill(s, nil)
	if s.Backfill != nil {
		t.Error("a backfill without archived runs")
	}
}
