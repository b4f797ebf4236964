package main

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"
	"strconv"
	"strings"

	"github.com/spf13/cobra"

	"github.com/caseweave/caseweave/cmd/internal/history"
	"github.com/caseweave/caseweave/cmd/internal/output"
	"github.com/caseweave/caseweave/pipeline/analysis"
	"github.com/caseweave/caseweave/pipeline/linelist"
)

// historyFlags are the filters of history list and export.
type historyFlags struct {
	jurisdiction string
	from, to     string
}

func (f *historyFlags) register(c *cobra.Command) {
	c.Flags().StringVar(&f.jurisdiction, "jurisdiction", "", "only the runs archived under this jurisdiction")
	c.Flags().StringVar(&f.from, "from", "", "only the runs with an analysis date on or after this date (YYYY-MM-DD)")
	c.Flags().StringVar(&f.to, "to", "", "only the runs with an analysis date on or before this date (YYYY-MM-DD)")
}

// filter is the archive's filter of the flags; a date that is not YYYY-MM-DD is a usage error.
func (f *historyFlags) filter() (history.Filter, error) {
	h := history.Filter{Jurisdiction: f.jurisdiction}
	for _, d := range []struct {
		flag, v string
		dst     **linelist.Day
	}{{"--from", f.from, &h.From}, {"--to", f.to, &h.To}} {
		if d.v == "" {
			continue
		}
		day, err := linelist.ParseISODay(d.v)
		if err != nil {
			return h, usageErrorf("%s %q: %v", d.flag, d.v, err)
		}
		*d.dst = &day
	}
	if h.From != nil && h.To != nil && *h.To < *h.From {
		return h, usageErrorf("--to %s is before --from %s", f.to, f.from)
	}
	return h, nil
}

// openArchiveToRead opens an existing run archive; a missing or damaged file exits 1 and
// is left as it is.
func openArchiveToRead(path string) (*history.Archive, error) {
	if _, err := os.Stat(path); err != nil {
		if errors.Is(err, os.ErrNotExist) {
			return nil, withCode(exitInput, fmt.Errorf("run archive %s: no such file", path))
		}
		return nil, withCode(exitInput, err)
	}
	a, err := history.Open(path)
	if err != nil {
		return nil, withCode(exitInput, err)
	}
	return a, nil
}

// listRuns is the runs of the archive at path that the flags keep.
func (f *historyFlags) listRuns(path string) ([]history.Entry, error) {
	h, err := f.filter()
	if err != nil {
		return nil, err
	}
	a, err := openArchiveToRead(path)
	if err != nil {
		return nil, err
	}
	defer a.Close()
	runs, err := a.List(h)
	if err != nil {
		return nil, withCode(exitInput, err)
	}
	return runs, nil
}

func newHistoryCmd(e env) *cobra.Command {
	c := &cobra.Command{
		Use:   "history",
		Short: "Read a run archive (--history): list, show or export its runs",
		Long: `history reads a run archive written by report, estimate or backtest --history. It shows
only what the archive holds as each run's released summary — the view already released to
stakeholders — and never the case fingerprints the archive also keeps.`,
		Args: exactArgs(0, "a subcommand (list, show, export)"),
		RunE: func(c *cobra.Command, args []string) error {
			return usageErrorf("history needs a subcommand: caseweave history list|show|export ARCHIVE")
		},
	}
	var lf, ef historyFlags
	list := &cobra.Command{
		Use:   "list ARCHIVE",
		Short: "List the archived runs: analysis date, jurisdiction, version, input hash, R with its interval",
		Args:  exactArgs(1, "the archive file"),
		RunE: func(c *cobra.Command, args []string) error {
			runs, err := lf.listRuns(args[0])
			if err != nil {
				return err
			}
			return writeRunList(e.stdout, runs)
		},
	}
	lf.register(list)
	show := &cobra.Command{
		Use:   "show ARCHIVE RUN",
		Short: "Show one archived run's key estimates (RUN is the number history list prints)",
		Args:  exactArgs(2, "the archive file and a run number"),
		RunE: func(c *cobra.Command, args []string) error {
			id, err := strconv.ParseInt(args[1], 10, 64)
			if err != nil || id < 1 {
				return usageErrorf("run %q: want a run number from history list", args[1])
			}
			runs, err := (&historyFlags{}).listRuns(args[0])
			if err != nil {
				return err
			}
			for _, r := range runs {
				if r.ID == id {
					return writeRun(e.stdout, r)
				}
			}
			return withCode(exitInput, fmt.Errorf("run archive %s holds no run %d", args[0], id))
		},
	}
	var format, out string
	export := &cobra.Command{
		Use:   "export ARCHIVE",
		Short: "Export the archived runs as CSV (key estimates, one row a run) or JSON (each run's released summary)",
		Args:  exactArgs(1, "the archive file"),
		RunE: func(c *cobra.Command, args []string) error {
			if format != "csv" && format != "json" {
				return usageErrorf("--format %q: want csv or json", format)
			}
			runs, err := ef.listRuns(args[0])
			if err != nil {
				return err
			}
			var b bytes.Buffer
			if format == "csv" {
				err = writeRunsCSV(&b, runs)
			} else {
				err = writeRunsJSON(&b, runs)
			}
			if err != nil {
				return withCode(exitOutput, err)
			}
			if out == "" || out == "-" {
				_, err = e.stdout.Write(b.Bytes())
			} else {
				err = output.WriteFile(out, b.Bytes())
			}
			return withCode(exitOutput, err)
		},
	}
	ef.register(export)
	export.Flags().StringVar(&format, "format", "csv", "csv or json")
	export.Flags().StringVarP(&out, "output", "o", "", "file to write (default: standard output)")
	c.AddCommand(list, show, export)
	return c
}

// num is x in the shortest form that reads back exactly; empty when x is missing.
func num(x *float64) string {
	if x == nil {
		return ""
	}
	return strconv.FormatFloat(*x, 'g', -1, 64)
}

// spanText is s as "estimate (lower–upper)", "–" for a missing part.
func spanText(s analysis.Span) string {
	if s.Estimate == nil {
		return "–"
	}
	txt := func(x *float64) string {
		if x == nil {
			return "–"
		}
		return strconv.FormatFloat(*x, 'f', 2, 64)
	}
	return fmt.Sprintf("%s (%s to %s)", txt(s.Estimate), txt(s.Lower), txt(s.Upper))
}

func writeRunList(w io.Writer, runs []history.Entry) error {
	var b strings.Builder
	fmt.Fprintf(&b, "%-5s %-10s %-20s %-12s %-16s %s\n", "run", "date", "jurisdiction", "version", "input sha256", "R (interval)")
	for _, r := range runs {
		sha := r.InputSHA256
		if len(sha) > 16 {
			sha = sha[:16]
		}
		j := r.Jurisdiction
		if j == "" {
			j = "(none)"
		}
		fmt.Fprintf(&b, "%-5d %-10s %-20s %-12s %-16s %s\n", r.ID, r.AsOf, j, r.Version, sha, spanText(analysis.TrendOf(r.Summary).R))
	}
	_, err := io.WriteString(w, b.String())
	return err
}

func writeRun(w io.Writer, r history.Entry) error {
	t := analysis.TrendOf(r.Summary)
	var b strings.Builder
	fmt.Fprintf(&b, "run %d\nanalysis date  %s\njurisdiction   %s\nversion        %s\ninput sha256   %s\ncases          %d\n", r.ID, r.AsOf, r.Jurisdiction, r.Version, r.InputSHA256, t.Cases)
	fmt.Fprintf(&b, "R              %s\nk              %s\nrecent R       %s\nchains die out %s\n", spanText(t.R), spanText(t.K), spanText(t.RecentR), spanText(t.DieOut))
	if t.NextWeek != nil {
		fmt.Fprintf(&b, "next week      %s (median, 90%% interval)\n", spanText(*t.NextWeek))
	}
	_, err := io.WriteString(w, b.String())
	return err
}

// runsCSVHeader names the columns of history export --format csv.
var runsCSVHeader = []string{"run", "as_of", "jurisdiction", "version", "input_sha256", "cases",
	"R", "R_lower", "R_upper", "k", "k_lower", "k_upper", "recent_R", "recent_R_lower", "recent_R_upper",
	"die_out", "die_out_lower", "die_out_upper", "next_week_median", "next_week_p90_lower", "next_week_p90_upper"}

func writeRunsCSV(w io.Writer, runs []history.Entry) error {
	cw := csv.NewWriter(w)
	if err := cw.Write(runsCSVHeader); err != nil {
		return err
	}
	for _, r := range runs {
		t := analysis.TrendOf(r.Summary)
		row := []string{strconv.FormatInt(r.ID, 10), r.AsOf.String(), r.Jurisdiction, r.Version, r.InputSHA256, strconv.Itoa(t.Cases)}
		next := analysis.Span{}
		if t.NextWeek != nil {
			next = *t.NextWeek
		}
		for _, s := range []analysis.Span{t.R, t.K, t.RecentR, t.DieOut, next} {
			row = append(row, num(s.Estimate), num(s.Lower), num(s.Upper))
		}
		if err := cw.Write(row); err != nil {
			return err
		}
	}
	cw.Flush()
	return cw.Error()
}

// archivedRun is one run in history export --format json: its released summary as stored.
type archivedRun struct {
	Run          int64           `json:"run"`
	AsOf         linelist.Day    `json:"as_of"`
	Jurisdiction string          `json:"jurisdiction"`
	Version      string          `json:"version"`
	InputSHA256  string          `json:"input_sha256"`
	Summary      json.RawMessage `json:"summary"`
}

func writeRunsJSON(w io.Writer, runs []history.Entry) error {
	out := make([]archivedRun, len(runs))
	for i, r := range runs {
		out[i] = archivedRun{r.ID, r.AsOf, r.Jurisdiction, r.Version, r.InputSHA256, r.Released}
	}
	b, err := marshalJSON(out)
	if err != nil {
		return err
	}
	_, err = w.Write(b)
	return err
}
