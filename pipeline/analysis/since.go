package analysis

import (
	"crypto/hmac"
	"crypto/sha256"
	"encoding/hex"
	"math"
	"slices"

	"github.com/caseweave/caseweave/pipeline/linelist"
)

// CasePrint is the fingerprint of one case that a run archive keeps to find the revisions
// between two exports: its identifier and infector as keyed hashes (HashID), its onset and
// report dates, and one keyed hash of its setting and age group. ID is the identifier as
// read, for this run's lists of revisions only; an archive never stores it.
type CasePrint struct {
	Key       string       `json:"key"`
	Infector  string       `json:"infector"` // "" when the case has none
	Onset     linelist.Day `json:"onset"`
	Report    linelist.Day `json:"report"`
	HasReport bool         `json:"has_report"`
	Attrs     string       `json:"attrs"`
	ID        string       `json:"-"`
}

// HashID is an identifier's keyed hash, HMAC-SHA-256 with the archive's key, its first 16
// bytes in hex: equal identifiers give equal hashes within one archive, and the hash cannot
// be turned back into the identifier without the key.
func HashID(key []byte, id string) string {
	m := hmac.New(sha256.New, key)
	m.Write([]byte(id))
	return hex.EncodeToString(m.Sum(nil)[:16])
}

// Fingerprints are the prints of the selected cases (all when sel is nil) under key.
func Fingerprints(cases []linelist.Case, sel func(*linelist.Case) bool, key []byte) []CasePrint {
	var out []CasePrint
	for i := range cases {
		c := &cases[i]
		if sel != nil && !sel(c) {
			continue
		}
		p := CasePrint{Key: HashID(key, c.ID), Onset: c.Onset, Report: c.Report, HasReport: c.HasReport, ID: c.ID}
		if c.InfectorID != "" {
			p.Infector = HashID(key, c.InfectorID)
		}
		var attrs string
		if st := c.Strata; st != nil {
			attrs = st.Setting + "\x00" + st.AgeGroup
		}
		p.Attrs = HashID(key, attrs)
		out = append(out, p)
	}
	return out
}

// Previous is an earlier run as an archive holds it: its analysis date, tool version, its
// released Summary and its case prints (without identifiers).
type Previous struct {
	AsOf    linelist.Day
	Version string
	Summary *Summary
	Cases   []CasePrint
}

// CompareRuns fills s.SinceLast from the earlier run p and the prints of this run's cases.
func CompareRuns(s *Summary, now []CasePrint, p *Previous) {
	then := make(map[string]*CasePrint, len(p.Cases))
	for i := range p.Cases {
		then[p.Cases[i].Key] = &p.Cases[i]
	}
	seen := make(map[string]bool, len(now))
	var newOnset, newReport int
	var ids RevisionIDs
	for i := range now {
		c := &now[i]
		seen[c.Key] = true
		t, ok := then[c.Key]
		if !ok {
			if c.Onset > p.AsOf {
				newOnset++
			} else {
				ids.Late = append(ids.Late, c.ID)
			}
			if c.HasReport && c.Report > p.AsOf {
				newReport++
			}
			continue
		}
		if t.Onset != c.Onset {
			ids.OnsetChanged = append(ids.OnsetChanged, c.ID)
		}
		switch {
		case t.Infector == c.Infector:
		case t.Infector == "":
			ids.LinksAdded = append(ids.LinksAdded, c.ID)
		case c.Infector == "":
			ids.LinksRemoved = append(ids.LinksRemoved, c.ID)
		default:
			ids.LinksMoved = append(ids.LinksMoved, c.ID)
		}
	}
	for i := range p.Cases {
		if !seen[p.Cases[i].Key] {
			ids.Removed = append(ids.Removed, "hash:"+p.Cases[i].Key)
		}
	}
	for _, l := range []*[]string{&ids.Late, &ids.Removed, &ids.OnsetChanged, &ids.LinksAdded, &ids.LinksRemoved, &ids.LinksMoved} {
		slices.Sort(*l)
		if *l == nil {
			*l = []string{}
		}
	}
	n := func(v int) *int { return &v }
	sl := &SinceLast{
		Previous: p.AsOf, PreviousVersion: p.Version,
		NewByOnset: n(newOnset), NewByReport: n(newReport),
		Revisions: Revisions{
			Late: n(len(ids.Late)), Removed: n(len(ids.Removed)), OnsetChanged: n(len(ids.OnsetChanged)),
			LinksAdded: n(len(ids.LinksAdded)), LinksRemoved: n(len(ids.LinksRemoved)), LinksMoved: n(len(ids.LinksMoved)),
		},
		IDs: &ids,
	}
	if p.Summary != nil {
		a, b := TrendOf(s), TrendOf(p.Summary)
		for _, x := range []struct {
			name      string
			now, then Span
		}{{"R", a.R, b.R}, {"k", a.K, b.K}, {"recent_R", a.RecentR, b.RecentR}, {"die_out", a.DieOut, b.DieOut}} {
			sl.Changes = append(sl.Changes, Change{Name: x.name, Now: x.now, Then: x.then, Beyond: ChangeBeyondUncertainty(x.now, x.then)})
		}
	}
	s.SinceLast = sl
}

// ChangeBeyondUncertainty reports whether an estimate's change between two runs exceeds the
// uncertainty: both intervals are known and they do not overlap. Intervals that do not
// overlap differ at a level at least as strict as each interval's own (Schenker &
// Gentleman 2001, "On judging the significance of differences by examining the overlap
// between confidence intervals", The American Statistician 55(3):182–186; recalled from
// memory): the rule is conservative, so a change it calls within the uncertainty may still
// be real. The two runs share most of their cases, so their intervals are not independent
// either; the rule reads them as a reader of the two reports would.
func ChangeBeyondUncertainty(now, then Span) bool {
	if now.Lower == nil || now.Upper == nil || then.Lower == nil || then.Upper == nil {
		return false
	}
	return *now.Lower > *then.Upper || *then.Lower > *now.Upper
}

// spanOf is e with the interval s headlines.
func spanOf(s *Summary, e Estimate) Span {
	b := e.Percentile
	if s.Settings.Interval == IntervalBCa {
		b = e.BCa
	}
	return Span{Estimate: e.Estimate, Lower: b[0], Upper: b[1]}
}

// TrendOf is the key estimates of s (see TrendPoint).
func TrendOf(s *Summary) TrendPoint {
	t := TrendPoint{AsOf: s.AsOf, Cases: s.Tree.Cases}
	if o := s.Offspring; o != nil {
		t.R, t.K = spanOf(s, o.R), spanOf(s, o.K)
	}
	for i := len(s.TimeVarying) - 1; i >= 0; i-- {
		if w := s.TimeVarying[i]; !w.Censored && w.R != nil {
			t.RecentR = Span{Estimate: w.R, Lower: w.Lower, Upper: w.Upper}
			break
		}
	}
	if o := s.Outlook; o != nil && o.CurrentChains != nil {
		t.DieOut = spanOf(s, o.CurrentChains.DieOut)
	}
	if f := s.Forecast; f != nil && len(f.Weeks) > 0 {
		w := f.Weeks[0]
		if w.Median != nil {
			med := float64(*w.Median)
			t.NextWeek = &Span{Estimate: &med}
			if w.P90[0] != nil {
				lo := float64(*w.P90[0])
				t.NextWeek.Lower = &lo
			}
			if w.P90[1] != nil {
				hi := float64(*w.P90[1])
				t.NextWeek.Upper = &hi
			}
		}
	}
	return t
}

// FillTrend sets s.Trend to the archived runs' points (oldest first) followed by s's own.
func FillTrend(s *Summary, archived []*Summary) {
	s.Trend = s.Trend[:0]
	for _, a := range archived {
		s.Trend = append(s.Trend, TrendOf(a))
	}
	s.Trend = append(s.Trend, TrendOf(s))
}

// CheckForecasts sets every week of the archived runs' forecasts that ended before s's
// analysis date against the cases with onset in that week in s, and scores them. A week
// later forecast by a later run is checked once per run that forecast it.
func CheckForecasts(s *Summary, archived []*Summary) {
	fc := &ForecastCheck{Weeks: []CheckedWeek{}}
	for _, a := range archived {
		if a.Forecast == nil || a.AsOf >= s.AsOf {
			continue
		}
		for _, w := range a.Forecast.Weeks {
			if w.WeekStart+7 > s.AsOf {
				continue
			}
			obs := observedIn(s, w.WeekStart)
			fc.Weeks = append(fc.Weeks, CheckedWeek{Made: a.AsOf, WeekStart: w.WeekStart, Median: w.Median, P50: w.P50, P90: w.P90, Observed: obs})
		}
	}
	if len(fc.Weeks) == 0 {
		return
	}
	scoreChecks(fc)
	s.ForecastCheck = fc
}

// FillBackfill sets s.Backfill to every onset week of the archived runs' epidemic curves
// and of s's, with each run's count of it (oldest first, s last); nil without archived runs.
func FillBackfill(s *Summary, archived []*Summary) {
	s.Backfill = nil
	if len(archived) == 0 {
		return
	}
	runs := append(append([]*Summary(nil), archived...), s)
	seen := map[linelist.Day]bool{}
	var weeks []linelist.Day
	for _, r := range runs {
		if r.EpiCurve == nil {
			continue
		}
		for _, w := range r.EpiCurve.Weeks {
			if !seen[w] {
				seen[w] = true
				weeks = append(weeks, w)
			}
		}
	}
	slices.Sort(weeks)
	b := &Backfill{Weeks: weeks, Reports: make([]BackfillReport, len(runs))}
	for i, r := range runs {
		b.Reports[i] = backfillReport(r, weeks)
	}
	s.Backfill = b
}

// backfillReport is r's count of each of weeks (see BackfillReport).
func backfillReport(r *Summary, weeks []linelist.Day) BackfillReport {
	br := BackfillReport{AsOf: r.AsOf, Counts: make([]*int, len(weeks))}
	if r.EpiCurve == nil {
		return br
	}
	for i, w := range weeks {
		if w < r.AsOf {
			br.Counts[i] = observedIn(r, w)
		}
	}
	return br
}

// releaseBackfill takes this run's counts (the last report) from the released epidemic
// curve; the archived reports' counts are from their released views already.
func releaseBackfill(c *Summary) {
	b := c.Backfill
	if b == nil || len(b.Reports) == 0 {
		return
	}
	b.Reports[len(b.Reports)-1] = backfillReport(c, b.Weeks)
}

// observedIn is the count of s's epidemic curve in the week starting w: 0 for a week the
// curve does not reach, null where it withholds the count.
func observedIn(s *Summary, w linelist.Day) *int {
	if e := s.EpiCurve; e != nil {
		for k, d := range e.Weeks {
			if d == w {
				if e.Total[k] == nil {
					return nil
				}
				v := *e.Total[k]
				return &v
			}
		}
	}
	z := 0
	return &z
}

// scoreChecks fills each week's coverage and score from its Observed, and the totals.
func scoreChecks(fc *ForecastCheck) {
	fc.Scored, fc.Within50, fc.Within90, fc.MeanWIS = 0, 0, 0, nil
	var sum float64
	scored := 0
	for i := range fc.Weeks {
		w := &fc.Weeks[i]
		w.Within50, w.Within90, w.WIS = false, false, nil
		if w.Observed == nil {
			continue
		}
		y := *w.Observed
		fc.Scored++
		in := func(b [2]*int) bool { return b[0] != nil && b[1] != nil && *b[0] <= y && y <= *b[1] }
		if w.Within50 = in(w.P50); w.Within50 {
			fc.Within50++
		}
		if w.Within90 = in(w.P90); w.Within90 {
			fc.Within90++
		}
		if w.Median == nil || w.P50[0] == nil || w.P50[1] == nil || w.P90[0] == nil || w.P90[1] == nil {
			continue
		}
		v := WeightedIntervalScore(float64(y), float64(*w.Median),
			[]float64{0.5, 0.1},
			[]float64{float64(*w.P50[0]), float64(*w.P90[0])},
			[]float64{float64(*w.P50[1]), float64(*w.P90[1])})
		w.WIS = &v
		sum += v
		scored++
	}
	if scored > 0 {
		m := sum / float64(scored)
		fc.MeanWIS = &m
	}
}

// WeightedIntervalScore is the weighted interval score of a forecast given by its median m
// and central (1 − alpha[k]) intervals [lower[k], upper[k]], for the observation y:
//
//	WIS = (w₀·|y − m| + Σₖ wₖ·ISₖ) / (K + ½),  w₀ = ½, wₖ = αₖ/2,
//	ISₖ = (uₖ − lₖ) + (2/αₖ)(lₖ − y)·1(y < lₖ) + (2/αₖ)(y − uₖ)·1(y > uₖ)
//
// (Bracher, Ray, Gneiting & Reich 2021, "Evaluating epidemic forecasts in an interval
// format", PLoS Computational Biology 17(2):e1008618, eqs. 1 and 2). Lower is better; it is
// in the units of the counts.
func WeightedIntervalScore(y, m float64, alpha, lower, upper []float64) float64 {
	s := 0.5 * math.Abs(y-m)
	for k, a := range alpha {
		is := upper[k] - lower[k]
		if y < lower[k] {
			is += 2 / a * (lower[k] - y)
		}
		if y > upper[k] {
			is += 2 / a * (y - upper[k])
		}
		s += a / 2 * is
	}
	return s / (float64(len(alpha)) + 0.5)
}

// releaseSinceLast withholds the counts of SinceLast from 1 to thr − 1 and drops the lists
// of identifiers. This run's cases are the earlier run's, less those removed, plus the new
// ones by onset and the late ones, and both totals are shown: when just one of those three
// is withheld, the smallest of the other two is withheld with it, so that none can be
// worked out (complementary suppression, common practice).
func releaseSinceLast(c *Summary, thr int) {
	sl := c.SinceLast
	if sl == nil {
		return
	}
	sl.IDs = nil
	small := func(p **int) {
		if *p != nil && **p > 0 && **p < thr {
			*p = nil
		}
	}
	r := &sl.Revisions
	for _, p := range []**int{&sl.NewByOnset, &sl.NewByReport, &r.Late, &r.Removed, &r.OnsetChanged, &r.LinksAdded, &r.LinksRemoved, &r.LinksMoved} {
		small(p)
	}
	line := []**int{&sl.NewByOnset, &r.Late, &r.Removed}
	held := 0
	for _, p := range line {
		if *p == nil {
			held++
		}
	}
	if held == 1 {
		var pick **int
		for _, p := range line {
			if *p != nil && (pick == nil || **p < **pick) {
				pick = p
			}
		}
		*pick = nil
	}
}

// releaseForecastCheck takes each checked week's observed count from the released
// epidemic curve and scores the weeks again, so that neither a withheld count nor its
// coverage shows.
func releaseForecastCheck(c *Summary) {
	fc := c.ForecastCheck
	if fc == nil {
		return
	}
	for i := range fc.Weeks {
		fc.Weeks[i].Observed = observedIn(c, fc.Weeks[i].WeekStart)
	}
	scoreChecks(fc)
}
