package analysis

import (
	"github.com/caseweave/caseweave/pipeline/internal/numeric"
	"math"
	"sort"

	"github.com/caseweave/caseweave/pipeline/branching"
	"github.com/caseweave/caseweave/pipeline/offspring"

	"github.com/caseweave/caseweave/pipeline/forest"
	"github.com/caseweave/caseweave/pipeline/linelist"
)

// unknownLabel stands for a blank stratum value in tables and charts.
const unknownLabel = "(not recorded)"

// SettingLabels lists the settings of cases as the epidemic curve names its series (label),
// sorted: the order in which a batch of reports gives settings their colours.
func SettingLabels(cases []linelist.Case) []string {
	seen := map[string]bool{}
	for i := range cases {
		seen[label(cases[i].Setting)] = true
	}
	out := make([]string, 0, len(seen))
	for v := range seen {
		out = append(out, v)
	}
	sort.Strings(out)
	return out
}

func label(s string) string {
	if s == "" {
		return unknownLabel
	}
	return s
}

// count is n as a summary's nullable count (Release withholds small ones).
func count(n int) *int { return &n }

// epiCurve counts selected cases by ISO onset week (Monday start) and setting, with every
// week between the first and last present.
func (a *run) epiCurve() {
	if len(a.selected) == 0 {
		return
	}
	first, last := a.cases[a.selected[0]].Onset.ISOWeekStart(), a.cases[a.selected[0]].Onset.ISOWeekStart()
	for _, i := range a.selected {
		w := a.cases[i].Onset.ISOWeekStart()
		first, last = min(first, w), max(last, w)
	}
	if (last-first)/7 > 520 {
		// Ten years of weekly bars say nothing; the onset dates are surely wrong somewhere.
		a.note("Onset dates span more than ten years (%s to %s); the epidemic curve was left out. Check the dates flagged in the data-quality section.", first, last)
		return
	}
	nWeeks := int((last-first)/7) + 1
	ec := &EpiCurve{Weeks: make([]linelist.Day, nWeeks), Total: make([]*int, nWeeks)}
	for k := range ec.Weeks {
		ec.Weeks[k] = first + linelist.Day(7*k)
	}
	counts := map[string][]int{}
	total := make([]int, nWeeks)
	for _, i := range a.selected {
		k := int((a.cases[i].Onset.ISOWeekStart() - first) / 7)
		total[k]++
		s := label(a.cases[i].Setting)
		if counts[s] == nil {
			counts[s] = make([]int, nWeeks)
		}
		counts[s][k]++
	}
	for k, n := range total {
		ec.Total[k] = count(n)
	}
	for _, name := range sortedByTotal(counts) {
		ser := Series{Name: name, Counts: make([]*int, nWeeks)}
		for k, n := range counts[name] {
			ser.Counts[k] = count(n)
		}
		ec.Series = append(ec.Series, ser)
	}
	a.s.EpiCurve = ec
}

// sortedByTotal orders series names by their total, largest first, then by name.
func sortedByTotal(m map[string][]int) []string {
	tot := map[string]int{}
	names := make([]string, 0, len(m))
	for k, v := range m {
		names = append(names, k)
		for _, n := range v {
			tot[k] += n
		}
	}
	sort.Slice(names, func(i, j int) bool {
		if tot[names[i]] != tot[names[j]] {
			return tot[names[i]] > tot[names[j]]
		}
		return names[i] < names[j]
	})
	return names
}

// clusters gathers the cluster-size distribution (with the model's expectation) and the
// largest trees, capped so the report stays small.
func (a *run) clusters() {
	sizes := map[int]*SizeCount{}
	var roots []int // cluster indices
	n := 0
	for ci, c := range a.f.Clusters {
		if !a.touches(ci) {
			continue
		}
		n++
		roots = append(roots, ci)
		sc := sizes[c.Size]
		if sc == nil {
			sc = &SizeCount{Size: c.Size}
			sizes[c.Size] = sc
		}
		sc.Count++
		if int(a.o.AsOf-c.LastOnset) < a.w {
			sc.Censored++
		}
	}
	if n == 0 {
		return
	}
	cl := &Clusters{NodesShown: nodesPerTree}
	// The expectation drawn over the observed sizes is the chain-size fit's own
	// [Blumberg & Lloyd-Smith 2013]: n·P(Y = y) under the (R, k) fitted to these sizes, when
	// that fit is informative (ChainSizeInformative).
	var pmf []float64
	if o := a.s.Offspring; o != nil && o.ChainSizeFit != nil && o.ChainSizeFit.Informative {
		p := offspring.Params{o.ChainSizeFit.R, math.Inf(1)}
		if o.ChainSizeFit.K != nil {
			p[offspring.ParamK] = *o.ChainSizeFit.K
		}
		largest := 1
		for size := range sizes {
			largest = max(largest, size)
		}
		if cs, err := branching.ChainSizes(offspring.NegBinFamily{}.Distribution(p), largest); err == nil {
			pmf = cs.PMF
		}
	}
	for _, sc := range sizes {
		if sc.Size-1 < len(pmf) {
			e := float64(n) * pmf[sc.Size-1]
			sc.Expected = &e
		}
		cl.SizeHistogram = append(cl.SizeHistogram, *sc)
	}
	sort.Slice(cl.SizeHistogram, func(i, j int) bool { return cl.SizeHistogram[i].Size < cl.SizeHistogram[j].Size })
	sort.SliceStable(roots, func(i, j int) bool {
		ci, cj := a.f.Clusters[roots[i]], a.f.Clusters[roots[j]]
		if ci.Size != cj.Size {
			return ci.Size > cj.Size
		}
		return ci.Root < cj.Root
	})
	for _, ci := range roots {
		if len(cl.Largest) == treesShown || a.f.Clusters[ci].Size < 2 {
			break
		}
		cl.Largest = append(cl.Largest, a.treeView(ci))
	}
	a.s.Clusters = cl
}

// treeView lays out one tree breadth-first, keeping the first nodesPerTree cases.
func (a *run) treeView(ci int) TreeView {
	c := a.f.Clusters[ci]
	tv := TreeView{Root: a.cases[c.Root].ID, Size: c.Size, Local: a.local[ci], Depth: c.Depth, Start: a.cases[c.Root].Onset}
	type item struct{ v, parent int32 }
	queue := []item{{c.Root, -1}}
	for head := 0; head < len(queue) && len(tv.Nodes) < nodesPerTree; head++ {
		it := queue[head]
		cs := &a.cases[it.v]
		tv.Nodes = append(tv.Nodes, TreeNode{
			ID: cs.ID, Parent: int(it.parent), Generation: int(a.f.Generation[it.v]),
			Offspring: int(a.f.Offspring[it.v]), Onset: cs.Onset, Setting: cs.Setting,
			Elsewhere: !a.inScope[it.v],
		})
		me := int32(len(tv.Nodes) - 1)
		for _, ch := range a.f.Children(int(it.v)) {
			queue = append(queue, item{ch, me})
		}
	}
	tv.Hidden = c.Size - len(tv.Nodes)
	return tv
}

// ageMixing counts infector → infectee links by age group, for links whose infectee is in
// scope.
func (a *run) ageMixing() {
	idx := map[string]int{}
	var groups []string
	for _, i := range a.selected {
		g := label(a.cases[i].AgeGroup)
		if _, ok := idx[g]; !ok {
			idx[g] = 0
			groups = append(groups, g)
		}
	}
	for _, i := range a.selected {
		if j := a.f.Infector[i]; j != forest.None {
			g := label(a.cases[j].AgeGroup)
			if _, ok := idx[g]; !ok {
				idx[g] = 0
				groups = append(groups, g)
			}
		}
	}
	sortCategories(linelist.ColAgeGroup, groups)
	for k, g := range groups {
		idx[g] = k
	}
	counts := make([][]int, len(groups))
	for k := range counts {
		counts[k] = make([]int, len(groups))
	}
	links := 0
	for _, i := range a.selected {
		j := a.f.Infector[i]
		if j == forest.None {
			continue
		}
		counts[idx[label(a.cases[j].AgeGroup)]][idx[label(a.cases[i].AgeGroup)]]++
		links++
	}
	if links == 0 {
		return
	}
	am := &AgeMixing{Groups: groups, Links: links, Counts: make([][]*int, len(groups))}
	for r := range counts {
		am.Counts[r] = make([]*int, len(groups))
		for c, n := range counts[r] {
			am.Counts[r][c] = count(n)
		}
	}
	a.s.AgeMixing = am
}

// strata tabulates cases and mean offspring by setting and by age group.
func (a *run) strata() {
	for _, name := range []string{linelist.ColSetting, linelist.ColAgeGroup} {
		col, _ := linelist.ColumnNamed(name)
		type acc struct{ cases, counted, offspring int }
		m := map[string]*acc{}
		for _, i := range a.selected {
			v := label(col.Stratum(&a.cases[i]))
			x := m[v]
			if x == nil {
				x = &acc{}
				m[v] = x
			}
			x.cases++
			if !a.censored(i) {
				x.counted++
				x.offspring += int(a.f.Offspring[i])
			}
		}
		names := make([]string, 0, len(m))
		for k := range m {
			names = append(names, k)
		}
		sortCategories(name, names)
		for _, v := range names {
			x := m[v]
			st := Stratum{Column: name, Value: v, Cases: count(x.cases), Counted: count(x.counted)}
			if x.counted > 0 {
				st.MeanOffspring = numeric.FinitePtr(float64(x.offspring) / float64(x.counted))
			}
			a.s.Strata = append(a.s.Strata, st)
		}
	}
}
