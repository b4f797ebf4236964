package main

import (
	"bytes"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/caseweave/caseweave/pipeline/analysis"
	"github.com/caseweave/caseweave/pipeline/linelist"
	"github.com/caseweave/caseweave/pipeline/simulate"
)

// demoLineList writes the demo's line list into dir and returns its path.
func demoLineList(tb testing.TB, dir string) string {
	tb.Helper()
	recs, err := simulate.Run(demoScenario())
	if err != nil {
		tb.Fatal(err)
	}
	var buf bytes.Buffer
	if err := simulate.WriteCSV(&buf, recs, demoWriteOptions()); err != nil {
		tb.Fatal(err)
	}
	path := filepath.Join(dir, "demo.csv")
	if err := os.WriteFile(path, buf.Bytes(), 0o600); err != nil {
		tb.Fatal(err)
	}
	return path
}

// The backtest command on the demo line list prints its table by weeks ahead and a verdict,
// writes the CSV of scored forecasts, and refuses a bad --every or --from.
func TestBacktestCommand(t *testing.T) {
	dir := t.TempDir()
	list := demoLineList(t, dir)
	out := filepath.Join(dir, "bt.csv")
	code, stdout, stderr := cli(t, "backtest", "--as-of", demoAsOf, "--bootstrap", "50", "--forecast-weeks", "2", "--csv", out, list)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	if !strings.Contains(stdout, "weeks ahead") || !strings.Contains(stdout, "the 90% ranges held the outcome") {
		t.Errorf("no table or verdict:\n%s", stdout)
	}
	b, err := os.ReadFile(out)
	if err != nil || !strings.HasPrefix(string(b), "as_of,weeks_ahead,week_start") || strings.Count(string(b), "\n") < 3 {
		t.Errorf("csv: %v\n%s", err, b)
	}
	for _, args := range [][]string{{"--every", "0"}, {"--from", "next week"}} {
		if code, _, _ := cli(t, append(append([]string{"backtest", "--as-of", demoAsOf}, args...), list)...); code != exitUsage {
			t.Errorf("%v: exit %d, want %d", args, code, exitUsage)
		}
	}
}

// BenchmarkBacktestDemo is the backtest of the demo line list, every 7 days, as
// `caseweave backtest` runs it (BENCHMARKS.md).
func BenchmarkBacktestDemo(b *testing.B) {
	path := demoLineList(b, b.TempDir())
	asOf, _ := linelist.ParseISODay(demoAsOf)
	ll, err := linelist.ReadFile(path, linelist.Options{AsOf: asOf})
	if err != nil {
		b.Fatal(err)
	}
	for b.Loop() {
		if _, err := analysis.RunBacktest(ll, analysis.Options{AsOf: asOf, Seed: 1}, analysis.BacktestOptions{}); err != nil {
			b.Fatal(err)
		}
	}
}
