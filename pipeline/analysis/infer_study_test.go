package analysis

import (
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"sort"
	"strings"
	"testing"

	"github.com/caseweave/caseweave/pipeline/linelist"
	"github.com/caseweave/caseweave/pipeline/simulate"
)

// studyCell is one scenario of the inference study: the process, the share of links
// removed at random, and how many outbreaks.
type studyCell struct {
	R, K    float64
	Missing float64
	Seeds   int
}

// studyOutcome collects, per method, relative bias and coverage of the complete-tree R and k.
type studyOutcome struct {
	biasR, biasK   []float64
	coverR, coverK int
	n              int
}

func (s *studyOutcome) add(est, full *Summary) {
	r, k := est.Offspring.R, est.Offspring.K
	fr, fk := *full.Offspring.R.Estimate, *full.Offspring.K.Estimate
	s.biasR = append(s.biasR, *r.Estimate/fr-1)
	s.biasK = append(s.biasK, *k.Estimate/fk-1)
	if *r.Percentile[0] <= fr && fr <= *r.Percentile[1] {
		s.coverR++
	}
	if *k.Percentile[0] <= fk && fk <= *k.Percentile[1] {
		s.coverK++
	}
	s.n++
}

func median(x []float64) float64 {
	y := append([]float64(nil), x...)
	sort.Float64s(y)
	if len(y)%2 == 1 {
		return y[len(y)/2]
	}
	return (y[len(y)/2-1] + y[len(y)/2]) / 2
}

// studyOutbreak simulates about 2,000–3,000 cases: 600 index cases over 60 days for a
// subcritical R, 150 over 6 generations for a supercritical one, observed after the end.
func studyOutbreak(t *testing.T, R, k float64, seed uint64) []linelist.Case {
	t.Helper()
	sc := simulate.Scenario{R: R, K: k, SerialMean: 5, SerialSD: 2.5, IndexCases: 600, Start: day("2026-01-05"),
		IndexSpreadDays: 60, Jurisdictions: []string{"North", "South"}, Settings: []string{"home"},
		AgeGroups: []string{"18-64"}, StayProbability: 0.95, Seed: seed}
	if R > 1 {
		sc.IndexCases, sc.Generations = 150, 6
	} else {
		until := day("2027-12-31")
		sc.Until = &until
	}
	recs, err := simulate.Run(sc)
	if err != nil {
		t.Fatal(err)
	}
	cases := make([]linelist.Case, len(recs))
	for i, r := range recs {
		cases[i] = linelist.Case{ID: r.ID, InfectorID: r.InfectorID, Onset: r.Onset, Imported: r.Imported, Row: i + 2,
			Strata: &linelist.Strata{Jurisdiction: r.Jurisdiction, Setting: r.Setting, AgeGroup: r.AgeGroup}}
	}
	return cases
}

// runStudy analyses each outbreak of the cell complete, with links removed and ignored, with
// Wallinga–Teunis inference and with augmentation, and returns the outcomes in that order.
func runStudy(t *testing.T, c studyCell, replicates int) [3]*studyOutcome {
	var out [3]*studyOutcome
	for m := range out {
		out[m] = &studyOutcome{}
	}
	zero := 0
	for s := 0; s < c.Seeds; s++ {
		seed := uint64(1000*s + 7)
		cases := studyOutbreak(t, c.R, c.K, seed)
		o := Options{AsOf: day("2028-01-01"), CensorDays: &zero, Replicates: replicates, Seed: seed}
		full := analyse(t, cases, o)
		gappy := append([]linelist.Case(nil), cases...)
		rng := rand.New(rand.NewPCG(seed, 77))
		for i := range gappy {
			if gappy[i].InfectorID != "" && rng.Float64() < c.Missing {
				gappy[i].InfectorID = ""
			}
		}
		ign := analyse(t, gappy, o)
		out[0].add(ign, full)
		line := fmt.Sprintf("seed %d, %d cases: complete R %.3f k %.3f; ignored R %.3f k %.3f", seed, len(cases),
			*full.Offspring.R.Estimate, *full.Offspring.K.Estimate, *ign.Offspring.R.Estimate, *ign.Offspring.K.Estimate)
		for m, method := range []string{InferWallingaTeunis, InferAugmentation} {
			oi := o
			oi.InferMissing, oi.InferMethod = true, method
			s := analyse(t, gappy, oi)
			out[m+1].add(s, full)
			l := s.InferredLinks
			line += fmt.Sprintf("; %s R %s k %s (%.0f%% inferred, stability %.2f)", method, ivText(s.Offspring.R), ivText(s.Offspring.K), 100*l.Share, *l.Stability)
		}
		t.Log(line)
	}
	return out
}

func ivText(e Estimate) string {
	return fmt.Sprintf("%.3f (%.3f–%.3f)", *e.Estimate, *e.Percentile[0], *e.Percentile[1])
}

var studyMethods = [3]string{"links ignored", "Wallinga–Teunis", "augmentation"}

func studyRow(c studyCell, m int, s *studyOutcome) string {
	return fmt.Sprintf("| %.1f | %.1f | %.0f%% | %s | %+.1f%% | %+.1f%% | %d/%d | %d/%d |", c.R, c.K, 100*c.Missing, studyMethods[m],
		100*median(s.biasR), 100*median(s.biasK), s.coverR, s.n, s.coverK, s.n)
}

// The CI version of the inference study (the full grid is TestInferenceStudyLong): R 0.8,
// k 0.3, 20% of links removed, 3 outbreaks. The augmentation's 95% intervals must hold the
// complete-tree R and k in every outbreak and its median relative bias of k stay under 15%,
// while Wallinga–Teunis, spreading the missing infectees by timing alone, biases k high by
// more than the augmentation does (Wallinga & Teunis 2004 weights carry no ν).
func TestInferenceStudySmall(t *testing.T) {
	c := studyCell{R: 0.8, K: 0.3, Missing: 0.2, Seeds: 3}
	out := runStudy(t, c, 100)
	for m, s := range out {
		t.Log(studyRow(c, m, s))
	}
	aug, wt := out[2], out[1]
	if aug.coverR < aug.n || aug.coverK < aug.n {
		t.Errorf("augmentation intervals held the complete-tree R in %d/%d and k in %d/%d outbreaks; want all", aug.coverR, aug.n, aug.coverK, aug.n)
	}
	if b := median(aug.biasK); math.Abs(b) > 0.15 {
		t.Errorf("augmentation median relative bias of k %+.1f%%, want within 15%%", 100*b)
	}
	if b := median(aug.biasR); math.Abs(b) > 0.10 {
		t.Errorf("augmentation median relative bias of R %+.1f%%, want within 10%%", 100*b)
	}
	if median(wt.biasK) < median(aug.biasK)+0.2 {
		t.Errorf("Wallinga–Teunis k bias %+.1f%% should exceed the augmentation's %+.1f%% by 20 points", 100*median(wt.biasK), 100*median(aug.biasK))
	}
}

// TestInferenceStudyLong is the grid of VALIDATION.md: R in {0.8, 1.3}, k in {0.1, 0.3, 1},
// 10%, 20% and 40% of links removed, CASEWEAVE_STUDY_SEEDS outbreaks each (default 20). It
// prints the table and fails when the augmentation misses the targets.
func TestInferenceStudyLong(t *testing.T) {
	if os.Getenv("CASEWEAVE_LONG") != "1" {
		t.Skip("set CASEWEAVE_LONG=1 for the full inference study")
	}
	seeds := 20
	if v := os.Getenv("CASEWEAVE_STUDY_SEEDS"); v != "" {
		fmt.Sscan(v, &seeds)
	}
	var rows []string
	for _, R := range []float64{0.8, 1.3} {
		for _, k := range []float64{0.1, 0.3, 1} {
			for _, miss := range []float64{0.1, 0.2, 0.4} {
				c := studyCell{R: R, K: k, Missing: miss, Seeds: seeds}
				out := runStudy(t, c, 200)
				for m, s := range out {
					rows = append(rows, studyRow(c, m, s))
					t.Log(studyRow(c, m, s))
				}
				aug := out[2]
				if math.Abs(median(aug.biasR)) > 0.1 || math.Abs(median(aug.biasK)) > 0.1 ||
					float64(aug.coverR) < 0.9*float64(aug.n) || float64(aug.coverK) < 0.9*float64(aug.n) {
					t.Errorf("augmentation misses the target: %s", studyRow(c, 2, aug))
				}
			}
		}
	}
	fmt.Println("| R | k | links removed | method | median bias R | median bias k | R covered | k covered |")
	fmt.Println("|---|---|---|---|---|---|---|---|")
	fmt.Println(strings.Join(rows, "\n"))
}
