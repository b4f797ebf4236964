package main

import (
	"fmt"
	"io"

	"github.com/caseweave/caseweave/pipeline/analysis"
)

// printNowcast writes the nowcast's weeks to the terminal, or why there is none.
func printNowcast(w io.Writer, nc *analysis.Nowcast) {
	if nc == nil {
		return
	}
	if len(nc.Weeks) == 0 {
		fmt.Fprintf(w, "\nNowcast: none; %d cases have a report date (20 needed), so the latest weeks are not corrected for late reports\n", nc.DelayCases)
		return
	}
	fmt.Fprintf(w, "\nNowcast by week of onset (delay from %d cases, %s)\n", nc.DelayCases, nc.Method)
	for _, wk := range nc.Weeks {
		obs := "withheld"
		if wk.Observed != nil {
			obs = fmt.Sprint(*wk.Observed)
		}
		low := ""
		if wk.Unknown > 0 {
			low = " (lower bound)"
		}
		fmt.Fprintf(w, "  week of %s: listed %s, expected %.0f%s, 50%% %d–%d, 90%% %d–%d\n", wk.WeekStart, obs, wk.Expected, low, wk.P50[0], wk.P50[1], wk.P90[0], wk.P90[1])
	}
}
