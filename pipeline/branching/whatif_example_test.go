package branching_test

import (
	"fmt"

	"github.com/caseweave/caseweave/pipeline/branching"
	"github.com/caseweave/caseweave/pipeline/offspring"
)

// With R = 3 and k = 0.1, stopping the most infectious 6% of cases brings R to 1, where
// stopping cases at random takes two thirds of them.
func ExampleControlThreshold() {
	d := offspring.NegBin{R: 3, K: 0.1}
	for _, s := range []string{branching.ControlIndividual, branching.ControlTargeted} {
		c, _ := branching.ControlThreshold(d, s)
		fmt.Printf("%s %.4f\n", s, c)
	}
	// Output:
	// individual 0.6667
	// targeted 0.0613
}

// Two age groups that infect mostly their own: R of the whole population is the spectral
// radius of the next-generation matrix, and each group's chains die out with its own chance.
func ExampleMultitype_MultitypeExtinction() {
	M := [][]float64{{1.2, 0.3}, {0.2, 0.6}}
	mt, _ := branching.NewMultitype(M, func(R float64, _ int) offspring.Distribution { return offspring.NegBin{R: R, K: 0.5} })
	rho, _ := branching.SpectralRadius(M)
	q, _ := mt.MultitypeExtinction()
	fmt.Printf("R %.4f, q %.4f %.4f\n", rho, q[0], q[1])
	// Output:
	// R 1.2873, q 0.8341 0.9346
}
