package main

import (
	"bytes"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"strconv"

	"github.com/spf13/cobra"

	"github.com/caseweave/caseweave/pipeline/analysis"
	"github.com/caseweave/caseweave/pipeline/linelist"
)

// backtestFlags are backtest's own flags beside the analysis flags.
type backtestFlags struct {
	every int
	from  string
	csv   string
}

func newBacktestCmd(e env) *cobra.Command {
	var f estimateFlags
	var b backtestFlags
	c := &cobra.Command{
		Use:   "backtest [--every 7] [--from DATE] LINELIST...",
		Short: "Replay the line list at past analysis dates and score the forecasts against what followed",
		Long: `backtest replays the line list as it was known at past analysis dates (the cases reported by
each date, by their report dates; a case without one counts from its onset), makes the forecast
by week each time, and scores it against the cases later observed with onset in the week: the
share of outcomes inside the 50% and 90% ranges, the weighted interval score and the absolute
error of the median, by weeks ahead. Only weeks that ended long enough before the analysis
date for nearly all their reports to be in (the reporting delay's 95th percentile) are scored.`,
		Args: lineListArgs,
		RunE: func(c *cobra.Command, args []string) error {
			ld, o, err := f.loadOptions(c, e, args)
			if err != nil {
				return err
			}
			o.Progress = nil
			bo := analysis.BacktestOptions{Every: b.every}
			if !c.Flags().Changed("bootstrap") {
				o.Replicates = 0
			} else {
				bo.Replicates = o.Replicates
			}
			if b.from != "" {
				d, err := linelist.ParseISODay(b.from)
				if err != nil {
					return usageErrorf("--from %q is not a date: write it as YYYY-MM-DD", b.from)
				}
				bo.From = d
			}
			if b.every < 1 {
				return usageErrorf("--every must be at least 1 day, got %d", b.every)
			}
			bt, err := analysis.RunBacktest(ld.list, o, bo)
			if errors.Is(err, analysis.ErrOptions) {
				return usageErrorf("%v", err)
			}
			if err != nil {
				return withCode(exitInput, err)
			}
			printBacktest(f.textOut(e), bt)
			if b.csv == "" {
				return nil
			}
			var buf bytes.Buffer
			if err := writeBacktestCSV(&buf, bt); err != nil {
				return withCode(exitOutput, err)
			}
			return writeOut(e, b.csv, buf.Bytes())
		},
	}
	f.register(c)
	fl := c.Flags()
	fl.IntVar(&b.every, "every", 7, "days between the replayed analysis dates")
	fl.StringVar(&b.from, "from", "", "first replayed analysis date YYYY-MM-DD (default: four weeks after the first onset)")
	fl.StringVar(&b.csv, "csv", "", "write every scored forecast (analysis date, weeks ahead, week, median, ranges, outcome) to FILE (- for stdout)")
	return c
}

// printBacktest writes the scores by weeks ahead and the verdict.
func printBacktest(w io.Writer, bt *analysis.Backtest) {
	fmt.Fprintf(w, "Backtest: %d analysis dates", len(bt.Dates))
	if len(bt.Dates) > 0 {
		fmt.Fprintf(w, " from %s to %s", bt.Dates[0], bt.Dates[len(bt.Dates)-1])
	}
	fmt.Fprintf(w, "; weeks scored up to %s (outcomes settle %d days after a week ends)\n", bt.LastScored, bt.SettleDays)
	fmt.Fprintf(w, "  %-11s %6s %9s %9s %9s %11s\n", "weeks ahead", "scored", "in 50%", "in 90%", "WIS", "|median−y|")
	pct := func(p *float64) string {
		if p == nil {
			return "–"
		}
		return strconv.FormatFloat(100**p, 'f', 0, 64) + "%"
	}
	for _, h := range bt.Horizons {
		fmt.Fprintf(w, "  %-11d %6d %9s %9s %9s %11s\n", h.Horizon, h.Scored, pct(h.Cover50), pct(h.Cover90), fmtNum(h.WIS, 1), fmtNum(h.AbsError, 1))
	}
	fmt.Fprintln(w, bt.Verdict)
}

func writeBacktestCSV(w io.Writer, bt *analysis.Backtest) error {
	cw := csv.NewWriter(w)
	_ = cw.Write([]string{"as_of", "weeks_ahead", "week_start", "median", "p50_lower", "p50_upper", "p90_lower", "p90_upper", "observed"})
	n := func(p *int) string {
		if p == nil {
			return ""
		}
		return strconv.Itoa(*p)
	}
	for _, f := range bt.Forecasts {
		_ = cw.Write([]string{f.AsOf.String(), strconv.Itoa(f.Horizon), f.WeekStart.String(), n(f.Median),
			n(f.P50[0]), n(f.P50[1]), n(f.P90[0]), n(f.P90[1]), strconv.Itoa(f.Observed)})
	}
	cw.Flush()
	return cw.Error()
}
