package forecast

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"slices"

	"github.com/caseweave/caseweave/pipeline/internal/numeric"
	"github.com/caseweave/caseweave/pipeline/linelist"
)

// Reported is a case with both an onset and a report date, the report no earlier than the
// onset and no later than the analysis date.
type Reported struct {
	Onset, Report linelist.Day
}

// TruncatedDelay is the distribution of the days from onset to report estimated from the
// cases reported by asOf, corrected for right truncation: a case with onset t is in the
// export only if its delay is at most asOf − t, so the longest delays of the latest onsets
// are missing and the plain share of each delay runs short.
//
// The estimator is the nonparametric maximum likelihood estimate of the truncated discrete
// distribution through its reverse-time hazard, g(d) = P(D = d | D ≤ d) (Lagakos, Barraj &
// De Gruttola 1988, Biometrika 75:515; Kalbfleisch & Lawless 1991, JASA 86:449; its use
// for reporting delays, Lawless 1994, Can J Statist 22:15, §2): with n(d) the cases of
// delay d and R(d) the cases of delay at most d among the onsets that could show a delay
// of d (asOf − t ≥ d),
//
//	ĝ(d) = n(d) / R(d),   F̂(D_max) = 1,   F̂(d − 1) = F̂(d)·(1 − ĝ(d)),
//
// where F is the distribution function and D_max the longest delay seen. It returns the
// probabilities P(D = d), d = 0..D_max; an error when there are no cases or one is out of
// order.
func TruncatedDelay(cases []Reported, asOf linelist.Day) ([]float64, error) {
	cdf, err := truncatedCDF(cases, asOf)
	if err != nil {
		return nil, err
	}
	pmf := make([]float64, len(cdf))
	for d := range cdf {
		pmf[d] = cdf[d]
		if d > 0 {
			pmf[d] -= cdf[d-1]
		}
	}
	return pmf, nil
}

// truncatedCDF is F̂ of TruncatedDelay.
func truncatedCDF(cases []Reported, asOf linelist.Day) ([]float64, error) {
	if len(cases) == 0 {
		return nil, errors.New("forecast: no cases with an onset and a report date")
	}
	maxD := 0
	for _, c := range cases {
		if c.Report < c.Onset || c.Report > asOf {
			return nil, fmt.Errorf("forecast: a case with onset %v has report date %v, outside onset..%v", c.Onset, c.Report, asOf)
		}
		maxD = max(maxD, int(c.Report-c.Onset))
	}
	// byWindow[w][d]: cases of delay d among the onsets whose window asOf − t is w (capped
	// at maxD, beyond which every delay seen could be seen).
	n := make([]int, maxD+1)          // n(d)
	byWindow := make([][]int, maxD+1) // counts by window, then delay
	for w := range byWindow {
		byWindow[w] = make([]int, maxD+1)
	}
	for _, c := range cases {
		d := int(c.Report - c.Onset)
		w := min(int(asOf-c.Onset), maxD)
		n[d]++
		byWindow[w][d]++
	}
	// R(d) = Σ_{w ≥ d} Σ_{j ≤ d} byWindow[w][j]: byWindow[w] becomes its running sum over
	// the delay, so that each R(d) is one sum over the windows (O(D²) in all).
	for w := range byWindow {
		for j := 1; j <= maxD; j++ {
			byWindow[w][j] += byWindow[w][j-1]
		}
	}
	cdf := make([]float64, maxD+1)
	cdf[maxD] = 1
	for d := maxD; d >= 1; d-- {
		r := 0
		for w := d; w <= maxD; w++ {
			r += byWindow[w][d]
		}
		g := 0.0
		if r > 0 {
			g = float64(n[d]) / float64(r)
		}
		cdf[d-1] = cdf[d] * (1 - g)
	}
	return cdf, nil
}

// NowcastOptions configure Nowcast.
type NowcastOptions struct {
	AsOf linelist.Day
	// Days is how many onset days up to AsOf are nowcast (the last is AsOf).
	Days int
	// Replicates is the bootstrap replicates of the delay, Draws the draws of the missing
	// counts for each (0: DefaultNowcastReplicates, DefaultNowcastDraws).
	Replicates, Draws int
	Seed              uint64
}

const (
	// DefaultNowcastReplicates × DefaultNowcastDraws = 20,000 draws put the 5% and 95%
	// quantiles of a count within about one of their level.
	DefaultNowcastReplicates = 200
	DefaultNowcastDraws      = 100
)

// NowcastDay is the expected final count of the cases with onset on one day.
type NowcastDay struct {
	Onset linelist.Day
	// Observed is the cases with this onset in the list; Reported the estimated share of
	// the day's cases reported by the analysis date, F̂(AsOf − Onset).
	Observed int
	Reported float64
	// Expected is the mean, Median, P50 and P90 the median and central intervals, of the
	// predictive distribution of the final count. Unknown is set when no delay as short as the days
	// since onset was seen (Reported 0): nothing then says how many are to come, and the
	// day's figures are its observed count.
	Unknown  bool
	Expected float64
	Median   int
	P50, P90 [2]int
}

// NowcastWeek is the same for the days of one ISO week in the nowcast (which may hold only
// its first days).
type NowcastWeek struct {
	Start    linelist.Day
	Observed int
	// Unknown counts its days whose final count cannot be estimated (NowcastDay.Unknown):
	// its figures are then a lower bound.
	Unknown  int
	Expected float64
	Median   int
	P50, P90 [2]int
}

// NowcastResult is the nowcast of the recent onset days.
type NowcastResult struct {
	Delay []float64 // TruncatedDelay of all the cases
	Days  []NowcastDay
	Weeks []NowcastWeek
}

// Nowcast gives each of the last o.Days onset days its expected final count and a
// prediction interval. onsets are the onset days of every case in the list (those with and
// without a report date), reported the cases that give the delay. For onset day t with N
// cases listed and share F = F̂(AsOf − t) reported, the plain estimate of the final count
// is N/F (Lawless 1994, §3). For the predictive distribution: the cases still to come are,
// for a Poisson count of mean λ of which each case is reported independently with
// probability F, Poisson(λ(1 − F)) independently of N, and with the Jeffreys prior
// λ^(−1/2) the posterior predictive of that count is negative binomial of size N + ½ and
// probability F (gamma–Poisson conjugacy and the Jeffreys prior of a Poisson mean: Gelman
// et al., Bayesian Data Analysis, 3rd ed., 2013, §2.6 and §2.8; a day with no case listed
// yet still has a chance of cases to come, which the 1/λ prior would deny). The uncertainty in F is carried by a bootstrap of the
// reported cases (Efron & Tibshirani 1993, An Introduction to the Bootstrap, ch. 6): for
// each replicate, F is estimated again and Draws counts are drawn; a week's count is the
// sum of its days' in the same draw.
func Nowcast(onsets []linelist.Day, reported []Reported, o NowcastOptions) (*NowcastResult, error) {
	if o.Days < 1 {
		return nil, fmt.Errorf("forecast: nowcast days %d must be at least 1", o.Days)
	}
	reps, draws := o.Replicates, o.Draws
	if reps <= 0 {
		reps = DefaultNowcastReplicates
	}
	if draws <= 0 {
		draws = DefaultNowcastDraws
	}
	cdf, err := truncatedCDF(reported, o.AsOf)
	if err != nil {
		return nil, err
	}
	first := o.AsOf - linelist.Day(o.Days) + 1
	observed := make([]int, o.Days)
	for _, t := range onsets {
		if t > o.AsOf {
			return nil, fmt.Errorf("forecast: a case has onset %v after the analysis date %v", t, o.AsOf)
		}
		if t >= first {
			observed[t-first]++
		}
	}
	share := func(cdf []float64, lag int) float64 {
		return cdf[min(lag, len(cdf)-1)]
	}
	// The ISO weeks the days fall in.
	var weekStarts []linelist.Day
	weekOf := make([]int, o.Days)
	for i := range o.Days {
		ws := (first + linelist.Day(i)).ISOWeekStart()
		if len(weekStarts) == 0 || weekStarts[len(weekStarts)-1] != ws {
			weekStarts = append(weekStarts, ws)
		}
		weekOf[i] = len(weekStarts) - 1
	}
	total := reps * draws
	dayDraws := make([][]float64, o.Days)
	for i := range dayDraws {
		dayDraws[i] = make([]float64, total)
	}
	weekDraws := make([][]float64, len(weekStarts))
	for i := range weekDraws {
		weekDraws[i] = make([]float64, total)
	}
	sample := make([]Reported, len(reported))
	for b := range reps {
		rng := numeric.StreamRand(o.Seed, b)
		for i := range sample {
			sample[i] = reported[rng.IntN(len(reported))]
		}
		cb, err := truncatedCDF(sample, o.AsOf)
		if err != nil {
			return nil, err
		}
		for i := range o.Days {
			f := share(cb, int(o.AsOf-first)-i)
			for k := range draws {
				s := b*draws + k
				v := float64(observed[i]) + negBin(rng, float64(observed[i])+0.5, f)
				dayDraws[i][s] = v
				weekDraws[weekOf[i]][s] += v
			}
		}
	}
	res := &NowcastResult{}
	res.Delay, _ = TruncatedDelay(reported, o.AsOf)
	for i := range o.Days {
		f := share(cdf, int(o.AsOf-first)-i)
		d := NowcastDay{Onset: first + linelist.Day(i), Observed: observed[i], Reported: f, Unknown: f <= 0}
		d.Expected = mean(dayDraws[i])
		d.Median, d.P50, d.P90 = intervals(dayDraws[i])
		res.Days = append(res.Days, d)
	}
	for w, ws := range weekStarts {
		wk := NowcastWeek{Start: ws}
		for _, d := range res.Days {
			if d.Onset.ISOWeekStart() == ws {
				wk.Observed += d.Observed
				if d.Unknown {
					wk.Unknown++
				}
			}
		}
		wk.Expected = mean(weekDraws[w])
		wk.Median, wk.P50, wk.P90 = intervals(weekDraws[w])
		res.Weeks = append(res.Weeks, wk)
	}
	return res, nil
}

func mean(v []float64) float64 {
	var s numeric.Sum
	for _, x := range v {
		s.Add(x)
	}
	return s.Value() / float64(len(v))
}

// negBin draws the failures before the size-th success, success probability p, as the
// gamma–Poisson mixture Poisson(G·(1 − p)/p), G ~ Gamma(size) (Johnson, Kemp & Kotz 2005,
// Univariate Discrete Distributions, §5.3); 0 for p ≥ 1, and for p ≤ 0 (NowcastDay.Unknown: the day is shown as listed).
func negBin(rng *rand.Rand, size float64, p float64) float64 {
	if p >= 1 || p <= 0 {
		return 0
	}
	g := numeric.Gamma(rng, size)
	return float64(numeric.Poisson(rng, g*(1-p)/p))
}

// intervals sorts a sample of counts and returns its median and central 50% and 90%
// intervals (quantile).
func intervals(v []float64) (int, [2]int, [2]int) {
	slices.Sort(v)
	q := func(p float64) int {
		if x := quantile(v, p); x != nil {
			return *x
		}
		return math.MaxInt
	}
	return q(0.5), [2]int{q(0.25), q(0.75)}, [2]int{q(0.05), q(0.95)}
}
