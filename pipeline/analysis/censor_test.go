package analysis

import (
	"math"
	"sort"
	"testing"

	"github.com/caseweave/caseweave/pipeline/forest"
)

// TestDefaultCensorWindowIsP95 checks the default window: the serial interval's 95th
// percentile rounded up to whole days (common practice), and the cases it leaves out.
func TestDefaultCensorWindowIsP95(t *testing.T) {
	cases, _ := outbreak(t, 0.9, 0.5, 60, 8, "2026-12-31")
	asOf := cases[len(cases)-1].Onset + 3
	s := analyse(t, cases, Options{AsOf: asOf, Replicates: 50, Seed: 1, Likelihood: LikelihoodCensor})
	if s.SerialInterval == nil || s.Settings.CensorDaysSource != "serial_interval_p95" {
		t.Fatalf("no fitted serial interval behind the window: %+v", s.Settings)
	}
	p95 := s.SerialInterval.Quantiles.P95
	w := int(math.Ceil(p95))
	if s.Settings.CensorDays != w {
		t.Fatalf("censoring window %d days, want ceil(p95 = %.4f) = %d", s.Settings.CensorDays, p95, w)
	}
	want := 0
	for _, c := range cases {
		if int(asOf-c.Onset) < w {
			want++
		}
	}
	if s.Offspring.Censored != want {
		t.Fatalf("censored %d cases, want %d (onset fewer than %d days before the analysis date)", s.Offspring.Censored, want, w)
	}
}

// TestClusterCensoringBoundary puts the analysis date exactly w days after the last onset of
// one cluster: that cluster has stopped growing (its last case is w days old, outside the
// window), the same rule as for cases (common practice). Both the size histogram and the
// chain-size fit must count it as complete.
func TestClusterCensoringBoundary(t *testing.T) {
	cases, _ := outbreak(t, 0.9, 0.5, 60, 8, "2026-12-31")
	f := forest.Build(cases)
	last := make([]int, len(f.Clusters))
	for i, c := range f.Clusters {
		last[i] = int(c.LastOnset)
	}
	sort.Ints(last)
	end := cases[len(cases)-1].Onset + 3
	boundary := last[len(last)*7/10] // a cluster that ended well before the analysis date
	w := int(end) - boundary
	if w < 1 {
		t.Fatalf("window %d", w)
	}
	wantCensored, atBoundary := 0, 0
	for _, c := range f.Clusters {
		age := int(end - c.LastOnset)
		if age < w {
			wantCensored++
		}
		if age == w {
			atBoundary++
		}
	}
	if atBoundary == 0 {
		t.Fatal("no cluster on the boundary")
	}
	s := analyse(t, cases, Options{AsOf: end, CensorDays: &w, Replicates: 50, Seed: 1, Likelihood: LikelihoodCensor})
	got := 0
	for _, sc := range s.Clusters.SizeHistogram {
		got += sc.Censored
	}
	if got != wantCensored {
		t.Errorf("size histogram: %d growing clusters, want %d (%d end exactly %d days before the analysis date)", got, wantCensored, atBoundary, w)
	}
	csf := s.Offspring.ChainSizeFit
	if csf == nil {
		t.Fatal("no chain-size fit")
	}
	if csf.Censored != wantCensored || csf.Complete != len(f.Clusters)-wantCensored {
		t.Errorf("chain-size fit: %d censored, %d complete; want %d and %d", csf.Censored, csf.Complete, wantCensored, len(f.Clusters)-wantCensored)
	}
	// The cases on the boundary day are outside the window too.
	wantCases := 0
	for _, c := range cases {
		if int(end-c.Onset) < w {
			wantCases++
		}
	}
	if s.Offspring.Censored != wantCases {
		t.Errorf("censored %d cases, want %d", s.Offspring.Censored, wantCases)
	}
}
