package offspring

import (
	"fmt"
	"math"
	"slices"
	"sort"
	"testing"
)

// endpointSD estimates the Monte-Carlo standard deviation of a bootstrap interval endpoint,
// the α'-quantile of B replicates, from the replicates themselves (sorted t).
//
// Reasoning. The endpoint is (close to) the order statistic of rank r = Bα'. The rank of the
// true α'-quantile among B draws is Binomial(B, α'), SD √(Bα'(1−α')), so ±1 SD of the
// endpoint is spanned by the order statistics of ranks r ± d, d = √(Bα'(1−α'))
// (distribution-free order-statistic interval for a quantile; David & Nagaraja 2003, Order
// Statistics, §7.1). For BCa, α' itself is random through ẑ0 = Φ⁻¹(p̂), p̂ a proportion of B:
// SD(ẑ0) ≈ √(p(1−p)/B)/φ(z0) (delta method), and dα'/dz0 = φ(z0 + w/(1−aw))·(1 + 1/(1−aw)²),
// w = z0 + z_α, which adds (B·dα'/dz0·SD(ẑ0))² to d². The acceleration a is deterministic
// (jackknife) and checked separately. The SD is half the spacing of ranks r ± d.
func endpointSD(t []float64, alpha, z0, a float64, bca bool) float64 {
	B := float64(len(t))
	za := stdNormal.Quantile(alpha)
	adj := alpha
	d2 := 0.0
	if bca {
		w := z0 + za
		x := z0 + w/(1-a*w)
		adj = stdNormal.CDF(x)
		p := stdNormal.CDF(z0)
		sdZ0 := math.Sqrt(p*(1-p)/B) / stdNormal.Prob(z0)
		deriv := stdNormal.Prob(x) * (1 + 1/((1-a*w)*(1-a*w)))
		d2 = (B * deriv * sdZ0) * (B * deriv * sdZ0)
	}
	d := math.Sqrt(B*adj*(1-adj) + d2)
	r := B * adj
	lo := int(math.Max(0, math.Floor(r-d)))
	hi := int(math.Min(B-1, math.Ceil(r+d)))
	return (t[hi] - t[lo]) / 2
}

// TestBootstrapAgainstBoot compares percentile and BCa intervals with R's boot 1.3-28.1
// (boot + boot.ci, types "perc" and "bca", B = 10000; testdata/offspring/make_reference.R).
// boot.ci is given the influence values L of the leave-one-out jackknife centred at the mean
// of the leave-one-out estimates, a = ΣL³ / (6 (ΣL²)^{3/2}) [Efron 1987, eq. 6.6], which the
// script computes in R from the estimator itself (jack_*_acceleration). For the mean that is
// also what boot's own empinf(type = "jack") gives (it centres at the full-sample estimate,
// the same point for the mean), so R's acceleration is checked against boot's value as well
// (jack_R_acceleration_boot_empinf); for k the two centrings differ and only the script's
// jackknife is the reference. Each run has its own random numbers, so endpoints may differ
// by Monte-Carlo error: we allow 4 SDs of the difference of two independent endpoints,
// √2·endpointSD, plus one lattice step 1/n for the mean (its bootstrap distribution lives on
// multiples of 1/n). The acceleration a is a deterministic function of the data and must
// match to 1e-5 relative.
func TestBootstrapAgainstBoot(t *testing.T) {
	r := readReference(t)
	type job struct {
		ds, q string
		stat  func(Params) float64
	}
	jobs := []job{
		{"overdispersed", "R", StatR}, {"overdispersed", "k", StatK},
		{"mild", "R", StatR}, {"mild", "k", StatK},
		{"underdispersed", "R", StatR},
	}
	results := map[string]*BootstrapResult{}
	for _, j := range jobs {
		t.Run(j.ds+"/"+j.q, func(t *testing.T) {
			tab := readTable(t, j.ds)
			res := results[j.ds]
			if res == nil {
				var err error
				res, err = Bootstrap(Sample{Cases: tab}, BootstrapOptions{Replicates: int(ref(t, r, j.ds, "boot_B")), Seed: 2024})
				if err != nil {
					t.Fatal(err)
				}
				results[j.ds] = res
			}
			if ref(t, r, j.ds, "boot_"+j.q+"_infinite") != 0 {
				t.Skip("R's replicates include infinite k; boot drops them, so the intervals are not comparable")
			}
			if res.Unbounded > 0 && j.q == "k" {
				t.Fatalf("%d Poisson-limit replicates where R had none", res.Unbounded)
			}
			iv, err := res.Interval(j.stat, j.stat(res.Estimate), 0.95)
			if err != nil {
				t.Fatal(err)
			}
			if iv.BCaFallback {
				t.Fatalf("unexpected BCa fallback: %s", iv.Note)
			}
			if wa := ref(t, r, j.ds, "jack_"+j.q+"_acceleration"); relErr(iv.Acceleration, wa) > 1e-5 {
				t.Errorf("acceleration %.10g, the leave-one-out jackknife in R (Efron 1987, eq. 6.6) gives %.10g", iv.Acceleration, wa)
			}
			if j.q == "R" {
				if wa := ref(t, r, j.ds, "jack_R_acceleration_boot_empinf"); relErr(iv.Acceleration, wa) > 1e-5 {
					t.Errorf("acceleration of the mean %.10g, boot's empinf(type = \"jack\") gives %.10g", iv.Acceleration, wa)
				}
			}
			ts := make([]float64, len(res.Replicates))
			for i, p := range res.Replicates {
				ts[i] = j.stat(p)
			}
			sort.Float64s(ts)
			lattice := 0.0
			if j.q == "R" {
				lattice = 1 / float64(tab.N())
			}
			for i, end := range []struct {
				kind  string
				got   float64
				want  string
				alpha float64
				bca   bool
			}{
				{"percentile lower", iv.Percentile[0], "perc_lo", 0.025, false},
				{"percentile upper", iv.Percentile[1], "perc_hi", 0.975, false},
				{"BCa lower", iv.BCa[0], "bca_lo", 0.025, true},
				{"BCa upper", iv.BCa[1], "bca_hi", 0.975, true},
			} {
				_ = i
				want := ref(t, r, j.ds, "boot_"+j.q+"_"+end.want)
				sd := endpointSD(ts, end.alpha, iv.Bias, iv.Acceleration, end.bca)
				tol := 4*math.Sqrt2*sd + lattice
				if math.Abs(end.got-want) > tol {
					t.Errorf("%s: %.6g vs boot %.6g (|diff| %.3g > tolerance %.3g)", end.kind, end.got, want, math.Abs(end.got-want), tol)
				}
				t.Logf("%s: %.6g vs boot %.6g (tolerance %.3g)", end.kind, end.got, want, tol)
			}
			// z0 is itself Monte-Carlo: SD ≈ √(p(1−p)/B)/φ(z0) each; allow 4 SDs of the difference.
			wz := ref(t, r, j.ds, "boot_"+j.q+"_z0")
			p := stdNormal.CDF(wz)
			sdz := math.Sqrt(p*(1-p)/float64(len(ts))) / stdNormal.Prob(wz)
			if math.Abs(iv.Bias-wz) > 4*math.Sqrt2*sdz {
				t.Errorf("z0 %.4g vs boot %.4g (SD %.3g)", iv.Bias, wz, sdz)
			}
		})
	}
}

// TestOrderQuantile checks the interpolated order statistic against boot 1.3-28.1's
// norm.inter on a fixed vector (make_reference.R).
func TestOrderQuantile(t *testing.T) {
	r := readReference(t)
	tq := []float64{3, 1, 4, 1, 5, 9, 2, 6, 5, 3, 5, 8, 9, 7, 9, 3, 2, 3, 8, 4}
	sort.Float64s(tq)
	for _, a := range []float64{0.01, 0.025, 0.1, 0.33, 0.5, 0.9, 0.975, 0.99} {
		want := ref(t, r, "norm_inter", fmt.Sprintf("%.3f", a))
		if got := orderQuantile(tq, a); math.Abs(got-want) > 1e-12 {
			t.Errorf("alpha %g: %v, norm.inter gives %v", a, got, want)
		}
	}
}

// TestBootstrapReproducible: the replicates depend on the seed only, not on the worker count.
func TestBootstrapReproducible(t *testing.T) {
	tab := readTable(t, "overdispersed")
	clusters := []FreqTable{Tabulate([]int{0, 0, 3}), Tabulate([]int{1, 2}), Tabulate([]int{0}), Tabulate([]int{7, 0, 0, 1})}
	for _, s := range []Sample{{Cases: tab}, {Clusters: clusters}} {
		var first *BootstrapResult
		for _, w := range []int{1, 2, 5} {
			res, err := Bootstrap(s, BootstrapOptions{Replicates: 300, Seed: 42, Workers: w})
			if err != nil {
				t.Fatal(err)
			}
			if first == nil {
				first = res
				continue
			}
			if !slices.EqualFunc(first.Replicates, res.Replicates, sameParams) {
				t.Errorf("%s bootstrap: workers=%d gives other replicates than workers=1", res.Method, w)
			}
		}
		other, _ := Bootstrap(s, BootstrapOptions{Replicates: 300, Seed: 43, Workers: 2})
		if slices.EqualFunc(first.Replicates, other.Replicates, sameParams) {
			t.Errorf("%s bootstrap: seeds 42 and 43 give the same replicates", first.Method)
		}
	}
}

func sameParams(a, b Params) bool {
	return slices.EqualFunc(a, b, func(x, y float64) bool { return x == y || math.IsNaN(x) && math.IsNaN(y) })
}

// TestBootstrapProgress: the callback sees increasing counts ending at the total.
func TestBootstrapProgress(t *testing.T) {
	var calls []int
	_, err := Bootstrap(Sample{Cases: readTable(t, "mild")}, BootstrapOptions{Replicates: 1000, Seed: 1, Workers: 3,
		Progress: func(done, total int) {
			if total != 1000 {
				t.Errorf("total %d", total)
			}
			calls = append(calls, done)
		}})
	if err != nil {
		t.Fatal(err)
	}
	if len(calls) == 0 || calls[len(calls)-1] != 1000 || !slices.IsSorted(calls) {
		t.Errorf("progress calls %v", calls)
	}
}

// TestBootstrapVarianceOfMean: the bootstrap variance of the mean is σ̂²/n with σ̂² the
// divisor-n variance (Efron & Tibshirani 1993, §5.2, eq. 5.11), for the case bootstrap and
// for the cluster bootstrap of singleton clusters (then the same resampling scheme). The
// replicate variance of B draws has relative SD √((κ − 1)/B), κ the kurtosis of R*; for a
// near-normal mean κ ≈ 3, and we allow 5 such SDs.
func TestBootstrapVarianceOfMean(t *testing.T) {
	tab := readTable(t, "overdispersed")
	n := float64(tab.N())
	m := tab.Mean()
	v := tab.Variance() * (n - 1) / n
	want := v / n
	var singles []FreqTable
	for i, x := range tab.Values {
		for range tab.Counts[i] {
			singles = append(singles, FreqTable{Values: []int{x}, Counts: []int{1}})
		}
	}
	B := 4000
	for _, s := range []Sample{{Cases: tab}, {Clusters: singles}} {
		res, err := Bootstrap(s, BootstrapOptions{Replicates: B, Seed: 7})
		if err != nil {
			t.Fatal(err)
		}
		var s1, s2 float64
		for _, p := range res.Replicates {
			s1 += p[ParamR]
			s2 += (p[ParamR] - m) * (p[ParamR] - m)
		}
		got := s2 / float64(B)
		if math.Abs(got-want) > 5*math.Sqrt(2.0/float64(B))*want {
			t.Errorf("%s bootstrap: Var*(R*) = %.5g, want σ̂²/n = %.5g", res.Method, got, want)
		}
		if res.Estimate[ParamR] != m {
			t.Errorf("%s bootstrap: estimate %g, want the mean %g", res.Method, res.Estimate[ParamR], m)
		}
	}
}

// TestClusterJackknife: leave-one-cluster-out values equal direct fits of the remaining
// clusters (definition of the grouped jackknife; Davison & Hinkley 1997, §3.8).
func TestClusterJackknife(t *testing.T) {
	clusters := []FreqTable{Tabulate([]int{0, 0, 5, 1}), Tabulate([]int{2, 0}), Tabulate([]int{0, 0, 0, 9}), Tabulate([]int{3, 1, 1, 0, 0})}
	res, err := Bootstrap(Sample{Clusters: clusters}, BootstrapOptions{Replicates: 10, Seed: 1})
	if err != nil {
		t.Fatal(err)
	}
	for c := range clusters {
		m := map[int]int{}
		for o, cl := range clusters {
			if o == c {
				continue
			}
			for i, v := range cl.Values {
				m[v] += cl.Counts[i]
			}
		}
		tab := FromMap(m)
		want := NegBinFamily{}.FitCounts(tab.Values, tab.Counts)
		if !sameParams(res.Jackknife[c], want) && relErr(res.Jackknife[c][ParamK], want[ParamK]) > 1e-12 {
			t.Errorf("leave out cluster %d: %+v, direct fit %+v", c, res.Jackknife[c], want)
		}
	}
	if res.Units != len(clusters) {
		t.Errorf("units %d", res.Units)
	}
}

// TestIntervalPoissonLimit: with variance ≤ mean most k replicates are +Inf; the percentile
// upper bound is then unbounded, BCa falls back and says so, and JSON writes null.
func TestIntervalPoissonLimit(t *testing.T) {
	res, err := Bootstrap(Sample{Cases: readTable(t, "underdispersed")}, BootstrapOptions{Replicates: 500, Seed: 3})
	if err != nil {
		t.Fatal(err)
	}
	if !math.IsInf(res.Estimate[ParamK], 1) || res.Unbounded == 0 {
		t.Fatalf("estimate %+v, %d Poisson-limit replicates", res.Estimate, res.Unbounded)
	}
	iv, err := res.Interval(StatK, res.Estimate[ParamK], 0.95)
	if err != nil {
		t.Fatal(err)
	}
	if !math.IsInf(iv.Percentile[1], 1) || !iv.BCaFallback || iv.Note == "" || iv.BCa != iv.Percentile {
		t.Errorf("interval %+v", iv)
	}
}

// TestIntervalFallbackJackknife: a finite estimate with one infinite leave-one-out value makes
// the acceleration undefined; BCa must fall back and flag it.
func TestIntervalFallbackJackknife(t *testing.T) {
	// {0,0,3}: s²_n = 2 > 1 = mean; leaving out the 3 gives all zeros (Poisson limit).
	res, err := Bootstrap(Sample{Cases: FreqTable{Values: []int{0, 3}, Counts: []int{2, 1}}}, BootstrapOptions{Replicates: 200, Seed: 1})
	if err != nil {
		t.Fatal(err)
	}
	iv, err := res.Interval(StatK, res.Estimate[ParamK], 0.9)
	if err != nil {
		t.Fatal(err)
	}
	if math.IsInf(res.Estimate[ParamK], 0) || !iv.BCaFallback {
		t.Errorf("estimate %+v interval %+v", res.Estimate, iv)
	}
}

// TestBootstrapErrors: bad input is an error, not a panic.
func TestBootstrapErrors(t *testing.T) {
	good := FreqTable{Values: []int{0, 1}, Counts: []int{3, 3}}
	cases := []struct {
		name string
		s    Sample
		o    BootstrapOptions
	}{
		{"no replicates", Sample{Cases: good}, BootstrapOptions{}},
		{"empty", Sample{}, BootstrapOptions{Replicates: 10}},
		{"one case", Sample{Cases: FreqTable{Values: []int{2}, Counts: []int{1}}}, BootstrapOptions{Replicates: 10}},
		{"both", Sample{Cases: good, Clusters: []FreqTable{good}}, BootstrapOptions{Replicates: 10}},
		{"empty cluster", Sample{Clusters: []FreqTable{good, {}}}, BootstrapOptions{Replicates: 10}},
		{"bad cluster", Sample{Clusters: []FreqTable{{Values: []int{1}, Counts: []int{1, 2}}}}, BootstrapOptions{Replicates: 10}},
	}
	for _, c := range cases {
		if _, err := Bootstrap(c.s, c.o); err == nil {
			t.Errorf("%s: want an error", c.name)
		}
	}
	res, err := Bootstrap(Sample{Cases: good}, BootstrapOptions{Replicates: 10})
	if err != nil {
		t.Fatal(err)
	}
	if _, err := res.Interval(nil, 0, 0.95); err == nil {
		t.Error("nil statistic: want an error")
	}
	for _, lvl := range []float64{0, 1, -0.5, math.NaN()} {
		if _, err := res.Interval(StatR, res.Estimate[ParamR], lvl); err == nil {
			t.Errorf("level %v: want an error", lvl)
		}
	}
	if _, err := res.Interval(func(Params) float64 { return math.NaN() }, 0, 0.95); err == nil {
		t.Error("all-NaN statistic: want an error")
	}
}

// TestBootstrapOneCluster: a single cluster can be resampled (every replicate is the data),
// but its jackknife is empty of information, so BCa falls back.
func TestBootstrapOneCluster(t *testing.T) {
	res, err := Bootstrap(Sample{Clusters: []FreqTable{Tabulate([]int{0, 0, 4, 1})}}, BootstrapOptions{Replicates: 20, Seed: 1})
	if err != nil {
		t.Fatal(err)
	}
	for _, p := range res.Replicates {
		if !sameParams(p, res.Estimate) {
			t.Fatalf("replicate %+v differs from the estimate %+v", p, res.Estimate)
		}
	}
	iv, err := res.Interval(StatR, res.Estimate[ParamR], 0.95)
	if err != nil || !iv.BCaFallback || iv.Percentile != [2]float64{res.Estimate[ParamR], res.Estimate[ParamR]} {
		t.Errorf("interval %+v (%v)", iv, err)
	}
}
