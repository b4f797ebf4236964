package analysis

import (
	"github.com/caseweave/caseweave/pipeline/forecast"
	"github.com/caseweave/caseweave/pipeline/linelist"
)

// reported is the cases with an onset and a report date, the report no earlier than the
// onset, no later than the analysis date and at most maxDelayDays after the onset: those
// the reporting delay is estimated from. Computed once per run.
func (a *run) reported() []forecast.Reported {
	if a.reportedDone {
		return a.reportedCases
	}
	a.reportedDone = true
	for i := range a.cases {
		c := &a.cases[i]
		if !c.HasReport || c.Report < c.Onset || c.Report > a.o.AsOf || c.Onset > a.o.AsOf {
			continue
		}
		if int(c.Report-c.Onset) > maxDelayDays {
			continue
		}
		a.reportedCases = append(a.reportedCases, forecast.Reported{Onset: c.Onset, Report: c.Report})
	}
	return a.reportedCases
}

const (
	// nowcastMinDays is the fewest onset days the nowcast covers: four weeks, the recent
	// part of the epidemic curve a report draws; longer when the longest delay seen is.
	nowcastMinDays = 28
	// nowcastMaxDays bounds it when a delay of months was recorded.
	nowcastMaxDays = 91
)

// streamNowcast separates the nowcast's random streams from the others.
const streamNowcast = 0x6e6f7763617374 // "nowcast"

// nowcast fills Summary.Nowcast: the expected final count of the cases in scope with onset
// on each recent day, from the truncation-corrected reporting delay (forecast.Nowcast).
// Without enough report dates it records only that, and the analysis falls back on the
// censoring window alone.
func (a *run) nowcast() {
	if len(a.selected) == 0 {
		return
	}
	a.delay()
	nc := &Nowcast{DelayCases: a.delayCases, Method: "reverse-time hazard (Lagakos et al. 1988; Lawless 1994)"}
	a.s.Nowcast = nc
	if a.delayPMF == nil {
		return
	}
	// From a Monday, so that each week of the nowcast is a whole week of the epidemic curve.
	first := (a.o.AsOf - linelist.Day(min(max(nowcastMinDays, len(a.delayPMF)), nowcastMaxDays)) + 1).ISOWeekStart()
	days := int(a.o.AsOf-first) + 1
	onsets := make([]linelist.Day, 0, len(a.selected))
	for _, i := range a.selected {
		if a.cases[i].Onset <= a.o.AsOf { // a later onset is flagged as a data problem
			onsets = append(onsets, a.cases[i].Onset)
		}
	}
	res, err := forecast.Nowcast(onsets, a.reported(), forecast.NowcastOptions{AsOf: a.o.AsOf, Days: days, Seed: a.o.Seed ^ streamNowcast})
	if err != nil {
		a.note("No nowcast: %v.", err)
		return
	}
	nc.Delay = res.Delay
	for _, d := range res.Days {
		nc.Days = append(nc.Days, NowcastDay{Onset: d.Onset, Observed: d.Observed, Reported: d.Reported, Unknown: d.Unknown,
			Expected: d.Expected, Median: d.Median, P50: d.P50, P90: d.P90})
	}
	for _, w := range res.Weeks {
		o := w.Observed
		nc.Weeks = append(nc.Weeks, NowcastWeek{WeekStart: w.Start, Observed: &o, Unknown: w.Unknown,
			Expected: w.Expected, Median: w.Median, P50: w.P50, P90: w.P90})
	}
}

// releaseNowcast leaves out the nowcast's days, whose counts may be small, and each week
// whose count the released epidemic curve withholds (its expected count would reveal it); a
// week after the curve's last has no case listed, a count that is never withheld.
func releaseNowcast(c *Summary) {
	nc := c.Nowcast
	if nc == nil {
		return
	}
	nc.Days = nil
	shown := map[linelist.Day]*int{}
	if e := c.EpiCurve; e != nil {
		for k, w := range e.Weeks {
			shown[w] = e.Total[k]
		}
	}
	kept := nc.Weeks[:0]
	for _, w := range nc.Weeks {
		if n, ok := shown[w.WeekStart]; w.Observed != nil && ((!ok && *w.Observed == 0) || (n != nil && *n == *w.Observed)) {
			kept = append(kept, w)
		}
	}
	nc.Weeks = kept
}
