package main

import (
	"fmt"
	"io"
	"strings"

	"github.com/spf13/cobra"

	"github.com/caseweave/caseweave/pipeline/analysis"
)

func newCheckCmd(e env) *cobra.Command {
	var in inputFlags
	var strict bool
	c := &cobra.Command{
		Use:   "check [flags] LINELIST...",
		Short: "Read and validate a line list; report its problems and its transmission trees",
		Long: `check reads the line list, accounts for every row (used, or rejected with its line number
and the reason), rebuilds the transmission forest and prints a data-quality summary.
It exits 0 when the file can be analysed (row-level problems are listed, not fatal) and 1
when it cannot; with --strict any error-severity problem also exits 1.`,
		Args: lineListArgs,
		RunE: func(c *cobra.Command, args []string) error {
			ld, err := in.load(e, args)
			if err != nil {
				return err
			}
			s := analysis.CheckSummary(ld.path, ld.list, ld.forest, ld.asOf)
			printCheck(in.textOut(e), s)
			if err := in.writeJSONs(e, s, func(r *analysis.Released) any { return checkJSON(r.Summary()) }, checkJSON); err != nil {
				return err
			}
			if strict && s.HasErrors() {
				return withCode(exitInput, fmt.Errorf("--strict: the file has error-severity problems (listed above)"))
			}
			return nil
		},
	}
	in.register(c)
	c.Flags().BoolVar(&strict, "strict", false, "exit 1 when any row has an error-severity problem")
	return c
}

// checkJSON is the documented check --json object: input, problems and tree.
func checkJSON(s *analysis.Summary) any {
	return struct {
		Tool     analysis.Tool  `json:"tool"`
		AsOf     any            `json:"as_of"`
		Input    analysis.Input `json:"input"`
		Problems any            `json:"problems"`
		Counts   any            `json:"problem_counts"`
		Tree     analysis.Tree  `json:"tree"`
	}{s.Tool, s.AsOf, s.Input, s.Problems, s.ProblemCounts, s.Tree}
}

func printCheck(w io.Writer, s *analysis.Summary) {
	for _, f := range s.Input.Files {
		printInputFile(w, f, len(s.Input.Files) > 1)
	}
	fmt.Fprintf(w, "As of      %s\n\n", s.AsOf)
	fmt.Fprintf(w, "Rows read  %8d\n", s.Input.Rows)
	fmt.Fprintf(w, "Used       %8d\n", s.Input.Used)
	fmt.Fprintf(w, "Rejected   %8d\n\n", s.Input.Rejected)
	if len(s.ProblemCounts) == 0 {
		fmt.Fprintln(w, "Problems   none")
	} else {
		fmt.Fprintln(w, "Problems")
		fmt.Fprintf(w, "  %-22s %-8s %7s  %s\n", "code", "severity", "count", "first places")
		for _, p := range s.ProblemCounts {
			rows := p.FirstPlaces
			more := ""
			if p.Count > len(rows) && len(rows) > 0 {
				more = ", …"
			}
			fmt.Fprintf(w, "  %-22s %-8s %7d  %s%s\n", p.Code, p.Severity, p.Count, strings.Join(rows, ", "), more)
		}
		fmt.Fprintln(w, "  (--json lists every problem with its line, column and what to fix)")
	}
	t := s.Tree
	fmt.Fprintln(w, "\nTransmission forest")
	fmt.Fprintf(w, "  cases %d, linked to an infector %d (%s), imported %d\n", t.Cases, t.Linked, percent(t.Linked, t.Cases), t.Imported)
	fmt.Fprintf(w, "  trees %d, largest %d cases, deepest %d generations\n", t.Clusters, t.LargestCluster, t.MaxGeneration)
}

// printInputFile says how one file was read: its format, the sheet chosen and why, the
// header's line, and with several files its own row counts.
func printInputFile(w io.Writer, f analysis.InputFile, counts bool) {
	fmt.Fprintf(w, "Line list  %s\n", f.Path)
	fmt.Fprintf(w, "SHA-256    %s\n", f.SHA256)
	format := f.Format
	if f.Gzip {
		format += ", gzip-compressed"
	}
	if f.DateSystem != "" {
		format += ", " + f.DateSystem + " date system"
	}
	fmt.Fprintf(w, "Format     %s\n", format)
	if f.Note != "" {
		fmt.Fprintf(w, "Note       %s\n", f.Note)
	}
	if f.Sheet != "" {
		fmt.Fprintf(w, "Sheet      %s (%s)\n", f.Sheet, f.SheetReason)
		fmt.Fprintf(w, "Header     row %d\n", f.HeaderRow)
	} else {
		fmt.Fprintf(w, "Header     line %d\n", f.HeaderRow)
	}
	if counts {
		fmt.Fprintf(w, "Rows       %s read, %s used, %s rejected\n", countText(f.Rows), countText(f.Used), countText(f.Rejected))
	}
	fmt.Fprintln(w)
}

// countText prints a count a released view may withhold.
func countText(n *int) string {
	if n == nil {
		return "withheld"
	}
	return fmt.Sprint(*n)
}

func percent(a, b int) string {
	if b == 0 {
		return "–"
	}
	return fmt.Sprintf("%.1f%%", 100*float64(a)/float64(b))
}
