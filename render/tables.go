package render

import (
	"bytes"
	"encoding/csv"
	"fmt"
	"os"
	"path/filepath"
	"regexp"
	"slices"
	"strconv"
	"strings"

	"github.com/caseweave/caseweave/pipeline/analysis"
	"github.com/caseweave/caseweave/pipeline/linelist"
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
	lo, hi := "…", "…"
	if b[0] != nil {
		lo = f.num(*b[0], digits)
	}
	if b[1] != nil {
		hi = f.num(*b[1], digits)
	}
	return lo + " to " + hi
}

// superspreadersShown caps the superspreader table.
const superspreadersShown = 25

// TableNames lists the tables a template can ask for with table "name", in report order.
func TableNames() []string {
	return []string{"problems", "estimates", "models", "strata", "superspreaders", "cluster_sizes",
		"largest_trees", "projections", "age_mixing", "epicurve", "serial_models", "weekly_r", "end_of_outbreak"}
}

// buildTable builds the named table; ok is false when the Summary has no data for it.
func (st *renderState) buildTable(name string, f cellFmt) (t table, ok bool, err error) {
	s := st.s
	thr := st.cfg.suppress()
	switch name {
	case "problems":
		if len(s.ProblemCounts) == 0 {
			return t, false, nil
		}
		t.Header = []string{"Problem", "What it means", "Severity", "Rows", "First rows"}
		t.Numeric = []bool{false, false, false, true, false}
		for _, p := range s.ProblemCounts {
			rows := make([]string, len(p.FirstRows))
			for i, r := range p.FirstRows {
				rows[i] = strconv.Itoa(r)
			}
			t.Rows = append(t.Rows, []string{string(p.Code), p.Code.Meaning(), string(p.Severity), f.int(p.Count), strings.Join(rows, " ")})
		}
	case "estimates":
		o := s.Offspring
		if o == nil {
			return t, false, nil
		}
		lv := st.levelText()
		t.Header = []string{"Quantity", "Estimate", lv + " interval, percentile", lv + " interval, BCa"}
		t.Numeric = []bool{false, true, true, true}
		add := func(q string, e analysis.Estimate, d int) {
			t.Rows = append(t.Rows, []string{q, f.numPtr(e.Estimate, d), f.interval(e.Percentile, d), f.interval(e.BCa, d)})
		}
		add("Reproduction number R (mean offspring)", o.R, 2)
		if o.PoissonLimit {
			t.Rows = append(t.Rows, []string{"Dispersion k", "no finite value (variance ≤ mean)", f.interval(o.K.Percentile, 2), f.interval(o.K.BCa, 2)})
		} else {
			add("Dispersion k", o.K, 2)
		}
		if out := s.Outlook; out != nil {
			add("Chance one introduction dies out", out.ExtinctionProbability, 3)
			add("Chance one introduction starts a major outbreak", out.MajorOutbreakProbability, 3)
			add("Share of cases causing 80% of transmission (model)", out.ShareCausing80pct, 3)
		}
		if o.ShareCausing80pctObserved != nil {
			t.Rows = append(t.Rows, []string{"Share of cases causing 80% of transmission (observed)", f.num(*o.ShareCausing80pctObserved, 3), "", ""})
		}
		t.Rows = append(t.Rows, []string{"Share of cases who infected no one", f.num(o.ZeroShare, 3), "", ""})
	case "models":
		if s.Offspring == nil || len(s.Offspring.Models) == 0 {
			return t, false, nil
		}
		// One column per parameter any model has (R first), then their standard errors.
		var names []string
		for _, m := range s.Offspring.Models {
			for _, p := range m.Parameters {
				if !slices.Contains(names, p.Name) {
					names = append(names, p.Name)
				}
			}
		}
		t.Header = append([]string{"Model"}, names...)
		for _, n := range names {
			t.Header = append(t.Header, "SE of "+n)
		}
		t.Header = append(t.Header, "Log-likelihood", "AIC", "ΔAIC")
		t.Numeric = []bool{false}
		for range t.Header[1:] {
			t.Numeric = append(t.Numeric, true)
		}
		for _, m := range s.Offspring.Models {
			n := modelName(m.Name)
			if m.Name == s.Offspring.BestModel {
				n += " (best)"
			}
			est, se := make([]string, len(names)), make([]string, len(names))
			for _, p := range m.Parameters {
				i := slices.Index(names, p.Name)
				est[i], se[i] = f.numPtr(p.Estimate, 3), f.numPtr(p.SE, 3)
			}
			row := append(append(append([]string{n}, est...), se...), f.num(m.LogLik, 2), f.num(m.AIC, 2), f.num(m.DeltaAIC, 2))
			t.Rows = append(t.Rows, row)
		}
	case "strata":
		if len(s.Strata) == 0 {
			return t, false, nil
		}
		t.Header = []string{"Column", "Value", "Cases", "Mean offspring"}
		t.Numeric = []bool{false, false, true, true}
		for _, x := range s.Strata {
			mean := f.numPtr(x.MeanOffspring, 2)
			if x.Cases == nil || x.MeanOffspring == nil {
				mean = "withheld"
			}
			t.Rows = append(t.Rows, []string{x.Column, x.Value, countText(x.Cases, thr), mean})
		}
	case "superspreaders":
		if s.Offspring == nil || len(s.Offspring.Superspreaders) == 0 {
			return t, false, nil
		}
		// The cases who infected most, capped so that a national list does not print tens of
		// thousands of rows; the last row says how many more there are.
		t.Header = []string{"Case", "People infected"}
		t.Numeric = []bool{false, true}
		o := s.Offspring
		for k, id := range o.Superspreaders {
			if k == superspreadersShown {
				t.Rows = append(t.Rows, []string{fmt.Sprintf("and %s more", f.int(len(o.Superspreaders)-k)), fmt.Sprintf("more than %d each", o.SSEThreshold)})
				break
			}
			n := fmt.Sprintf("more than %d", o.SSEThreshold)
			if k < len(o.SuperspreaderOffspring) {
				n = f.int(o.SuperspreaderOffspring[k])
			}
			t.Rows = append(t.Rows, []string{st.pseudonym(id), n})
		}
	case "cluster_sizes":
		if s.Clusters == nil || len(s.Clusters.SizeHistogram) == 0 {
			return t, false, nil
		}
		t.Header = []string{"Chain size (cases)", "Chains", "Still growing", "Expected by the model"}
		t.Numeric = []bool{true, true, true, true}
		for _, c := range s.Clusters.SizeHistogram {
			t.Rows = append(t.Rows, []string{f.int(c.Size), f.int(c.Count), f.int(c.Censored), f.numPtr(c.Expected, 1)})
		}
	case "largest_trees":
		if s.Clusters == nil || len(s.Clusters.Largest) == 0 {
			return t, false, nil
		}
		t.Header = []string{"First case", "Cases", "Generations", "First onset", "Cases not drawn"}
		t.Numeric = []bool{false, true, true, false, true}
		for _, tr := range s.Clusters.Largest {
			t.Rows = append(t.Rows, []string{st.pseudonym(tr.Root), f.int(tr.Size), f.int(tr.Depth), tr.Start.String(), f.int(tr.Hidden)})
		}
	case "projections":
		if s.Outlook == nil || len(s.Outlook.Projection) == 0 {
			return t, false, nil
		}
		t.Header = []string{"Generations ahead", "Expected cases", "50% prediction interval", "90% prediction interval", "Chance of no cases"}
		t.Numeric = []bool{true, true, true, true, true}
		for _, p := range s.Outlook.Projection {
			t.Rows = append(t.Rows, []string{f.int(p.Generation), f.numPtr(p.Mean, 1),
				f.countRange(p.P50), f.countRange(p.P90), f.num(p.PZero, 3)})
		}
	case "age_mixing":
		a := s.AgeMixing
		if a == nil || len(a.Groups) == 0 {
			return t, false, nil
		}
		t.Header = append([]string{"Infector age \u2192 infectee age"}, a.Groups...)
		t.Numeric = []bool{false}
		for range a.Groups {
			t.Numeric = append(t.Numeric, true)
		}
		for i, g := range a.Groups {
			row := []string{g}
			for j := range a.Groups {
				var c *int
				if i < len(a.Counts) && j < len(a.Counts[i]) {
					c = a.Counts[i][j]
				}
				row = append(row, countText(c, thr))
			}
			t.Rows = append(t.Rows, row)
		}
	case "epicurve":
		e := s.EpiCurve
		if e == nil || len(e.Weeks) == 0 {
			return t, false, nil
		}
		t.Header = []string{"ISO week", "Week starting", "All cases"}
		t.Numeric = []bool{false, false, true}
		for _, sr := range e.Series {
			t.Header = append(t.Header, sr.Name)
			t.Numeric = append(t.Numeric, true)
		}
		for i, w := range e.Weeks {
			row := []string{weekText(w), w.String(), ""}
			if i < len(e.Total) {
				row[2] = countText(&e.Total[i], thr)
			}
			for _, sr := range e.Series {
				var c *int
				if i < len(sr.Counts) {
					c = sr.Counts[i]
				}
				row = append(row, countText(c, thr))
			}
			t.Rows = append(t.Rows, row)
		}
	case "serial_models":
		si := s.SerialInterval
		if si == nil || len(si.Models) == 0 {
			return t, false, nil
		}
		t.Header = []string{"Model", "Mean (days)", "SD (days)", "Parameters", "Log-likelihood", "AIC"}
		t.Numeric = []bool{false, true, true, false, true, true}
		for _, m := range si.Models {
			keys := make([]string, 0, len(m.Params))
			for k := range m.Params {
				keys = append(keys, k)
			}
			slices.Sort(keys)
			ps := make([]string, len(keys))
			for i, k := range keys {
				ps[i] = k + " = " + f.num(m.Params[k], 3)
			}
			n := modelName(m.Name)
			if m.Name == si.BestModel {
				n += " (best)"
			}
			t.Rows = append(t.Rows, []string{n, f.num(m.Mean, 2), f.num(m.SD, 2), strings.Join(ps, "; "), f.num(m.LogLik, 2), f.num(m.AIC, 2)})
		}
	case "weekly_r":
		if len(s.TimeVarying) == 0 {
			return t, false, nil
		}
		t.Header = []string{"ISO week", "Week starting", "Cases", "R", "Lower", "Upper", "Complete?"}
		t.Numeric = []bool{false, false, true, true, true, true, false}
		for _, w := range s.TimeVarying {
			c := w.Cases
			done := "yes"
			if w.Censored {
				done = "no: recent, still counting"
			}
			r, lo, hi := f.num(w.R, 2), f.numPtr(w.Lower, 2), f.numPtr(w.Upper, 2)
			if c > 0 && c < thr {
				r, lo, hi = "withheld", "", ""
			}
			t.Rows = append(t.Rows, []string{weekText(w.WeekStart), w.WeekStart.String(), countText(&c, thr), r, lo, hi, done})
		}
	case "end_of_outbreak":
		e := s.EndOfOutbreak
		if e == nil {
			return t, false, nil
		}
		t.Header = []string{"Milestone", "Date"}
		t.Rows = append(t.Rows, []string{"Last onset", e.LastOnset.String()})
		if e.P95Date != nil {
			t.Rows = append(t.Rows, []string{"95% chance no further cases", e.P95Date.String()})
		}
		if e.P99Date != nil {
			t.Rows = append(t.Rows, []string{"99% chance no further cases", e.P99Date.String()})
		}
		if rt := st.ruleOfThumb(); rt != nil {
			t.Rows = append(t.Rows, []string{fmt.Sprintf("Twice the longest incubation period (%d days) after the last onset", rt.LongestIncubationDays), rt.Date.String()})
		}
	default:
		return t, false, fmt.Errorf("table: unknown table %q (known: %s)", name, strings.Join(TableNames(), ", "))
	}
	return t, true, nil
}

// ruleOfThumb is the Summary's rule-of-thumb date, or one computed from config.yaml's
// incubation_days (twice the longest incubation period after the last onset; common practice).
func (st *renderState) ruleOfThumb() *analysis.RuleOfThumb {
	e := st.s.EndOfOutbreak
	if e == nil {
		return nil
	}
	if e.RuleOfThumb != nil {
		return e.RuleOfThumb
	}
	if st.cfg.IncubationDays == nil {
		return nil
	}
	d := *st.cfg.IncubationDays
	return &analysis.RuleOfThumb{LongestIncubationDays: d, Date: e.LastOnset + linelist.Day(2*d)}
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

// WriteTables writes each table of the report that has data as dir/NAME.csv (see TableNames),
// each file atomically. Small counts are suppressed at the run's threshold and case
// identifiers pseudonymised, as in the report.
func WriteTables(s *analysis.Summary, dir string) error {
	cfg := Config{SuppressBelow: s.Settings.SuppressBelow}
	return writeTables(&renderState{s: s, cfg: cfg, ordinals: map[string]string{}}, dir)
}

func writeTables(st *renderState, dir string) error {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return fmt.Errorf("tables: %w", err)
	}
	for _, name := range TableNames() {
		t, ok, err := st.buildTable(name, cellFmt{csv: true})
		if err != nil {
			return err
		}
		if !ok {
			continue
		}
		data, err := tableCSV(t)
		if err != nil {
			return fmt.Errorf("tables: %s: %w", name, err)
		}
		if err := WriteFileAtomic(filepath.Join(dir, name+".csv"), data); err != nil {
			return err
		}
	}
	return nil
}
