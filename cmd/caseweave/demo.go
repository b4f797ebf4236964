package main

import (
	"bytes"
	"fmt"
	"os"
	"path/filepath"

	"github.com/spf13/cobra"

	"github.com/caseweave/caseweave/pipeline/linelist"
	"github.com/caseweave/caseweave/pipeline/simulate"
)

// The demo scenario is invented: a respiratory outbreak around the estuary of the river
// Vell, in three jurisdictions that exist nowhere. Its analysis date is fixed, so the demo's
// output is the same on every machine and every day.
const (
	demoAsOf = "2026-11-27" // a Friday: the day the week's reports go out
	// demoDelayMean is the mean of the days from onset to report: the export holds the
	// cases reported by the analysis date, so the last days' onsets are not all in it.
	demoDelayMean = 3.0
	demoStart     = "2026-09-07"
	// demoIncubationDays is the invented pathogen's longest incubation period, for the
	// "twice the longest incubation period" rule of thumb.
	demoIncubationDays = 14
)

var demoJurisdictions = []string{"Marrowfield", "Ostvale", "Quillan Bay"}

func demoScenario() simulate.Scenario {
	until, _ := linelist.ParseISODay(demoAsOf)
	start, _ := linelist.ParseISODay(demoStart)
	return simulate.Scenario{
		R: 1.15, K: 0.3, SerialMean: 5.5, SerialSD: 2.8,
		IndexCases: 30, Start: start, IndexSpreadDays: 35, Until: &until,
		Jurisdictions: demoJurisdictions, Settings: splitList(defaultSettings), AgeGroups: splitList(defaultAgeGroups),
		StayProbability: 0.92, AssortativeAge: 0.55, MissingLinks: 0.1, Seed: 20261127,
	}
}

// demoWriteOptions writes the demo's export: contact columns, and the cases reported by the
// analysis date after a random delay.
func demoWriteOptions() simulate.WriteOptions {
	sc := demoScenario()
	return simulate.WriteOptions{ContactColumns: true, ReportDelayMean: demoDelayMean, DelaySeed: sc.Seed, ReportedBy: sc.Until}
}

func newDemoCmd(e env) *cobra.Command {
	var out string
	var pdf bool
	c := &cobra.Command{
		Use:   "demo [-o DIR]",
		Short: "Simulate the built-in invented scenario and write its reports, one per jurisdiction",
		Long: `demo needs no input: it simulates an invented outbreak in three invented jurisdictions,
writes the line list it would have produced (with invented name, phone and address columns,
which the reports never show), and writes one report per jurisdiction plus an index.`,
		Args: exactArgs(0, "no positional arguments"),
		RunE: func(c *cobra.Command, args []string) error {
			recs, err := simulate.Run(demoScenario())
			if err != nil {
				return withCode(exitInput, err)
			}
			var buf bytes.Buffer
			if err := simulate.WriteCSV(&buf, recs, demoWriteOptions()); err != nil {
				return withCode(exitOutput, err)
			}
			// The line list is read from a scratch folder and written into the batch, beside
			// the reports it produced.
			scratch, err := os.MkdirTemp("", "caseweave-demo-")
			if err != nil {
				return withCode(exitOutput, err)
			}
			defer os.RemoveAll(scratch)
			const listName = "vell-estuary-linelist.csv"
			list := filepath.Join(scratch, listName)
			if err := os.WriteFile(list, buf.Bytes(), 0o600); err != nil {
				return withCode(exitOutput, err)
			}
			fmt.Fprintf(e.stderr, "simulated %d cases: %s\n", len(recs), filepath.Join(out, listName))
			archive := filepath.Join(scratch, "history.sqlite")
			if err := demoHistory(e, recs, scratch, archive); err != nil {
				return err
			}
			rc := reportCommand(e, map[string][]byte{listName: buf.Bytes()})
			args = []string{"--as-of", demoAsOf, "--by", linelist.ColJurisdiction, "--incubation-days", fmt.Sprint(demoIncubationDays), "--history", archive, "-o", out, list}
			if pdf {
				args = append([]string{"--pdf"}, args...)
			}
			rc.SetArgs(args)
			rc.SetOut(e.stdout)
			rc.SetErr(e.stderr)
			rc.SilenceErrors, rc.SilenceUsage = true, true
			if err := rc.Execute(); err != nil {
				return err
			}
			fmt.Fprintf(e.stdout, "Open %s in a browser.\n", filepath.Join(out, "index.html"))
			return nil
		},
	}
	c.Flags().StringVarP(&out, "output", "o", "caseweave-demo", "directory to write the demo into")
	c.Flags().BoolVar(&pdf, "pdf", false, "also print each report to PDF (needs chromium)")
	return c
}
