package branching_test

import (
	"fmt"
	"math"

	"github.com/caseweave/caseweave/pipeline/branching"
	"github.com/caseweave/caseweave/pipeline/offspring"
)

func ExampleExtinctionProbability() {
	// Geometric offspring with mean 2: G(s) = 1/(1 + 2(1 − s)), so q = 1/2.
	q, _ := branching.ExtinctionProbability(offspring.Geometric{R: 2})
	fmt.Printf("%.6f\n", q)
	// Output: 0.500000
}

func ExampleMajorOutbreakProbability() {
	// For R = 1 + ε, 1 − q = 2ε − (8/3)ε² + O(ε³) (series of u = 1 − e^{−Ru}).
	u, _ := branching.MajorOutbreakProbability(offspring.Poisson{R: 1 + 1e-6})
	fmt.Printf("%.6e\n", u)
	// Output: 1.999997e-06
}

func ExampleExtinctionByGeneration() {
	// Linear fractional: G_n(0) = n/(n+1).
	p, _ := branching.ExtinctionByGeneration(offspring.Geometric{R: 1}, 3)
	fmt.Printf("%.4f\n", p)
	// Output: 0.7500
}

func ExampleGenerationSizes() {
	gs, _ := branching.GenerationSizes(offspring.Geometric{R: 1}, 1, 2)
	g := gs[1]
	fmt.Printf("n=%d P(0)=%.4f P(1)=%.4f P(2)=%.4f mean=%.1f var=%.1f\n", g.N, g.PMF[0], g.PMF[1], g.PMF[2], *g.Mean, *g.Variance)
	// Output: n=2 P(0)=0.6667 P(1)=0.1111 P(2)=0.0741 mean=1.0 var=4.0
}

func ExampleGenerationMoments() {
	// R = 2, σ² = 2, one case, n = 3: mean 2³ = 8, variance 2·2²·(2³ − 1)/(2 − 1) = 56.
	m, v := branching.GenerationMoments(2, 2, 1, 3)
	fmt.Printf("%.6g %.6g\n", m, v)
	// Output: 8 56
}

func ExampleChainSizes() {
	cs, _ := branching.ChainSizes(offspring.Poisson{R: 0.5}, 3)
	fmt.Printf("%.4f %.4f %.4f mean=%.1f\n", cs.PMF[0], cs.PMF[1], cs.PMF[2], *cs.Mean)
	// Output: 0.6065 0.1839 0.0837 mean=2.0
}

func ExampleChainSizesLagrange() {
	// G(s) = (1 + s)/2: P(Y = y) = (1/y)·C(y, y−1)/2^y = 2^−y.
	list, _ := offspring.NewEmpirical([]float64{0.5, 0.5}, false)
	cs, _ := branching.ChainSizesLagrange(list, 4)
	fmt.Printf("%.4f %.4f %.4f %.4f\n", cs.PMF[0], cs.PMF[1], cs.PMF[2], cs.PMF[3])
	// Output: 0.5000 0.2500 0.1250 0.0625
}

func ExampleChainSizeLagrangeAt() {
	p, _ := branching.ChainSizeLagrangeAt(offspring.Poisson{R: 0.5}, 2)
	fmt.Printf("%.4f %.4f\n", p, math.Exp(offspring.Poisson{R: 0.5}.ChainSizeLogPMF(2)))
	// Output: 0.1839 0.1839
}

func ExampleFitChainSizes() {
	obs := []branching.ChainObservation{{Size: 1}, {Size: 1}, {Size: 2}, {Size: 1}, {Size: 4}, {Size: 3}, {Size: 1}, {Size: 12, Censored: true}}
	fit, _ := branching.FitChainSizes(obs)
	fmt.Println(fit.Clusters, fit.Censored, fit.R > 0)
	// Output: 8 1 true
}

func ExampleBootstrapChainFit() {
	obs := []branching.ChainObservation{{Size: 1}, {Size: 1}, {Size: 2}, {Size: 1}, {Size: 4}, {Size: 3}, {Size: 1}, {Size: 6}}
	bs, _ := branching.BootstrapChainFit(obs, 20, 0.9, 1, 2)
	fmt.Println(bs.Replicates, bs.RLo <= bs.RHi)
	// Output: 20 true
}

func ExampleShareByNu() {
	s, _ := branching.ShareByNu(offspring.NegBin{R: 2.5, K: 0.1}, 0.8)
	fmt.Printf("%.3f\n", *s)
	// Output: 0.098
}

func ExampleShareByOffspring() {
	list, _ := offspring.NewEmpirical([]float64{0.5, 0, 0, 0.5}, false)
	s, _ := branching.ShareByOffspring(list, 0.8)
	fmt.Printf("%.2f\n", *s)
	// Output: 0.40
}

func ExampleSuperspreadingThreshold() {
	th, _ := branching.SuperspreadingThreshold(offspring.Poisson{R: 2.5})
	fmt.Println(th)
	// Output: 7
}

func ExampleEndOfOutbreak() {
	// Serial interval: exactly 5 days (a step CDF), one case on day 0, Poisson(0.5).
	F := func(x float64) float64 {
		if x >= 5 {
			return 1
		}
		return 0
	}
	res, _ := branching.EndOfOutbreak([]int{0}, offspring.Poisson{R: 0.5}, F, 3, 3)
	fmt.Printf("%v %.4f %.4f %d\n", res.Days, res.Probability[0], res.Probability[2], *res.Day95)
	// Output: [3 4 5 6] 0.6065 1.0000 5
}

func ExampleProject() {
	// From 2 cases, X_1 is an even mixture of Poisson(1) and Poisson(3):
	// P(0) = (e^−1 + e^−3)/2 and the 95% point is 5 (mixture CDF 0.906 at 4, 0.958 at 5).
	reps := []offspring.Distribution{offspring.Poisson{R: 0.5}, offspring.Poisson{R: 1.5}}
	pr, _ := branching.Project(reps, 2, 1)
	g := pr.Generations[0]
	fmt.Printf("mean=%.1f P(0)=%.4f 90%%=[%d,%d]\n", *g.Mean, g.PZero, *g.Interval90.Lo, *g.Interval90.Hi)
	// Output: mean=2.0 P(0)=0.2088 90%=[0,5]
}

func ExampleOutlook() {
	res, _ := branching.Outlook(offspring.NegBin{R: 2.5, K: 0.1}, 1, 2, 0.8)
	fmt.Printf("%s q=%.3f share=%.3f sse=%d gens=%d\n", res.Distribution.Name(), res.ExtinctionProbability, *res.ShareByNu, res.SSEThreshold, len(res.Generations))
	// Output: negative_binomial q=0.861 share=0.098 sse=7 gens=2
}
