package analysis

import (
	"cmp"
	"slices"
	"strconv"
	"strings"

	"github.com/caseweave/caseweave/pipeline/linelist"
)

// sortCategories puts the values of a descriptive column in reading order: age groups by
// their numeric lower bound ("0-4", "5-17", "18-39", "65+"; "<5" starts at 0), since text
// order would put "18-39" before "5-17"; every other column, and values without a leading
// number (unknownLabel), in text order after them.
func sortCategories(column string, values []string) {
	if column != linelist.ColAgeGroup {
		slices.Sort(values)
		return
	}
	slices.SortFunc(values, func(a, b string) int {
		la, oka := lowerBound(a)
		lb, okb := lowerBound(b)
		switch {
		case oka && okb && la != lb:
			return cmp.Compare(la, lb)
		case oka != okb:
			if oka {
				return -1
			}
			return 1
		}
		return strings.Compare(a, b)
	})
}

// lowerBound reads the number an age-group label starts with; a label starting "<" starts at 0.
func lowerBound(s string) (float64, bool) {
	s = strings.TrimSpace(s)
	if strings.HasPrefix(s, "<") {
		return 0, true
	}
	end := 0
	for end < len(s) && (s[end] >= '0' && s[end] <= '9' || s[end] == '.') {
		end++
	}
	v, err := strconv.ParseFloat(s[:end], 64)
	return v, err == nil
}
