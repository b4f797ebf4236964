package main

import (
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
	"sync"
	"time"

	"github.com/schollz/progressbar/v3"
	"github.com/spf13/cobra"

	"github.com/caseweave/caseweave/pipeline/analysis"
	"github.com/caseweave/caseweave/pipeline/forecast"
)

// estimateFlags are the analysis flags `estimate` and `report` share.
type estimateFlags struct {
	inputFlags
	censorDays  int
	replicates  int
	seed        uint64
	level       float64
	interval    string
	unit        string
	generations int
	// forecastWeeks and importsPerWeek shape the forecast by week.
	forecastWeeks  int
	importsPerWeek float64
	serialFixed    string
	workers        int
	infer          bool
	likelihood     string
	// inferMethod and inferAscertainment choose how --infer-missing draws the infectors.
	inferMethod        string
	inferAscertainment float64
	inferWithin        string
	// history is the run archive (history.go).
	history string
}

func (f *estimateFlags) register(c *cobra.Command) {
	f.inputFlags.register(c)
	fl := c.Flags()
	fl.IntVar(&f.censorDays, "censor-days", -1, "censoring window: chains with a case fewer than N days before the analysis date count as growing and, with --offspring-likelihood censor, such cases are left out of R and k (default: the serial interval's 95th percentile, or 14; 0 disables)")
	fl.StringVar(&f.likelihood, "offspring-likelihood", analysis.LikelihoodTruncation, "how recent cases enter R and k: truncation (every case, weighted by the share of its infectees already listed) or censor (cases inside the censoring window left out)")
	fl.Lookup("censor-days").DefValue = "0" // the default is described above; -1 only marks "not given"
	fl.IntVar(&f.replicates, "bootstrap", analysis.DefaultReplicates, "bootstrap replicates")
	fl.Uint64Var(&f.seed, "seed", 1, "random seed: the same input, seed and --as-of give identical output")
	fl.Float64Var(&f.level, "level", 0.95, "confidence level of the intervals")
	fl.StringVar(&f.interval, "interval", analysis.IntervalProfile, "interval that headlines: profile (profile likelihood for R and k, percentile bootstrap for the rest), percentile or bca (all are in the JSON)")
	fl.StringVar(&f.unit, "unit", analysis.UnitCase, "bootstrap unit: case, or cluster (resample whole transmission chains)")
	fl.IntVar(&f.generations, "generations", 4, "generations to project")
	fl.IntVar(&f.forecastWeeks, "forecast-weeks", analysis.DefaultForecastWeeks, "ISO weeks after the analysis date to forecast cases for (1 to 12; 0: no forecast)")
	fl.Float64Var(&f.importsPerWeek, "imports-per-week", 0, "mean number of imported cases a week added to the forecast")
	fl.StringVar(&f.serialFixed, "serial-fixed", "", "use an agreed gamma serial interval MEAN,SD (days) instead of fitting one")
	fl.BoolVar(&f.infer, "infer-missing", false, "give unlinked, non-imported cases an inferred infector, one completed tree per bootstrap replicate")
	fl.StringVar(&f.inferMethod, "infer-method", analysis.InferAugmentation, "how --infer-missing draws infectors: augmentation (onset timing and how many each case infected, keeping superspreading) or wallinga-teunis (onset timing alone)")
	fl.StringVar(&f.inferWithin, "infer-within", analysis.InferWithinJurisdiction, "draw inferred infectors from cases of the same jurisdiction, setting, jurisdiction+setting, or all")
	fl.Float64Var(&f.inferAscertainment, "infer-ascertainment", 1, "share of infectors that are in the line list, in (0, 1]; below 1 the augmentation may give a case an infector outside the list")
	f.registerHistory(c)
	fl.IntVar(&f.workers, "workers", 0, "goroutines for the bootstrap (0: all cores); results do not depend on it")
}

// options turns the flags into analysis options; the caller adds Select and Scope.
// loadOptions reads and links the line lists of args and turns the flags into the options
// of their analysis.
func (f *estimateFlags) loadOptions(c *cobra.Command, e env, args []string) (*loaded, analysis.Options, error) {
	ld, err := f.load(e, args)
	if err != nil {
		return nil, analysis.Options{}, err
	}
	o, err := f.options(c, e, ld)
	return ld, o, err
}

func (f *estimateFlags) options(c *cobra.Command, e env, ld *loaded) (analysis.Options, error) {
	o := analysis.Options{
		AsOf: ld.asOf, Replicates: f.replicates, Seed: f.seed, Level: f.level,
		Interval: f.interval, Unit: f.unit, Workers: f.workers, Generations: f.generations,
		InferMissing: f.infer, ForecastWeeks: f.forecastWeeks, ImportsPerWeek: f.importsPerWeek,
		Likelihood:  f.likelihood,
		InferMethod: f.inferMethod, InferAscertainment: f.inferAscertainment, InferWithin: f.inferWithin,
	}
	switch f.inferWithin {
	case analysis.InferWithinJurisdiction, analysis.InferWithinSetting, analysis.InferWithinBoth, analysis.InferWithinAll:
	default:
		return o, usageErrorf("--infer-within must be %s, %s, %s or %s, got %q", analysis.InferWithinJurisdiction,
			analysis.InferWithinSetting, analysis.InferWithinBoth, analysis.InferWithinAll, f.inferWithin)
	}
	if f.inferMethod != analysis.InferAugmentation && f.inferMethod != analysis.InferWallingaTeunis {
		return o, usageErrorf("--infer-method must be %s or %s, got %q", analysis.InferAugmentation, analysis.InferWallingaTeunis, f.inferMethod)
	}
	if !(f.inferAscertainment > 0 && f.inferAscertainment <= 1) {
		return o, usageErrorf("--infer-ascertainment must be in (0, 1], got %v", f.inferAscertainment)
	}
	switch {
	case f.forecastWeeks == 0:
		o.ForecastWeeks = analysis.NoForecast
	case f.forecastWeeks < 0 || f.forecastWeeks > forecast.MaxWeeks:
		return o, usageErrorf("--forecast-weeks must be between 0 (no forecast) and %d, got %d", forecast.MaxWeeks, f.forecastWeeks)
	}
	if !(f.importsPerWeek >= 0) || math.IsInf(f.importsPerWeek, 0) {
		return o, usageErrorf("--imports-per-week must be a number of at least 0, got %v", f.importsPerWeek)
	}
	if c.Flags().Changed("censor-days") {
		if f.censorDays < 0 {
			return o, usageErrorf("--censor-days must be 0 or more, got %d", f.censorDays)
		}
		w := f.censorDays
		o.CensorDays = &w
	}
	if f.serialFixed != "" {
		parts := strings.Split(f.serialFixed, ",")
		if len(parts) != 2 {
			return o, usageErrorf("--serial-fixed takes MEAN,SD in days, e.g. 5.2,2.8; got %q", f.serialFixed)
		}
		var ms [2]float64
		for i, p := range parts {
			v, err := strconv.ParseFloat(strings.TrimSpace(p), 64)
			if err != nil || !(v > 0) {
				return o, usageErrorf("--serial-fixed takes two positive numbers MEAN,SD; %q is not one", p)
			}
			ms[i] = v
		}
		o.SerialFixed = &ms
	}
	o.Progress = progress(e)
	return o, nil
}

// runAnalysis maps option errors to usage errors.
func runAnalysis(ld *loaded, o analysis.Options) (*analysis.Summary, error) {
	s, err := analysis.Run(ld.path, ld.list, ld.forest, o)
	if errors.Is(err, analysis.ErrOptions) {
		return nil, usageErrorf("%v", err)
	}
	return s, withCode(exitInput, err)
}

// progress returns a bootstrap progress callback that draws a bar on stderr once the work
// has run for a second, and only when stderr is a terminal.
func progress(e env) func(done, total int) {
	return progressAfter(e, time.Second)
}

// progressAfter is progress with the delay before the bar appears as a parameter.
func progressAfter(e env, delay time.Duration) func(done, total int) {
	if !e.stderrIsTerminal {
		return nil
	}
	start := time.Now()
	var mu sync.Mutex
	var bar *progressbar.ProgressBar
	return func(done, n int) {
		mu.Lock()
		defer mu.Unlock()
		if bar == nil {
			if time.Since(start) < delay || done == n {
				return
			}
			bar = progressbar.NewOptions(n, progressbar.OptionSetWriter(e.stderr),
				progressbar.OptionSetDescription("bootstrap"), progressbar.OptionClearOnFinish(),
				progressbar.OptionThrottle(100*time.Millisecond))
		}
		_ = bar.Set(done)
		if done == n {
			_ = bar.Finish()
		}
	}
}

func newEstimateCmd(e env) *cobra.Command {
	var f estimateFlags
	c := &cobra.Command{
		Use:   "estimate [flags] LINELIST...",
		Short: "Estimate the offspring distribution (R, k) with bootstrap intervals, and the outlook",
		Long: `estimate fits Poisson, geometric and negative-binomial offspring distributions to the
offspring counts by maximum likelihood, each case's count taken as the share of its infectees
already listed (or, with --offspring-likelihood censor, only the cases outside the censoring
window); picks the best by AIC; gives profile-likelihood intervals for R and k and percentile
and BCa bootstrap intervals for them and the quantities derived from them (extinction probability, share of cases causing 80% of transmission); fits R and k
from cluster sizes alone; and projects the next generations.`,
		Args: lineListArgs,
		RunE: func(c *cobra.Command, args []string) error {
			ld, o, err := f.loadOptions(c, e, args)
			if err != nil {
				return err
			}
			s, err := runAnalysis(ld, o)
			if err != nil {
				return err
			}
			arch, err := f.openHistory(ld.config)
			if err != nil {
				return err
			}
			defer arch.Close()
			if err := annotate(arch, s, archiveKey(ld.config, nil, ""), ld, nil); err != nil {
				return err
			}
			printEstimate(f.textOut(e), s)
			if err := f.writeJSONs(e, s, func(r *analysis.Released) any { return r.Summary() }, func(s *analysis.Summary) any { return s }); err != nil {
				return err
			}
			return f.recordEstimate(arch, s, ld)
		},
	}
	f.register(c)
	return c
}

func fmtNum(p *float64, digits int) string {
	if p == nil {
		return "–"
	}
	return strconv.FormatFloat(*p, 'f', digits, 64)
}

// fmtCounts prints a prediction interval of counts; a bound beyond the computed range is "?".
func fmtCounts(b [2]*int) string {
	end := func(p *int) string {
		if p == nil {
			return "?"
		}
		return strconv.Itoa(*p)
	}
	return end(b[0]) + "–" + end(b[1])
}

func fmtInterval(e analysis.Estimate, which string, digits int) string {
	iv := e.Headline(which)
	lo, hi := fmtNum(iv[0], digits), fmtNum(iv[1], digits)
	if iv[1] == nil && iv[0] != nil {
		hi = "∞"
	}
	return fmt.Sprintf("%s (%s–%s)", fmtNum(e.Estimate, digits), lo, hi)
}

func printEstimate(w io.Writer, s *analysis.Summary) {
	st := s.Settings
	fmt.Fprintf(w, "Line list  %s  (%d rows: %d used, %d rejected)\n", s.Input.Path, s.Input.Rows, s.Input.Used, s.Input.Rejected)
	fmt.Fprintf(w, "As of      %s; censoring window %d days (%s)\n", s.AsOf, st.CensorDays, censorSource(st.CensorDaysSource))
	if si := s.SerialInterval; si != nil {
		fmt.Fprintf(w, "Serial     %s, mean %.2f days, 95th percentile %.1f days (%d links, %d negative)\n",
			si.BestModel, si.Models[0].Mean, si.Quantiles.P95, si.N, si.Negative)
	}
	o := s.Offspring
	if o == nil {
		fmt.Fprintln(w, "\nNo offspring estimate.")
		printNotes(w, s)
		return
	}
	if o.Likelihood == analysis.LikelihoodTruncation {
		fmt.Fprintf(w, "\nOffspring counts of %d cases, each weighted by the share of its infectees already listed (%d left out with a share below %g): mean observed %.3f, variance %.3f\n", o.N, o.Censored, o.ShareFloor, o.Mean, o.Variance)
	} else {
		fmt.Fprintf(w, "\nOffspring counts of %d cases (%d left out as censored): mean %.3f, variance %.3f\n", o.N, o.Censored, o.Mean, o.Variance)
	}
	fmt.Fprintf(w, "\n  %-18s %8s %8s %12s %10s %8s\n", "model", "R", "k", "log-lik", "AIC", "ΔAIC")
	for _, m := range o.Models {
		R, k := "–", "–"
		for _, p := range m.Parameters {
			v := "∞" // an unbounded estimate: k in the Poisson limit
			if p.Estimate != nil {
				v = strconv.FormatFloat(*p.Estimate, 'f', 3, 64)
			}
			switch p.Name {
			case "R":
				R = v
			case "k":
				k = v
			}
		}
		best := ""
		if m.Name == o.BestModel {
			best = "  best"
		}
		fmt.Fprintf(w, "  %-18s %8s %8s %12.3f %10.3f %8.3f%s\n", m.Name, R, k, m.LogLik, m.AIC, m.DeltaAIC, best)
	}
	lvl := fmt.Sprintf("%g%%", 100*st.Level)
	if o.IntervalShown == analysis.IntervalProfile {
		fmt.Fprintf(w, "\n%s intervals, profile likelihood for R and k, percentile bootstrap of %d %ss (seed %d) for the rest:\n", lvl, st.Replicates, st.Unit, s.Seed)
	} else {
		fmt.Fprintf(w, "\n%s intervals, %s bootstrap of %d %ss (seed %d):\n", lvl, st.Interval, st.Replicates, st.Unit, s.Seed)
	}
	fmt.Fprintf(w, "  R  %s\n", fmtInterval(o.R, st.Interval, 3))
	if o.PoissonLimit {
		fmt.Fprintln(w, "  k  no finite estimate: the variance does not exceed the mean (Poisson limit)")
	} else {
		fmt.Fprintf(w, "  k  %s\n", fmtInterval(o.K, st.Interval, 3))
	}
	if cf := o.ChainSizeFit; cf != nil {
		k := "∞ (Poisson limit)"
		if cf.K != nil {
			k = fmt.Sprintf("%.3f (%s–%s)", *cf.K, fmtNum(cf.KCI[0], 3), fmtNum(cf.KCI[1], 3))
		}
		fmt.Fprintf(w, "  from %d cluster sizes (%d still growing): R %.3f (%s–%s), k %s\n", cf.Clusters, cf.Censored, cf.R, fmtNum(cf.RCI[0], 3), fmtNum(cf.RCI[1], 3), k)
	}
	fmt.Fprintf(w, "\nShare with no secondary case   %.1f%%\n", 100*o.ZeroShare)
	if o.ShareCausing80pctObserved != nil {
		fmt.Fprintf(w, "Share causing 80%% (observed)    %.1f%%\n", 100**o.ShareCausing80pctObserved)
	}
	fmt.Fprintf(w, "Superspreaders (> %d offspring)  %d\n", o.SSEThreshold, len(o.Superspreaders))
	if ol := s.Outlook; ol != nil {
		fmt.Fprintf(w, "\nOutlook (%s model)\n", ol.Model)
		fmt.Fprintf(w, "  extinction probability of one chain  %s\n", fmtInterval(ol.ExtinctionProbability, st.Interval, 3))
		fmt.Fprintf(w, "  major-outbreak probability           %s\n", fmtInterval(ol.MajorOutbreakProbability, st.Interval, 3))
		fmt.Fprintf(w, "  share causing 80%% (by ν)             %s\n", fmtInterval(ol.ShareCausing80pct, st.Interval, 3))
		fmt.Fprintf(w, "  cases still able to transmit         %d\n", ol.Active)
		for _, p := range ol.Projection {
			fmt.Fprintf(w, "  generation %d: mean %s, 50%% %s, 90%% %s, P(none) %.2f\n", p.Generation, fmtNum(p.Mean, 1), fmtCounts(p.P50), fmtCounts(p.P90), p.PZero)
		}
	}
	if fc := s.Forecast; fc != nil {
		fmt.Fprintf(w, "\nForecast by week of onset (%d simulations)\n", fc.Simulations)
		for _, wk := range fc.Weeks {
			med := "?"
			if wk.Median != nil {
				med = strconv.Itoa(*wk.Median)
			}
			fmt.Fprintf(w, "  week of %s: median %s, 50%% %s, 90%% %s\n", wk.WeekStart, med, fmtCounts(wk.P50), fmtCounts(wk.P90))
		}
	}
	printNowcast(w, s.Nowcast)
	printNotes(w, s)
}

func censorSource(s string) string {
	switch s {
	case "flag":
		return "set by --censor-days"
	case "serial_interval_p95":
		return "the serial interval's 95th percentile"
	default:
		return "default; no serial interval fitted"
	}
}

func printNotes(w io.Writer, s *analysis.Summary) {
	if len(s.Notes) == 0 {
		return
	}
	fmt.Fprintln(w, "\nNotes")
	for _, n := range s.Notes {
		fmt.Fprintf(w, "  - %s\n", n)
	}
}
