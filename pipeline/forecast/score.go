package forecast

import "math"

// Interval is a central prediction interval of a count at level 1 − Alpha.
type Interval struct {
	Alpha        float64
	Lower, Upper float64
}

// IntervalScore is the interval score of a central (1 − α) prediction interval [l, u] for
// the outcome y (Gneiting & Raftery 2007, JASA 102:359, §6.2; as written in Bracher et al.
// 2021, PLoS Comput Biol 17:e1008618, eq. 1):
//
//	IS_α = (u − l) + (2/α)(l − y)·1{y < l} + (2/α)(y − u)·1{y > u}.
func IntervalScore(iv Interval, y float64) float64 {
	s := iv.Upper - iv.Lower
	if y < iv.Lower {
		s += 2 / iv.Alpha * (iv.Lower - y)
	}
	if y > iv.Upper {
		s += 2 / iv.Alpha * (y - iv.Upper)
	}
	return s
}

// WeightedIntervalScore is the weighted interval score of a forecast given by its median m
// and K central intervals (Bracher et al. 2021, PLoS Comput Biol 17:e1008618, eq. 2), with
// the weights w₀ = ½ and w_k = α_k/2 that make it approximate the continuous ranked
// probability score:
//
//	WIS = (w₀·|y − m| + Σ_k w_k·IS_{α_k}) / (K + ½).
//
// Lower is better; it is on the scale of the counts. NaN for no intervals.
func WeightedIntervalScore(median float64, ivs []Interval, y float64) float64 {
	if len(ivs) == 0 {
		return math.NaN()
	}
	s := 0.5 * math.Abs(y-median)
	for _, iv := range ivs {
		s += iv.Alpha / 2 * IntervalScore(iv, y)
	}
	return s / (float64(len(ivs)) + 0.5)
}
