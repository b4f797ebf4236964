package render

import (
	"bytes"
	"encoding/csv"
	"fmt"
	"regexp"
	"slices"
	"strconv"
	"strings"

	"github.com/caseweave/caseweave/pipeline/analysis"
)

// table is one report table: the same rows feed the Markdown table and the CSV file.
type table struct {
	Header  []string
	Numeric []bool // right-aligned columns
	Rows    [][]string
}

// cellFmt formats table cells for the page (grouped thousands, report digits) or for CSV
// (plain numbers, two more digits).
type cellFmt struct{ csv bool }

func (f cellFmt) num(x float64, digits int) string {
	if f.csv {
		return strconv.FormatFloat(x, 'f', digits+2, 64)
	}
	return formatNumber(x, digits)
}

func (f cellFmt) numPtr(x *float64, digits int) string {
	if x == nil {
		return ""
	}
	return f.num(*x, digits)
}

func (f cellFmt) int(n int) string {
	if f.csv {
		return strconv.Itoa(n)
	}
	return formatNumber(float64(n), 0)
}

// countRange is a prediction interval of counts, "lo to hi"; a bound beyond the computed
// range reads "beyond reach".
func (f cellFmt) countRange(b [2]*int) string {
	end := func(p *int) string {
		if p == nil {
			return "beyond reach"
		}
		return f.int(*p)
	}
	return end(b[0]) + " to " + end(b[1])
}

func (f cellFmt) interval(b [2]*float64, digits int) string {
	if b[0] == nil && b[1] == nil {
		return ""
	}
	return boundsText(b, func(x float64) string { return f.num(x, digits) }, " to ")
}

// tableDef is one table a template can print with table "name" (and --tables writes as
// CSV): each is defined, and registered by an init function, in its own table_<name>.go file.
type tableDef struct {
	name  string
	order int // place in TableNames, report order
	// build makes the table from Summary fields only; ok is false when there is no data.
	build func(st *renderState, f cellFmt) (t table, ok bool, err error)
}

// tableDefs holds every table by name; filled by the init functions of the table files and
// only read afterwards.
var tableDefs = map[string]tableDef{}

func registerTable(name string, order int, build func(st *renderState, f cellFmt) (table, bool, error)) {
	if _, dup := tableDefs[name]; dup {
		panic("render: table " + name + " registered twice")
	}
	tableDefs[name] = tableDef{name: name, order: order, build: build}
}

// TableNames lists the tables a template can ask for with table "name", in report order.
func TableNames() []string {
	names := make([]string, 0, len(tableDefs))
	for n := range tableDefs {
		names = append(names, n)
	}
	slices.SortFunc(names, func(a, b string) int { return tableDefs[a].order - tableDefs[b].order })
	return names
}

// buildTable builds the named table; ok is false when the Summary has no data for it.
func (st *renderState) buildTable(name string, f cellFmt) (t table, ok bool, err error) {
	d, found := tableDefs[name]
	if !found {
		return t, false, fmt.Errorf("table: unknown table %q (known: %s)", name, strings.Join(TableNames(), ", "))
	}
	return d.build(st, f)
}

// markdownTable writes t as a GFM table with every cell escaped (a | in data is \|).
func markdownTable(t table) mdText {
	var b strings.Builder
	b.WriteString("\n\n|")
	for _, h := range t.Header {
		b.WriteString(" " + escapeMarkdown(h) + " |")
	}
	b.WriteString("\n|")
	for i := range t.Header {
		if i < len(t.Numeric) && t.Numeric[i] {
			b.WriteString(" ---: |")
		} else {
			b.WriteString(" --- |")
		}
	}
	b.WriteString("\n")
	for _, r := range t.Rows {
		b.WriteString("|")
		for _, c := range r {
			b.WriteString(" " + escapeMarkdown(c) + " |")
		}
		b.WriteString("\n")
	}
	b.WriteString("\n")
	return mdText(b.String())
}

func (st *renderState) fnTable(name string) (mdText, error) {
	t, ok, err := st.buildTable(name, cellFmt{})
	if err != nil {
		return "", err
	}
	if !ok {
		return mdText("\n\n*" + escapeMarkdown("No data for this table in this run.") + "*\n\n"), nil
	}
	return markdownTable(t), nil
}

// plainNumber is a cell a spreadsheet reads as a number and never as a formula.
var plainNumber = regexp.MustCompile(`^-?[0-9]+(\.[0-9]+)?$`)

// csvCell neutralises spreadsheet formula injection (OWASP "CSV injection"): a cell that
// begins with = + - @, a tab or a carriage return gets a leading apostrophe. Plain numbers,
// negative ones included, are left alone: they cannot be formulas.
func csvCell(s string) string {
	if s == "" || plainNumber.MatchString(s) {
		return s
	}
	switch s[0] {
	case '=', '+', '-', '@', '\t', '\r':
		return "'" + s
	}
	return s
}

// tableCSV encodes t as CSV.
func tableCSV(t table) ([]byte, error) {
	var buf bytes.Buffer
	w := csv.NewWriter(&buf)
	write := func(rec []string) error {
		out := make([]string, len(rec))
		for i, c := range rec {
			out[i] = csvCell(c)
		}
		return w.Write(out)
	}
	if err := write(t.Header); err != nil {
		return nil, err
	}
	for _, r := range t.Rows {
		if err := write(r); err != nil {
			return nil, err
		}
	}
	w.Flush()
	return buf.Bytes(), w.Error()
}

// TableFile is one table of a report as CSV.
type TableFile struct {
	Name string // the table's name (TableNames) with ".csv"
	Data []byte
}

// Tables returns every table of the report that has data as CSV, in report order, built from
// the released view as the report's own tables are (small counts withheld, identifiers as
// released).
func Tables(r *analysis.Released) ([]TableFile, error) {
	st := &renderState{s: r.Summary()}
	var out []TableFile
	for _, name := range TableNames() {
		t, ok, err := st.buildTable(name, cellFmt{csv: true})
		if err != nil {
			return nil, err
		}
		if !ok {
			continue
		}
		data, err := tableCSV(t)
		if err != nil {
			return nil, fmt.Errorf("tables: %s: %w", name, err)
		}
		out = append(out, TableFile{Name: name + ".csv", Data: data})
	}
	return out, nil
}
