package main

import (
	"strings"

	"github.com/spf13/cobra"

	"github.com/caseweave/caseweave/cmd/internal/history"
	"github.com/caseweave/caseweave/pipeline/analysis"
	"github.com/caseweave/caseweave/pipeline/linelist"
	"github.com/caseweave/caseweave/render"
)

func (f *estimateFlags) registerHistory(c *cobra.Command) {
	c.Flags().StringVar(&f.history, "history", "", "run archive (SQLite) to compare with and record this run into (default: the config's history:); it holds case-level data and stays with the analyst")
}

// openHistory opens the run archive of --history, or of the config's history: key; nil
// when neither names one. A file that is not a whole caseweave archive exits 1.
func (f *estimateFlags) openHistory(cfg *render.Config) (*history.Archive, error) {
	path := f.history
	if path == "" && cfg != nil {
		path = cfg.History
	}
	if path == "" {
		return nil, nil
	}
	a, err := history.Open(path)
	if err != nil {
		return nil, withCode(exitInput, err)
	}
	return a, nil
}

// archiveKey is the name a run is archived under: the config's jurisdiction, or with --by
// the value (prefixed by the column and the jurisdiction unless the column is the
// jurisdiction), so that each report of a batch is compared with its own earlier runs.
func archiveKey(rc *render.Config, sc *scoped, by string) string {
	j := ""
	if rc != nil {
		j = rc.Jurisdiction
	}
	switch {
	case sc == nil:
		return j
	case by == linelist.ColJurisdiction:
		return sc.value
	default:
		return j + "|" + by + "=" + sc.value
	}
}

// annotate fills s's comparison with the archive's earlier runs (nothing without an
// archive); sel picks s's cases from the line list.
func annotate(a *history.Archive, s *analysis.Summary, key string, ld *loaded, sel func(*linelist.Case) bool) error {
	if a == nil {
		return nil
	}
	if err := a.Annotate(s, key, ld.list.Cases, sel); err != nil {
		return withCode(exitInput, err)
	}
	return nil
}

// archiveRun is what the archive keeps of one run: rel and relJSON are its released view
// as written.
func archiveRun(key string, s *analysis.Summary, rel *analysis.Released, relJSON []byte, ld *loaded, sel func(*linelist.Case) bool) history.Run {
	shas := make([]string, len(s.Input.Files))
	for i, f := range s.Input.Files {
		shas[i] = f.SHA256
	}
	return history.Run{
		Jurisdiction: key, AsOf: s.AsOf, Version: s.Tool.Version, InputSHA256: strings.Join(shas, ","),
		Released: relJSON, Summary: rel.Summary(), Cases: ld.list.Cases, Select: sel,
	}
}

// record stores the runs of one invocation, after every output was written; a failure is
// an output error (exit 4) and leaves the archive as it was.
func record(a *history.Archive, runs []history.Run) error {
	if a == nil || len(runs) == 0 {
		return nil
	}
	return withCode(exitOutput, a.Record(runs))
}

// recordEstimate records an estimate run with the release of --json.
func (f *estimateFlags) recordEstimate(a *history.Archive, s *analysis.Summary, ld *loaded) error {
	if a == nil {
		return nil
	}
	rel, err := analysis.Release(s, f.jsonPolicy())
	if err != nil {
		return withCode(exitInput, err)
	}
	js, err := marshalJSON(rel.Summary())
	if err != nil {
		return withCode(exitOutput, err)
	}
	return record(a, []history.Run{archiveRun(archiveKey(ld.config, nil, ""), s, rel, js, ld, nil)})
}

// archiveRuns are the pages' runs to record.
func archiveRuns(pages []page) []history.Run {
	var runs []history.Run
	for _, p := range pages {
		if p.hist != nil {
			runs = append(runs, *p.hist)
		}
	}
	return runs
}
