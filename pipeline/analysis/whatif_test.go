package analysis

import (
	"math"
	"slices"
	"testing"

	"github.com/caseweave/caseweave/pipeline/branching"
	"github.com/caseweave/caseweave/pipeline/offspring"
)

// With every case in one age group the outlook by age group is the single-type outlook: its
// R is the offspring fit's R and its extinction probability the outlook's, to rounding.
func TestMultitypeOneGroupIsSingleType(t *testing.T) {
	cases, _ := outbreak(t, 1.4, 0.4, 150, 7, "2026-03-20")
	for i := range cases {
		st := *cases[i].Strata
		st.AgeGroup = "all ages"
		cases[i].Strata = &st
	}
	s := analyse(t, cases, Options{AsOf: day("2026-03-21"), Replicates: 200, Seed: 5, Likelihood: LikelihoodCensor})
	m := s.Multitype
	if m == nil || len(m.Groups) != 1 || m.Groups[0] != "all ages" {
		t.Fatalf("multitype %+v", m)
	}
	if got, want := *m.R.Estimate, s.Offspring.Mean; math.Abs(got-want) > 1e-14*want {
		t.Errorf("one-type R = %.17g, mean offspring %.17g", got, want)
	}
	if got, want := *m.R.Estimate, *s.Offspring.R.Estimate; math.Abs(got-want) > 1e-9*want {
		t.Errorf("one-type R = %.17g, fitted R %.17g", got, want)
	}
	if got, want := m.Extinction[0], *s.Outlook.ExtinctionProbability.Estimate; math.Abs(got-want) > 1e-9 {
		t.Errorf("one-type extinction %.15g, single-type %.15g", got, want)
	}
	if m.K[0] == nil || math.Abs(*m.K[0]-*s.Offspring.K.Estimate) > 1e-12 {
		t.Errorf("one-type k %v, single-type %v", m.K[0], *s.Offspring.K.Estimate)
	}
	if lo, hi := m.R.Percentile[0], m.R.Percentile[1]; lo == nil || hi == nil || !(*lo < *m.R.Estimate && *m.R.Estimate < *hi) {
		t.Errorf("R interval %v–%v around %v", lo, hi, *m.R.Estimate)
	}
	if m.Pooled || m.GenerationShares[0][0] != 1 || m.StableShares[0] != 1 {
		t.Errorf("one type: pooled %v, shares %v, stable %v", m.Pooled, m.GenerationShares, m.StableShares)
	}
}

func TestMultitypeFromAgeGroups(t *testing.T) {
	cases, _ := outbreak(t, 1.3, 0.5, 200, 11, "2026-03-20")
	s := analyse(t, cases, Options{AsOf: day("2026-03-21"), Replicates: 100, Seed: 5, ForecastWeeks: NoForecast})
	m := s.Multitype
	if m == nil || len(m.Groups) != 3 {
		t.Fatalf("multitype %+v", m)
	}
	// Every row sum is its type's mean offspring, and the rows weighted by the types' cases
	// give the single-type mean.
	if m.Extinction == nil || len(m.Matrix) != 3 {
		t.Fatal("no matrix or extinction")
	}
	rho, _ := branching.SpectralRadius(m.Matrix)
	if rho != *m.R.Estimate {
		t.Errorf("R %v is not the matrix's spectral radius %v", *m.R.Estimate, rho)
	}
	for g, row := range m.GenerationShares {
		sum := 0.0
		for _, v := range row {
			sum += v
		}
		if math.Abs(sum-1) > 1e-12 {
			t.Errorf("generation %d shares sum to %v", g+1, sum)
		}
	}
	// Same seed, same numbers on one core.
	s1 := analyse(t, cases, Options{AsOf: day("2026-03-21"), Replicates: 100, Seed: 5, Workers: 1})
	if *s1.Multitype.R.Percentile[0] != *m.R.Percentile[0] || *s1.Control.Strategies[2].Threshold.Percentile[1] != *s.Control.Strategies[2].Threshold.Percentile[1] {
		t.Error("the age-group or control intervals depend on the number of workers")
	}
}

// The pooling rule: groups below MinTypeCases join the next older group, the oldest the next
// younger, until every type reaches it.
func TestPoolGroups(t *testing.T) {
	for _, c := range []struct {
		size []int
		want [][]int
	}{
		{[]int{30, 20, 40}, [][]int{{0}, {1}, {2}}},
		{[]int{3, 20, 40}, [][]int{{0, 1}, {2}}},
		{[]int{30, 20, 4}, [][]int{{0}, {1, 2}}},
		{[]int{5, 4, 40, 2, 9}, [][]int{{0, 1, 2}, {3, 4}}},
		{[]int{1, 2, 3}, [][]int{{0, 1, 2}}},
	} {
		got, typeOf := poolGroups(c.size)
		if !slices.EqualFunc(got, c.want, slices.Equal) {
			t.Errorf("sizes %v: pooled %v, want %v", c.size, got, c.want)
		}
		for tp, ms := range got {
			for _, g := range ms {
				if typeOf[g] != tp {
					t.Errorf("sizes %v: group %d in type %d, typeOf says %d", c.size, g, tp, typeOf[g])
				}
			}
		}
	}
}

// The control curves of the summary are branching.ControlCurve on the fitted model, and
// targeting needs less effort than random removal.
func TestControlSummary(t *testing.T) {
	cases, _ := outbreak(t, 1.6, 0.3, 150, 3, "2026-03-20")
	s := analyse(t, cases, Options{AsOf: day("2026-03-21"), Replicates: 100, Seed: 5, ForecastWeeks: NoForecast})
	c := s.Control
	if c == nil || len(c.Strategies) != 3 || c.Efforts[0] != 0 || c.Efforts[len(c.Efforts)-1] != 1 {
		t.Fatalf("control %+v", c)
	}
	d := offspring.NegBin{R: *s.Offspring.R.Estimate, K: *s.Offspring.K.Estimate}
	for _, st := range c.Strategies {
		pts, err := branching.ControlCurve(d, st.Name, c.Efforts)
		if err != nil {
			t.Fatal(err)
		}
		for i, p := range pts {
			if math.Abs(*st.Extinction[i].Estimate-p.Extinction) > 1e-9 || math.Abs(*st.R[i].Estimate-p.R) > 1e-9 {
				t.Errorf("%s c=%g: summary %v/%v, branching %+v", st.Name, p.Effort, *st.R[i].Estimate, *st.Extinction[i].Estimate, p)
			}
		}
	}
	for _, st := range c.Strategies {
		for i, e := range st.Extinction {
			lo, hi := e.Percentile[0], e.Percentile[1]
			if lo == nil || hi == nil || *lo > *e.Estimate+1e-12 || *hi < *e.Estimate-1e-12 || *hi > 1 {
				t.Errorf("%s c=%g: extinction %v outside its interval %v–%v", st.Name, c.Efforts[i], *e.Estimate, lo, hi)
			}
		}
		// R_c falls with effort at every bound.
		for i := 1; i < len(st.R); i++ {
			if *st.R[i].Percentile[1] > *st.R[i-1].Percentile[1]+1e-12 {
				t.Errorf("%s: upper R bound rises from %v to %v", st.Name, *st.R[i-1].Percentile[1], *st.R[i].Percentile[1])
			}
		}
	}
	if !(*c.Strategies[2].Threshold.Estimate < *c.Strategies[1].Threshold.Estimate) {
		t.Errorf("targeted threshold %v not below random %v", *c.Strategies[2].Threshold.Estimate, *c.Strategies[1].Threshold.Estimate)
	}
	if c.Replicates != 100 {
		t.Errorf("%d replicates", c.Replicates)
	}
}

func TestReleaseMultitype(t *testing.T) {
	cases, _ := outbreak(t, 1.3, 0.5, 200, 11, "2026-03-20")
	s := analyse(t, cases, Options{AsOf: day("2026-03-21"), Replicates: 50, Seed: 5, ForecastWeeks: NoForecast})
	if s.Multitype == nil {
		t.Fatal("no multitype")
	}
	r, err := Release(s, Policy{SuppressBelow: 5})
	if err != nil {
		t.Fatal(err)
	}
	if r.Summary().Multitype == nil {
		t.Error("threshold 5 dropped the age-group outlook")
	}
	r, err = Release(s, Policy{SuppressBelow: MinTypeCases + 1})
	if err != nil {
		t.Fatal(err)
	}
	if r.Summary().Multitype != nil {
		t.Error("a threshold above the pooling threshold kept the age-group outlook")
	}
}

// nextGeneration keeps each row's mean and shares it as the row's infectees with an age group
// are; a row with none takes the shares of all rows, and with none anywhere equal shares.
func TestNextGenerationShares(t *testing.T) {
	M := nextGeneration([]float64{2, 1, 0.5}, [][]float64{{3, 1, 0}, {0, 0, 0}, {0, 0, 0}})
	want := [][]float64{{1.5, 0.5, 0}, {0.75, 0.25, 0}, {0.375, 0.125, 0}}
	for i := range want {
		for j := range want[i] {
			if math.Abs(M[i][j]-want[i][j]) > 1e-15 {
				t.Errorf("M[%d][%d] = %v, want %v", i, j, M[i][j], want[i][j])
			}
		}
	}
	M = nextGeneration([]float64{0.9, 0}, [][]float64{{0, 0}, {0, 0}})
	if M[0][0] != 0.45 || M[0][1] != 0.45 || M[1][0] != 0 {
		t.Errorf("no infectee with an age group: %v", M)
	}
}
