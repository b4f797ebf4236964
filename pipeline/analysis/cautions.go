package analysis

import (
	"fmt"

	"github.com/caseweave/caseweave/pipeline/forest"
)

// Caution kinds: each names one limit of the estimates that the data show.
const (
	CautionSmallSample       = "small_sample"
	CautionUnlinked          = "unlinked"
	CautionCensored          = "censored"
	CautionIncompleteWeek    = "incomplete_week"
	CautionCrossingChains    = "crossing_chains"
	CautionChainSizeWithheld = "chain_size_fit_withheld"
	CautionWithheldCounts    = "withheld_counts"
)

// Caution is one sentence, computed from the numbers of this run, on what the estimates
// cannot tell. Kind lets a template pick or reword them.
type Caution struct {
	Kind string `json:"kind"`
	Text string `json:"text"`
}

func (a *run) caution(kind, format string, args ...any) {
	a.s.Cautions = append(a.s.Cautions, Caution{Kind: kind, Text: fmt.Sprintf(format, args...)})
}

// cautions writes the run's cautions, after every section is filled.
func (a *run) cautions() {
	s := a.s
	if o := s.Offspring; o != nil && o.SmallSample != "" {
		a.caution(CautionSmallSample, "%s", o.SmallSample)
	}
	a.unlinkedCaution()
	if o := s.Offspring; o != nil && o.Censored > 0 && o.Likelihood == LikelihoodTruncation {
		a.caution(CautionCensored, "%s had onset so recently that fewer than %.0f%% of the people they infected are expected in the list yet; they are left out of R and k (they are counted in the outlook). Every other case counts, weighted by the share of its infectees already listed.",
			countOf(o.Censored, "case"), 100*o.ShareFloor)
	} else if o != nil && o.Censored > 0 {
		a.caution(CautionCensored, "%s of the cases had onset in the last %s before the analysis date; the people they infected may not be reported yet, so they are left out of R and k (they are counted in the outlook).",
			countOf(o.Censored, "case"), countOf(o.CensorDays, "day"))
	}
	if as := s.Assessment; as != nil && as.IncompleteFrom != nil {
		a.caution(CautionIncompleteWeek, "The week starting %s is not complete on the analysis date, %s, and later reports will add to it: the epidemic curve draws it lighter, and a fall in that week is no evidence of a fall in cases.",
			as.IncompleteFrom.String(), s.AsOf.String())
	}
	if t := s.Tree; t.CrossingChains > 0 && s.Scope != nil {
		a.caution(CautionCrossingChains, "%s reach beyond %s, with %s elsewhere: their sizes count every case, while the case counts of this report count only its own.",
			countOf(t.CrossingChains, "chain"), s.Scope.Value, countOf(t.CasesElsewhere, "case"))
	}
	if o := s.Offspring; o != nil && o.ChainSizeFit != nil && !o.ChainSizeFit.Informative {
		a.caution(CautionChainSizeWithheld, "The estimate of R and k from chain sizes alone is not shown: %s.", o.ChainSizeFit.Reason)
	}
}

// unlinkedCaution counts the report's cases that are neither imported nor linked to an
// infector. Each starts a chain of its own, so the person who infected it is missing from
// some case's offspring count: if all had an infector among the counted cases, R would be
// higher by up to their number over the cases counted.
func (a *run) unlinkedCaution() {
	n := 0
	for _, i := range a.selected {
		if a.f.Infector[i] == forest.None && !a.cases[i].Imported {
			n++
		}
	}
	if n == 0 {
		return
	}
	share := float64(n) / float64(len(a.selected))
	text := fmt.Sprintf("%s (%.0f%%) were neither imported nor linked to an infector. Each starts a chain of its own, so R is too low by up to one case for each of them",
		countOf(n, "case"), 100*share)
	if o := a.s.Offspring; o != nil && o.N > 0 {
		text += fmt.Sprintf(" (up to %.2f here)", float64(n)/float64(o.N))
	}
	if a.s.InferredLinks != nil {
		text += fmt.Sprintf("; %s of them were given an infector inferred from onset times (%s had no candidate).",
			countOf(a.s.InferredLinks.Inferred, "case"), countOf(a.s.InferredLinks.NoCandidate, "case"))
	} else {
		text += "; --infer-missing assigns them infectors from onset times and the serial interval."
	}
	a.caution(CautionUnlinked, "%s", text)
}

// countOf writes n with its noun, singular for one: "1 case", "37 cases".
func countOf(n int, noun string) string {
	if n == 1 {
		return "1 " + noun
	}
	return fmt.Sprintf("%d %ss", n, noun)
}
