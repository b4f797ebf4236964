package linelist

import (
	"fmt"
	"strings"
	"unicode"
)

// HeaderVariants returns, for a canonical column, the header spellings recognised without
// a config, best first (Column.Variants). Headers are compared after folding: letter case,
// spaces, hyphens, underscores and dots are ignored, so "Case ID", "case-id", "CaseID" and
// "CASE_ID" all fold to "caseid". When two headers of a file match the same canonical
// column, the one whose variant comes first wins (so "case_id" beats "ID"); two headers with
// equally good matches are an ambiguous_column error.
func HeaderVariants(canonical string) []string {
	c, _ := ColumnNamed(canonical)
	return c.Variants
}

// foldHeader lower-cases h and drops spaces, hyphens, underscores and dots.
func foldHeader(h string) string {
	return strings.Map(func(r rune) rune {
		if unicode.IsSpace(r) || r == '-' || r == '_' || r == '.' || r == '\uFEFF' {
			return -1
		}
		return unicode.ToLower(r)
	}, h)
}

// mapHeader decides which header column feeds each canonical column. It returns the
// column index per canonical column (-1 when absent) in Columns order.
func mapHeader(header []string, in InputConfig, delim rune) ([]int, map[string]string, error) {
	idx := make([]int, len(columns))
	for i := range idx {
		idx[i] = -1
	}
	taken := make(map[int]string) // header index -> canonical name
	mapping := map[string]string{}

	for ci, cd := range columns {
		col := cd.Name
		want, ok := in.Columns[col]
		if !ok {
			continue
		}
		found := -1
		for hi, h := range header { // exact match (after trimming) first
			if strings.TrimSpace(h) == want {
				if found >= 0 {
					return nil, nil, &FileError{Code: FileAmbiguousColumn, Err: fmt.Errorf("the config maps %s to %q, but the file has that header twice (columns %d and %d); rename one in the export", col, clip(want), found+1, hi+1)}
				}
				found = hi
			}
		}
		if found < 0 {
			for hi, h := range header {
				if strings.EqualFold(strings.TrimSpace(h), want) {
					if found >= 0 {
						return nil, nil, &FileError{Code: FileAmbiguousColumn, Err: fmt.Errorf("the config maps %s to %q, which matches columns %d (%q) and %d (%q) ignoring case; rename one in the export or match the exact spelling", col, clip(want), found+1, clip(header[found]), hi+1, clip(h))}
					}
					found = hi
				}
			}
		}
		if found < 0 {
			return nil, nil, &FileError{Code: FileMissingColumn, Err: fmt.Errorf("the config maps %s to the column %q, which this file does not have; %s; fix input.columns.%s in the config or the export", col, clip(want), headersSeen(header, delim), col)}
		}
		idx[ci] = found
		taken[found] = col
		mapping[col] = header[found]
	}

	folded := make([]string, len(header))
	for hi, h := range header {
		folded[hi] = foldHeader(h)
	}
	for ci, cd := range columns {
		col := cd.Name
		if idx[ci] >= 0 {
			continue
		}
		best, bestRank := -1, -1
		for rank, v := range cd.Variants {
			for hi, f := range folded {
				if f != v {
					continue
				}
				if _, used := taken[hi]; used {
					continue
				}
				if best >= 0 && bestRank == rank {
					return nil, nil, &FileError{Code: FileAmbiguousColumn, Err: fmt.Errorf("columns %d (%q) and %d (%q) could both be %s; rename one in the export or map %s in the config under input.columns", best+1, clip(header[best]), hi+1, clip(header[hi]), col, col)}
				}
				if best < 0 {
					best, bestRank = hi, rank
				}
			}
			if best >= 0 {
				break
			}
		}
		if best >= 0 {
			idx[ci] = best
			taken[best] = col
			mapping[col] = header[best]
		}
	}

	for ci, cd := range columns {
		if cd.Required && idx[ci] < 0 {
			col := cd.Name
			return nil, nil, &FileError{Code: FileMissingColumn, Err: fmt.Errorf("required column %s not found; headers accepted for it (ignoring case, spaces, hyphens, underscores and dots): %s; %s; rename the column in the export or map it in the jurisdiction config, e.g. input.columns.%s: \"Your Header\"", col, strings.Join(cd.Variants, ", "), headersSeen(header, delim), col)}
		}
	}
	return idx, mapping, nil
}

// headersSeen describes a header for a message, at most 20 names of at most 60 bytes.
func headersSeen(header []string, delim rune) string {
	const show = 20
	var b strings.Builder
	if delim == 0 { // a workbook row
		fmt.Fprintf(&b, "the header row has %d column", len(header))
	} else {
		fmt.Fprintf(&b, "the file's header (read with delimiter %s) has %d column", delimName(delim), len(header))
	}
	if len(header) != 1 {
		b.WriteString("s")
	}
	b.WriteString(": ")
	for i, h := range header {
		if i == show {
			fmt.Fprintf(&b, " … and %d more", len(header)-show)
			break
		}
		if i > 0 {
			b.WriteString(", ")
		}
		fmt.Fprintf(&b, "%q", clip(h))
	}
	if len(header) == 1 && strings.ContainsAny(header[0], ",;\t") {
		b.WriteString(" (one column that contains delimiters: set input.delimiter in the config if the delimiter is wrong)")
	}
	return b.String()
}

func delimName(d rune) string {
	if d == '\t' {
		return "tab"
	}
	return fmt.Sprintf("%q", d)
}
