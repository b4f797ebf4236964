package analysis

import (
	"testing"
)

// A finished outbreak read long after its last case: every case is through its serial
// interval, so the chains under way die out with certainty and nothing is pending; the
// end-of-outbreak curve can be read and its replicate band holds the 95% day.
func TestFinishedOutbreakReadsAsOver(t *testing.T) {
	cases, _ := outbreak(t, 0.7, 0.5, 150, 7, "2027-12-31")
	s := analyse(t, cases, Options{AsOf: day("2027-12-31"), Seed: 3, Replicates: 200})
	cc := s.Outlook.CurrentChains
	if cc == nil {
		t.Fatalf("no current-chains reading: %s", s.Outlook.CurrentChainsNote)
	}
	if *cc.DieOut.Estimate != 1 || *cc.Pending.Estimate > 1e-9 {
		t.Errorf("a finished outbreak: die-out %v, pending %v; want 1 and 0", *cc.DieOut.Estimate, *cc.Pending.Estimate)
	}
	e := s.EndOfOutbreak
	if e.NotYet != "" {
		t.Errorf("last onset %v, read on %v: %q", e.LastOnset, s.AsOf, e.NotYet)
	}
	for _, p := range e.Curve {
		if p.Lower == nil || p.Upper == nil || *p.Lower > *p.Upper {
			t.Fatalf("band missing or reversed on %v: %v %v", p.Date, p.Lower, p.Upper)
		}
	}
}

// An outbreak read while it still grows: the last onset lies inside the censoring window,
// so the end-of-outbreak curve is not read; the chains under way have cases pending and
// a chance of dying out below that of the certain case, with an interval.
func TestGrowingOutbreakIsNotOver(t *testing.T) {
	cases, _ := outbreak(t, 1.4, 0.5, 40, 11, "2026-03-20")
	asOf := day("2026-03-20")
	s := analyse(t, cases, Options{AsOf: asOf, Seed: 5, Replicates: 200})
	e := s.EndOfOutbreak
	if e == nil || e.NotYet == "" {
		t.Fatalf("last onset inside the window but the curve is offered as readable: %+v", e)
	}
	cc := s.Outlook.CurrentChains
	if cc == nil {
		t.Fatalf("no current-chains reading: %s", s.Outlook.CurrentChainsNote)
	}
	if !(*cc.Pending.Estimate > 1) {
		t.Errorf("a growing outbreak has %v cases pending", *cc.Pending.Estimate)
	}
	lo, hi := cc.DieOut.Percentile[0], cc.DieOut.Percentile[1]
	if lo == nil || hi == nil || !(*lo <= *cc.DieOut.Estimate && *cc.DieOut.Estimate <= *hi) || !(*lo < 1) {
		t.Errorf("die-out %v with interval %v–%v", *cc.DieOut.Estimate, lo, hi)
	}
}
