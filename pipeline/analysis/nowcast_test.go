package analysis

import (
	"bytes"
	"testing"

	"github.com/caseweave/caseweave/pipeline/forest"
	"github.com/caseweave/caseweave/pipeline/linelist"
	"github.com/caseweave/caseweave/pipeline/simulate"
)

// With report dates the run nowcasts whole ISO weeks, the latest with cases still to come,
// and the released view keeps the weeks (whose counts the epidemic curve shows) but not the
// days; the forecast uses the same delay. Without report dates the nowcast says only that.
func TestNowcastInRun(t *testing.T) {
	asOf := linelist.Day(20800)
	ll := backtestList(t, asOf)
	s, err := Run("", ll, forest.Build(ll.Cases), Options{AsOf: asOf, Seed: 1, Replicates: 50})
	if err != nil {
		t.Fatal(err)
	}
	nc := s.Nowcast
	if nc == nil || len(nc.Weeks) < 4 || len(nc.Days) < 28 || nc.DelayCases < minDelayCases {
		t.Fatalf("nowcast %+v", nc)
	}
	if nc.Days[0].Onset != nc.Days[0].Onset.ISOWeekStart() || nc.Days[len(nc.Days)-1].Onset != asOf {
		t.Errorf("days run %v to %v, want a Monday to the analysis date", nc.Days[0].Onset, nc.Days[len(nc.Days)-1].Onset)
	}
	last := nc.Weeks[len(nc.Weeks)-1]
	if !(last.Expected > float64(*last.Observed)) || last.P90[1] <= *last.Observed {
		t.Errorf("the latest week has nothing still to come: %+v", last)
	}
	if s.Forecast == nil || s.Forecast.DelayCases != nc.DelayCases {
		t.Errorf("the forecast's delay rests on %v cases, the nowcast's on %d", s.Forecast, nc.DelayCases)
	}
	rel, err := Release(s, Policy{SuppressBelow: 1})
	if err != nil {
		t.Fatal(err)
	}
	if r := rel.Summary().Nowcast; len(r.Days) != 0 || len(r.Weeks) != len(nc.Weeks) {
		t.Errorf("released: %d days, %d of %d weeks", len(r.Days), len(r.Weeks), len(nc.Weeks))
	}

	recs, err := simulate.Run(simulate.Scenario{R: 1.2, K: 0.5, SerialMean: 5, SerialSD: 2.5, IndexCases: 10, IndexSpreadDays: 10,
		Start: asOf - 70, Until: &asOf, Jurisdictions: []string{"a"}, Settings: []string{"household"}, AgeGroups: []string{"18-39"}, Seed: 4})
	if err != nil {
		t.Fatal(err)
	}
	var buf bytes.Buffer
	if err := simulate.WriteCSV(&buf, recs, simulate.WriteOptions{}); err != nil {
		t.Fatal(err)
	}
	bare, err := linelist.Read(&buf, linelist.Options{AsOf: asOf})
	if err != nil {
		t.Fatal(err)
	}
	s, err = Run("", bare, forest.Build(bare.Cases), Options{AsOf: asOf, Seed: 1, Replicates: 50})
	if err != nil {
		t.Fatal(err)
	}
	if s.Nowcast == nil || s.Nowcast.DelayCases != 0 || len(s.Nowcast.Weeks) != 0 || s.Nowcast.Delay != nil {
		t.Errorf("no report dates: nowcast %+v", s.Nowcast)
	}
}
