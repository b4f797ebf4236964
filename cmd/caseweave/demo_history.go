package main

import (
	"bytes"
	"fmt"
	"io"
	"os"
	"path/filepath"

	"github.com/caseweave/caseweave/pipeline/linelist"
	"github.com/caseweave/caseweave/pipeline/simulate"
)

// demoWeeks is how many Fridays of reports the demo's run archive holds before the last.
const demoWeeks = 3

// demoTraceDays is how long the demo's contact tracers take to find an infector: in an
// export, a case with onset within this many days of the export's last report date has no
// infector yet.
const demoTraceDays = 5

// demoExportOn is the demo's export as it stood on the Friday asOf: the cases with onset by
// then (the writer keeps those reported by then), with the links traced by then.
func demoExportOn(recs []simulate.Record, asOf linelist.Day) []simulate.Record {
	var out []simulate.Record
	for _, r := range recs {
		if r.Onset > asOf {
			continue
		}
		if r.Onset > asOf-demoTraceDays {
			r.InfectorID = ""
		}
		out = append(out, r)
	}
	return out
}

// demoHistory runs the demo's reports of the Fridays before demoAsOf into the run archive,
// each on the export as it stood that day, into scratch (they are not kept), so that the
// final report has earlier runs to compare with.
func demoHistory(e env, recs []simulate.Record, scratch, archive string) error {
	last, err := linelist.ParseISODay(demoAsOf)
	if err != nil {
		return withCode(exitInput, err)
	}
	quiet := env{stdout: io.Discard, stderr: io.Discard, stdin: e.stdin}
	for w := demoWeeks; w >= 1; w-- {
		asOf := last - linelist.Day(7*w)
		var buf bytes.Buffer
		opts := demoWriteOptions()
		opts.ReportedBy = &asOf
		if err := simulate.WriteCSV(&buf, demoExportOn(recs, asOf), opts); err != nil {
			return withCode(exitOutput, err)
		}
		list := filepath.Join(scratch, "export-"+asOf.String()+".csv")
		if err := os.WriteFile(list, buf.Bytes(), 0o600); err != nil {
			return withCode(exitOutput, err)
		}
		rc := reportCommand(quiet, nil)
		rc.SetArgs([]string{"--as-of", asOf.String(), "--by", linelist.ColJurisdiction, "--incubation-days", fmt.Sprint(demoIncubationDays),
			"--history", archive, "-o", filepath.Join(scratch, "reports-"+asOf.String()), list})
		rc.SetOut(io.Discard)
		rc.SetErr(io.Discard)
		rc.SilenceErrors, rc.SilenceUsage = true, true
		if err := rc.Execute(); err != nil {
			return fmt.Errorf("the demo's report of %s: %w", asOf, err)
		}
		fmt.Fprintf(e.stderr, "archived the reports of %s\n", asOf)
	}
	return nil
}
