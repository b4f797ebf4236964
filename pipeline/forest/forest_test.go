package forest

import (
	"fmt"
	"reflect"
	"runtime"
	"testing"

	"github.com/caseweave/caseweave/pipeline/linelist"
)

// mk builds cases from "id<-infector" specs; rows start at line 2 as in a file with a header.
func mk(specs ...string) []linelist.Case {
	cs := make([]linelist.Case, len(specs))
	for i, s := range specs {
		id, inf := s, ""
		for k := 0; k+1 < len(s); k++ {
			if s[k] == '<' && s[k+1] == '-' {
				id, inf = s[:k], s[k+2:]
				break
			}
		}
		cs[i] = linelist.Case{ID: id, InfectorID: inf, Onset: linelist.Day(20000 + i), Row: i + 2}
	}
	return cs
}

func codes(ps []linelist.Problem) map[linelist.Code][]int {
	m := map[linelist.Code][]int{}
	for _, p := range ps {
		m[p.Code] = append(m[p.Code], p.Row)
	}
	return m
}

func TestBuild(t *testing.T) {
	tests := []struct {
		name       string
		cases      []linelist.Case
		infector   []int32
		generation []int32
		offspring  []int32
		clusters   int
		linked     int
		problems   map[linelist.Code][]int
	}{
		{
			name:       "two trees",
			cases:      mk("a", "b<-a", "c<-a", "d<-b", "e"),
			infector:   []int32{None, 0, 0, 1, None},
			generation: []int32{0, 1, 1, 2, 0},
			offspring:  []int32{2, 1, 0, 0, 0},
			clusters:   2, linked: 3,
			problems: map[linelist.Code][]int{},
		},
		{
			name:       "self link dropped",
			cases:      mk("a", "b<-b"),
			infector:   []int32{None, None},
			generation: []int32{0, 0},
			offspring:  []int32{0, 0},
			clusters:   2, linked: 0,
			problems: map[linelist.Code][]int{linelist.CodeSelfInfector: {3}},
		},
		{
			name:       "unknown infector dropped, case kept",
			cases:      mk("a", "b<-zz"),
			infector:   []int32{None, None},
			generation: []int32{0, 0},
			offspring:  []int32{0, 0},
			clusters:   2, linked: 0,
			problems: map[linelist.Code][]int{linelist.CodeUnknownInfector: {3}},
		},
		{
			// a <- b <- c <- b: b and c form a cycle; a hangs off it and keeps its link to b.
			name:       "tail into a cycle",
			cases:      mk("a<-b", "b<-c", "c<-b"),
			infector:   []int32{1, None, None},
			generation: []int32{1, 0, 0},
			offspring:  []int32{0, 1, 0},
			clusters:   2, linked: 1,
			// a's onset (line 2) precedes b's in this fixture: a warning, link kept.
			problems: map[linelist.Code][]int{linelist.CodeCycle: {3, 4}, linelist.CodeOnsetBeforeInfector: {2}},
		},
		{
			name:       "cycle of three, every case reported",
			cases:      mk("x<-z", "y<-x", "z<-y", "w<-x"),
			infector:   []int32{None, None, None, 0},
			generation: []int32{0, 0, 0, 1},
			offspring:  []int32{1, 0, 0, 0},
			clusters:   3, linked: 1,
			problems: map[linelist.Code][]int{linelist.CodeCycle: {2, 3, 4}},
		},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			f := Build(tt.cases)
			if !reflect.DeepEqual(f.Infector, tt.infector) {
				t.Errorf("infector = %v, want %v", f.Infector, tt.infector)
			}
			if !reflect.DeepEqual(f.Generation, tt.generation) {
				t.Errorf("generation = %v, want %v", f.Generation, tt.generation)
			}
			if !reflect.DeepEqual(f.Offspring, tt.offspring) {
				t.Errorf("offspring = %v, want %v", f.Offspring, tt.offspring)
			}
			if len(f.Clusters) != tt.clusters || f.Linked != tt.linked {
				t.Errorf("clusters, linked = %d, %d; want %d, %d", len(f.Clusters), f.Linked, tt.clusters, tt.linked)
			}
			if got := codes(f.Problems); !reflect.DeepEqual(got, tt.problems) {
				t.Errorf("problems = %v, want %v", got, tt.problems)
			}
			size := 0
			for _, c := range f.Clusters {
				size += c.Size
			}
			if size != len(tt.cases) {
				t.Errorf("cluster sizes sum to %d, want %d (every case in exactly one tree)", size, len(tt.cases))
			}
		})
	}
}

func TestOnsetBeforeInfectorIsAWarningAndKeepsTheLink(t *testing.T) {
	cs := mk("a", "b<-a")
	cs[1].Onset = cs[0].Onset - 3
	f := Build(cs)
	if f.Infector[1] != 0 {
		t.Fatalf("link dropped")
	}
	if len(f.Problems) != 1 || f.Problems[0].Code != linelist.CodeOnsetBeforeInfector ||
		f.Problems[0].Severity != linelist.SeverityWarning || f.Problems[0].Row != 3 {
		t.Fatalf("problems = %+v", f.Problems)
	}
}

// A chain 100,000 cases deep must not overflow a stack: Build walks it with a queue.
func TestDeepChain(t *testing.T) {
	const n = 100000
	cs := make([]linelist.Case, n)
	for i := range cs {
		cs[i] = linelist.Case{ID: fmt.Sprint("c", i), Onset: linelist.Day(i), Row: i + 2}
		if i > 0 {
			cs[i].InfectorID = fmt.Sprint("c", i-1)
		}
	}
	f := Build(cs)
	if len(f.Clusters) != 1 || f.Clusters[0].Size != n || f.MaxGeneration() != n-1 || f.Linked != n-1 {
		t.Fatalf("clusters %d, size %d, depth %d, linked %d", len(f.Clusters), f.Clusters[0].Size, f.MaxGeneration(), f.Linked)
	}
	if f.Generation[n-1] != n-1 || f.Offspring[n-1] != 0 || f.Offspring[0] != 1 {
		t.Fatalf("generation %d offspring %d/%d", f.Generation[n-1], f.Offspring[0], f.Offspring[n-1])
	}
}

// A cycle 10,000 long: every case on it reported once, all become roots.
func TestLongCycle(t *testing.T) {
	const n = 10000
	cs := make([]linelist.Case, n)
	for i := range cs {
		cs[i] = linelist.Case{ID: fmt.Sprint("c", i), InfectorID: fmt.Sprint("c", (i+n-1)%n), Row: i + 2}
	}
	f := Build(cs)
	if got := len(codes(f.Problems)[linelist.CodeCycle]); got != n {
		t.Fatalf("cycle problems %d, want %d", got, n)
	}
	if len(f.Clusters) != n || f.Linked != 0 {
		t.Fatalf("clusters %d linked %d", len(f.Clusters), f.Linked)
	}
}

func TestChildren(t *testing.T) {
	f := Build(mk("a", "b<-a", "c", "d<-a", "e<-c"))
	if got := f.Children(0); !reflect.DeepEqual(got, []int32{1, 3}) {
		t.Fatalf("children of a = %v", got)
	}
	if got := f.Children(1); len(got) != 0 {
		t.Fatalf("children of b = %v", got)
	}
}

func ExampleBuild() {
	cases := []linelist.Case{
		{ID: "A1", Row: 2},
		{ID: "A2", InfectorID: "A1", Row: 3},
		{ID: "A3", InfectorID: "A1", Row: 4},
		{ID: "A4", InfectorID: "Q9", Row: 5},
	}
	f := Build(cases)
	fmt.Println("clusters:", len(f.Clusters), "linked:", f.Linked, "offspring of A1:", f.Offspring[0])
	for _, p := range f.Problems {
		fmt.Println(p.Row, p.Code)
	}
	// Output:
	// clusters: 2 linked: 2 offspring of A1: 2
	// 5 unknown_infector
}

func BenchmarkBuild1M(b *testing.B) {
	const n = 1000000
	cs := make([]linelist.Case, n)
	for i := range cs {
		cs[i] = linelist.Case{ID: fmt.Sprintf("C%07d", i), Onset: linelist.Day(i / 1000), Row: i + 2}
		if i >= 100 {
			cs[i].InfectorID = fmt.Sprintf("C%07d", (i*7919)%i)
		}
	}
	b.ReportAllocs()
	b.ResetTimer()
	for b.Loop() {
		Build(cs)
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/n, "ns/case")
}

// BuildIndexed with the reader's sorted index gives the same forest as Build.
func TestBuildIndexedMatchesBuild(t *testing.T) {
	cs := mk("b", "a<-b", "d<-a", "c<-zz", "e<-e", "f<-g", "g<-f", "h<-d")
	byID := []int32{1, 0, 3, 2, 4, 5, 6, 7} // a b c d e f g h
	a, b := Build(cs), BuildIndexed(cs, byID)
	if !reflect.DeepEqual(a, b) {
		t.Fatalf("Build %+v\nBuildIndexed %+v", a, b)
	}
	if c := BuildIndexed(cs, []int32{0}); !reflect.DeepEqual(a, c) {
		t.Fatal("an index that does not fit should be ignored")
	}
}

// TestBuildIndependentOfWorkers builds a forest large enough for the look-ups to run in
// chunks, with unknown and self-naming infectors spread through it, on one core and on four:
// the forests, problems included, must be identical.
func TestBuildIndependentOfWorkers(t *testing.T) {
	const n = 240_000
	cs := make([]linelist.Case, n)
	for i := range cs {
		cs[i] = linelist.Case{ID: fmt.Sprint("c", i), Onset: linelist.Day(20000 + i%300), Row: i + 2}
		switch {
		case i%7919 == 0:
			cs[i].InfectorID = fmt.Sprint("missing", i)
		case i%10007 == 0:
			cs[i].InfectorID = cs[i].ID
		case i > 0 && i%3 != 0:
			cs[i].InfectorID = fmt.Sprint("c", (i*7)/10)
		}
	}
	defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(0))
	runtime.GOMAXPROCS(1)
	one := Build(cs)
	runtime.GOMAXPROCS(4)
	four := Build(cs)
	if len(one.Problems) < 40 {
		t.Fatalf("only %d problems: the test data should hold dozens", len(one.Problems))
	}
	if !reflect.DeepEqual(one, four) {
		t.Fatal("the forest built with 4 workers differs from the one built with 1")
	}
}
