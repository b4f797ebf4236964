package render

import (
	"hash/fnv"
	"slices"
	"sort"
)

// categoryPalette is the palette of category values (settings): caseweave's palette less its
// grey, which stands for the small groups combined.
func categoryPalette() []string {
	var out []string
	for _, c := range palette() {
		if c != colMuted {
			out = append(out, c)
		}
	}
	return out
}

// categoryColour is the colour of a category value: the one config.yaml pins to it, else the
// palette colour at the value's place in the batch's list of values (Options.Categories), so
// that one value has one colour in every report of a batch whatever values each report
// holds. A value missing from the list (a template author's own chart) takes a colour from
// a hash of its text, which is the same in every report too.
func (st *renderState) categoryColour(value string) string {
	if c, ok := st.cfg.Colours[value]; ok {
		return c
	}
	pal := categoryPalette()
	if i := slices.Index(st.categoryList(), value); i >= 0 {
		return pal[i%len(pal)]
	}
	h := fnv.New32a()
	h.Write([]byte(value))
	return pal[int(h.Sum32()%uint32(len(pal)))]
}

// categoryList is Options.Categories, or this report's own setting values in sorted order,
// the order the batch uses (sorted values), when none were given.
func (st *renderState) categoryList() []string {
	if st.categories == nil {
		var vs []string
		if e := st.s.EpiCurve; e != nil {
			for _, sr := range e.Series {
				vs = append(vs, sr.Name)
			}
		}
		sort.Strings(vs)
		st.categories = vs
	}
	return st.categories
}
