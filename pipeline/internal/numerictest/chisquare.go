// Package numerictest holds the test helpers that check random variate generators against
// their distributions; only tests import it.
package numerictest

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"
)

// ChiSquareCheck bins draws against a PMF (cells merged until the expected count is ≥ 5)
// and fails when Pearson's X² exceeds the 1 − 1e-4 quantile of χ² with cells − 1 degrees of
// freedom (Pearson 1900; quantile from gonum distuv.ChiSquared v0.17.0). With fixed seeds
// the test is deterministic; the 1e-4 level keeps a correct sampler from failing by chance.
func ChiSquareCheck(t *testing.T, name string, draws []int, pmf func(x int) float64, from, maxX int) {
	t.Helper()
	obs := map[int]int{}
	for _, d := range draws {
		if d < 0 || d > maxX {
			t.Fatalf("%s: draw %d outside the support [0, %d]", name, d, maxX)
		}
		obs[d]++
	}
	M := float64(len(draws))
	var x2, e, o, closedE, closedO, cum float64
	cells := 0
	// The mass below `from` (≥ 12 SDs under the mean) is negligible; it joins the first cell.
	for x := from; x <= maxX; x++ {
		p := pmf(x)
		cum += p
		e += M * p
		o += float64(obs[x])
		if x == from {
			for d, c := range obs {
				if d < from {
					o += float64(c)
				}
			}
		}
		if M*(1-cum) < 5 {
			break // the rest, with this partial cell, is the tail cell
		}
		if e >= 5 {
			x2 += (o - e) * (o - e) / e
			cells++
			closedE += e
			closedO += o
			e, o = 0, 0
		}
	}
	tailE, tailO := M-closedE, M-closedO
	if tailE > 0 {
		x2 += (tailO - tailE) * (tailO - tailE) / tailE
		cells++
	}
	if cells < 2 {
		t.Fatalf("%s: only %d cells", name, cells)
	}
	crit := distuv.ChiSquared{K: float64(cells - 1)}.Quantile(1 - 1e-4)
	if x2 > crit {
		t.Errorf("%s: X² = %.1f on %d df exceeds %.1f", name, x2, cells-1, crit)
	}
}

// From12 is max(0, ⌊mean − 12·sd⌋).
func From12(mean, sd float64) int { return max(0, int(math.Floor(mean-12*sd))) }

// SkipUnderRace skips a coverage study in a race-detector build: the detector finds nothing
// in its single-goroutine loops and makes them ten times slower, and .ci/test runs every
// study again without it (its "coverage studies" step).
func SkipUnderRace(t *testing.T) {
	t.Helper()
	if RaceDetector {
		t.Skip("coverage study: run without -race (.ci/test's study step does)")
	}
}
