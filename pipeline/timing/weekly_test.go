package timing

import (
	"math"
	"testing"

	"github.com/caseweave/caseweave/pipeline/linelist"
)

func mustDay(t testing.TB, s string) linelist.Day {
	t.Helper()
	d, err := linelist.ParseISODay(s)
	if err != nil {
		t.Fatal(err)
	}
	return d
}

// TestWeeklyRFixture checks WeeklyR against a direct computation on a small fixture whose
// ISO weeks were assigned by hand from a calendar (2024-03-04 and 2024-12-30 are Mondays).
func TestWeeklyRFixture(t *testing.T) {
	type row struct {
		onset, week string
		z           float64
	}
	rows := []row{
		{"2024-03-04", "2024-03-04", 2}, // Monday
		{"2024-03-06", "2024-03-04", 0},
		{"2024-03-10", "2024-03-04", 5}, // Sunday: still the week of Monday 03-04
		{"2024-03-11", "2024-03-11", 1},
		{"2024-03-13", "2024-03-11", 0},
		{"2024-03-03", "2024-02-26", 3}, // Sunday before
		{"2024-03-19", "2024-03-18", 0},
		{"2024-12-31", "2024-12-30", 1}, // ISO week 2025-W01 starts in 2024
		{"2025-01-05", "2024-12-30", 4},
	}
	analysis := mustDay(t, "2025-01-08")
	const window = 5 // days 2025-01-04 .. are incomplete (2025-01-08 − t < 5)
	var onset []linelist.Day
	var z []float64
	type agg struct {
		n   int
		sum float64
	}
	want := map[string]*agg{}
	for _, r := range rows {
		onset = append(onset, mustDay(t, r.onset))
		z = append(z, r.z)
		if want[r.week] == nil {
			want[r.week] = &agg{}
		}
		want[r.week].n++
		want[r.week].sum += r.z
	}
	for _, k := range []float64{0.7, math.Inf(1)} {
		res, err := WeeklyR(onset, z, WeeklyOptions{AnalysisDate: analysis, Window: window, Dispersion: k})
		if err != nil {
			t.Fatal(err)
		}
		if len(res.Weeks) != len(want) {
			t.Fatalf("%d weeks, want %d", len(res.Weeks), len(want))
		}
		for i, w := range res.Weeks {
			if i > 0 && res.Weeks[i-1].WeekStart >= w.WeekStart {
				t.Error("weeks not in order")
			}
			a := want[w.WeekStart.String()]
			if a == nil {
				t.Fatalf("unexpected week %s", w.WeekStart)
			}
			if w.Cases != a.n || w.R != a.sum/float64(a.n) {
				t.Errorf("week %s: cases %d R %v, want %d %v", w.WeekStart, w.Cases, w.R, a.n, a.sum/float64(a.n))
			}
			lo, hi := MeanInterval(a.n, a.sum, k, 0.05)
			// MeanInterval is itself checked against SciPy in TestMeanIntervalMatchesSciPy;
			// the tolerance covers summation order.
			if relErr(w.Lower, lo) > 1e-12 || relErr(w.Upper, hi) > 1e-12 || !(lo <= w.R && w.R <= hi) {
				t.Errorf("week %s: interval [%v, %v], want [%v, %v] around %v", w.WeekStart, w.Lower, w.Upper, lo, hi, w.R)
			}
			// Only the week of 2024-12-30 reaches past 2025-01-03, the last complete day.
			if wantC := w.WeekStart.String() == "2024-12-30"; w.Censored != wantC {
				t.Errorf("week %s censored = %v, want %v", w.WeekStart, w.Censored, wantC)
			}
		}
	}
	res, err := WeeklyR(onset, z, WeeklyOptions{AnalysisDate: analysis, Window: window, Dispersion: 0.7})
	if err != nil {
		t.Fatal(err)
	}
	if w := res.Weeks[0]; w.WeekStart.String() != "2024-02-26" || w.Censored {
		t.Errorf("first week %+v, want the week of 2024-02-26, complete", w)
	}
}

// TestMeanIntervalMatchesSciPy: exact NB intervals against brentq inversions of
// scipy.stats.nbinom (SciPy 1.10.1), Poisson ones against chi-square quantiles
// (Garwood 1936), both in testdata/timing/reference.json.
func TestMeanIntervalMatchesSciPy(t *testing.T) {
	ref := loadReference(t)
	if len(ref.NBExact) == 0 || len(ref.PoissonExact) == 0 {
		t.Fatal("no interval reference values")
	}
	for _, c := range ref.NBExact {
		lo, hi := MeanInterval(c.N, float64(c.Total), c.K, 1-c.Level)
		if relErr(lo, c.Lower) > 1e-7 || relErr(hi, c.Upper) > 1e-7 {
			t.Errorf("NB n=%d s=%d k=%v: [%.10g, %.10g], SciPy [%.10g, %.10g]", c.N, c.Total, c.K, lo, hi, c.Lower, c.Upper)
		}
	}
	for _, c := range ref.PoissonExact {
		lo, hi := MeanInterval(c.N, float64(c.Total), math.Inf(1), 1-c.Level)
		if relErr(lo, c.Lower) > 1e-9 || relErr(hi, c.Upper) > 1e-9 {
			t.Errorf("Poisson n=%d s=%d: [%.10g, %.10g], SciPy [%.10g, %.10g]", c.N, c.Total, lo, hi, c.Lower, c.Upper)
		}
	}
	// Closed form for s = 0: P(S = 0) = (k/(k+R))^{nk} = α/2 ⇒ U = k((α/2)^{−1/(nk)} − 1).
	for _, n := range []int{1, 3, 10} {
		k := 0.5
		_, hi := MeanInterval(n, 0, k, 0.05)
		if want := k * (math.Pow(0.025, -1/(float64(n)*k)) - 1); relErr(hi, want) > 1e-10 {
			t.Errorf("n=%d s=0: upper %v, closed form %v", n, hi, want)
		}
	}
	// Few cases must not give tight intervals: widths shrink as n grows at fixed mean.
	prev := math.Inf(1)
	for _, n := range []int{1, 2, 5, 20, 100} {
		lo, hi := MeanInterval(n, float64(n), 0.5, 0.05)
		if !(hi-lo < prev) {
			t.Errorf("n=%d width %v not below %v", n, hi-lo, prev)
		}
		prev = hi - lo
	}
	for _, bad := range [][3]float64{{0, 1, 1}, {2, -1, 1}, {2, 1, 0}, {2, math.NaN(), 1}} {
		lo, hi := MeanInterval(int(bad[0]), bad[1], bad[2], 0.05)
		if !math.IsNaN(lo) || !math.IsNaN(hi) {
			t.Errorf("MeanInterval%v = %v, %v, want NaN", bad, lo, hi)
		}
	}
}

// TestDispersionMLE against scipy.optimize.minimize_scalar on scipy.stats.nbinom.logpmf
// (SciPy 1.10.1), and the Poisson limit when the variance does not exceed the mean
// (Levin & Reeds 1977).
func TestDispersionMLE(t *testing.T) {
	ref := loadReference(t)
	if got := DispersionMLE(ref.NBK.Counts); relErr(got, ref.NBK.K) > 1e-6 {
		t.Errorf("k = %.10g, SciPy %.10g", got, ref.NBK.K)
	}
	for _, c := range [][]float64{{1, 1, 1, 1}, {0, 1, 2, 1, 0, 2}, {0, 0, 0}, {3}} {
		if k := DispersionMLE(c); !math.IsInf(k, 1) {
			t.Errorf("DispersionMLE(%v) = %v, want +Inf", c, k)
		}
	}
	if k := DispersionMLE([]float64{1, -1, 2}); !math.IsNaN(k) {
		t.Errorf("negative count: %v", k)
	}
}

func TestWeeklyRInvalid(t *testing.T) {
	d := []linelist.Day{1, 2}
	for name, tc := range map[string]struct {
		z   []float64
		opt WeeklyOptions
	}{
		"length":   {[]float64{1}, WeeklyOptions{}},
		"negative": {[]float64{1, -1}, WeeklyOptions{}},
		"nan":      {[]float64{1, math.NaN()}, WeeklyOptions{}},
		"window":   {[]float64{1, 1}, WeeklyOptions{Window: -1}},
		"level":    {[]float64{1, 1}, WeeklyOptions{Level: 2}},
		"k":        {[]float64{1, 1}, WeeklyOptions{Dispersion: -1}},
	} {
		if _, err := WeeklyR(d, tc.z, tc.opt); err == nil {
			t.Errorf("%s: no error", name)
		}
	}
	res, err := WeeklyR(nil, nil, WeeklyOptions{})
	if err != nil || len(res.Weeks) != 0 {
		t.Errorf("empty input: %v, %v", res, err)
	}
}
