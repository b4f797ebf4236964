package forecast

import (
	"math"
	"testing"
)

// TestWeightedIntervalScoreHand works Bracher et al. (2021, PLoS Comput Biol 17:e1008618,
// eqs. 1–2) by hand for a forecast with median 10, 50% interval [7, 14] and 90% interval
// [4, 20]:
//   - y = 16: IS_0.5 = 7 + (2/0.5)(16 − 14) = 15, IS_0.1 = 16; WIS = (½·6 + ¼·15 +
//     0.05·16) / 2.5 = 7.55 / 2.5 = 3.02.
//   - y = 2: IS_0.5 = 7 + 4·5 = 27, IS_0.1 = 16 + 20·2 = 56; WIS = (½·8 + ¼·27 + 0.05·56)
//     / 2.5 = 13.55 / 2.5 = 5.42.
//   - y = 10: IS_0.5 = 7, IS_0.1 = 16; WIS = (0 + 1.75 + 0.8) / 2.5 = 1.02.
//
// With the median alone (K = 0 in eq. 2 would be |y − m|), and one interval, the paper's
// remark that α = 1 gives the absolute error: IS_1 of the degenerate interval [m, m] is
// 2|y − m|, and WIS = (½|y − m| + ½·2|y − m|)/1.5 = |y − m|.
func TestWeightedIntervalScoreHand(t *testing.T) {
	ivs := []Interval{{0.5, 7, 14}, {0.1, 4, 20}}
	for _, c := range []struct{ y, want float64 }{{16, 3.02}, {2, 5.42}, {10, 1.02}} {
		if got := WeightedIntervalScore(10, ivs, c.y); math.Abs(got-c.want) > 1e-12 {
			t.Errorf("y = %v: WIS %v, by hand %v", c.y, got, c.want)
		}
	}
	for _, y := range []float64{0, 3, 10, 25} {
		if got := WeightedIntervalScore(10, []Interval{{1, 10, 10}}, y); math.Abs(got-math.Abs(y-10)) > 1e-12 {
			t.Errorf("α = 1 at y = %v: WIS %v, want the absolute error %v", y, got, math.Abs(y-10))
		}
	}
	if !math.IsNaN(WeightedIntervalScore(1, nil, 1)) {
		t.Error("no intervals gave a score")
	}
}
