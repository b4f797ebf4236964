// Package forecast projects case counts by ISO week of onset by simulating the fitted
// branching process in calendar time from the cases known at the analysis date.
package forecast

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"runtime"
	"slices"
	"sync"

	"github.com/caseweave/caseweave/pipeline/internal/numeric"
	"github.com/caseweave/caseweave/pipeline/linelist"
	"github.com/caseweave/caseweave/pipeline/offspring"
	"github.com/caseweave/caseweave/pipeline/timing"
)

// Case is a case known at the analysis date: its onset and the people it has infected so
// far (a mean when infectors were inferred).
type Case struct {
	Onset     linelist.Day
	Offspring float64
}

// Options configure Forecast.
type Options struct {
	// AsOf is the analysis date: every case with onset after it is a forecast.
	AsOf linelist.Day
	// Weeks is how many ISO weeks are forecast, from the Monday after AsOf (1 to MaxWeeks).
	Weeks int
	// Serial is the serial-interval distribution.
	Serial timing.SerialInterval
	// Models are the offspring distributions to simulate, one batch of PerModel simulations
	// each: the bootstrap replicates, so that the intervals carry the uncertainty in R and k.
	Models   []offspring.Distribution
	PerModel int
	// ImportsPerWeek adds imported cases with onset after AsOf at this mean weekly rate
	// (Poisson), each starting a chain of its own.
	ImportsPerWeek float64
	// Seed makes the simulations reproducible; simulation s draws from its own stream, so
	// the result does not depend on Workers.
	Seed    uint64
	Workers int
	// MaxCases stops a simulation that has made this many new cases (0: DefaultMaxCases);
	// its counts then bound the truth from below only.
	MaxCases int
	// Delay is the distribution of the days from onset to report, Delay[d] = P(delay = d);
	// nil when every case with onset up to AsOf is in the list. With it, a case's
	// infectees are in the list only once they are reported (see Elapsed).
	Delay []float64
}

// MaxWeeks caps Options.Weeks.
const MaxWeeks = 12

// DefaultMaxCases is the default cap on the new cases of one simulation.
const DefaultMaxCases = 1_000_000

// Week is the predictive distribution of the cases with onset in one ISO week.
type Week struct {
	Start linelist.Day // its Monday
	Mean  float64
	// Median and the central 50% and 90% prediction intervals; an upper end is nil when it
	// falls among simulations stopped at MaxCases.
	Median   *int
	P50, P90 [2]*int
}

// Result is the forecast.
type Result struct {
	Weeks       []Week
	Simulations int
	// Capped counts the simulations stopped at MaxCases.
	Capped int
	// Cases is the number of new cases all simulations made, a measure of their cost.
	Cases int
	// sorted[w] holds every simulation's count for week w in increasing order, +Inf for a
	// capped one: the predictive distribution the quantiles are read from.
	sorted [][]float64
}

// CDF is the predictive probability of at most y cases with onset in week w (0-based):
// the share of the simulations with at most y. A capped simulation counts above every y.
func (r *Result) CDF(w, y int) float64 {
	s := r.sorted[w]
	i, _ := slices.BinarySearchFunc(s, float64(y), func(v, t float64) int {
		if v <= t {
			return -1
		}
		return 1
	})
	return float64(i) / float64(len(s))
}

// ErrNoNuPosterior: the model cannot condition a case's reproduction number on what it has
// done so far (offspring.NuPosterior).
var ErrNoNuPosterior = errors.New("forecast: the offspring model has no individual reproduction number to condition")

// Forecast simulates the branching process forward in calendar time. Each known case with
// onset t_i has the share F_i of its infectees in the list: F(AsOf − t_i + ½) without a
// reporting delay (an infectee's onset is its infector's plus the serial interval rounded
// to the day, so those with X ≤ AsOf − t_i + ½ have had theirs), and with one the share
// also reported by AsOf (Elapsed); given the o_i people it has infected,
// its reproduction number ν_i is drawn from its posterior (for the negative binomial gamma
// with shape k + o_i and rate k/R + F_i, the gamma–Poisson conjugacy: Gelman et al.,
// Bayesian Data Analysis, 3rd ed., 2013, §2.6), so a case that has infected many keeps
// infecting; it infects Poisson(ν_i(1 − F_i)) more people, each with onset t_i + round(X),
// X drawn from the serial interval given that the infectee is not yet listed. Every new
// case draws ν from the prior, Gamma(k, mean R), infects Poisson(ν) people after
// round(X) days, and so on until onsets pass the last forecast week. A new case with onset
// up to AsOf is one not yet reported; each person it infects with onset t up to AsOf has
// been reported already with probability P(D ≤ AsOf − t), and is then one of the known
// cases (whose infector is not in the list), simulated from there: such an infectee is
// dropped, not made twice. This is the
// Bienaymé–Galton–Watson process of the fitted model run in calendar time; the intervals
// are quantiles over all simulations, which mix over Models.
func Forecast(cases []Case, o Options) (*Result, error) {
	if o.Weeks < 1 || o.Weeks > MaxWeeks {
		return nil, fmt.Errorf("forecast: weeks %d outside 1..%d", o.Weeks, MaxWeeks)
	}
	if o.Serial == nil || o.Serial.Validate() != nil {
		return nil, errors.New("forecast: a valid serial interval is needed")
	}
	if len(o.Models) == 0 || o.PerModel < 1 {
		return nil, errors.New("forecast: no offspring models to simulate")
	}
	if !(o.ImportsPerWeek >= 0) || math.IsInf(o.ImportsPerWeek, 0) {
		return nil, fmt.Errorf("forecast: imports per week %v must be finite and ≥ 0", o.ImportsPerWeek)
	}
	type model struct {
		post offspring.NuPosterior
		r    float64
	}
	models := make([]model, len(o.Models))
	for i, d := range o.Models {
		mp, ok := d.(offspring.MixedPoisson)
		if !ok {
			return nil, fmt.Errorf("%w (%s)", ErrNoNuPosterior, d.Name())
		}
		post, ok := mp.IndividualR().(offspring.NuPosterior)
		if !ok {
			return nil, fmt.Errorf("%w (%s)", ErrNoNuPosterior, d.Name())
		}
		r := d.Mean()
		if !(r >= 0) || math.IsInf(r, 0) {
			return nil, fmt.Errorf("forecast: model %d has mean %v", i, r)
		}
		models[i] = model{post, r}
	}
	maxCases := o.MaxCases
	if maxCases <= 0 {
		maxCases = DefaultMaxCases
	}
	delayCDF, err := cumulative(o.Delay)
	if err != nil {
		return nil, err
	}
	days := newDayTable(o.Serial)
	first := o.AsOf.ISOWeekStart() + 7
	last := first + linelist.Day(7*o.Weeks) - 1 // the last Sunday
	// The known cases that may still infect someone with onset up to the last Sunday,
	// with their elapsed share.
	type seed struct {
		onset linelist.Day
		off   float64
		f     float64
	}
	var seeds []seed
	for _, c := range cases {
		if c.Onset > o.AsOf {
			return nil, fmt.Errorf("forecast: a case has onset %v after the analysis date %v", c.Onset, o.AsOf)
		}
		if !(c.Offspring >= 0) || math.IsInf(c.Offspring, 0) {
			return nil, fmt.Errorf("forecast: a case has %v offspring", c.Offspring)
		}
		f := days.elapsed(int(o.AsOf-c.Onset), delayCDF)
		if 1-f < 1e-12 {
			continue // its serial interval has run out: nothing more to come
		}
		seeds = append(seeds, seed{c.Onset, c.Offspring, f})
	}
	total := len(models) * o.PerModel
	counts := make([][]int, total)
	capped := make([]bool, total)
	sizes := make([]int, total)
	workers := o.Workers
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	workers = min(workers, total)
	var wg sync.WaitGroup
	next := make(chan int)
	for range workers {
		wg.Add(1)
		go func() {
			defer wg.Done()
			var stack []linelist.Day
			for s := range next {
				m := models[s/o.PerModel]
				rng := numeric.StreamRand(o.Seed, s)
				weeks := make([]int, o.Weeks)
				made := 0
				stack = stack[:0]
				// add records a new case; false once the cap is reached.
				add := func(on linelist.Day) bool {
					if on > last {
						return true // beyond the forecast: neither counted nor followed
					}
					if made++; made > maxCases {
						return false
					}
					if on >= first {
						weeks[(on-first)/7]++
					}
					stack = append(stack, on)
					return true
				}
				ok := true
				for _, sd := range seeds {
					nu := m.post.PosteriorSample(rng, m.r, sd.off, sd.f)
					n := numeric.Poisson(rng, nu*(1-sd.f))
					lag := int(o.AsOf - sd.onset)
					for range n {
						if ok = add(sd.onset + days.drawUnseen(rng, lag, sd.f, delayCDF)); !ok {
							break
						}
					}
					if !ok {
						break
					}
				}
				if ok && o.ImportsPerWeek > 0 {
					for d := o.AsOf + 1; d <= last && ok; d++ {
						for range numeric.Poisson(rng, o.ImportsPerWeek/7) {
							if ok = add(d); !ok {
								break
							}
						}
					}
				}
				for ok && len(stack) > 0 {
					on := stack[len(stack)-1]
					stack = stack[:len(stack)-1]
					nu := m.post.PosteriorSample(rng, m.r, 0, 0)
					for range numeric.Poisson(rng, nu) {
						c := on + days.draw(rng.Float64())
						if days.listed(rng, int(o.AsOf-c), delayCDF) {
							continue // in the list already, as a known case of its own
						}
						if ok = add(c); !ok {
							break
						}
					}
				}
				counts[s], capped[s], sizes[s] = weeks, !ok, min(made, maxCases)
			}
		}()
	}
	for s := range total {
		next <- s
	}
	close(next)
	wg.Wait()
	res := &Result{Simulations: total}
	for s, c := range capped {
		if c {
			res.Capped++
		}
		res.Cases += sizes[s]
	}
	for w := range o.Weeks {
		col := make([]float64, total)
		var sum numeric.Sum
		for s := range total {
			v := float64(counts[s][w])
			if capped[s] {
				v = math.Inf(1) // a lower bound only: sorts above every count
			}
			col[s] = v
			sum.Add(float64(counts[s][w]))
		}
		slices.Sort(col)
		wk := Week{Start: first + linelist.Day(7*w), Mean: sum.Value() / float64(total),
			Median: quantile(col, 0.5),
			P50:    [2]*int{quantile(col, 0.25), quantile(col, 0.75)},
			P90:    [2]*int{quantile(col, 0.05), quantile(col, 0.95)}}
		if res.Capped > 0 {
			wk.Mean = math.NaN() // not known: the capped simulations hold only lower bounds
		}
		res.Weeks = append(res.Weeks, wk)
		res.sorted = append(res.sorted, col)
	}
	return res, nil
}

// quantile is the p-quantile of a sorted sample of counts as the inverse of its empirical
// distribution function, the smallest value with at least a share p of the sample at or
// below it (Hyndman & Fan 1996, Am Stat 50:361, definition 1): a count, as a prediction of
// a count must be. Nil when it is +Inf.
func quantile(sorted []float64, p float64) *int {
	i := int(math.Ceil(p*float64(len(sorted)))) - 1
	i = min(max(i, 0), len(sorted)-1)
	v := sorted[i]
	if math.IsInf(v, 1) {
		return nil
	}
	n := int(v)
	return &n
}

// dayTable draws the serial interval rounded to the day, round(X), by inversion of its
// cumulative distribution: cum[d] = P(round(X) ≤ d) = F(d + ½). A uniform u in (F(e), 1)
// gives round(X) given X > e for e = lag + ½, since the event X > lag + ½ is round(X) >
// lag. Beyond the table, where 1 − F is below 1e−13, the continuous quantile is used.
type dayTable struct {
	cum    []float64
	serial timing.SerialInterval
}

// maxTableDays bounds the table of a serial interval with a very long tail.
const maxTableDays = 10_000

func newDayTable(si timing.SerialInterval) dayTable {
	t := dayTable{serial: si}
	for d := 0; d < maxTableDays; d++ {
		c := si.CDF(float64(d) + 0.5)
		t.cum = append(t.cum, c)
		if si.Survival(float64(d)+0.5) < 1e-13 {
			break
		}
	}
	return t
}

func (t dayTable) draw(u float64) linelist.Day {
	if d, _ := slices.BinarySearch(t.cum, u); d < len(t.cum) {
		return linelist.Day(d)
	}
	return linelist.Day(math.Round(t.serial.Quantile(u)))
}

// mass is P(round(X) = d).
func (t dayTable) mass(d int) float64 {
	switch {
	case d < 0 || d >= len(t.cum):
		return 0
	case d == 0:
		return t.cum[0]
	}
	return t.cum[d] - t.cum[d-1]
}

// elapsed is the share of a case's infectees already in the list lag days after its onset:
// without a reporting delay P(round(X) ≤ lag) = F(lag + ½); with one, an infectee with onset
// after round(X) days is listed once its delay D has passed too, so the share is
// Σ_d P(round(X) = d)·P(D ≤ lag − d), the convolution of the two (delayCDF[j] = P(D ≤ j)).
func (t dayTable) elapsed(lag int, delayCDF []float64) float64 {
	if lag < 0 {
		return 0
	}
	if delayCDF == nil {
		if lag < len(t.cum) {
			return t.cum[lag]
		}
		return t.serial.CDF(float64(lag) + 0.5)
	}
	var sum numeric.Sum
	for d := 0; d <= lag && d < len(t.cum); d++ {
		j := min(lag-d, len(delayCDF)-1)
		sum.Add(t.mass(d) * delayCDF[j])
	}
	return math.Min(1, sum.Value())
}

// drawUnseen draws the serial interval, in days, of an infectee not yet in the list lag
// days after its infector's onset, f being elapsed(lag): without a delay by inversion of
// the distribution above lag; with one by rejection (draw the interval and the delay, keep
// them when the report falls after the analysis date), which ends quickly because an unseen
// infectee is drawn only with probability 1 − f; after maxTries the delay is ignored.
func (t dayTable) drawUnseen(rng *rand.Rand, lag int, f float64, delayCDF []float64) linelist.Day {
	if delayCDF != nil {
		for range maxTries {
			d := t.draw(rng.Float64())
			if int(d) > lag {
				return d
			}
			u := rng.Float64()
			delay, _ := slices.BinarySearch(delayCDF, u)
			if int(d)+delay > lag {
				return d
			}
		}
		f = t.elapsed(lag, nil)
	}
	return t.draw(f + rng.Float64()*(1-f))
}

// listed reports, by a draw, whether a new case with onset lag days before the analysis
// date is already in the list: it is with probability P(D ≤ lag). A simulated case with
// onset up to the analysis date is one not yet reported, and the people it has infected
// who have been reported are in the list as known cases (their infector unknown to it), so
// they are simulated from there and must not be made a second time. Without a delay no new
// case has onset up to the analysis date; false for an onset after it.
func (t dayTable) listed(rng *rand.Rand, lag int, delayCDF []float64) bool {
	if lag < 0 || delayCDF == nil {
		return false
	}
	return rng.Float64() < delayCDF[min(lag, len(delayCDF)-1)]
}

// maxTries bounds the rejection of drawUnseen.
const maxTries = 10_000

// cumulative is the running sum of the delay distribution (numeric.Cumulative); nil for nil.
func cumulative(p []float64) ([]float64, error) {
	if p == nil {
		return nil, nil
	}
	c, err := numeric.Cumulative(p)
	if err != nil {
		return nil, fmt.Errorf("forecast: delay: %w", err)
	}
	return c, nil
}

// Elapsed returns the share of its infectees that a case with onset lag days before the
// analysis date has in the list (see Options.Delay; delay nil: no reporting delay). The
// outlook of the chains under way conditions on the same share.
func Elapsed(serial timing.SerialInterval, delay []float64) (func(lag int) float64, error) {
	c, err := cumulative(delay)
	if err != nil {
		return nil, err
	}
	t := newDayTable(serial)
	return func(lag int) float64 { return t.elapsed(lag, c) }, nil
}
