package offspring

import (
	"math"
	"strings"
	"testing"

	"gonum.org/v1/gonum/mathext"
)

func relErr(got, want float64) float64 {
	if want == 0 {
		return math.Abs(got)
	}
	return math.Abs(got-want) / math.Abs(want)
}

// TestFitAgainstMASS compares the three fits with R's MASS::fitdistr (MASS 7.3-58.2, R 4.2.2)
// and with k̂ from uniroot on the same profile score in R (testdata/offspring/make_reference.R).
func TestFitAgainstMASS(t *testing.T) {
	r := readReference(t)
	for _, ds := range []string{"overdispersed", "mild", "underdispersed"} {
		t.Run(ds, func(t *testing.T) {
			tab := readTable(t, ds)
			fits, best, err := FitAll(tab)
			if err != nil {
				t.Fatal(err)
			}
			p, g, nb := fits[0], fits[1], fits[2]
			// R̂ = sample mean; Poisson and geometric SEs are closed forms in fitdistr too.
			checks := []struct {
				what      string
				got, want float64
				tol       float64
				relative  bool
			}{
				{"poisson R", p.R(), ref(t, r, ds, "poisson_R"), 1e-12, true},
				{"poisson loglik", p.LogLik, ref(t, r, ds, "poisson_loglik"), 1e-6, false},
				{"poisson SE(R)", p.SE[0], ref(t, r, ds, "poisson_se_R"), 1e-9, true},
				{"geometric R", g.R(), ref(t, r, ds, "geometric_R"), 1e-12, true},
				{"geometric loglik", g.LogLik, ref(t, r, ds, "geometric_loglik"), 1e-6, false},
				// fitdistr's geometric SE is for p; converted to R = (1−p)/p by the delta method in R.
				{"geometric SE(R)", g.SE[0], ref(t, r, ds, "geometric_se_R"), 1e-6, true},
			}
			if !strings.HasPrefix(ds, "under") {
				if nb.AtLimit() || math.IsNaN(nb.SE[ParamK]) {
					t.Fatalf("negative binomial fit has no k̂ on %s: %+v", ds, nb)
				}
				checks = append(checks, []struct {
					what      string
					got, want float64
					tol       float64
					relative  bool
				}{
					// fitdistr's NB R comes from optim (not forced to the mean): 1e-6.
					{"nb R", nb.R(), ref(t, r, ds, "nb_fitdistr_R"), 1e-6, true},
					{"nb k vs fitdistr", nb.Params[ParamK], ref(t, r, ds, "nb_fitdistr_k"), 1e-4, true},
					{"nb k vs uniroot", nb.Params[ParamK], ref(t, r, ds, "nb_uniroot_k"), 1e-8, true},
					{"nb loglik vs fitdistr", nb.LogLik, ref(t, r, ds, "nb_fitdistr_loglik"), 1e-6, false},
					{"nb loglik vs dnbinom at uniroot k", nb.LogLik, ref(t, r, ds, "nb_loglik_at_uniroot_k"), 1e-6, false},
					// fitdistr's SEs come from optim's finite-difference Hessian: loose.
					{"nb SE(k)", nb.SE[ParamK], ref(t, r, ds, "nb_fitdistr_se_k"), 1e-3, true},
					{"nb SE(R)", nb.SE[0], ref(t, r, ds, "nb_fitdistr_se_R"), 1e-3, true},
				}...)
			}
			for _, c := range checks {
				e := math.Abs(c.got - c.want)
				if c.relative {
					e = relErr(c.got, c.want)
				}
				if !(e <= c.tol) {
					t.Errorf("%s: got %.12g, R gives %.12g (error %.3g > %.1g)", c.what, c.got, c.want, e, c.tol)
				}
			}
			// AIC = 2·params − 2·logL [Akaike 1974]; NB has 2 parameters even in the limit.
			for i, np := range []float64{1, 1, 2} {
				if want := 2*np - 2*fits[i].LogLik; fits[i].AIC != want {
					t.Errorf("%s AIC %g, want %g", fits[i].Name, fits[i].AIC, want)
				}
			}
			if ds == "underdispersed" {
				if !nb.AtLimit() || !math.IsNaN(nb.SE[ParamK]) {
					t.Fatalf("variance ≤ mean must give the Poisson limit, got %+v", nb)
				}
				if nb.LogLik != p.LogLik {
					t.Errorf("Poisson-limit NB loglik %g differs from the Poisson one %g", nb.LogLik, p.LogLik)
				}
				// fitdistr's optim wanders to a large size whose loglik approaches the Poisson
				// one from below; it must not exceed ours (the supremum).
				if fl := ref(t, r, ds, "nb_fitdistr_loglik"); fl > nb.LogLik+1e-6 {
					t.Errorf("fitdistr NB loglik %g exceeds the Poisson-limit loglik %g", fl, nb.LogLik)
				}
				if best != NamePoisson {
					t.Errorf("best model %q, want poisson", best)
				}
			} else if best != NameNegativeBinomial {
				t.Errorf("best model %q, want negative_binomial", best)
			}
		})
	}
}

// TestScoreIsZeroAtEstimate checks k̂ against the score written directly with gonum's
// digamma: Σ c[ψ(x+k) − ψ(k)] + n log(k/(k+R)) = 0 [Lloyd-Smith et al. 2005, suppl.].
func TestScoreIsZeroAtEstimate(t *testing.T) {
	for _, ds := range []string{"overdispersed", "mild"} {
		tab := readTable(t, ds)
		nb, err := FitNegBin(tab)
		if err != nil || nb.AtLimit() {
			t.Fatalf("%s: %v %+v", ds, err, nb)
		}
		k, n := nb.Params[ParamK], float64(tab.N())
		s, scale := 0.0, 0.0
		for i, x := range tab.Values {
			d := float64(tab.Counts[i]) * (mathext.Digamma(float64(x)+k) - mathext.Digamma(k))
			s += d
			scale += math.Abs(d)
		}
		s += n * math.Log(k/(k+nb.R()))
		if math.Abs(s) > 1e-9*scale {
			t.Errorf("%s: score at k̂ = %g is %g (scale %g)", ds, k, s, scale)
		}
	}
}

// TestComputationPathsAgree checks that the running sums and the special-function forms give
// the same score, information and log-likelihood: ψ(x+k) − ψ(k) = Σ_{j<x} 1/(k+j),
// ψ'(k) − ψ'(x+k) = Σ_{j<x} 1/(k+j)², log Γ(x+k) − log Γ(k) = Σ_{j<x} log(k+j)
// (Abramowitz & Stegun 6.3.6, 6.4.6, 6.1.15).
func TestComputationPathsAgree(t *testing.T) {
	tab := readTable(t, "overdispersed")
	n, sum := float64(tab.N()), float64(tab.Total())
	R := sum / n
	for _, k := range []float64{0.01, 0.3, 4, 500} {
		a := nbScaledScore(tab.Values, tab.Counts, n, sum, k, true)
		b := nbScaledScore(tab.Values, tab.Counts, n, sum, k, false)
		if relErr(a, b) > 1e-8 {
			t.Errorf("k=%g: scaled score %g (sums) vs %g (digamma)", k, a, b)
		}
	}
	// Force the closed-form path with a table whose largest value is far beyond the sums' limit.
	big := FreqTable{Values: []int{0, 1, 3, 5000}, Counts: []int{50, 20, 10, 1}}
	bn, bs := float64(big.N()), float64(big.Total())
	if useRunningSums(big.Values) {
		t.Fatal("expected the closed-form path for max value 5000")
	}
	k := 0.2
	ll := nbLogLik(big.Values, big.Counts, bn, bs, bs/bn, k)
	ik := nbInfoK(big.Values, big.Counts, bn, bs, bs/bn, k)
	// Direct sums, as the reference.
	llRef, ikRef := 0.0, 0.0
	for i, x := range big.Values {
		s1, s2 := 0.0, 0.0
		for j := 0; j < x; j++ {
			s1 += math.Log(k + float64(j))
			s2 += 1 / ((k + float64(j)) * (k + float64(j)))
		}
		lf, _ := math.Lgamma(float64(x) + 1)
		c := float64(big.Counts[i])
		llRef += c * (s1 - lf)
		ikRef += c * s2
	}
	Rb := bs / bn
	llRef += -bn*k*math.Log1p(Rb/k) + bs*(math.Log(Rb)-math.Log(k+Rb))
	ikRef += -bn/k + bn/(k+Rb)
	if relErr(ll, llRef) > 1e-10 || relErr(ik, ikRef) > 1e-8 {
		t.Errorf("closed forms: loglik %g vs %g, I_kk %g vs %g", ll, llRef, ik, ikRef)
	}
	_ = R
}

// TestVarianceExceedsMean checks the exact existence condition s²_n > x̄ (Levin & Reeds 1977,
// as recalled from memory), including ties and the big-integer path.
func TestVarianceExceedsMean(t *testing.T) {
	cases := []struct {
		name   string
		values []int
		counts []int
		want   bool
	}{
		{"tie {0,2}: mean 1, s²_n 1", []int{0, 2}, []int{1, 1}, false},
		{"{0,0,3}: mean 1, s²_n 2", []int{0, 3}, []int{2, 1}, true},
		{"one value", []int{4}, []int{10}, false},
		{"all zeros", []int{0}, []int{7}, false},
		{"s²_n (n−1) > mean but s²_n = mean", []int{0, 2}, []int{5, 5}, false},
		{"big values take the big.Int path", []int{0, 3_000_000_000}, []int{3, 1}, true},
		{"big overdispersed table via big.Int", []int{0, 4_000_000_000}, []int{1_000_000_000, 1}, true},
	}
	for _, c := range cases {
		if got := varianceExceedsMean(c.values, c.counts); got != c.want {
			t.Errorf("%s: got %v, want %v", c.name, got, c.want)
		}
	}
}

// TestPoissonLimitIsSupremum: on data with s²_n ≤ x̄ the NB profile log-likelihood increases
// towards the Poisson one as k → ∞ and never exceeds it (Levin & Reeds 1977, recalled).
func TestPoissonLimitIsSupremum(t *testing.T) {
	for _, tab := range []FreqTable{readTable(t, "underdispersed"), {Values: []int{0, 2}, Counts: []int{5, 5}}} {
		p, _ := FitPoisson(tab)
		n, s := float64(tab.N()), float64(tab.Total())
		prev := math.Inf(-1)
		for _, k := range []float64{0.1, 1, 10, 100, 1e4, 1e6} {
			ll := nbLogLik(tab.Values, tab.Counts, n, s, s/n, k)
			if ll > p.LogLik+1e-9 || ll < prev {
				t.Errorf("k=%g: NB loglik %g (previous %g, Poisson %g)", k, ll, prev, p.LogLik)
			}
			prev = ll
		}
	}
}

// TestFitEdgeCases: odd tables give an error or a finite, flagged result, never a panic or NaN.
func TestFitEdgeCases(t *testing.T) {
	cases := []struct {
		name    string
		tab     FreqTable
		wantErr bool
		limit   bool
	}{
		{"empty", FreqTable{}, true, false},
		{"one case", FreqTable{Values: []int{3}, Counts: []int{1}}, true, false},
		{"mismatched", FreqTable{Values: []int{0, 1}, Counts: []int{1}}, true, false},
		{"negative value", FreqTable{Values: []int{-1, 1}, Counts: []int{2, 2}}, true, false},
		{"negative count", FreqTable{Values: []int{0, 1}, Counts: []int{-2, 5}}, true, false},
		{"unsorted", FreqTable{Values: []int{2, 1}, Counts: []int{2, 2}}, true, false},
		{"all zeros (R = 0)", FreqTable{Values: []int{0}, Counts: []int{50}}, false, true},
		{"one distinct value", FreqTable{Values: []int{2}, Counts: []int{9}}, false, true},
		{"two cases", FreqTable{Values: []int{0, 5}, Counts: []int{1, 1}}, false, false},
		{"huge counts", FreqTable{Values: []int{0, 1, 2, 40}, Counts: []int{9_000_000, 700_000, 200_000, 100_000}}, false, false},
		{"huge value", FreqTable{Values: []int{0, 1, 2_000_000}, Counts: []int{1000, 10, 1}}, false, false},
		{"zero count entries", FreqTable{Values: []int{0, 1, 7}, Counts: []int{4, 0, 1}}, false, false},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			fits, best, err := FitAll(c.tab)
			if c.wantErr {
				if err == nil {
					t.Fatalf("want an error, got %+v", fits)
				}
				return
			}
			if err != nil {
				t.Fatal(err)
			}
			for _, f := range fits {
				vals := []float64{f.R(), f.LogLik, f.AIC, f.SE[0]}
				if k, se, ok := f.Param("k"); ok && !f.AtLimit() {
					vals = append(vals, k)
					if !math.IsNaN(se) {
						vals = append(vals, se)
					}
				}
				for _, v := range vals {
					if math.IsNaN(v) || math.IsInf(v, 0) {
						t.Errorf("%s: non-finite number in %+v", f.Name, f)
					}
				}
			}
			if fits[2].AtLimit() != c.limit {
				t.Errorf("Poisson limit %v, want %v (%+v)", fits[2].AtLimit(), c.limit, fits[2])
			}
			if best == "" {
				t.Error("no best model")
			}
		})
	}
}
