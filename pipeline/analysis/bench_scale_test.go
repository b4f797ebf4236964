package analysis_test

import (
	"bufio"
	"os"
	"path/filepath"
	"runtime"
	"testing"

	"github.com/caseweave/caseweave/pipeline/analysis"
	"github.com/caseweave/caseweave/pipeline/branching"
	"github.com/caseweave/caseweave/pipeline/forest"
	"github.com/caseweave/caseweave/pipeline/linelist"
	"github.com/caseweave/caseweave/pipeline/simulate"
	"github.com/caseweave/caseweave/render"
)

// scaleLineList returns the path of the ~1,000,000-row line list behind the scale targets of
// BENCHMARKS.md: $CASEWEAVE_BENCH_LINELIST when set, else the same scenario as
//
//	caseweave simulate --R 0.99 --k 0.5 --index-cases 19000 --index-spread 200 \
//	  --until 2027-06-30 --jurisdictions a,b,c,d,e --max-cases 3000000
//
// simulated into a temporary directory (1,001,491 rows, 57 MB; a few seconds).
func scaleLineList(b *testing.B) string {
	b.Helper()
	if p := os.Getenv("CASEWEAVE_BENCH_LINELIST"); p != "" {
		return p
	}
	until := linelist.Day(20999) // 2027-06-30
	sc := simulate.Scenario{
		R: 0.99, K: 0.5, SerialMean: 5, SerialSD: 2.5, IndexCases: 19000, IndexSpreadDays: 200,
		Start: 20458, Until: &until, Jurisdictions: []string{"a", "b", "c", "d", "e"},
		Settings:        []string{"household", "workplace", "school", "care home", "community", "event"},
		AgeGroups:       []string{"0-4", "5-17", "18-39", "40-64", "65+"},
		StayProbability: 0.9, AssortativeAge: 0.5, MaxCases: 3_000_000, Seed: 1,
	}
	recs, err := simulate.Run(sc)
	if err != nil {
		b.Fatal(err)
	}
	path := filepath.Join(b.TempDir(), "big.csv")
	f, err := os.Create(path)
	if err != nil {
		b.Fatal(err)
	}
	w := bufio.NewWriter(f)
	if err := simulate.WriteCSV(w, recs, simulate.WriteOptions{ReportDelay: 2}); err != nil {
		b.Fatal(err)
	}
	if err := w.Flush(); err != nil {
		b.Fatal(err)
	}
	if err := f.Close(); err != nil {
		b.Fatal(err)
	}
	return path
}

// lastOnset is the analysis date the report benchmarks use: the latest onset in the file.
func lastOnset(ll *linelist.LineList) linelist.Day {
	var d linelist.Day
	for i := range ll.Cases {
		d = max(d, ll.Cases[i].Onset)
	}
	return d
}

// BenchmarkIngestForest1M is the ingest target of BENCHMARKS.md: linelist.ReadFile + forest.Build on the
// 1M-row file, against the floor of cmd/floor. It reports ns/row and the heap the result
// keeps per case (HeapAlloc after a GC with the line list and forest alive, less the heap
// before the read).
func BenchmarkIngestForest1M(b *testing.B) {
	path := scaleLineList(b)
	var ll *linelist.LineList
	var f *forest.Forest
	var held float64
	for b.Loop() {
		b.StopTimer() // the collection of the previous iteration's result is not timed
		ll, f = nil, nil
		runtime.GC()
		var before, after runtime.MemStats
		runtime.ReadMemStats(&before)
		b.StartTimer()
		var err error
		ll, err = linelist.ReadFile(path, linelist.Options{})
		if err != nil {
			b.Fatal(err)
		}
		f = forest.BuildIndexed(ll.Cases, ll.ByID) // as the command does: the reader's sorted index
		b.StopTimer()
		runtime.GC()
		runtime.ReadMemStats(&after)
		held = float64(int64(after.HeapAlloc)-int64(before.HeapAlloc)) / float64(len(ll.Cases))
		runtime.KeepAlive(ll)
		runtime.KeepAlive(f)
		b.StartTimer()
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(ll.Rows), "ns/row")
	b.ReportMetric(held, "heapB/case")
	b.ReportMetric(float64(ll.Rows), "rows")
}

// BenchmarkRunRender1M times what `caseweave report` does after the read: analysis.Run with
// the command's defaults (2000 case-bootstrap replicates, seed 1, analysis date the last
// onset), pseudonymisation and render.Render of the default template.
func BenchmarkRunRender1M(b *testing.B) {
	ll, err := linelist.ReadFile(scaleLineList(b), linelist.Options{})
	if err != nil {
		b.Fatal(err)
	}
	f := forest.Build(ll.Cases)
	opts := analysis.Options{AsOf: lastOnset(ll) + 1, Seed: 1}
	var size int
	for b.Loop() {
		s, err := analysis.Run("big.csv", ll, f, opts)
		if err != nil {
			b.Fatal(err)
		}
		rel, err := analysis.Release(s, analysis.Policy{Pseudonyms: analysis.NewPseudonyms("")})
		if err != nil {
			b.Fatal(err)
		}
		html, err := render.Render(rel, render.Options{})
		if err != nil {
			b.Fatal(err)
		}
		size = len(html)
	}
	b.ReportMetric(float64(size), "html_bytes")
}

// BenchmarkChainSizeFit1M is the stage that dominates the 1M-case report (see BENCHMARKS.md):
// the chain-size fit over the file's clusters, censored as analysis.Run censors them (the
// serial interval's 95th percentile, 10 days here, before the day after the last onset),
// and 8 of the report's 500 cluster-bootstrap replicates with the workers value the report
// passes (0).
func BenchmarkChainSizeFit1M(b *testing.B) {
	ll, err := linelist.ReadFile(scaleLineList(b), linelist.Options{})
	if err != nil {
		b.Fatal(err)
	}
	f := forest.Build(ll.Cases)
	asOf := lastOnset(ll) + 1
	var obs []branching.ChainObservation
	censored := 0
	for _, c := range f.Clusters {
		o := branching.ChainObservation{Size: c.Size, Censored: int(asOf-c.LastOnset) < 10}
		if o.Censored {
			censored++
		}
		obs = append(obs, o)
	}
	b.Run("fit", func(b *testing.B) {
		for b.Loop() {
			if _, err := branching.FitChainSizes(obs); err != nil {
				b.Fatal(err)
			}
		}
		b.ReportMetric(float64(len(obs)), "clusters")
		b.ReportMetric(float64(censored), "censored")
	})
	b.Run("bootstrap8", func(b *testing.B) {
		for b.Loop() {
			if _, err := branching.BootstrapChainFit(obs, 8, 0.95, 4, 0); err != nil {
				b.Fatal(err)
			}
		}
	})
}
