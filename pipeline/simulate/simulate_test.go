package simulate

import (
	"bytes"
	"encoding/csv"
	"math"
	"testing"

	"github.com/caseweave/caseweave/pipeline/forest"
	"github.com/caseweave/caseweave/pipeline/linelist"
)

func day(s string) linelist.Day {
	d, err := linelist.ParseISODay(s)
	if err != nil {
		panic(err)
	}
	return d
}

func scenario(seed uint64) Scenario {
	until := day("2026-03-31")
	return Scenario{
		R: 1.4, K: 0.4, SerialMean: 5, SerialSD: 2.5, IndexCases: 20,
		Start: day("2026-01-05"), IndexSpreadDays: 20, Until: &until,
		Jurisdictions: []string{"North", "South"}, Settings: []string{"home", "work"},
		AgeGroups: []string{"0-17", "18-64", "65+"}, StayProbability: 0.9, AssortativeAge: 0.5,
		Seed: seed,
	}
}

// The forest that caseweave rebuilds from a simulated line list has the statistics the
// simulator's own records imply, computed here without the forest package's logic.
func TestForestMatchesSimulatorRecords(t *testing.T) {
	recs, err := Run(scenario(7))
	if err != nil {
		t.Fatal(err)
	}
	if len(recs) < 100 {
		t.Fatalf("only %d cases; the scenario should grow", len(recs))
	}
	cases := make([]linelist.Case, len(recs))
	for i, r := range recs {
		cases[i] = linelist.Case{ID: r.ID, InfectorID: r.InfectorID, Onset: r.Onset, Row: i + 2}
	}
	f := forest.Build(cases)
	if len(f.Problems) != 0 {
		t.Fatalf("a simulated list should be clean, got %v", f.Problems[0])
	}

	// Independent tally from the records.
	roots, maxGen := 0, 0
	offspring := map[string]int{}
	for _, r := range recs {
		if r.TrueInfector == "" {
			roots++
		} else {
			offspring[r.TrueInfector]++
		}
		if r.Generation > maxGen {
			maxGen = r.Generation
		}
	}
	if f.Roots() != roots || f.Linked != len(recs)-roots || f.MaxGeneration() != maxGen {
		t.Errorf("forest roots %d linked %d maxgen %d; records say %d, %d, %d",
			f.Roots(), f.Linked, f.MaxGeneration(), roots, len(recs)-roots, maxGen)
	}
	for i, r := range recs {
		if int(f.Offspring[i]) != offspring[r.ID] || int(f.Generation[i]) != r.Generation {
			t.Fatalf("case %s: offspring %d gen %d; records say %d, %d", r.ID, f.Offspring[i], f.Generation[i], offspring[r.ID], r.Generation)
		}
		if r.Onset > *scenario(7).Until {
			t.Fatalf("case %s observed after the observation date", r.ID)
		}
	}
}

func TestDeterministic(t *testing.T) {
	a, _ := Run(scenario(3))
	b, _ := Run(scenario(3))
	var wa, wb bytes.Buffer
	if err := WriteCSV(&wa, a, WriteOptions{}); err != nil {
		t.Fatal(err)
	}
	if err := WriteCSV(&wb, b, WriteOptions{}); err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(wa.Bytes(), wb.Bytes()) {
		t.Fatal("same seed, different line lists")
	}
	c, _ := Run(scenario(4))
	if len(c) == len(a) && c[len(c)-1] == a[len(a)-1] {
		t.Fatal("different seeds gave the same outbreak")
	}
}

// The mean offspring of cases in early generations (whose offspring are all observed)
// estimates R: over many index cases with generations capped, the sample mean of all
// non-final-generation cases is within 4 standard errors of R. The standard error uses the
// negative-binomial variance R(1 + R/k) [Lloyd-Smith et al. 2005].
func TestOffspringMeanMatchesR(t *testing.T) {
	sc := scenario(11)
	sc.Until = nil
	sc.Generations = 3
	sc.IndexCases = 4000
	sc.R, sc.K = 0.9, 0.5
	recs, err := Run(sc)
	if err != nil {
		t.Fatal(err)
	}
	off := map[string]int{}
	for _, r := range recs {
		if r.TrueInfector != "" {
			off[r.TrueInfector]++
		}
	}
	n, sum := 0, 0
	for _, r := range recs {
		if r.Generation < sc.Generations {
			n++
			sum += off[r.ID]
		}
	}
	mean := float64(sum) / float64(n)
	se := math.Sqrt(sc.R * (1 + sc.R/sc.K) / float64(n))
	if math.Abs(mean-sc.R) > 4*se {
		t.Fatalf("mean offspring %.4f over %d cases, want %.2f ± %.4f", mean, n, sc.R, 4*se)
	}
}

func TestMissingLinksAndContactColumns(t *testing.T) {
	sc := scenario(5)
	sc.MissingLinks = 0.2
	recs, err := Run(sc)
	if err != nil {
		t.Fatal(err)
	}
	lost, links := 0, 0
	for _, r := range recs {
		if r.TrueInfector != "" {
			links++
			if r.InfectorID == "" {
				lost++
			}
		}
	}
	share := float64(lost) / float64(links)
	if math.Abs(share-0.2) > 4*math.Sqrt(0.2*0.8/float64(links)) {
		t.Fatalf("lost %.3f of %d links, want about 0.2", share, links)
	}
	var buf bytes.Buffer
	if err := WriteCSV(&buf, recs, WriteOptions{ContactColumns: true, ReportDelay: 2}); err != nil {
		t.Fatal(err)
	}
	rows, err := csv.NewReader(&buf).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	want := []string{"case_id", "infector_id", "onset_date", "report_date", "setting", "age_group", "jurisdiction", "imported", "full_name", "phone", "home_address"}
	if len(rows) != len(recs)+1 || len(rows[0]) != len(want) {
		t.Fatalf("rows %d header %v", len(rows), rows[0])
	}
	for i, h := range want {
		if rows[0][i] != h {
			t.Fatalf("header %v, want %v", rows[0], want)
		}
	}
}

func TestValidate(t *testing.T) {
	bad := []func(*Scenario){
		func(s *Scenario) { s.R = -1 },
		func(s *Scenario) { s.R = math.Inf(1) },
		func(s *Scenario) { s.SerialSD = 0 },
		func(s *Scenario) { s.IndexCases = 0 },
		func(s *Scenario) { s.Until = nil; s.Generations = 0 },
		func(s *Scenario) { s.MissingLinks = 2 },
	}
	for i, f := range bad {
		sc := scenario(1)
		f(&sc)
		if _, err := Run(sc); err == nil {
			t.Errorf("case %d: no error", i)
		}
	}
	sc := scenario(1)
	sc.R, sc.Until, sc.Generations, sc.MaxCases = 3, nil, 30, 1000
	if _, err := Run(sc); err == nil {
		t.Error("an exploding outbreak should stop at MaxCases with an error")
	}
}
