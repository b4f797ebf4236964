package timing_test

import (
	"fmt"
	"math/rand/v2"

	"github.com/caseweave/caseweave/pipeline/linelist"
	"github.com/caseweave/caseweave/pipeline/timing"
)

func ExampleFitSerialInterval() {
	intervals := []int{3, 4, 4, 5, 5, 5, 6, 6, 7, 8, 4, 5, 3, 6, 9, 2, -1}
	fit, err := timing.FitSerialInterval(intervals, timing.FitOptions{
		Bootstrap: 200, Rand: rand.New(rand.NewPCG(1, 2)),
	})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("n=%d negative=%d (%s)\n", fit.N, fit.Negative, fit.NegativeTreatment)
	for _, m := range fit.Models {
		fmt.Printf("%-9s mean %.2f sd %.2f AIC %.2f\n", m.Name, m.Mean, m.SD, m.AIC)
	}
	fmt.Printf("best %s, p95 %.1f days, mean CI [%.1f, %.1f]\n", fit.BestModel, fit.Quantiles.P95, fit.MeanCI[0], fit.MeanCI[1])
	// Output:
	// n=16 negative=1 (excluded from the parametric fit)
	// gamma     mean 5.13 sd 1.81 AIC 67.60
	// lognormal mean 5.14 sd 1.94 AIC 68.13
	// weibull   mean 5.13 sd 1.80 AIC 67.86
	// best gamma, p95 8.4 days, mean CI [4.4, 6.0]
}

func ExampleFitSerialInterval_tooFew() {
	_, err := timing.FitSerialInterval([]int{-2, 4}, timing.FitOptions{})
	fmt.Println(err)
	// Output:
	// serial interval: 1 usable interval(s) (1 negative excluded); at least 2 non-negative intervals are needed for a fit
}

func ExampleFixedGamma() {
	si, err := timing.FixedGamma(5, 2)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("shape %.4g rate %.4g\n", si.Shape, si.Rate)
	fmt.Printf("P(rounds to 5 days) = %.4f, median %.3f, p99 %.2f\n", si.DailyMass(5), si.Quantile(0.5), si.Quantile(0.99))
	// Output:
	// shape 6.25 rate 1.25
	// P(rounds to 5 days) = 0.1954, median 4.736, p99 10.78
}

func ExampleWeeklyR() {
	day := func(s string) linelist.Day { d, _ := linelist.ParseISODay(s); return d }
	onset := []linelist.Day{day("2024-03-04"), day("2024-03-06"), day("2024-03-10"), day("2024-03-12"), day("2024-03-19")}
	offspring := []float64{2, 0, 4, 1, 0}
	res, err := timing.WeeklyR(onset, offspring, timing.WeeklyOptions{
		AnalysisDate: day("2024-03-20"), Window: 10, Dispersion: 0.5,
	})
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, w := range res.Weeks {
		fmt.Printf("%s cases %d R %.2f [%.2f, %.2f] censored %v\n", w.WeekStart, w.Cases, w.R, w.Lower, w.Upper, w.Censored)
	}
	// Output:
	// 2024-03-04 cases 3 R 2.00 [0.45, 33.31] censored false
	// 2024-03-11 cases 1 R 1.00 [0.03, 1799.17] censored true
	// 2024-03-18 cases 1 R 0.00 [0.00, 799.50] censored true
}

func ExampleInferInfectors() {
	si, _ := timing.FixedGamma(5, 2)
	onset := []linelist.Day{0, 3, 5, 8}
	group := []string{"north", "north", "north", "north"}
	imported := []bool{true, false, false, false}
	linked := []bool{false, true, false, false} // case 1 has a recorded infector
	x, err := timing.InferInfectors(onset, group, imported, linked, si)
	if err != nil {
		fmt.Println(err)
		return
	}
	for i, e := range x.ExpectedOffspring() {
		fmt.Printf("case %d expects %.3f inferred offspring\n", i, e)
	}
	fmt.Printf("%+v\n", x.Summary())
	fmt.Println(x.Sample(rand.New(rand.NewPCG(1, 1)), nil))
	// Output:
	// case 0 expects 0.871 inferred offspring
	// case 1 expects 0.737 inferred offspring
	// case 2 expects 0.392 inferred offspring
	// case 3 expects 0.000 inferred offspring
	// {Inferred:2 NoCandidate:0}
	// [-1 -1 0 1]
}
