package offspring

import (
	"encoding/csv"
	"math"
	"os"
	"strconv"
	"strings"
	"testing"
)

// TestNegBinAgainstSciPy compares NegBin's PMF and log-PMF with scipy.stats.nbinom (SciPy
// 1.10.1; testdata/offspring/nbinom_reference.py, which names the versions in the CSV's first
// line) over R from 0.05 to 100, k from 1e-8 to 1e12 and counts to 1e5. Each row's mean is
// the R_eff SciPy actually evaluated (its p is a rounded double). The PMF is compared with
// SciPy's (Boost's pdf) where that is a normal double. The log-PMF is compared with the
// script's 40-digit decimal evaluation of the definition (logpmf_exact), which the script
// checked against SciPy's PMF; SciPy's own logpmf is compared only for k ≤ 100, because its
// difference of gammaln values loses about ε·log Γ(k) (1e-3 at k = 1e12). The tolerance
// is 1e-12 relative plus the rounding of the lgamma values a large count's PMF is a
// difference of: 1e-15·log Γ(x + k + 1), about 5 ulps (1e-9 at x = 1e5).
func TestNegBinAgainstSciPy(t *testing.T) {
	f, err := os.Open("../../testdata/offspring/nbinom_reference.csv")
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	cr := csv.NewReader(f)
	cr.Comment = '#'
	rows, err := cr.ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	num := func(s string) float64 {
		v, err := strconv.ParseFloat(strings.TrimSpace(s), 64)
		if err != nil {
			t.Fatal(err)
		}
		return v
	}
	checked := 0
	worstPMF, worstLog := 0.0, 0.0
	for _, row := range rows[1:] {
		R, k, x := num(row[1]), num(row[2]), int(num(row[3]))
		wantPMF, scipyLog, wantLog := num(row[4]), num(row[5]), num(row[6])
		d := NegBin{R: R, K: k}
		lg, _ := math.Lgamma(float64(x) + math.Min(k, 1e3) + 1)
		slack := 1e-15 * lg
		if wantPMF > 1e-300 {
			e := relErr(d.PMF(x), wantPMF)
			worstPMF = math.Max(worstPMF, e)
			if !(e <= 1e-12+slack) {
				t.Errorf("R=%s k=%g x=%d: PMF %.17g, SciPy %.17g (rel. error %.2g)", row[0], k, x, d.PMF(x), wantPMF, e)
			}
			checked++
		}
		got := d.LogPMF(x)
		e := math.Abs(got-wantLog) / math.Max(1, math.Abs(wantLog))
		worstLog = math.Max(worstLog, e)
		if !(e <= 1e-12+slack/math.Max(1, math.Abs(wantLog))) {
			t.Errorf("R=%s k=%g x=%d: log-PMF %.17g, exact %.17g (error %.2g)", row[0], k, x, got, wantLog, e)
		}
		checked++
		if k <= 100 && !math.IsInf(scipyLog, 0) {
			if e := math.Abs(got-scipyLog) / math.Max(1, math.Abs(scipyLog)); !(e <= 1e-12+slack/math.Max(1, math.Abs(scipyLog))) {
				t.Errorf("R=%s k=%g x=%d: log-PMF %.17g, SciPy %.17g (error %.2g)", row[0], k, x, got, scipyLog, e)
			}
			checked++
		}
	}
	t.Logf("%d values checked; worst relative PMF error %.2g, worst log-PMF error %.2g", checked, worstPMF, worstLog)
	if checked < 500 {
		t.Fatalf("only %d values checked", checked)
	}
}
