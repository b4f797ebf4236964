package offspring

import "sort"

// FreqTable is the frequency table of offspring counts: Counts[i] cases caused Values[i]
// secondary cases each. Values are distinct and ascending; Counts are positive. Every
// likelihood, bootstrap replicate and jackknife in caseweave works on this table, so their
// cost grows with the number of distinct counts, not with the number of cases.
type FreqTable struct {
	Values []int
	Counts []int
}

// Tabulate builds the frequency table of a list of offspring counts. Negative counts are
// not offspring counts and are ignored.
func Tabulate(counts []int) FreqTable {
	m := map[int]int{}
	for _, z := range counts {
		if z >= 0 {
			m[z]++
		}
	}
	return FromMap(m)
}

// FromMap builds a frequency table from value → count, dropping non-positive counts and
// negative values.
func FromMap(m map[int]int) FreqTable {
	t := FreqTable{}
	for v, c := range m {
		if c > 0 && v >= 0 {
			t.Values = append(t.Values, v)
		}
	}
	sort.Ints(t.Values)
	t.Counts = make([]int, len(t.Values))
	for i, v := range t.Values {
		t.Counts[i] = m[v]
	}
	return t
}

// N is the number of cases in the table.
func (t FreqTable) N() int {
	n := 0
	for _, c := range t.Counts {
		n += c
	}
	return n
}

// Total is the number of secondary cases, Σ value·count.
func (t FreqTable) Total() int {
	s := 0
	for i, v := range t.Values {
		s += v * t.Counts[i]
	}
	return s
}

// Mean is the sample mean offspring count (0 for an empty table).
func (t FreqTable) Mean() float64 {
	n := t.N()
	if n == 0 {
		return 0
	}
	return float64(t.Total()) / float64(n)
}

// Variance is the sample variance with divisor n − 1 (0 when n < 2).
func (t FreqTable) Variance() float64 {
	n := t.N()
	if n < 2 {
		return 0
	}
	m := t.Mean()
	ss := 0.0
	for i, v := range t.Values {
		d := float64(v) - m
		ss += float64(t.Counts[i]) * d * d
	}
	return ss / float64(n-1)
}

// Histogram returns h with h[x] = number of cases with x offspring, x = 0..max.
func (t FreqTable) Histogram() []int {
	if len(t.Values) == 0 {
		return []int{}
	}
	h := make([]int, t.Values[len(t.Values)-1]+1)
	for i, v := range t.Values {
		h[v] = t.Counts[i]
	}
	return h
}
