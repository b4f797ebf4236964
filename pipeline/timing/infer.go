package timing

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"sort"

	"github.com/caseweave/caseweave/pipeline/linelist"
)

// InferredLinks is the inferred-links section of the JSON summary.
type InferredLinks struct {
	// Inferred is the number of non-imported cases without a recorded infector that have
	// at least one candidate infector; each spreads one unit of offspring over them.
	Inferred int
	// NoCandidate is the number of such cases with no candidate (no earlier case in the
	// group within the window): they stay roots.
	NoCandidate int
}

// Infectors holds Wallinga–Teunis infector probabilities for the cases without a recorded
// infector [Wallinga & Teunis 2004, Am J Epidemiol 160:509]. For a non-imported case j
// with no recorded infector, every earlier case i of the same group is a candidate with
//
//	w_ij = f(t_j − t_i) / Σ_l f(t_j − t_l),   f(d) = SerialInterval.DailyMass(d),
//
// the sum running over j's candidates. Candidates are cases with t_i < t_j, or t_i = t_j
// and i before j in input order, and t_j − t_i ≤ ⌊F⁻¹(0.99)⌋ days. The same-day rule
// orders the cases strictly by (onset, input position), so inferred links alone can never
// form a cycle. (Together with recorded links they can, in the rare case where j's recorded
// descendant has an earlier onset than j and is drawn as j's infector; offspring counts
// are unaffected, but a caller building trees must check.)
//
// Nothing is stored per pair. w_ij depends on i only through its day, so per (group, day)
// cell the model keeps the case count c_d: case j's normaliser is
// Z_j = Σ_{Δ=1..D} c_{t_j−Δ} f(Δ) + (position of j among its same-day cases)·f(0), its
// infector falls on day d with probability c_d f(t_j − d)/Z_j and is uniform within the
// day, and a case on day d expects Σ_j f(t_j − d)/Z_j inferred offspring, summed per
// (group, day) cell plus a suffix sum for the same-day term. Building costs
// O(cases + cells × D); one Sample costs O(log D) per inferred case.
type Infectors struct {
	n        int
	window   int       // D
	f        []float64 // f[Δ] = DailyMass(Δ), Δ = 0..D
	order    []int32   // case indices sorted by (group, day, input index)
	cells    []cell
	caseCell []int32
	casePos  []int32
	z        []float64 // Z_j for inferred cases, 0 otherwise
	expected []float64
	// Predecessor cells of cell e (with inferred cases): predCells[predStart[e]:predStart[e+1]],
	// nearest day first, with cumulative masses predCum (Σ c_p f(Δ_p)).
	predStart []int32
	predCells []int32
	predCum   []float64
	summary   InferredLinks
}

type cell struct {
	group int32
	day   linelist.Day
	start int32 // offset into order
	count int32
}

// InferInfectors prepares Wallinga–Teunis infector probabilities. All slices have one
// entry per case: onset day, group key (jurisdiction, or a cluster hint; candidates are
// restricted to the same key), imported flag, and whether a recorded infector exists.
// Imported cases and cases with a recorded infector are never assigned an infector, but
// every case may be a candidate infector.
func InferInfectors(onset []linelist.Day, group []string, imported, linked []bool, si SerialInterval) (*Infectors, error) {
	n := len(onset)
	if len(group) != n || len(imported) != n || len(linked) != n {
		return nil, fmt.Errorf("inferred infectors: %d onsets, %d groups, %d imported flags, %d linked flags; want equal lengths",
			n, len(group), len(imported), len(linked))
	}
	if n > math.MaxInt32 {
		return nil, fmt.Errorf("inferred infectors: %d cases is more than %d", n, math.MaxInt32)
	}
	if si == nil {
		return nil, fmt.Errorf("inferred infectors: no serial interval")
	}
	if err := si.Validate(); err != nil {
		return nil, fmt.Errorf("inferred infectors: %w", err)
	}
	q99 := si.Quantile(0.99)
	if math.IsNaN(q99) || q99 < 0 {
		return nil, fmt.Errorf("inferred infectors: serial interval 99th percentile %v", q99)
	}
	x := &Infectors{n: n, expected: make([]float64, n), z: make([]float64, n)}
	if n == 0 {
		x.f = []float64{si.DailyMass(0)}
		return x, nil
	}

	// Window D = ⌊F⁻¹(0.99)⌋, capped by the span of onsets (no pair can be further apart).
	minDay, maxDay := onset[0], onset[0]
	for _, t := range onset {
		minDay, maxDay = min(minDay, t), max(maxDay, t)
	}
	span := int64(maxDay) - int64(minDay)
	d := int64(math.Min(math.Floor(q99), float64(span)))
	x.window = int(d)
	x.f = make([]float64, x.window+1)
	for i := range x.f {
		x.f[i] = si.DailyMass(i)
	}

	gid := make([]int32, n)
	ids := map[string]int32{}
	for i, g := range group {
		id, ok := ids[g]
		if !ok {
			id = int32(len(ids))
			ids[g] = id
		}
		gid[i] = id
	}
	x.order = sortByGroupDay(onset, gid, minDay, span, len(ids))

	// Cells and each case's cell and position (its rank among same-day cases).
	x.caseCell = make([]int32, n)
	x.casePos = make([]int32, n)
	for k, ci := range x.order {
		if k == 0 || gid[ci] != x.cells[len(x.cells)-1].group || onset[ci] != x.cells[len(x.cells)-1].day {
			x.cells = append(x.cells, cell{group: gid[ci], day: onset[ci], start: int32(k)})
		}
		c := &x.cells[len(x.cells)-1]
		x.caseCell[ci] = int32(len(x.cells) - 1)
		x.casePos[ci] = c.count
		c.count++
	}

	cellExp := make([]float64, len(x.cells)) // expected offspring per case of the cell, from later days
	x.predStart = make([]int32, len(x.cells)+1)
	for e := range x.cells {
		x.predStart[e] = int32(len(x.predCells))
		ce := x.cells[e]
		hasInferable := false
		for k := ce.start; k < ce.start+ce.count; k++ {
			ci := x.order[k]
			if !imported[ci] && !linked[ci] {
				hasInferable = true
				break
			}
		}
		if !hasInferable {
			continue
		}
		base := 0.0
		for p := e - 1; p >= 0 && x.cells[p].group == ce.group; p-- {
			delta := int64(ce.day) - int64(x.cells[p].day)
			if delta > d {
				break
			}
			base += float64(x.cells[p].count) * x.f[delta]
			x.predCells = append(x.predCells, int32(p))
			x.predCum = append(x.predCum, base)
		}
		// Z_j and the same-day suffix sums, walking the cell from its last case back.
		inv := 0.0 // Σ 1/Z_j over inferred cases of this cell (their later-day share)
		suffix := 0.0
		for k := ce.start + ce.count - 1; k >= ce.start; k-- {
			ci := x.order[k]
			// Cases after ci in this cell that are inferred contribute f(0)/Z_j to ci.
			x.expected[ci] += x.f[0] * suffix
			if imported[ci] || linked[ci] {
				continue
			}
			z := base + float64(x.casePos[ci])*x.f[0]
			if !(z > 0) {
				x.summary.NoCandidate++
				continue
			}
			x.z[ci] = z
			x.summary.Inferred++
			inv += 1 / z
			suffix += 1 / z
		}
		for q := x.predStart[e]; q < int32(len(x.predCells)); q++ {
			p := x.predCells[q]
			cellExp[p] += x.f[int64(ce.day)-int64(x.cells[p].day)] * inv
		}
	}
	x.predStart[len(x.cells)] = int32(len(x.predCells))
	for ci := range x.expected {
		x.expected[ci] += cellExp[x.caseCell[ci]]
	}
	return x, nil
}

// sortByGroupDay returns case indices sorted by (group, day, input index): two stable
// counting sorts (day, then group) when the day span is modest, else a comparison sort.
func sortByGroupDay(onset []linelist.Day, gid []int32, minDay linelist.Day, span int64, groups int) []int32 {
	n := len(onset)
	byDay := make([]int32, n)
	if span <= int64(4*n)+1024 {
		cnt := make([]int32, span+2)
		for _, t := range onset {
			cnt[int64(t)-int64(minDay)+1]++
		}
		for i := 1; i < len(cnt); i++ {
			cnt[i] += cnt[i-1]
		}
		for i, t := range onset {
			k := int64(t) - int64(minDay)
			byDay[cnt[k]] = int32(i)
			cnt[k]++
		}
	} else {
		for i := range byDay {
			byDay[i] = int32(i)
		}
		slices.SortStableFunc(byDay, func(a, b int32) int { return int(onset[a]) - int(onset[b]) })
	}
	cnt := make([]int32, groups+1)
	for _, g := range gid {
		cnt[g+1]++
	}
	for i := 1; i < len(cnt); i++ {
		cnt[i] += cnt[i-1]
	}
	out := make([]int32, n)
	for _, ci := range byDay {
		g := gid[ci]
		out[cnt[g]] = ci
		cnt[g]++
	}
	return out
}

// Summary is the inferred-links section of the summary.
func (x *Infectors) Summary() InferredLinks { return x.summary }

// Window is D, the largest onset difference, in days, a candidate infector may have.
func (x *Infectors) Window() int { return x.window }

// Inferred reports whether case j gets an inferred infector (non-imported, no recorded
// infector, at least one candidate).
func (x *Infectors) Inferred(j int) bool { return j >= 0 && j < x.n && x.z[j] > 0 }

// ExpectedOffspring returns, per case, Σ_j w_ij: the expected number of inferred links
// naming the case as infector, to be added to its recorded offspring count. The values
// sum to Summary().Inferred. The slice is a fresh copy.
func (x *Infectors) ExpectedOffspring() []float64 { return slices.Clone(x.expected) }

// Weight returns w_ij, the probability that case i infected case j (0 when j gets no
// inferred infector or i is not one of its candidates). It costs O(1).
func (x *Infectors) Weight(i, j int) float64 {
	if !x.Inferred(j) || i < 0 || i >= x.n || i == j {
		return 0
	}
	ci, cj := x.cells[x.caseCell[i]], x.cells[x.caseCell[j]]
	if ci.group != cj.group {
		return 0
	}
	delta := int64(cj.day) - int64(ci.day)
	if delta < 0 || delta > int64(x.window) || (delta == 0 && x.casePos[i] >= x.casePos[j]) {
		return 0
	}
	return x.f[delta] / x.z[j]
}

// Sample draws one assignment from the Wallinga–Teunis probabilities: dst[j] is the index
// of case j's sampled infector, or −1 when j gets no inferred infector. dst is reused when
// it has room for every case. Draws go through rng in case order, so a seeded rng gives
// a reproducible assignment.
func (x *Infectors) Sample(rng *rand.Rand, dst []int) []int {
	if cap(dst) >= x.n {
		dst = dst[:x.n]
	} else {
		dst = make([]int, x.n)
	}
	for j := range dst {
		dst[j] = -1
		z := x.z[j]
		if !(z > 0) {
			continue
		}
		e := x.caseCell[j]
		ce := x.cells[e]
		u := rng.Float64() * z
		if same := float64(x.casePos[j]) * x.f[0]; u < same {
			k := min(int32(u/x.f[0]), x.casePos[j]-1)
			dst[j] = int(x.order[ce.start+k])
			continue
		} else {
			u -= same
		}
		lo, hi := x.predStart[e], x.predStart[e+1]
		cum := x.predCum[lo:hi]
		q := sort.SearchFloat64s(cum, u)
		for q < len(cum) && cum[q] <= u { // SearchFloat64s finds cum[q] ≥ u; need > u
			q++
		}
		for q >= len(cum) || (q > 0 && cum[q] == cum[q-1]) { // rounding at the end, or a zero-mass day
			q--
		}
		p := x.cells[x.predCells[lo+int32(q)]]
		dst[j] = int(x.order[p.start+rng.Int32N(p.count)])
	}
	return dst
}
