package analysis

import (
	"math"
	"math/big"
	"testing"

	"github.com/caseweave/caseweave/pipeline/linelist"
)

func fptr(x float64) *float64 { return &x }

// The verdict reads the interval, never the point estimate: growing only when the whole
// interval lies above 1, shrinking only when below, otherwise uncertain; and no verdict at
// all from fewer cases than MinCasesForVerdict or from a missing interval.
func TestReadR(t *testing.T) {
	est := func(r float64) Estimate { return Estimate{Estimate: fptr(r)} }
	for _, c := range []struct {
		name   string
		r      Estimate
		lo, hi *float64
		n      int
		want   string
	}{
		{"interval above 1", est(1.4), fptr(1.1), fptr(1.8), 200, VerdictGrowing},
		{"interval below 1", est(0.7), fptr(0.5), fptr(0.9), 200, VerdictShrinking},
		{"estimate above 1, interval across", est(1.16), fptr(0.79), fptr(1.59), 200, VerdictUncertain},
		{"estimate below 1, interval across", est(0.93), fptr(0.69), fptr(1.19), 200, VerdictUncertain},
		{"bound exactly 1", est(1.3), fptr(1), fptr(1.6), 200, VerdictUncertain},
		{"tiny n", est(3), fptr(2), fptr(5), 3, VerdictUncertain},
		{"no upper bound", est(2), fptr(1.2), nil, 200, VerdictUncertain},
		{"no estimate", Estimate{}, nil, nil, 200, VerdictUncertain},
	} {
		v := ReadR(c.r, [2]*float64{c.lo, c.hi}, c.n)
		if v.Kind != c.want || v.Reason == "" {
			t.Errorf("%s: %+v, want %s", c.name, v, c.want)
		}
	}
}

// The conditional test of two Poisson counts against its definition: the later count given
// the total is Binomial(total, 1/2) under equal rates. 10 against 2: 2·P(X ≥ 10 | n = 12) =
// 2·(66 + 12 + 1)/4096 = 158/4096 (by hand); and, for 28 against 19, the sum of binomial
// coefficients in exact rational arithmetic.
func TestComparePoissonCounts(t *testing.T) {
	if got, want := ComparePoissonCounts(10, 2), 158.0/4096; math.Abs(got-want) > 1e-12 {
		t.Errorf("10 vs 2: %v, want %v", got, want)
	}
	if got := ComparePoissonCounts(2, 10); math.Abs(got-158.0/4096) > 1e-12 {
		t.Errorf("the test is two-sided: %v", got)
	}
	tail := new(big.Rat)
	for x := int64(28); x <= 47; x++ {
		tail.Add(tail, new(big.Rat).SetInt(new(big.Int).Binomial(47, x)))
	}
	tail.Quo(tail, new(big.Rat).SetInt(new(big.Int).Lsh(big.NewInt(1), 47)))
	want, _ := new(big.Rat).Mul(tail, big.NewRat(2, 1)).Float64()
	if got := ComparePoissonCounts(28, 19); math.Abs(got-want) > 1e-12 {
		t.Errorf("28 vs 19: %v, want %v", got, want)
	}
	if ComparePoissonCounts(5, 5) != 1 || ComparePoissonCounts(0, 0) != 1 {
		t.Error("equal counts should give p = 1")
	}
}

// On a simulated outbreak the assessment has a recent R from complete weeks outside the
// censoring window, a trend between the last two complete weeks, and the first incomplete
// week; the headline reads the recent R only when it rests on enough cases.
func TestAssessment(t *testing.T) {
	cases, _ := outbreak(t, 1.2, 0.5, 80, 5, "2026-04-20")
	s := analyse(t, cases, Options{AsOf: day("2026-04-22"), Replicates: 100, Seed: 1})
	as := s.Assessment
	if as == nil || as.Recent == nil || as.Trend == nil || as.IncompleteFrom == nil {
		t.Fatalf("assessment %+v", as)
	}
	if as.Recent.To > s.AsOf-linelistDay(s.Settings.CensorDays) || as.Recent.To.ISOWeekStart()+6 != as.Recent.To {
		t.Errorf("recent weeks end %s, inside the censoring window or not on a Sunday", as.Recent.To)
	}
	if (as.Headline == "recent") != (as.Recent.Cases >= MinCasesForVerdict) {
		t.Errorf("headline %s with %d recent cases", as.Headline, as.Recent.Cases)
	}
	if as.Trend.Week+6 >= s.AsOf || *as.IncompleteFrom <= as.Trend.Week {
		t.Errorf("trend week %s, first incomplete week %s, as of %s", as.Trend.Week, *as.IncompleteFrom, s.AsOf)
	}
	want := ComparePoissonCounts(*as.Trend.Count, *as.Trend.PreviousCount)
	if as.Trend.PValue == nil || *as.Trend.PValue != want {
		t.Errorf("trend p-value %v, want %v", as.Trend.PValue, want)
	}
}

func linelistDay(n int) linelist.Day { return linelist.Day(n) }

// The chain-size rule (ChainSizeInformative) at its boundaries: each threshold alone keeps
// the fit out, and both met let it in.
func TestChainSizeInformative(t *testing.T) {
	for _, tc := range []struct {
		complete, multi int
		want            bool
	}{
		{MinCompleteChains - 1, MinCompleteMultiChains, false},
		{MinCompleteChains, MinCompleteMultiChains - 1, false},
		{MinCompleteChains, MinCompleteMultiChains, true},
		{0, 0, false},
	} {
		got, reason := ChainSizeInformative(tc.complete, tc.multi)
		if got != tc.want || (got == (reason != "")) {
			t.Errorf("ChainSizeInformative(%d, %d) = %v %q, want %v and a reason exactly when false", tc.complete, tc.multi, got, reason, tc.want)
		}
	}
}

// overlaps: intervals that meet, that do not, and an open upper end.
func TestOverlaps(t *testing.T) {
	f := func(x float64) *float64 { return &x }
	b := [2]*float64{f(0.7), f(1.2)}
	if !overlaps(f(0.9), f(2), b) || overlaps(f(1.3), f(2), b) || !overlaps(f(1.1), nil, b) || overlaps(f(1.3), nil, b) || overlaps(f(0.1), f(0.6), b) {
		t.Error("overlaps misreads an interval pair")
	}
}
