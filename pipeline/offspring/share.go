package offspring

import (
	"math"
	"sort"

	"gonum.org/v1/gonum/stat/distuv"
)

// ConcentrationShare is the smallest share of cases that together caused `target` of all
// secondary cases, when cases are ranked by their offspring count, largest first
// (the "20/80" reading of Lloyd-Smith et al. 2005).
// weights[i] is the mass (a count of cases, or a probability) of cases with values[i]
// offspring. Within the boundary value the share is interpolated linearly, as if cases at
// that value were divisible: with weights being probabilities this is the model-based share,
// with weights being counts it is the observed share. It returns NaN when there is no
// transmission at all (every value 0) or target is outside (0, 1].
func ConcentrationShare(values []int, weights []float64, target float64) float64 {
	if !(target > 0 && target <= 1) || len(values) != len(weights) {
		return math.NaN()
	}
	idx := make([]int, len(values))
	for i := range idx {
		idx[i] = i
	}
	sort.SliceStable(idx, func(a, b int) bool { return values[idx[a]] > values[idx[b]] })
	var mass, trans float64
	for _, i := range idx {
		if weights[i] > 0 {
			mass += weights[i]
			trans += float64(values[i]) * weights[i]
		}
	}
	if mass == 0 || trans == 0 {
		return math.NaN()
	}
	need := target * trans
	var shareCases, got float64
	for _, i := range idx {
		w, v := weights[i], float64(values[i])
		if w <= 0 || v == 0 {
			continue
		}
		if got+v*w >= need {
			shareCases += (need - got) / v
			return shareCases / mass
		}
		got += v * w
		shareCases += w
	}
	return shareCases / mass
}

// ConcentrationPoint is one point of a concentration curve: the top CaseShare of cases
// (ranked by offspring, largest first) caused TransmissionShare of all secondary cases.
type ConcentrationPoint struct {
	CaseShare         float64
	TransmissionShare float64
}

// ConcentrationCurve returns the piecewise-linear concentration curve of a frequency table,
// from (0, 0) through one vertex per distinct non-zero offspring count to (1, 1). It is nil
// when the table has no transmission.
func ConcentrationCurve(t FreqTable) []ConcentrationPoint {
	n, total := float64(t.N()), float64(t.Total())
	if n == 0 || total == 0 {
		return nil
	}
	pts := []ConcentrationPoint{{0, 0}}
	var cases, trans float64
	for i := len(t.Values) - 1; i >= 0; i-- {
		cases += float64(t.Counts[i])
		trans += float64(t.Values[i] * t.Counts[i])
		pts = append(pts, ConcentrationPoint{cases / n, trans / total})
	}
	return pts
}

// ObservedShare is ConcentrationShare on a frequency table of observed offspring counts.
func ObservedShare(t FreqTable, target float64) float64 {
	w := make([]float64, len(t.Counts))
	for i, c := range t.Counts {
		w[i] = float64(c)
	}
	return ConcentrationShare(t.Values, w, target)
}

// SuperspreadingThreshold is the 99th percentile of Poisson(R): the smallest x with
// P(Z ≤ x) ≥ 0.99. A case with more offspring than this is a superspreader
// [Lloyd-Smith et al. 2005]. It is 0 for R ≤ 0 and −1 for a non-finite R.
func SuperspreadingThreshold(R float64) int {
	if math.IsNaN(R) || math.IsInf(R, 0) {
		return -1
	}
	if R <= 0 {
		return 0
	}
	p := distuv.Poisson{Lambda: R}
	// The CDF is monotone; start near the normal approximation and walk.
	x := int(math.Max(0, math.Floor(R+2.33*math.Sqrt(R))-3))
	for x > 0 && p.CDF(float64(x-1)) >= 0.99 {
		x--
	}
	for p.CDF(float64(x)) < 0.99 {
		x++
	}
	return x
}
