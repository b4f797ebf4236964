package timing

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/caseweave/caseweave/pipeline/linelist"
	"gonum.org/v1/gonum/stat/distuv"
)

// tableInterval is a test serial interval given by its daily masses, so Wallinga–Teunis
// weights can be computed by hand with exact fractions.
type tableInterval struct {
	mass []float64 // mass[d] = f(d)
	q99  float64
}

func (s tableInterval) Name() string               { return "table" }
func (s tableInterval) Params() map[string]float64 { return nil }
func (s tableInterval) Mean() float64              { return math.NaN() }
func (s tableInterval) SD() float64                { return math.NaN() }
func (s tableInterval) CDF(t float64) float64      { return math.NaN() }
func (s tableInterval) Survival(t float64) float64 { return math.NaN() }
func (s tableInterval) Validate() error            { return nil }
func (s tableInterval) Quantile(p float64) float64 {
	if p == 0.99 {
		return s.q99
	}
	return math.NaN()
}
func (s tableInterval) DailyMass(d int) float64 {
	if d < 0 || d >= len(s.mass) {
		return 0
	}
	return s.mass[d]
}

// f(0..4) = 0.1, 0.5, 0.3, 0.1, 0; ⌊F⁻¹(0.99)⌋ = 3.
var _ SerialInterval = tableInterval{}

func handInterval() tableInterval {
	return tableInterval{mass: []float64{0.1, 0.5, 0.3, 0.1, 0}, q99: 3.5}
}

// TestWallingaTeunisHand: three cases, by hand [Wallinga & Teunis 2004, eq. for p_ij]:
// A (day 0, imported), B (day 2, recorded infector), C (day 3, no infector).
// C's candidates are A (Δ = 3, f = 0.1) and B (Δ = 1, f = 0.5):
// w_AC = 0.1/0.6 = 1/6, w_BC = 0.5/0.6 = 5/6. Expected offspring: A 1/6, B 5/6, C 0.
func TestWallingaTeunisHand(t *testing.T) {
	x, err := InferInfectors(
		[]linelist.Day{100, 102, 103},
		[]string{"g", "g", "g"},
		[]bool{true, false, false},
		[]bool{false, true, false},
		handInterval())
	if err != nil {
		t.Fatal(err)
	}
	const eps = 1e-15
	if w := x.Weight(0, 2); math.Abs(w-1.0/6) > eps {
		t.Errorf("w_AC = %v, want 1/6", w)
	}
	if w := x.Weight(1, 2); math.Abs(w-5.0/6) > eps {
		t.Errorf("w_BC = %v, want 5/6", w)
	}
	if w := x.Weight(2, 1); w != 0 {
		t.Errorf("w_CB = %v, want 0 (B has a recorded infector)", w)
	}
	e := x.ExpectedOffspring()
	for i, want := range []float64{1.0 / 6, 5.0 / 6, 0} {
		if math.Abs(e[i]-want) > eps {
			t.Errorf("expected offspring[%d] = %v, want %v", i, e[i], want)
		}
	}
	if s := x.Summary(); s.Inferred != 1 || s.NoCandidate != 0 {
		t.Errorf("summary %+v, want 1 inferred, 0 no_candidate", s)
	}
	// The sampler draws A with probability 1/6: 60 000 draws, binomial sd √(n p q) ≈ 91.
	rng := rand.New(rand.NewPCG(3, 5))
	const draws = 60000
	nA := 0
	var dst []int
	for r := 0; r < draws; r++ {
		dst = x.Sample(rng, dst)
		if dst[0] != -1 || dst[1] != -1 {
			t.Fatalf("sample assigned infectors to A or B: %v", dst)
		}
		switch dst[2] {
		case 0:
			nA++
		case 1:
		default:
			t.Fatalf("C's infector %d is not a candidate", dst[2])
		}
	}
	if sd := math.Sqrt(draws * (1.0 / 6) * (5.0 / 6)); math.Abs(float64(nA)-draws/6.0) > 5*sd {
		t.Errorf("A drawn %d of %d times, want %v ± %v", nA, draws, draws/6.0, 5*sd)
	}
}

// TestWallingaTeunisRules: same-day ordering, groups and the window, each by hand.
func TestWallingaTeunisRules(t *testing.T) {
	type tc struct {
		name     string
		onset    []linelist.Day
		group    []string
		imported []bool
		linked   []bool
		weights  map[[2]int]float64 // (i, j) → w_ij; pairs not listed must be 0
		inferred int
		noCand   int
	}
	for _, c := range []tc{
		{
			// X, Y same day, both unlinked: X (first in input) has no candidate, Y's only
			// candidate is X; Z the next day sees X and Y (f(1) each) and, same day, none.
			name:  "same day",
			onset: []linelist.Day{0, 0, 1}, group: []string{"a", "a", "a"},
			imported: []bool{false, false, false}, linked: []bool{false, false, false},
			weights:  map[[2]int]float64{{0, 1}: 1, {0, 2}: 0.5, {1, 2}: 0.5},
			inferred: 2, noCand: 1,
		},
		{
			// Input order decides, not index parity: the later row on the same day is the infectee.
			name:  "same day reversed",
			onset: []linelist.Day{5, 5}, group: []string{"a", "a"},
			imported: []bool{false, false}, linked: []bool{true, false},
			weights:  map[[2]int]float64{{0, 1}: 1},
			inferred: 1,
		},
		{
			// Other group and beyond the 3-day window are no candidates.
			name:  "groups and window",
			onset: []linelist.Day{10, 10, 6, 12}, group: []string{"a", "b", "a", "a"},
			imported: []bool{true, true, true, false}, linked: []bool{false, false, false, false},
			weights:  map[[2]int]float64{{0, 3}: 1},
			inferred: 1,
		},
		{
			// Three candidates at Δ = 1, 2, 2: weights 0.5, 0.3, 0.3 over 1.1.
			name:  "three candidates",
			onset: []linelist.Day{8, 8, 9, 10}, group: []string{"", "", "", ""},
			imported: []bool{true, true, true, false}, linked: []bool{false, false, false, false},
			weights:  map[[2]int]float64{{0, 3}: 0.3 / 1.1, {1, 3}: 0.3 / 1.1, {2, 3}: 0.5 / 1.1},
			inferred: 1,
		},
	} {
		t.Run(c.name, func(t *testing.T) {
			x, err := InferInfectors(c.onset, c.group, c.imported, c.linked, handInterval())
			if err != nil {
				t.Fatal(err)
			}
			n := len(c.onset)
			exp := x.ExpectedOffspring()
			for i := 0; i < n; i++ {
				want := 0.0
				for j := 0; j < n; j++ {
					w := c.weights[[2]int{i, j}]
					want += w
					if got := x.Weight(i, j); math.Abs(got-w) > 1e-15 {
						t.Errorf("w_%d,%d = %v, want %v", i, j, got, w)
					}
				}
				if math.Abs(exp[i]-want) > 1e-15 {
					t.Errorf("expected offspring[%d] = %v, want %v", i, exp[i], want)
				}
			}
			if s := x.Summary(); s.Inferred != c.inferred || s.NoCandidate != c.noCand {
				t.Errorf("summary %+v, want inferred %d, no_candidate %d", s, c.inferred, c.noCand)
			}
		})
	}
}

func TestInferInfectorsInvalid(t *testing.T) {
	d := []linelist.Day{1, 2}
	s := []string{"a", "a"}
	b := []bool{false, false}
	if _, err := InferInfectors(d, s[:1], b, b, handInterval()); err == nil {
		t.Error("length mismatch: no error")
	}
	if _, err := InferInfectors(d, s, b, b, nil); err == nil {
		t.Error("nil serial interval: no error")
	}
	if _, err := InferInfectors(d, s, b, b, GammaInterval{Shape: -1, Rate: 1}); err == nil {
		t.Error("invalid serial interval: no error")
	}
	x, err := InferInfectors(nil, nil, nil, nil, GammaInterval{Shape: 2, Rate: 1})
	if err != nil || len(x.ExpectedOffspring()) != 0 || len(x.Sample(rand.New(rand.NewPCG(1, 1)), nil)) != 0 {
		t.Errorf("empty input: %v", err)
	}
	// Onsets decades apart take the comparison-sort path and must still work.
	far := []linelist.Day{-20000, 0, 20000, 20001}
	x, err = InferInfectors(far, []string{"a", "a", "a", "a"}, []bool{true, true, true, false}, []bool{false, false, false, false},
		GammaInterval{Shape: 2, Rate: 1})
	if err != nil {
		t.Fatal(err)
	}
	if w := x.Weight(2, 3); math.Abs(w-1) > 1e-15 {
		t.Errorf("far onsets: w = %v, want 1", w)
	}
}

// simCase is one case of the simulated outbreak.
type simCase struct {
	onset    float64 // continuous onset, days
	infector int     // −1 for an index case
	group    int
}

// simulateBGW runs a Bienaymé–Galton–Watson process [Harris 1963] to extinction: index
// cases start at uniform times in [0, horizon), each case has NB(R, k) offspring drawn as
// Poisson(Gamma(k, mean R)) [Lloyd-Smith et al. 2005], and each infectee's onset follows
// its infector's by a gamma serial interval. Infectees inherit the group of their index case.
func simulateBGW(rng *rand.Rand, roots, groups int, horizon, r, k float64, si GammaInterval) []simCase {
	nu := distuv.Gamma{Alpha: k, Beta: k / r, Src: rng}
	gap := distuv.Gamma{Alpha: si.Shape, Beta: si.Rate, Src: rng}
	var cases []simCase
	for i := 0; i < roots; i++ {
		cases = append(cases, simCase{onset: rng.Float64() * horizon, infector: -1, group: i % groups})
	}
	for i := 0; i < len(cases) && len(cases) < 1_000_000; i++ {
		z := int(distuv.Poisson{Lambda: nu.Rand(), Src: rng}.Rand())
		for c := 0; c < z; c++ {
			cases = append(cases, simCase{onset: cases[i].onset + gap.Rand(), infector: i, group: cases[i].group})
		}
	}
	return cases
}

// TestWallingaTeunisRecoversOffspring: on a simulated outbreak with 20% of links removed
// at random, mean offspring from recorded counts alone is biased low by about 20%, while
// recorded counts plus Wallinga–Teunis expected counts recover the complete-data mean
// within sampling error. Recovery of the mean is nearly an identity (each inferred case
// hands out one unit of offspring), so the test also checks the sampler (each draw adds
// exactly the inferred links, infectors precede infectees) and that the weights favour the
// true infectors.
func TestWallingaTeunisRecoversOffspring(t *testing.T) {
	rng := rand.New(rand.NewPCG(2024, 6))
	trueSI := GammaInterval{Shape: 6.25, Rate: 1.25} // mean 5, sd 2
	cases := simulateBGW(rng, 1500, 10, 200, 0.8, 0.5, trueSI)
	n := len(cases)
	onset := make([]linelist.Day, n)
	group := make([]string, n)
	imported := make([]bool, n)
	linked := make([]bool, n)
	trueZ := make([]float64, n)
	keptZ := make([]float64, n)
	lost := make([]int, n) // infectees whose link to this case was removed
	var intervals []int
	for i, c := range cases {
		onset[i] = linelist.Day(math.Floor(c.onset))
		group[i] = string(rune('A' + c.group))
		imported[i] = c.infector < 0
	}
	for i, c := range cases {
		if c.infector < 0 {
			continue
		}
		trueZ[c.infector]++
		if rng.Float64() < 0.2 {
			lost[c.infector]++
			continue
		}
		linked[i] = true
		keptZ[c.infector]++
		intervals = append(intervals, int(onset[i]-onset[c.infector]))
	}
	fit, err := FitSerialInterval(intervals, FitOptions{})
	if err != nil {
		t.Fatal(err)
	}
	x, err := InferInfectors(onset, group, imported, linked, fit.Best)
	if err != nil {
		t.Fatal(err)
	}
	exp := x.ExpectedOffspring()
	var sumTrue, sumTrue2, sumKept, sumWT, sumExp float64
	for i := range cases {
		sumTrue += trueZ[i]
		sumTrue2 += trueZ[i] * trueZ[i]
		sumKept += keptZ[i]
		sumWT += keptZ[i] + exp[i]
		sumExp += exp[i]
	}
	nf := float64(n)
	mTrue, mKept, mWT := sumTrue/nf, sumKept/nf, sumWT/nf
	se := math.Sqrt((sumTrue2/nf - mTrue*mTrue) / nf)
	s := x.Summary()
	t.Logf("%d cases, serial interval fit %s mean %.3f (true 5); %d links removed, %d inferred, %d without candidate",
		n, fit.BestModel, fit.Best.Mean(), s.Inferred+s.NoCandidate, s.Inferred, s.NoCandidate)
	t.Logf("mean offspring: complete %.4f (SE %.4f), ignoring gaps %.4f (ratio %.3f), with WT expected counts %.4f",
		mTrue, se, mKept, mKept/mTrue, mWT)

	// Σ_i Σ_j w_ij = number of inferred links (weights are normalised per infectee).
	if math.Abs(sumExp-float64(s.Inferred)) > 1e-9*float64(s.Inferred) {
		t.Errorf("Σ expected offspring = %v, inferred links = %d", sumExp, s.Inferred)
	}
	if math.Abs(mWT-mTrue) > 3*se {
		t.Errorf("WT mean %v not within 3 SE (%v) of complete mean %v", mWT, se, mTrue)
	}
	if !(mKept < mTrue-3*se) || math.Abs(mKept/mTrue-0.8) > 0.03 {
		t.Errorf("ignoring gaps: mean %v, ratio %v; want about 0.8 and below complete − 3 SE", mKept, mKept/mTrue)
	}
	// The weights must carry information: averaged over removed links, the probability
	// w_ij put on the true infector must beat 1/(number of candidates), what an allocation
	// blind to the serial interval would give (candidates counted here by brute force).
	type gd struct {
		g string
		d linelist.Day
	}
	perDay := map[gd]int{}
	seen := map[gd]int{} // cases of the (group, day) met so far in input order
	nCand := make([]int, n)
	for j := range cases {
		k := gd{group[j], onset[j]}
		nCand[j] = seen[k]
		seen[k]++
		perDay[k]++
	}
	var wTruth, wBlind float64
	removed := 0
	for j, c := range cases {
		if c.infector < 0 || linked[j] || !x.Inferred(j) {
			continue
		}
		m := nCand[j]
		for d := 1; d <= x.Window(); d++ {
			m += perDay[gd{group[j], onset[j] - linelist.Day(d)}]
		}
		wTruth += x.Weight(c.infector, j)
		wBlind += 1 / float64(m)
		removed++
	}
	wTruth /= float64(removed)
	wBlind /= float64(removed)
	t.Logf("mean probability on the true infector: WT %.4f, blind to the serial interval %.4f", wTruth, wBlind)
	if !(wTruth > 1.2*wBlind) {
		t.Errorf("WT weights on true infectors %v do not beat the blind allocation %v", wTruth, wBlind)
	}

	assign := x.Sample(rand.New(rand.NewPCG(9, 9)), nil)
	got := 0
	for j, i := range assign {
		if i < 0 {
			continue
		}
		got++
		if group[i] != group[j] || onset[i] > onset[j] || (onset[i] == onset[j] && i >= j) || int(onset[j]-onset[i]) > x.Window() {
			t.Fatalf("sampled infector %d of %d breaks the candidate rules", i, j)
		}
	}
	if got != s.Inferred {
		t.Errorf("sample assigned %d infectors, want %d", got, s.Inferred)
	}
}

// TestWallingaTeunisPerCellMatchesPairs: the per-(group, day) computation must equal the
// pairwise definition: Σ_i w_ij = 1 for every inferred j and ExpectedOffspring()[i] =
// Σ_j w_ij, with w_ij from Weight (itself checked by hand above). Random small line list
// with many same-day ties, three groups and a fitted-style gamma interval.
func TestWallingaTeunisPerCellMatchesPairs(t *testing.T) {
	rng := rand.New(rand.NewPCG(77, 78))
	const n = 400
	onset := make([]linelist.Day, n)
	group := make([]string, n)
	imported := make([]bool, n)
	linked := make([]bool, n)
	for i := range onset {
		onset[i] = linelist.Day(rng.IntN(30))
		group[i] = []string{"x", "y", "z"}[rng.IntN(3)]
		imported[i] = rng.Float64() < 0.1
		linked[i] = !imported[i] && rng.Float64() < 0.5
	}
	for i, g := range []string{"x", "y", "z"} { // the first case of each group has no candidate
		onset[i], group[i], imported[i], linked[i] = -5, g, false, false
	}
	si, _ := FixedGamma(4, 2)
	x, err := InferInfectors(onset, group, imported, linked, si)
	if err != nil {
		t.Fatal(err)
	}
	exp := x.ExpectedOffspring()
	rowSum := make([]float64, n)
	inferred, noCand := 0, 0
	for j := 0; j < n; j++ {
		col := 0.0
		for i := 0; i < n; i++ {
			w := x.Weight(i, j)
			col += w
			rowSum[i] += w
		}
		switch {
		case x.Inferred(j):
			inferred++
			if math.Abs(col-1) > 1e-12 {
				t.Errorf("case %d: Σ_i w_ij = %v, want 1", j, col)
			}
		case !imported[j] && !linked[j]:
			noCand++
		}
	}
	for i := range rowSum {
		if math.Abs(rowSum[i]-exp[i]) > 1e-12 {
			t.Errorf("case %d: expected offspring %v, Σ_j w_ij %v", i, exp[i], rowSum[i])
		}
	}
	if s := x.Summary(); s.Inferred != inferred || s.NoCandidate != noCand || inferred == 0 || noCand == 0 {
		t.Errorf("summary %+v, counted inferred %d, no_candidate %d", s, inferred, noCand)
	}
}
