package offspring

import (
	"fmt"
	"github.com/caseweave/caseweave/pipeline/internal/numeric"
	"math"
	"os"
	"runtime"
	"strings"
	"sync"
	"testing"
)

type coverageScenario struct {
	// RefPerc and RefBCa, when set, are R boot's coverage of R on the same scenario, the
	// reference for a scenario where nominal coverage is out of reach.
	RefPerc, RefBCa float64
	R, K            float64
	Cases           int
	Datasets        int
	B               int
}

type coverageCounts struct {
	percR, bcaR, percK, bcaK, bcaFallbackK, limitEst int
}

func covers(iv [2]float64, x float64) bool { return iv[0] <= x && x <= iv[1] }

// runCoverage simulates sc.Datasets offspring tables of sc.Cases cases each from the
// negative binomial (R, k) gamma–Poisson mixture, bootstraps each (case bootstrap, sc.B
// replicates) and counts how often the 95% intervals contain the true R and k
// (common practice: check calibration by simulation). Dataset d uses generator stream
// (seed, d) and bootstrap seed d, so the study is reproducible.
func runCoverage(t *testing.T, sc coverageScenario, seed uint64) coverageCounts {
	t.Helper()
	var mu sync.Mutex
	var cc coverageCounts
	var wg sync.WaitGroup
	sem := make(chan struct{}, runtime.GOMAXPROCS(0))
	var firstErr error
	for d := 0; d < sc.Datasets; d++ {
		wg.Add(1)
		sem <- struct{}{}
		go func(d int) {
			defer wg.Done()
			defer func() { <-sem }()
			tab, err := SimulateNegBin(numeric.StreamRand(seed, d), sc.R, sc.K, sc.Cases)
			var res *BootstrapResult
			if err == nil {
				res, err = Bootstrap(Sample{Cases: tab}, BootstrapOptions{Replicates: sc.B, Seed: uint64(d), Workers: 1})
			}
			var ivR, ivK Interval
			if err == nil {
				ivR, err = res.Interval(StatR, res.Estimate[ParamR], 0.95)
			}
			if err == nil {
				ivK, err = res.Interval(StatK, res.Estimate[ParamK], 0.95)
			}
			mu.Lock()
			defer mu.Unlock()
			if err != nil {
				if firstErr == nil {
					firstErr = fmt.Errorf("dataset %d: %w", d, err)
				}
				return
			}
			if covers(ivR.Percentile, sc.R) {
				cc.percR++
			}
			if covers(ivR.BCa, sc.R) {
				cc.bcaR++
			}
			if covers(ivK.Percentile, sc.K) {
				cc.percK++
			}
			if covers(ivK.BCa, sc.K) {
				cc.bcaK++
			}
			if ivK.BCaFallback {
				cc.bcaFallbackK++
			}
			if math.IsInf(res.Estimate[ParamK], 1) {
				cc.limitEst++
			}
		}(d)
	}
	wg.Wait()
	if firstErr != nil {
		t.Fatal(firstErr)
	}
	return cc
}

// TestCoverageSimulation is the calibration study. Coverage of R by both intervals must lie
// within 3 binomial standard deviations √(0.95·0.05/D) of 0.95 over D datasets (normal
// approximation to the binomial count of covering intervals). Where offspring counts are so
// skewed that the bootstrap itself under-covers — the R = 2.5, k = 0.1, 500-case scenario,
// where R's boot 1.3-28.1 covers 0.940 (percentile) and 0.942 (BCa) over 1000 datasets
// (testdata/offspring/coverage_reference.txt) — the reference is that library's coverage
// instead, within 3 SDs of the difference of two independent proportions,
// √(2·p(1−p)/D); VALIDATION.md reports both comparisons. Coverage of k is reported,
// not asserted: with a few hundred cases the k̂ sampling distribution is skewed and
// bootstrap intervals for it are known to under-cover (common practice to report).
// Short by default; CASEWEAVE_LONG=1 runs the study recorded in VALIDATION.md.
func TestCoverageSimulation(t *testing.T) {
	scenarios := []coverageScenario{{R: 2, K: 0.5, Cases: 300, Datasets: 200, B: 200}}
	if os.Getenv("CASEWEAVE_LONG") == "1" {
		scenarios = []coverageScenario{
			{R: 2.5, K: 0.1, Cases: 500, Datasets: 1000, B: 2000, RefPerc: 0.940, RefBCa: 0.942},
			{R: 2, K: 0.5, Cases: 300, Datasets: 1000, B: 2000},
			{R: 0.8, K: 0.3, Cases: 1000, Datasets: 1000, B: 2000},
			{R: 1.5, K: 2, Cases: 200, Datasets: 1000, B: 2000},
		}
	} else if testing.Short() {
		scenarios[0].Datasets, scenarios[0].B = 200, 100
	}
	var tab strings.Builder
	tab.WriteString("| R | k | cases | datasets | B | R perc | R BCa | k perc | k BCa | k BCa fallback | k̂ = ∞ |\n")
	tab.WriteString("|---|---|---|---|---|---|---|---|---|---|---|\n")
	for i, sc := range scenarios {
		cc := runCoverage(t, sc, uint64(1000+i))
		D := float64(sc.Datasets)
		f := func(c int) string { return fmt.Sprintf("%.3f", float64(c)/D) }
		fmt.Fprintf(&tab, "| %g | %g | %d | %d | %d | %s | %s | %s | %s | %d | %d |\n", sc.R, sc.K, sc.Cases,
			sc.Datasets, sc.B, f(cc.percR), f(cc.bcaR), f(cc.percK), f(cc.bcaK), cc.bcaFallbackK, cc.limitEst)
		for _, c := range []struct {
			name string
			n    int
			ref  float64
		}{{"percentile", cc.percR, sc.RefPerc}, {"BCa", cc.bcaR, sc.RefBCa}} {
			want, tol, what := 0.95, 3*math.Sqrt(0.95*0.05/D), "nominal"
			if c.ref > 0 {
				want, tol, what = c.ref, 3*math.Sqrt(2*c.ref*(1-c.ref)/D), "R boot's coverage"
			}
			if cov := float64(c.n) / D; math.Abs(cov-want) > tol {
				t.Errorf("R=%g k=%g n=%d: %s coverage of R %.3f outside %s %.3f ± %.3f", sc.R, sc.K, sc.Cases, c.name, cov, what, want, tol)
			}
		}
	}
	t.Log("95% interval coverage:\n" + tab.String())
}
