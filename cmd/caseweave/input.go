package main

import (
	"io"
	"strings"
	"time"

	"github.com/spf13/cobra"

	"github.com/caseweave/caseweave/pipeline/analysis"
	"github.com/caseweave/caseweave/pipeline/forest"
	"github.com/caseweave/caseweave/pipeline/linelist"
	"github.com/caseweave/caseweave/render"
)

// inputFlags are the flags every command that reads a line list shares.
type inputFlags struct {
	config       string
	asOf         string
	maxRows      int
	sheet        string
	jsonOut      string
	internalJSON string
}

func (f *inputFlags) register(c *cobra.Command) {
	c.Flags().StringVar(&f.config, "config", "", "jurisdiction config (YAML) mapping the export's headers and date format")
	c.Flags().StringVar(&f.jsonOut, "json", "", "write the summary as JSON to FILE (- for stdout): the released view, small counts withheld and identifiers replaced as in a report")
	c.Flags().StringVar(&f.internalJSON, "internal-json", "", "write the full, unsuppressed summary to FILE (- for stdout; with report --by, a folder of <slug>.json): it holds case-level data — identifiers, exact dates, small counts, problem messages quoting the rows — and must stay with the analyst")
	c.Flags().StringVar(&f.asOf, "as-of", "", "analysis date YYYY-MM-DD (default today); onsets after it are flagged, recent cases censored")
	c.Flags().IntVar(&f.maxRows, "max-rows", 0, "refuse input with more data rows than this, all files and formats together (0: no limit)")
	c.Flags().StringVar(&f.sheet, "sheet", "", "workbook sheet to read, by name or 1-based position (default: the only sheet, or the first whose header has the required columns)")
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
	path   string // the file read, or the files joined by ", "
	asOf   linelist.Day
	config *render.Config // the --config file, nil without one
	list   *linelist.LineList
	forest *forest.Forest
}

// load reads the line-list files at paths ("-": standard input) as one line list and links
// it. Errors that make the input unusable exit 1.
func (f *inputFlags) load(e env, paths []string) (*loaded, error) {
	asOf, err := f.analysisDate()
	if err != nil {
		return nil, err
	}
	if f.maxRows < 0 {
		return nil, usageErrorf("--max-rows must be 0 (no limit) or positive, got %d", f.maxRows)
	}
	var cfg *render.Config
	var in linelist.InputConfig
	if f.config != "" {
		c, err := render.LoadConfigFile(f.config)
		if err != nil {
			return nil, withCode(exitInput, err)
		}
		cfg, in = &c, c.Input
	}
	ll, err := linelist.ReadFiles(paths, linelist.Options{Input: in, AsOf: asOf, MaxRows: f.maxRows, Sheet: f.sheet, Stdin: e.stdin})
	if err != nil {
		return nil, withCode(exitInput, err) // a *linelist.FileError names the file itself
	}
	names := make([]string, len(ll.Sources))
	for i := range ll.Sources {
		names[i] = ll.Sources[i].Name()
	}
	return &loaded{path: strings.Join(names, ", "), asOf: asOf, config: cfg, list: ll, forest: forest.BuildIndexed(ll.Cases, ll.ByID)}, nil
}

// writeJSONs writes the --json (released) and --internal-json (full) documents of a command
// that read with these flags; view and full choose what of each summary is written. The
// release follows the --config file's threshold and pseudonym key.
func (f *inputFlags) writeJSONs(e env, s *analysis.Summary, view func(*analysis.Released) any, full func(*analysis.Summary) any) error {
	if f.jsonOut != "" {
		rel, err := analysis.Release(s, f.jsonPolicy())
		if err != nil {
			return withCode(exitInput, err)
		}
		if err := writeJSON(e, f.jsonOut, view(rel)); err != nil {
			return err
		}
	}
	if f.internalJSON != "" {
		return writeJSON(e, f.internalJSON, full(s))
	}
	return nil
}

// jsonPolicy is the disclosure policy of --json: the --config file's threshold and
// pseudonym key.
func (f *inputFlags) jsonPolicy() analysis.Policy {
	p := analysis.Policy{Pseudonyms: analysis.NewPseudonyms("")}
	if f.config != "" {
		if c, err := render.LoadConfigFile(f.config); err == nil {
			p = analysis.Policy{SuppressBelow: c.SuppressBelow, Pseudonyms: analysis.NewPseudonyms(c.PseudonymKey)}
		}
	}
	return p
}

// textOut is where a command prints its text summary: standard output, unless a JSON
// document goes there (--json - or --internal-json -), when the text goes to standard error
// so that standard output parses as JSON.
func (f *inputFlags) textOut(e env) io.Writer {
	if f.jsonOut == "-" || f.internalJSON == "-" {
		return e.stderr
	}
	return e.stdout
}
