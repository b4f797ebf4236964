package main

import (
	"errors"
	"fmt"
	"time"

	"github.com/spf13/cobra"

	"github.com/caseweave/caseweave/pipeline/forest"
	"github.com/caseweave/caseweave/pipeline/linelist"
)

// inputFlags are the flags every command that reads a line list shares.
type inputFlags struct {
	config  string
	asOf    string
	maxRows int
}

func (f *inputFlags) register(c *cobra.Command) {
	c.Flags().StringVar(&f.config, "config", "", "jurisdiction config (YAML) mapping the export's headers and date format")
	c.Flags().StringVar(&f.asOf, "as-of", "", "analysis date YYYY-MM-DD (default today); onsets after it are flagged, recent cases censored")
	c.Flags().IntVar(&f.maxRows, "max-rows", 0, "refuse files with more data rows than this (0: no limit)")
}

// analysisDate parses --as-of, defaulting to today's date.
func (f *inputFlags) analysisDate() (linelist.Day, error) {
	if f.asOf == "" {
		return linelist.DayOf(time.Now()), nil
	}
	d, err := linelist.ParseISODay(f.asOf)
	if err != nil {
		return 0, usageErrorf("--as-of %q is not a date: write it as YYYY-MM-DD", f.asOf)
	}
	return d, nil
}

// loaded is a line list read, validated and linked into a forest.
type loaded struct {
	path   string
	asOf   linelist.Day
	config *linelist.Config
	list   *linelist.LineList
	forest *forest.Forest
}

// load reads and links the line list at path. Errors that make the file unusable exit 1.
func (f *inputFlags) load(path string) (*loaded, error) {
	asOf, err := f.analysisDate()
	if err != nil {
		return nil, err
	}
	if f.maxRows < 0 {
		return nil, usageErrorf("--max-rows must be 0 (no limit) or positive, got %d", f.maxRows)
	}
	var cfg *linelist.Config
	if f.config != "" {
		cfg, err = linelist.LoadConfig(f.config)
		if err != nil {
			return nil, withCode(exitInput, err)
		}
	}
	ll, err := linelist.ReadFile(path, linelist.Options{Config: cfg, AsOf: asOf, MaxRows: f.maxRows})
	if err != nil {
		var fe *linelist.FileError
		if errors.As(err, &fe) {
			return nil, withCode(exitInput, fmt.Errorf("%s: %w", path, fe))
		}
		return nil, withCode(exitInput, err)
	}
	return &loaded{path: path, asOf: asOf, config: cfg, list: ll, forest: forest.BuildIndexed(ll.Cases, ll.ByID)}, nil
}
