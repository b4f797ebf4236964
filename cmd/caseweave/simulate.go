package main

import (
	"bytes"
	"fmt"
	"strings"

	"github.com/spf13/cobra"

	"github.com/caseweave/caseweave/pipeline/linelist"
	"github.com/caseweave/caseweave/pipeline/simulate"
)

// Default strata for simulated line lists: the trade's usual settings and age bands.
const (
	defaultSettings  = "household,workplace,school,care home,community,event"
	defaultAgeGroups = "0-4,5-17,18-39,40-64,65+"
)

func newSimulateCmd(e env) *cobra.Command {
	var (
		sc                            simulate.Scenario
		start, until                  string
		jurisdictions, settings, ages string
		out                           string
		contact                       bool
		reportDelay                   int
	)
	c := &cobra.Command{
		Use:   "simulate [flags] -o FILE",
		Short: "Simulate a branching-process outbreak and write it as a canonical line list",
		Long: `simulate draws an outbreak from a Bienaymé–Galton–Watson branching process with
negative-binomial offspring (mean R, dispersion k) and a gamma serial interval, observes it up
to --until (or for --generations generations) and writes a canonical line list. The names of
places and settings are whatever you pass; nothing in the output is a real person.`,
		Args: exactArgs(0, "no positional arguments"),
		RunE: func(c *cobra.Command, args []string) error {
			d, err := linelist.ParseISODay(start)
			if err != nil {
				return usageErrorf("--start %q is not a date: write it as YYYY-MM-DD", start)
			}
			sc.Start = d
			if until != "" {
				u, err := linelist.ParseISODay(until)
				if err != nil {
					return usageErrorf("--until %q is not a date: write it as YYYY-MM-DD", until)
				}
				sc.Until = &u
			}
			sc.Jurisdictions = splitList(jurisdictions)
			sc.Settings = splitList(settings)
			sc.AgeGroups = splitList(ages)
			if out == "" {
				return usageErrorf("simulate needs -o FILE (or -o - for stdout)")
			}
			recs, err := simulate.Run(sc)
			if err != nil {
				return usageErrorf("%v", err)
			}
			var buf bytes.Buffer
			if err := simulate.WriteCSV(&buf, recs, simulate.WriteOptions{ContactColumns: contact, ReportDelay: reportDelay}); err != nil {
				return withCode(exitOutput, err)
			}
			if out == "-" {
				_, err := e.stdout.Write(buf.Bytes())
				return withCode(exitOutput, err)
			}
			if err := writeFileAtomic(out, buf.Bytes()); err != nil {
				return err
			}
			fmt.Fprintf(e.stderr, "wrote %d simulated cases to %s\n", len(recs), out)
			return nil
		},
	}
	f := c.Flags()
	f.Float64Var(&sc.R, "R", 1.2, "mean offspring count R")
	f.Float64Var(&sc.K, "k", 0.4, "dispersion k of the negative-binomial offspring distribution (0: Poisson)")
	f.Float64Var(&sc.SerialMean, "serial-mean", 5, "mean serial interval, days (gamma)")
	f.Float64Var(&sc.SerialSD, "serial-sd", 2.5, "standard deviation of the serial interval, days")
	f.IntVar(&sc.IndexCases, "index-cases", 10, "number of index (imported) cases")
	f.IntVar(&sc.IndexSpreadDays, "index-spread", 14, "index-case onsets spread over this many days after --start")
	f.StringVar(&start, "start", "2026-01-05", "onset date of the first index case")
	f.StringVar(&until, "until", "", "observation date: cases with onset after it are not in the list")
	f.IntVar(&sc.Generations, "generations", 0, "stop after this many generations")
	f.Uint64Var(&sc.Seed, "seed", 1, "random seed")
	f.StringVar(&jurisdictions, "jurisdictions", "Harrowmere", "comma-separated jurisdiction names")
	f.StringVar(&settings, "settings", defaultSettings, "comma-separated settings")
	f.StringVar(&ages, "age-groups", defaultAgeGroups, "comma-separated age groups")
	f.Float64Var(&sc.StayProbability, "stay", 0.9, "chance an infectee lives in its infector's jurisdiction")
	f.Float64Var(&sc.AssortativeAge, "age-assortativity", 0.5, "chance an infectee shares its infector's age group")
	f.Float64Var(&sc.MissingLinks, "missing-links", 0, "share of infector links blanked, as contact tracing misses them")
	f.IntVar(&sc.MaxCases, "max-cases", 2000000, "stop with an error if the outbreak grows past this many cases")
	f.BoolVar(&contact, "contact-columns", false, "add invented name, phone and address columns (to test that they never reach a report)")
	f.IntVar(&reportDelay, "report-delay", 2, "days from onset to report_date (0: leave report_date blank)")
	f.StringVarP(&out, "output", "o", "", "line-list file to write (- for stdout)")
	return c
}

func splitList(s string) []string {
	var out []string
	for _, p := range strings.Split(s, ",") {
		if p = strings.TrimSpace(p); p != "" {
			out = append(out, p)
		}
	}
	return out
}
