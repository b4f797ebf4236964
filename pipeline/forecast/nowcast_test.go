package forecast

import (
	"encoding/csv"
	"math"
	"os"
	"strconv"
	"testing"

	"github.com/caseweave/caseweave/pipeline/linelist"
)

func readCSV(t *testing.T, path string) [][]string {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	rows, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	return rows[1:]
}

// TestTruncatedDelayReference checks the reverse-time hazard estimate against R's direct
// numerical maximisation of the right-truncated likelihood on the same fixture
// (testdata/truncated_delay.R, R 4.2.2, optim BFGS).
func TestTruncatedDelayReference(t *testing.T) {
	var cases []Reported
	for _, r := range readCSV(t, "testdata/truncated_delay_cases.csv") {
		on, _ := strconv.Atoi(r[0])
		rep, _ := strconv.Atoi(r[1])
		cases = append(cases, Reported{Onset: linelist.Day(on), Report: linelist.Day(rep)})
	}
	got, err := TruncatedDelay(cases, 40)
	if err != nil {
		t.Fatal(err)
	}
	ref := readCSV(t, "testdata/truncated_delay_ref.csv")
	if len(got) != len(ref) {
		t.Fatalf("%d delays, R has %d", len(got), len(ref))
	}
	plain := make([]float64, len(got))
	for _, c := range cases {
		plain[c.Report-c.Onset] += 1 / float64(len(cases))
	}
	moved := 0.0
	for d, r := range ref {
		want, _ := strconv.ParseFloat(r[1], 64)
		if math.Abs(got[d]-want) > 2e-5 {
			t.Errorf("P(D = %d) = %.7f, R's maximum likelihood %.7f", d, got[d], want)
		}
		moved = math.Max(moved, math.Abs(plain[d]-want))
	}
	// The fixture is truncated enough that the correction matters: the plain shares are off.
	if moved < 0.01 {
		t.Errorf("the plain shares are within %.4f of the truncated estimate: the fixture checks nothing", moved)
	}
}

// TestTruncatedDelayNoTruncation: when every onset is older than the longest delay, the
// estimate is the plain shares (the reverse-time hazards telescope to n(d)/n).
func TestTruncatedDelayNoTruncation(t *testing.T) {
	cases := []Reported{{0, 0}, {0, 1}, {1, 3}, {2, 3}, {2, 2}, {3, 6}}
	got, err := TruncatedDelay(cases, 100)
	if err != nil {
		t.Fatal(err)
	}
	want := []float64{2.0 / 6, 2.0 / 6, 1.0 / 6, 1.0 / 6}
	for d := range want {
		if math.Abs(got[d]-want[d]) > 1e-12 {
			t.Errorf("P(D = %d) = %v, want %v", d, got[d], want[d])
		}
	}
}

// TestTruncatedDelayHand works the reverse-time hazard by hand on a small truncated set,
// analysis day 5: delays 0 (onsets 0, 5), 1 (onsets 0, 3, 4), 2 (onsets 1, 2).
// R(2) = cases of onset ≤ 3 with delay ≤ 2 = 5, g(2) = 2/5; R(1) = onset ≤ 4, delay ≤ 1 = 4,
// g(1) = 3/4. F(2) = 1, F(1) = 3/5, F(0) = 3/5 · 1/4 = 3/20.
func TestTruncatedDelayHand(t *testing.T) {
	cases := []Reported{{0, 0}, {5, 5}, {0, 1}, {3, 4}, {4, 5}, {1, 3}, {2, 4}}
	got, err := TruncatedDelay(cases, 5)
	if err != nil {
		t.Fatal(err)
	}
	want := []float64{3.0 / 20, 3.0/5 - 3.0/20, 2.0 / 5}
	for d := range want {
		if math.Abs(got[d]-want[d]) > 1e-12 {
			t.Errorf("P(D = %d) = %v, want %v", d, got[d], want[d])
		}
	}
	if _, err := TruncatedDelay([]Reported{{3, 2}}, 5); err == nil {
		t.Error("a report before the onset was accepted")
	}
	if _, err := TruncatedDelay(nil, 5); err == nil {
		t.Error("no cases was accepted")
	}
}

// TestNowcastRecovers: on onset days from a known delay, truncated at the analysis date,
// the nowcast's 90% intervals cover the final counts of most days, its expected counts sum
// close to the truth, and it is the same for the same seed.
func TestNowcastRecovers(t *testing.T) {
	var cases []Reported
	for _, r := range readCSV(t, "testdata/truncated_delay_cases.csv") {
		on, _ := strconv.Atoi(r[0])
		rep, _ := strconv.Atoi(r[1])
		cases = append(cases, Reported{Onset: linelist.Day(on), Report: linelist.Day(rep)})
	}
	var onsets []linelist.Day
	for _, c := range cases {
		onsets = append(onsets, c.Onset)
	}
	o := NowcastOptions{AsOf: 40, Days: 14, Seed: 3}
	a, err := Nowcast(onsets, cases, o)
	if err != nil {
		t.Fatal(err)
	}
	b, _ := Nowcast(onsets, cases, o)
	for i, d := range a.Days {
		if d != b.Days[i] {
			t.Fatalf("day %d differs between two runs with one seed", i)
		}
		if d.P90[0] < d.Observed || d.P90[0] > d.P50[0] || d.P50[0] > d.Median || d.Median > d.P50[1] || d.P50[1] > d.P90[1] {
			t.Errorf("day %v: intervals out of order: %+v", d.Onset, d)
		}
	}
	last := a.Days[len(a.Days)-1]
	if last.Onset != 40 || !(last.Reported < 0.2) || last.P90[1] <= last.Observed {
		t.Errorf("the analysis day is not nowcast as mostly unreported: %+v", last)
	}
	first := a.Days[0]
	if first.Reported < 0.99 || first.P90[1] != first.Observed {
		t.Errorf("a day older than the longest delay is not taken as complete: %+v", first)
	}
	// The expected counts follow the growth the fixture was made with (R script: mean
	// 2·exp(0.06 t) a day, of which the share F(40 − t) reported); summed over the 14 days
	// the truth's mean is Σ 2e^{0.06t}.
	var sumExp, sumTrue float64
	for _, d := range a.Days {
		sumExp += d.Expected
		sumTrue += 2 * math.Exp(0.06*float64(d.Onset))
	}
	if math.Abs(sumExp-sumTrue)/sumTrue > 0.3 {
		t.Errorf("nowcast total %.1f, the fixture's mean %.1f", sumExp, sumTrue)
	}
	if len(a.Weeks) < 2 || a.Weeks[len(a.Weeks)-1].P90[1] < a.Weeks[len(a.Weeks)-1].Observed {
		t.Errorf("weeks: %+v", a.Weeks)
	}
}

func TestNowcastRejectsWhatItCannotUse(t *testing.T) {
	rep := []Reported{{0, 1}, {1, 2}}
	for name, c := range map[string]struct {
		onsets []linelist.Day
		rep    []Reported
		o      NowcastOptions
	}{
		"no days":        {nil, rep, NowcastOptions{AsOf: 5}},
		"future onset":   {[]linelist.Day{6}, rep, NowcastOptions{AsOf: 5, Days: 3}},
		"no delays":      {[]linelist.Day{1}, nil, NowcastOptions{AsOf: 5, Days: 3}},
		"late report":    {[]linelist.Day{1}, []Reported{{1, 9}}, NowcastOptions{AsOf: 5, Days: 3}},
		"report < onset": {[]linelist.Day{1}, []Reported{{3, 2}}, NowcastOptions{AsOf: 5, Days: 3}},
	} {
		if _, err := Nowcast(c.onsets, c.rep, c.o); err == nil {
			t.Errorf("%s: accepted", name)
		}
	}
}
