package offspring

import (
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

type exposedRef struct {
	values []int
	shares []float64
	want   map[string]float64
}

// readExposedRef reads testdata/offspring/exposed_reference.csv, made by
// exposed_reference.R (R 4.2.2, MASS 7.3-58.2: glm.nb with offset log F, and profile bounds
// from dnbinom with optimize and uniroot).
func readExposedRef(t *testing.T) []exposedRef {
	t.Helper()
	var out []exposedRef
	for _, r := range readCSVComment(t, "exposed_reference.csv") {
		d, err := strconv.Atoi(r[0])
		if err != nil {
			t.Fatalf("dataset %q: %v", r[0], err)
		}
		for len(out) < d {
			out = append(out, exposedRef{want: map[string]float64{}})
		}
		e := &out[d-1]
		if r[1] == "case" {
			x, err1 := strconv.Atoi(r[2])
			f, err2 := strconv.ParseFloat(r[3], 64)
			if err1 != nil || err2 != nil {
				t.Fatalf("bad case row %v", r)
			}
			e.values, e.shares = append(e.values, x), append(e.shares, f)
			continue
		}
		v, err := strconv.ParseFloat(r[2], 64)
		if err != nil {
			t.Fatalf("bad row %v: %v", r, err)
		}
		e.want[r[1]] = v
	}
	if len(out) == 0 {
		t.Fatal("no reference datasets")
	}
	return out
}

// readCSVComment reads a comma-separated file whose rows may differ in length, skipping
// lines that start with #.
func readCSVComment(t *testing.T, name string) [][]string {
	t.Helper()
	b, err := os.ReadFile(filepath.Join(refDir, name))
	if err != nil {
		t.Fatal(err)
	}
	var rows [][]string
	for _, line := range strings.Split(strings.TrimSpace(string(b)), "\n") {
		if line != "" && !strings.HasPrefix(line, "#") {
			rows = append(rows, strings.Split(line, ","))
		}
	}
	return rows
}

func relClose(got, want, tol float64) bool {
	if math.IsInf(want, 1) {
		return math.IsInf(got, 1)
	}
	return math.Abs(got-want) <= tol*math.Abs(want)
}

// TestExposedAgainstMASS compares the truncation-aware fit and its profile intervals with R
// (MASS glm.nb with offset log F for the fit; dnbinom-based profile bounds) on three
// simulated datasets with shares F between 0.1 and 1.
func TestExposedAgainstMASS(t *testing.T) {
	for d, ref := range readExposedRef(t) {
		e, dropped, err := NewExposed(ref.values, ref.shares, DefaultShareFloor)
		if err != nil || dropped != 0 {
			t.Fatalf("dataset %d: NewExposed: %v (dropped %d)", d+1, err, dropped)
		}
		fit, err := FitExposed(e, NegBinFamily{})
		if err != nil {
			t.Fatalf("dataset %d: %v", d+1, err)
		}
		_, _, kk := e.info(fit.Params[ParamR], fit.Params[ParamK])
		checks := []struct {
			name      string
			got, want float64
			tol       float64
		}{
			{"R", fit.Params[ParamR], ref.want["R"], 1e-7},
			{"k", fit.Params[ParamK], ref.want["k"], 1e-6},
			{"loglik", fit.LogLik, ref.want["loglik"], 1e-10},
			// MASS's SE.theta is 1/√I_kk with μ held fixed (theta.ml), not the (R, k) inverse.
			{"se_k", sePos(kk), ref.want["se_k"], 1e-3}, // glm.nb evaluates it at its last IRLS μ
		}
		r, k, err := ProfileIntervals(e, 0.95)
		if err != nil {
			t.Fatalf("dataset %d: profile: %v", d+1, err)
		}
		checks = append(checks,
			struct {
				name      string
				got, want float64
				tol       float64
			}{"R_lo", r.Bounds[0], ref.want["R_lo"], 1e-5},
			struct {
				name      string
				got, want float64
				tol       float64
			}{"R_hi", r.Bounds[1], ref.want["R_hi"], 1e-5},
			struct {
				name      string
				got, want float64
				tol       float64
			}{"k_lo", k.Bounds[0], ref.want["k_lo"], 1e-5},
			struct {
				name      string
				got, want float64
				tol       float64
			}{"k_hi", k.Bounds[1], ref.want["k_hi"], 1e-5})
		for _, c := range checks {
			if !relClose(c.got, c.want, c.tol) {
				t.Errorf("dataset %d %s = %.12g, R gives %.12g (rel tol %g)", d+1, c.name, c.got, c.want, c.tol)
			}
		}
	}
}

// TestExposedFullyObservedIsNegBin: with every F = 1 the truncation-aware likelihood is the
// plain negative binomial, so the fits must agree with FitNegBin (and the Poisson and
// geometric fits with theirs) on the reference tables.
func TestExposedFullyObservedIsNegBin(t *testing.T) {
	for _, name := range []string{"mild", "overdispersed", "underdispersed"} {
		tab := readTable(t, name)
		for _, f := range Families() {
			want, err1 := f.Fit(tab)
			got, err2 := FitExposed(FullyObserved(tab), f)
			if err1 != nil || err2 != nil {
				t.Fatalf("%s %s: %v %v", name, f.Name(), err1, err2)
			}
			for i := range want.Params {
				if !relClose(got.Params[i], want.Params[i], 1e-8) {
					t.Errorf("%s %s param %d = %v, FitNegBin %v", name, f.Name(), i, got.Params[i], want.Params[i])
				}
			}
			if !relClose(got.LogLik, want.LogLik, 1e-11) || got.AIC != got.AIC {
				t.Errorf("%s %s loglik %v, want %v", name, f.Name(), got.LogLik, want.LogLik)
			}
		}
	}
}

func TestNewExposedRejectsAndDrops(t *testing.T) {
	if _, _, err := NewExposed([]int{1, -1}, []float64{1, 1}, 0.1); err == nil {
		t.Error("negative count accepted")
	}
	for _, f := range []float64{0, 1.5, math.NaN()} {
		if _, _, err := NewExposed([]int{1, 1}, []float64{1, f}, 0.1); err == nil {
			t.Errorf("share %v accepted", f)
		}
	}
	e, dropped, err := NewExposed([]int{0, 2, 2, 1, 0}, []float64{0.05, 0.5, 0.5, 1, 0.09}, 0.1)
	if err != nil || dropped != 2 || e.N() != 3 || len(e.Values) != 2 || e.Counts[1] != 2 {
		t.Errorf("got %+v dropped %d err %v; want 3 cases in 2 groups, 2 dropped", e, dropped, err)
	}
	if _, err := FitExposed(Exposed{Values: []int{1}, Shares: []float64{1}, Counts: []int{1}}, NegBinFamily{}); err == nil {
		t.Error("one case fitted")
	}
}

// TestProfilePoissonLimit: an underdispersed table has no finite k̂; the interval for k is
// then unbounded above with a finite lower bound, and R's interval is finite.
func TestProfilePoissonLimit(t *testing.T) {
	tab := readTable(t, "underdispersed")
	r, k, err := ProfileIntervals(FullyObserved(tab), 0.95)
	if err != nil {
		t.Fatal(err)
	}
	if !math.IsInf(k.Estimate, 1) || !math.IsInf(k.Bounds[1], 1) || !(k.Bounds[0] > 0) || math.IsInf(k.Bounds[0], 0) {
		t.Errorf("k interval %+v: want estimate and upper bound +Inf, finite lower bound", k)
	}
	if !(r.Bounds[0] < r.Estimate && r.Estimate < r.Bounds[1]) || math.IsInf(r.Bounds[1], 0) {
		t.Errorf("R interval %+v not finite around the estimate", r)
	}
}

// TestExposedBootstrapMatchesTable: with every share 1 the partly-observed bootstrap draws
// the same multinomial (or cluster) resamples as the table bootstrap with the same seed, so
// its replicates and jackknife must equal the table bootstrap's to fitting precision.
func TestExposedBootstrapMatchesTable(t *testing.T) {
	tab := readTable(t, "overdispersed")
	e := FullyObserved(tab)
	clusters := []FreqTable{{Values: []int{0, 1, 4}, Counts: []int{5, 2, 1}}, {Values: []int{0, 2}, Counts: []int{3, 2}},
		{Values: []int{0, 7}, Counts: []int{6, 1}}, {Values: []int{1, 3}, Counts: []int{2, 2}}}
	var ec []Exposed
	for _, c := range clusters {
		ec = append(ec, FullyObserved(c))
	}
	for _, pair := range [][2]Sample{{{Cases: tab}, {Exposed: &e}}, {{Clusters: clusters}, {ExposedClusters: ec}}} {
		opts := BootstrapOptions{Replicates: 50, Seed: 11, Workers: 2}
		want, err1 := Bootstrap(pair[0], opts)
		got, err2 := Bootstrap(pair[1], opts)
		if err1 != nil || err2 != nil {
			t.Fatal(err1, err2)
		}
		for b := range want.Replicates {
			for i := range want.Replicates[b] {
				if !relClose(got.Replicates[b][i], want.Replicates[b][i], 1e-7) {
					t.Fatalf("%s replicate %d param %d: %v, table bootstrap %v", want.Method, b, i, got.Replicates[b][i], want.Replicates[b][i])
				}
			}
		}
		if len(got.Jackknife) != len(want.Jackknife) || !relClose(got.Jackknife[0][ParamK], want.Jackknife[0][ParamK], 1e-7) {
			t.Errorf("%s jackknife differs", want.Method)
		}
	}
	if _, err := Bootstrap(Sample{Cases: tab, Exposed: &e}, BootstrapOptions{Replicates: 2}); err == nil {
		t.Error("a sample with two kinds of data was accepted")
	}
}

// TestExpectedCountsFullyObserved: with every share 1 the expected counts are n·P(X = x).
func TestExpectedCountsFullyObserved(t *testing.T) {
	tab := readTable(t, "mild")
	d := NegBin{R: 1.3, K: 0.7}
	got := ExpectedCounts(FullyObserved(tab), NegBinFamily{}, Params{1.3, 0.7}, 5)
	for x, v := range got {
		if want := float64(tab.N()) * d.PMF(x); !relClose(v, want, 1e-12) {
			t.Errorf("x=%d: %v, want %v", x, v, want)
		}
	}
	half := ExpectedCounts(Exposed{Values: []int{0}, Shares: []float64{0.5}, Counts: []int{2}}, GeometricFamily{}, Params{2}, 2)
	if g := (Geometric{R: 1}); !relClose(half[1], 2*g.PMF(1), 1e-12) {
		t.Errorf("geometric at share 0.5: %v, want %v", half[1], 2*g.PMF(1))
	}
}

// TestProfileIntervalsSmallRandom: on many tiny random tables (2 to 12 cases, counts up to
// 30, shares in [0.1, 1]) the fit and profile intervals never fail and each interval holds
// its estimate, a bound 0 or +Inf standing for "not reached".
func TestProfileIntervalsSmallRandom(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	for d := 0; d < 400; d++ {
		n := 2 + rng.IntN(11)
		xs, fs := make([]int, n), make([]float64, n)
		for i := range xs {
			if rng.IntN(3) > 0 {
				xs[i] = rng.IntN(31)
			}
			fs[i] = 0.1 + 0.9*rng.Float64()
		}
		e, _, err := NewExposed(xs, fs, DefaultShareFloor)
		if err != nil {
			t.Fatal(err)
		}
		r, k, err := ProfileIntervals(e, 0.95)
		if err != nil {
			t.Fatalf("dataset %d %v %v: %v", d, xs, fs, err)
		}
		for _, iv := range []ProfileInterval{r, k} {
			if math.IsNaN(iv.Bounds[0]) || math.IsNaN(iv.Bounds[1]) || !(iv.Bounds[0] <= iv.Estimate*(1+1e-9) && iv.Estimate <= iv.Bounds[1]*(1+1e-9)) {
				t.Fatalf("dataset %d %v %v: interval %+v does not hold its estimate", d, xs, fs, iv)
			}
		}
	}
}
