package analysis

import (
	"fmt"
	"math"
	"slices"
	"sort"
	"strconv"
	"strings"

	"github.com/caseweave/caseweave/pipeline/branching"
	"github.com/caseweave/caseweave/pipeline/forest"
	"github.com/caseweave/caseweave/pipeline/internal/numeric"
	"github.com/caseweave/caseweave/pipeline/linelist"
	"github.com/caseweave/caseweave/pipeline/offspring"
)

// ControlEfforts are the control efforts of Summary.Control: every 1% up to 5%, where
// targeting the most infectious cases already changes most when k is small, then coarser
// steps to 1.
var ControlEfforts = []float64{0, 0.01, 0.02, 0.03, 0.04, 0.05, 0.075, 0.1, 0.125, 0.15, 0.2, 0.25, 0.3, 0.4, 0.5, 0.6, 0.7, 0.8, 0.9, 1}

// controlReplicates caps the bootstrap replicates behind the control intervals: each one
// costs an extinction root at every effort of three strategies (about 0.3 ms in all, the
// targeted ones by incomplete gamma functions), and 500 keeps a 95% percentile bound's
// Monte-Carlo error to a few hundredths of its width (Efron & Tibshirani 1993, ch. 13,
// note that some hundreds suffice for percentile bounds, more for their exact place).
const controlReplicates = 500

// controlInterval is run.interval over the first controlReplicates replicates (and the
// whole jackknife, for BCa).
func (a *run) controlInterval(stat func(offspring.Params) float64, est float64) Estimate {
	sub := *a.boot
	if len(sub.Replicates) > controlReplicates {
		sub.Replicates = sub.Replicates[:controlReplicates]
	}
	b := *a
	b.boot = &sub
	return b.interval(stat, est)
}

// control fills Summary.Control: the three strategies of branching.Controlled applied to
// the fitted offspring model, each effort's R and extinction probability with intervals over
// the offspring bootstrap's replicates, and the effort that brings R to 1.
func (a *run) control() {
	if a.fit == nil || a.boot == nil {
		return
	}
	point := a.boot.Estimate
	d := a.family.Distribution(point)
	ctl := &Control{Model: d.Name(), Efforts: slices.Clone(ControlEfforts), Replicates: min(len(a.boot.Replicates), controlReplicates),
		AboveOne: d.Mean() > 1}
	for _, name := range branching.ControlStrategies {
		if _, err := branching.Controlled(d, name, 0); err != nil {
			a.note("No %s control scenario: %v.", name, err)
			continue
		}
		st := ControlStrategy{Name: name}
		for _, c := range ctl.Efforts {
			controlled := func(p offspring.Params) offspring.Distribution {
				dc, err := branching.Controlled(a.family.Distribution(p), name, c)
				if err != nil {
					return nil
				}
				return dc
			}
			rc := func(p offspring.Params) float64 {
				if dc := controlled(p); dc != nil {
					return dc.Mean()
				}
				return math.NaN()
			}
			qc := func(p offspring.Params) float64 {
				if dc := controlled(p); dc != nil {
					if q, err := branching.ExtinctionProbability(dc); err == nil {
						return q
					}
				}
				return math.NaN()
			}
			st.R = append(st.R, a.controlInterval(rc, rc(point)))
			st.Extinction = append(st.Extinction, a.controlInterval(qc, qc(point)))
		}
		thr := func(p offspring.Params) float64 {
			c, err := branching.ControlThreshold(a.family.Distribution(p), name)
			if err != nil {
				return math.NaN()
			}
			return c
		}
		st.Threshold = a.controlInterval(thr, thr(point))
		ctl.Strategies = append(ctl.Strategies, st)
	}
	if len(ctl.Strategies) > 0 {
		a.s.Control = ctl
	}
}

// MinTypeCases is the pooling threshold of the age-group outlook: every type rests on at
// least this many cases outside the censoring window, so that its mean offspring and its
// dispersion are estimated from more than a handful of cases (common practice; a
// negative-binomial k from fewer cases is rarely better than a guess).
const MinTypeCases = 10

// multitypeReplicates caps the bootstrap behind the age-group R: 1000 for a percentile
// interval (Efron & Tibshirani 1993, ch. 13, recommend ≥ 1000), each replicate one binomial
// draw per distinct case profile and one eigenvalue problem of the size of the age groups.
// multitypeBudget bounds the binomial draws in all (about a quarter of a second of one core
// at the ~0.25 µs each measured on the 1M-case benchmark); a national line list, with many
// distinct profiles, gets fewer replicates, never fewer than multitypeMinReplicates, and its
// interval is then already narrow.
const (
	multitypeReplicates    = 1000
	multitypeMinReplicates = 200
	multitypeBudget        = 1_000_000
	streamMultitype        = 0x6d74
)

// poolRule states the pooling rule in the report's words.
var poolRule = fmt.Sprintf("an age group with fewer than %d cases outside the censoring window is joined to the next older group (the oldest to the next younger), and the check repeats until every group reaches %d", MinTypeCases, MinTypeCases)

// typedCase is one case of the age-group outlook: its type, its offspring in all, and its
// offspring of each type (infectees with an age group).
type typedCase struct {
	typ   int
	total int
	known []int
}

// multitype fills Summary.Multitype from the infector links by age group.
func (a *run) multitype() {
	if a.s.Offspring == nil || a.s.Offspring.N < 2 {
		return
	}
	// The types: every age group among the counted cases and their infectees, in age order.
	counted := make([]bool, len(a.cases))
	var groups []string
	seen := map[string]bool{}
	addGroup := func(g string) {
		if g != "" && !seen[g] {
			seen[g] = true
			groups = append(groups, g)
		}
	}
	unknownAge := 0
	for _, i := range a.selected {
		if a.censored(i) {
			continue
		}
		if a.cases[i].AgeGroup == "" {
			unknownAge++
			continue
		}
		counted[i] = true
		addGroup(a.cases[i].AgeGroup)
	}
	for j := range a.cases {
		if i := a.f.Infector[j]; i != forest.None && counted[i] {
			addGroup(a.cases[j].AgeGroup)
		}
	}
	if len(groups) == 0 {
		return
	}
	sortCategories(linelist.ColAgeGroup, groups)
	size := make([]int, len(groups))
	index := map[string]int{}
	for g, name := range groups {
		index[name] = g
	}
	for i := range a.cases {
		if counted[i] {
			size[index[a.cases[i].AgeGroup]]++
		}
	}
	members, typeOf := poolGroups(size)
	total := 0
	for _, n := range size {
		total += n
	}
	if total < MinTypeCases {
		a.note("No outlook by age group: only %d cases outside the censoring window have an age group, fewer than the %d one group needs.", total, MinTypeCases)
		return
	}
	n := len(members)
	m := &Multitype{MinCases: MinTypeCases, PoolRule: poolRule, Pooled: n < len(groups), Start: "active"}
	for _, ms := range members {
		names := make([]string, len(ms))
		for k, g := range ms {
			names[k] = groups[g]
		}
		m.Groups = append(m.Groups, strings.Join(names, " + "))
	}

	// Each counted case with its offspring by type.
	cases := make([]typedCase, 0, total)
	pos := make([]int, len(a.cases))
	knownAll := make([]int, total*n) // one allocation for every case's counts by type
	for i := range a.cases {
		pos[i] = -1
		if counted[i] {
			k := len(cases)
			pos[i] = k
			cases = append(cases, typedCase{typ: typeOf[index[a.cases[i].AgeGroup]], total: int(a.f.Offspring[i]),
				known: knownAll[k*n : (k+1)*n : (k+1)*n]})
		}
	}
	unknownInfectees := 0
	for j := range a.cases {
		i := a.f.Infector[j]
		if i == forest.None || pos[i] < 0 {
			continue
		}
		if g := a.cases[j].AgeGroup; g != "" {
			cases[pos[i]].known[typeOf[index[g]]]++
		} else {
			unknownInfectees++
		}
	}
	m.UnknownAge, m.UnknownInfectees = count(unknownAge), count(unknownInfectees)
	// Each type's cases as distinct profiles (offspring in all, offspring by type) with how
	// many cases share each, in order of first appearance: the bootstrap draws profile counts
	// as a multinomial, so its cost does not grow with the number of cases.
	profiles := make([][]typedCase, n)
	weights := make([][]int, n)
	seenProfile := make([]map[string]int, n)
	var key []byte
	for _, tc := range cases {
		t := tc.typ
		if seenProfile[t] == nil {
			seenProfile[t] = map[string]int{}
		}
		key = strconv.AppendInt(key[:0], int64(tc.total), 10)
		for _, v := range tc.known {
			key = strconv.AppendInt(append(key, ','), int64(v), 10)
		}
		p, ok := seenProfile[t][string(key)]
		if !ok {
			p = len(profiles[t])
			seenProfile[t][string(key)] = p
			profiles[t] = append(profiles[t], tc)
			weights[t] = append(weights[t], 0)
		}
		weights[t][p]++
	}
	caseCount := make([]int, n)
	for t := range weights {
		for _, w := range weights[t] {
			caseCount[t] += w
		}
	}
	draw := func(w [][]int) [][]float64 {
		sums := make([]float64, n)
		known := make([][]float64, n)
		for t := range profiles {
			known[t] = make([]float64, n)
			for p, c := range profiles[t] {
				sums[t] += float64(w[t][p] * c.total)
				for j, v := range c.known {
					known[t][j] += float64(w[t][p] * v)
				}
			}
			sums[t] /= float64(caseCount[t])
		}
		return nextGeneration(sums, known)
	}
	M := draw(weights)
	m.Matrix = M

	// Negative-binomial totals per type, with the row's mean.
	totals := make([]offspring.Distribution, n)
	m.K = make([]*float64, n)
	for t := range profiles {
		freq := map[int]int{}
		for p, c := range profiles[t] {
			freq[c.total] += weights[t][p]
		}
		R := 0.0
		for _, v := range M[t] {
			R += v
		}
		if R == 0 {
			totals[t] = offspring.Poisson{R: 0} // no offspring at all
			continue
		}
		fit, err := a.family.Fit(offspring.FromMap(freq))
		if err != nil {
			a.note("No outlook by age group: the %s model could not be fitted to the %s group: %v.", a.family.Name(), m.Groups[t], err)
			return
		}
		p := slices.Clone(fit.Params)
		p[offspring.ParamR] = R
		totals[t] = a.family.Distribution(p)
		if v, _, ok := fit.Param("k"); ok {
			m.K[t] = numeric.FinitePtr(v)
		}
	}
	mt, err := branching.NewMultitype(M, func(_ float64, t int) offspring.Distribution { return totals[t] })
	if err != nil {
		a.note("No outlook by age group: %v.", err)
		return
	}
	rho, err := branching.SpectralRadius(M)
	if err != nil {
		a.note("No outlook by age group: %v.", err)
		return
	}
	if m.Extinction, err = mt.MultitypeExtinction(); err != nil {
		a.note("No extinction probabilities by age group: %v.", err)
	}
	if m.StableShares, err = branching.StableShares(M); err != nil {
		a.note("No long-run shares by age group: %v.", err)
	}
	start := make([]float64, n)
	active := 0.0
	for _, i := range a.selected {
		if a.censored(i) && a.cases[i].AgeGroup != "" {
			if g, ok := index[a.cases[i].AgeGroup]; ok {
				start[typeOf[g]]++
				active++
			}
		}
	}
	if active == 0 {
		m.Start = "all"
		for t, c := range caseCount {
			start[t] = float64(c)
		}
	}
	m.GenerationShares, _ = branching.GenerationShares(M, start, a.o.Generations) // lengths agree

	// Bootstrap: cases resampled with replacement within each type, as multinomial counts of
	// its profiles.
	B := min(a.o.Replicates, multitypeReplicates)
	cells := 0
	for t := range weights {
		cells += len(weights[t])
	}
	if B*cells > multitypeBudget {
		B = min(B, max(multitypeMinReplicates, multitypeBudget/cells))
	}
	conds := make([][]float64, n)
	draws := make([][]int, n)
	for t := range weights {
		conds[t] = numeric.ConditionalShares(weights[t])
		draws[t] = make([]int, len(weights[t]))
	}
	reps := make([]float64, 0, B)
	for b := 0; b < B; b++ {
		rng := numeric.StreamRand(a.o.Seed+streamMultitype, b)
		for t := range conds {
			numeric.Multinomial(rng, caseCount[t], conds[t], draws[t])
		}
		if r, err := branching.SpectralRadius(draw(draws)); err == nil {
			reps = append(reps, r)
		}
	}
	m.Replicates = len(reps)
	m.R = Estimate{Estimate: numeric.FinitePtr(rho)}
	if len(reps) > 0 {
		sort.Float64s(reps)
		lo, hi := (1-a.o.Level)/2, (1+a.o.Level)/2
		m.R.Percentile = [2]*float64{numeric.FinitePtr(numeric.Quantile7(reps, lo)), numeric.FinitePtr(numeric.Quantile7(reps, hi))}
	}
	if a.infer != nil {
		a.note("The outlook by age group uses the recorded infector links only, not the inferred ones.")
	}
	a.s.Multitype = m
}

// poolGroups applies poolRule to the case counts of the age groups (in age order): it
// returns the members of each type and the type of each group.
func poolGroups(size []int) (members [][]int, typeOf []int) {
	var sizes []int
	for g, n := range size {
		members = append(members, []int{g})
		sizes = append(sizes, n)
	}
	for len(members) > 1 {
		small := slices.IndexFunc(sizes, func(n int) bool { return n < MinTypeCases })
		if small < 0 {
			break
		}
		into := small + 1 // the next older group
		if into == len(members) {
			into = small - 1 // the oldest joins the next younger
		}
		lo, hi := min(small, into), max(small, into)
		members[lo] = append(members[lo], members[hi]...)
		sizes[lo] += sizes[hi]
		members = slices.Delete(members, hi, hi+1)
		sizes = slices.Delete(sizes, hi, hi+1)
	}
	typeOf = make([]int, len(size))
	for t, ms := range members {
		for _, g := range ms {
			typeOf[g] = t
		}
	}
	return members, typeOf
}

// nextGeneration is M_ij = mean[i]·known[i][j]/Σ_l known[i][l]: each type's mean offspring
// (every infectee counted, as in the single-type fit) shared among the types as its
// infectees with an age group are; a row with none of those takes the shares of all rows
// together, and if no infectee anywhere has an age group the shares are equal.
func nextGeneration(mean []float64, known [][]float64) [][]float64 {
	n := len(mean)
	all := make([]float64, n)
	allSum := 0.0
	for _, row := range known {
		for j, v := range row {
			all[j] += v
			allSum += v
		}
	}
	M := make([][]float64, n)
	for i, row := range known {
		M[i] = make([]float64, n)
		shares, sum := row, 0.0
		for _, v := range row {
			sum += v
		}
		if sum == 0 {
			shares, sum = all, allSum
		}
		for j := range M[i] {
			if sum > 0 {
				M[i][j] = mean[i] * shares[j] / sum
			} else {
				M[i][j] = mean[i] / float64(n)
			}
		}
	}
	return M
}

// releaseMultitype applies the disclosure policy to the age-group outlook: its counts of
// cases and infectees without an age group are withheld below the threshold, and the whole
// outlook is left out when the threshold exceeds MinCases, since a type's mean offspring
// could then rest on fewer cases than a stratum's mean may (see Release).
func releaseMultitype(c *Summary, thr int) {
	m := c.Multitype
	if m == nil {
		return
	}
	if thr > m.MinCases {
		c.Multitype = nil
		c.Notes = append(c.Notes, fmt.Sprintf("The outlook by age group is left out: its groups may rest on as few as %d cases, below the suppression threshold of %d.", m.MinCases, thr))
		return
	}
	for _, p := range []**int{&m.UnknownAge, &m.UnknownInfectees} {
		if *p != nil && **p > 0 && **p < thr {
			*p = nil
		}
	}
}
