package forest

import (
	"fmt"
	"runtime"
	"slices"
	"strings"
	"sync"

	"github.com/caseweave/caseweave/pipeline/linelist"
)

// None marks the absence of an infector, a parent or a cluster.
const None int32 = -1

// Forest is the transmission forest over a slice of cases; every per-case slice is indexed
// like that slice. Cases are referred to by index, never copied.
type Forest struct {
	// Infector[i] is the index of case i's infector after repairs, or None for a root.
	Infector []int32
	// Generation[i] is 0 for a root, else its infector's generation plus one.
	Generation []int32
	// Offspring[i] is the offspring count Z_i: the number of kept links naming case i.
	Offspring []int32
	// Cluster[i] is the index into Clusters of the tree holding case i.
	Cluster []int32
	// Clusters lists the trees in order of their roots' position in the input.
	Clusters []Cluster
	// Linked counts cases with a kept infector link.
	Linked int
	// Problems records every link that was dropped or looks suspicious.
	Problems []linelist.Problem

	// childStart and children hold each case's infectees in compressed rows: the infectees
	// of i are children[childStart[i]:childStart[i+1]], in input order.
	childStart []int32
	children   []int32
}

// Cluster is one transmission tree.
type Cluster struct {
	Root  int32 // index of the root case
	Size  int   // number of cases in the tree
	Depth int   // largest generation in the tree (0 for a lone case)
	// LastOnset is the latest onset date in the tree, which says whether the chain may still
	// be growing at the analysis date.
	LastOnset linelist.Day
}

// Children returns the infectees of case i, in input order. The slice must not be modified.
func (f *Forest) Children(i int) []int32 {
	return f.children[f.childStart[i]:f.childStart[i+1]]
}

// Roots returns the number of trees.
func (f *Forest) Roots() int { return len(f.Clusters) }

// MaxGeneration is the largest generation of any case (0 for an empty forest).
func (f *Forest) MaxGeneration() int {
	m := 0
	for _, c := range f.Clusters {
		if c.Depth > m {
			m = c.Depth
		}
	}
	return m
}

// LargestCluster is the size of the largest tree (0 for an empty forest).
func (f *Forest) LargestCluster() int {
	m := 0
	for _, c := range f.Clusters {
		if c.Size > m {
			m = c.Size
		}
	}
	return m
}

// Build links the cases into a forest. Case IDs must be unique (the line-list reader
// guarantees it, rejecting duplicates). Links are repaired so that no row is lost without a word:
//   - self_infector: a case naming itself loses the link;
//   - unknown_infector: a link to an identifier with no row is dropped, the case kept unlinked;
//   - cycle: every case on a cycle of links is reported and the links on the cycle dropped, so
//     each case on it becomes a root (its other infectees stay attached);
//   - onset_before_infector: a warning only; the link is kept, since pre-symptomatic
//     transmission can produce it.
func Build(cases []linelist.Case) *Forest {
	return BuildIndexed(cases, nil)
}

// BuildIndexed is Build with the cases' indices already sorted by identifier
// (linelist.LineList.ByID), so that infectors are found by binary search without a map of
// every identifier. A byID that does not fit the cases is ignored and sorted afresh.
func BuildIndexed(cases []linelist.Case, byID []int32) *Forest {
	n := len(cases)
	f := &Forest{
		Infector:   make([]int32, n),
		Generation: make([]int32, n),
		Offspring:  make([]int32, n),
		Cluster:    make([]int32, n),
	}
	if len(byID) != n {
		byID = make([]int32, n)
		for i := range byID {
			byID[i] = int32(i)
		}
		slices.SortFunc(byID, func(a, b int32) int { return strings.Compare(cases[a].ID, cases[b].ID) })
	}
	lookup := func(id string) (int32, bool) {
		k, ok := slices.BinarySearchFunc(byID, id, func(i int32, id string) int { return strings.Compare(cases[i].ID, id) })
		if !ok {
			return None, false
		}
		return byID[k], true
	}
	// The look-ups are independent, so they run in chunks side by side; each chunk keeps its
	// own problems, joined in chunk order (and sorted at the end), so the result does not
	// depend on the number of workers.
	workers := min(runtime.GOMAXPROCS(0), max(1, n/50_000))
	chunk := (n + workers - 1) / max(workers, 1)
	parts := make([]Forest, workers)
	var wg sync.WaitGroup
	for w := range workers {
		wg.Add(1)
		go func(part *Forest, lo, hi int) {
			defer wg.Done()
			for i := lo; i < hi; i++ {
				c := &cases[i]
				f.Infector[i] = None
				if c.InfectorID == "" {
					continue
				}
				if c.InfectorID == c.ID {
					part.problem(c, linelist.CodeSelfInfector, linelist.SeverityError,
						fmt.Sprintf("case %q names itself as its infector; the link was dropped and the case treated as unlinked. Correct infector_id or leave it blank", c.ID))
					continue
				}
				j, ok := lookup(c.InfectorID)
				if !ok {
					part.problem(c, linelist.CodeUnknownInfector, linelist.SeverityError,
						fmt.Sprintf("infector_id %q matches no case_id in the file; the link was dropped and case %q treated as unlinked. Check the identifier, or add the infector's row", c.InfectorID, c.ID))
					continue
				}
				f.Infector[i] = j
			}
		}(&parts[w], min(w*chunk, n), min((w+1)*chunk, n))
	}
	wg.Wait()
	for _, part := range parts {
		f.Problems = append(f.Problems, part.Problems...)
	}
	f.breakCycles(cases)
	for i := range cases {
		j := f.Infector[i]
		if j == None {
			continue
		}
		f.Linked++
		f.Offspring[j]++
		if cases[i].Onset < cases[j].Onset {
			f.problem(&cases[i], linelist.CodeOnsetBeforeInfector, linelist.SeverityWarning,
				fmt.Sprintf("onset %s of case %q is before onset %s of its infector %q (%d days); the link was kept, as pre-symptomatic transmission can do this, but check both dates and the link",
					cases[i].Onset, cases[i].ID, cases[j].Onset, cases[j].ID, int(cases[j].Onset-cases[i].Onset)))
		}
	}
	f.buildChildren()
	f.walk(cases)
	linelist.SortProblems(f.Problems)
	return f
}

func (f *Forest) problem(c *linelist.Case, code linelist.Code, sev linelist.Severity, msg string) {
	f.Problems = append(f.Problems, linelist.Problem{
		Source: int(c.Source), Row: c.Row, Column: linelist.ColInfectorID, Code: code, Severity: sev, Message: msg,
	})
}

// breakCycles finds every cycle of the infector graph and drops the links on it. Each case
// has at most one infector, so the graph is functional: walking up from any case either
// reaches a root or enters a cycle, and marking cases as they are walked makes the whole
// search linear.
func (f *Forest) breakCycles(cases []linelist.Case) {
	const (
		unseen = 0
		onPath = 1
		done   = 2
	)
	state := make([]uint8, len(cases))
	var path []int32
	for start := range cases {
		if state[start] != unseen {
			continue
		}
		path = path[:0]
		v := int32(start)
		for v != None && state[v] == unseen {
			state[v] = onPath
			path = append(path, v)
			v = f.Infector[v]
		}
		if v != None && state[v] == onPath {
			// v is on the current path and was reached again: the cycle is path[k:], where
			// path[k] == v.
			k := len(path) - 1
			for path[k] != v {
				k--
			}
			cyc := path[k:]
			for _, u := range cyc {
				f.problem(&cases[u], linelist.CodeCycle, linelist.SeverityError,
					fmt.Sprintf("case %q lies on a cycle of %d infector links (%s); every link on the cycle was dropped, so these cases count as unlinked. Check who infected whom", cases[u].ID, len(cyc), describeCycle(cases, cyc)))
			}
			for _, u := range cyc {
				f.Infector[u] = None
			}
		}
		for _, u := range path {
			state[u] = done
		}
	}
}

// describeCycle names up to six cases of a cycle, in link order.
func describeCycle(cases []linelist.Case, cyc []int32) string {
	const show = 6
	s := ""
	for i, u := range cyc {
		if i == show {
			return s + fmt.Sprintf(" ← … (%d more)", len(cyc)-show)
		}
		if i > 0 {
			s += " ← "
		}
		s += fmt.Sprintf("%q", cases[u].ID)
	}
	return s + fmt.Sprintf(" ← %q", cases[cyc[0]].ID)
}

func (f *Forest) buildChildren() {
	n := len(f.Infector)
	f.childStart = make([]int32, n+1)
	for i := 0; i < n; i++ {
		f.childStart[i+1] = f.childStart[i] + f.Offspring[i]
	}
	f.children = make([]int32, f.Linked)
	fill := make([]int32, n)
	copy(fill, f.childStart[:n])
	for i, j := range f.Infector {
		if j != None {
			f.children[fill[j]] = int32(i)
			fill[j]++
		}
	}
}

// walk assigns generations and clusters breadth-first from every root, with an explicit
// queue: no recursion, so chain depth is bounded only by memory.
func (f *Forest) walk(cases []linelist.Case) {
	for i := range f.Cluster {
		f.Cluster[i] = None
	}
	queue := make([]int32, 0, 64)
	for r, j := range f.Infector {
		if j != None {
			continue
		}
		id := int32(len(f.Clusters))
		cl := Cluster{Root: int32(r), LastOnset: cases[r].Onset}
		queue = append(queue[:0], int32(r))
		f.Generation[r] = 0
		f.Cluster[r] = id
		for head := 0; head < len(queue); head++ {
			v := queue[head]
			cl.Size++
			g := int(f.Generation[v])
			if g > cl.Depth {
				cl.Depth = g
			}
			if cases[v].Onset > cl.LastOnset {
				cl.LastOnset = cases[v].Onset
			}
			for _, c := range f.Children(int(v)) {
				f.Generation[c] = int32(g + 1)
				f.Cluster[c] = id
				queue = append(queue, c)
			}
		}
		f.Clusters = append(f.Clusters, cl)
	}
}
