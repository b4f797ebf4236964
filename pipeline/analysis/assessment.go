package analysis

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/stat/distuv"

	"github.com/caseweave/caseweave/pipeline/internal/numeric"
	"github.com/caseweave/caseweave/pipeline/linelist"
	"github.com/caseweave/caseweave/pipeline/timing"
)

// Verdict kinds: what an interval for R says about growth.
const (
	VerdictGrowing   = "growing"
	VerdictShrinking = "shrinking"
	VerdictUncertain = "uncertain"
)

// MinCasesForVerdict is the fewest cases an R must rest on before a verdict is drawn from
// its interval: below it the interval is too wide and too unreliable to read (the bootstrap
// under-covers at such sizes; common practice is to withhold a reading rather than print one).
const MinCasesForVerdict = 30

// recentWeeks is how many of the latest complete weeks outside the censoring window the
// recent R covers: two weeks hold enough cases to say something, and are recent enough to
// differ from the whole-period average.
const recentWeeks = 2

// trendLevel is the significance level of the week-on-week comparison.
const trendLevel = 0.05

// Verdict is the reading of an interval for R against 1, the threshold of growth of a
// branching process [Harris 1963]: growing only when the whole interval lies above 1,
// shrinking only when it lies below, otherwise uncertain with the reason. It never reads the
// point estimate alone.
type Verdict struct {
	Kind   string `json:"kind"`
	Reason string `json:"reason"`
}

// ReadR draws the verdict from an estimate of R (its interval at bounds), resting on n cases.
func ReadR(r Estimate, bounds [2]*float64, n int) Verdict {
	switch {
	case r.Estimate == nil:
		return Verdict{VerdictUncertain, "R could not be estimated"}
	case n < MinCasesForVerdict:
		return Verdict{VerdictUncertain, fmt.Sprintf("it rests on %d cases, fewer than the %d a reading needs", n, MinCasesForVerdict)}
	case bounds[0] == nil || bounds[1] == nil:
		return Verdict{VerdictUncertain, "its interval could not be computed in full"}
	case *bounds[0] > 1:
		return Verdict{VerdictGrowing, fmt.Sprintf("the whole interval, %s to %s, lies above 1", fmtR(*bounds[0]), fmtR(*bounds[1]))}
	case *bounds[1] < 1:
		return Verdict{VerdictShrinking, fmt.Sprintf("the whole interval, %s to %s, lies below 1", fmtR(*bounds[0]), fmtR(*bounds[1]))}
	}
	return Verdict{VerdictUncertain, fmt.Sprintf("the interval, %s to %s, includes 1", fmtR(*bounds[0]), fmtR(*bounds[1]))}
}

// smallSample is the warning printed beside estimates that rest on n cases, empty when n
// reaches MinCasesForVerdict.
func smallSample(n int) string {
	if n >= MinCasesForVerdict {
		return ""
	}
	return fmt.Sprintf("These estimates rest on %d cases, fewer than the %d an interval needs to be read: at such numbers the intervals are too narrow as often as not, and an interval of zero width only means that every resample of so few cases gave the same value.", n, MinCasesForVerdict)
}

func fmtR(x float64) string { return fmt.Sprintf("%.2f", x) }

// Assessment is the summary's reading of where transmission stands.
type Assessment struct {
	// Overall reads the whole-period R (Offspring.R): the cases with onset from the week of
	// OverallFrom (a Monday) to OverallTo, the last day outside the censoring window. Both are
	// aggregates, never a case's own onset date.
	Overall     Verdict      `json:"overall"`
	OverallFrom linelist.Day `json:"overall_from"`
	OverallTo   linelist.Day `json:"overall_to"`
	// Recent is the R of the latest complete weeks outside the censoring window, nil when
	// there are none.
	Recent *RecentR `json:"recent"`
	// Headline names the R the headline reads: "recent" when the recent R rests on enough
	// cases for a verdict, else "overall".
	Headline string `json:"headline"`
	// Trend compares the last complete week's cases with the week before.
	Trend *Trend `json:"trend"`
	// IncompleteFrom is the first week of the epidemic curve not yet complete at the analysis
	// date (its Sunday is on or after it); nil when every week is complete.
	IncompleteFrom *linelist.Day `json:"incomplete_from"`
}

// RecentR is the mean offspring of the cases with onset in the latest complete weeks outside
// the censoring window, with the exact negative-binomial interval of the weekly R (see
// timing.WeeklyR).
type RecentR struct {
	From    linelist.Day `json:"from"` // the Monday of the first week
	To      linelist.Day `json:"to"`   // the Sunday of the last
	Cases   int          `json:"cases"`
	R       *float64     `json:"R"`
	Lower   *float64     `json:"lower"`
	Upper   *float64     `json:"upper"`
	Verdict Verdict      `json:"verdict"`
}

// Trend compares the cases with onset in the last complete week (Count) with the week before
// (PreviousCount). Under equal weekly rates the later count given the two weeks' total is
// Binomial(total, 1/2) — the conditional test for comparing two Poisson counts
// [Przyborowski & Wilenski 1940, Biometrika 31:313; recalled from memory] — and PValue is its
// exact two-sided p-value (twice the smaller tail, at most 1). Kind is "rising" or "falling"
// when PValue < 0.05, else "steady". In a released view the counts are null, and Kind
// "withheld", when the epidemic curve withholds either week.
type Trend struct {
	Week          linelist.Day `json:"week"`
	Previous      linelist.Day `json:"previous"`
	Count         *int         `json:"count"`
	PreviousCount *int         `json:"previous_count"`
	PValue        *float64     `json:"p_value"`
	Kind          string       `json:"kind"`
}

// ComparePoissonCounts is the exact two-sided p-value of the conditional binomial test that
// two Poisson counts have the same rate (see Trend).
func ComparePoissonCounts(later, earlier int) float64 {
	n := later + earlier
	if n == 0 {
		return 1
	}
	b := distuv.Binomial{N: float64(n), P: 0.5}
	lower := b.CDF(float64(later))
	upper := 1 - b.CDF(float64(later)-1)
	return math.Min(1, 2*math.Min(lower, upper))
}

// assess fills the Assessment from the weekly series and the offspring estimate.
func (a *run) assess() {
	s := a.s
	as := &Assessment{Headline: "overall"}
	if o := s.Offspring; o != nil {
		as.Overall = ReadR(o.R, a.headlineBounds(o.R), o.N)
		first, last := a.countedSpan()
		as.OverallFrom, as.OverallTo = first.ISOWeekStart(), a.o.AsOf-linelist.Day(a.w)
		if a.shares != nil {
			as.OverallTo = last // the truncation-aware fit counts cases up to the share floor
		}
	}
	if len(a.weekSums) > 0 {
		var n int
		var sum float64
		var from, to linelist.Day
		taken := 0
		for i := len(a.weekSums) - 1; i >= 0 && taken < recentWeeks; i-- {
			w := a.weekSums[i]
			if w.censored {
				continue
			}
			n += w.n
			sum += w.sum
			from, taken = w.start, taken+1
			if taken == 1 {
				to = w.start + 6
			}
		}
		if taken > 0 && n > 0 {
			lo, hi := timing.MeanInterval(n, sum, a.weekK, 1-a.o.Level)
			r := &RecentR{From: from, To: to, Cases: n, R: numeric.FinitePtr(sum / float64(n)),
				Lower: numeric.FinitePtr(lo), Upper: numeric.FinitePtr(hi)}
			r.Verdict = ReadR(Estimate{Estimate: r.R}, [2]*float64{r.Lower, r.Upper}, n)
			as.Recent = r
			if n >= MinCasesForVerdict {
				as.Headline = "recent"
			}
		}
	}
	if e := s.EpiCurve; e != nil {
		complete := -1
		for k, w := range e.Weeks {
			if w+6 < a.o.AsOf {
				complete = k
			} else if as.IncompleteFrom == nil {
				d := w
				as.IncompleteFrom = &d
			}
		}
		if complete >= 1 {
			later, earlier := *e.Total[complete], *e.Total[complete-1]
			p := ComparePoissonCounts(later, earlier)
			t := &Trend{Week: e.Weeks[complete], Previous: e.Weeks[complete-1], Count: count(later),
				PreviousCount: count(earlier), PValue: numeric.FinitePtr(p), Kind: "steady"}
			if p < trendLevel {
				t.Kind = "falling"
				if later > earlier {
					t.Kind = "rising"
				}
			}
			as.Trend = t
		}
	}
	s.Assessment = as
}

// headlineBounds are the bounds of the interval the run headlines (Settings.Interval).
func (a *run) headlineBounds(e Estimate) [2]*float64 { return e.Headline(a.o.Interval) }

// countedSpan is the first and last onset of the cases the offspring counts use.
func (a *run) countedSpan() (first, last linelist.Day) {
	set := false
	for _, i := range a.selected {
		if a.leftOut(i) {
			continue
		}
		t := a.cases[i].Onset
		if !set || t < first {
			first = t
		}
		if !set || t > last {
			last = t
		}
		set = true
	}
	return first, last
}
