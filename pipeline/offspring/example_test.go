package offspring_test

import (
	"fmt"
	"math/rand/v2"

	"github.com/caseweave/caseweave/pipeline/offspring"
)

// The numbers agree with R's MASS::fitdistr 7.3-58.2 on the same data (k 0.199744,
// AICs 75.96147, 48.66233, 44.10204): testdata/offspring/example_fitall.R writes them to
// example_fitall.txt and TestExampleFitAllAgainstMASS checks them.
func ExampleFitAll() {
	// 10 cases with no secondary case, a few with some, one with 12.
	t := offspring.Tabulate([]int{0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 1, 1, 2, 3, 12})
	fits, best, err := offspring.FitAll(t)
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, f := range fits {
		k := "—"
		if v, _, ok := f.Param("k"); ok {
			k = fmt.Sprintf("%.3f", v)
		}
		fmt.Printf("%-17s R=%.3f k=%s AIC=%.2f\n", f.Name, f.R(), k, f.AIC)
	}
	fmt.Println("best:", best)
	// Output:
	// poisson           R=1.267 k=— AIC=75.96
	// geometric         R=1.267 k=— AIC=48.66
	// negative_binomial R=1.267 k=0.200 AIC=44.10
	// best: negative_binomial
}

func ExampleFitNegBin_poissonLimit() {
	// Variance below the mean: no finite k̂.
	f, _ := offspring.FitNegBin(offspring.Tabulate([]int{1, 2, 2, 1, 3, 2, 1, 2}))
	k, _, _ := f.Param("k")
	fmt.Println(f.AtLimit(), k, f.Distribution().Name())
	// Output: true +Inf poisson
}

func ExampleBootstrap() {
	rng := rand.New(rand.NewPCG(1, 2))
	t, _ := offspring.SimulateNegBin(rng, 2, 0.3, 500)
	res, err := offspring.Bootstrap(offspring.Sample{Cases: t}, offspring.BootstrapOptions{Replicates: 2000, Seed: 7})
	if err != nil {
		fmt.Println(err)
		return
	}
	iv, _ := res.Interval(offspring.StatK, res.Estimate[offspring.ParamK], 0.95)
	fmt.Printf("k̂ = %.3f, 95%% BCa [%.3f, %.3f]\n", res.Estimate[offspring.ParamK], iv.BCa[0], iv.BCa[1])
	// Output: k̂ = 0.316, 95% BCa [0.262, 0.380]
}

func ExampleZeroShare() {
	s, _ := offspring.ZeroShare(offspring.Tabulate([]int{0, 0, 0, 1, 5}))
	fmt.Println(s)
	// Output: 0.6
}

func ExampleSuperspreaders() {
	// With R = 1 the 99th percentile of Poisson(1) is 4: cases with more are superspreaders.
	th, idx, _ := offspring.Superspreaders([]int{0, 1, 9, 2, 5, 0}, 1)
	fmt.Println(th, idx)
	// Output: 4 [2 4]
}
