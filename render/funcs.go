package render

import (
	"bytes"
	"fmt"
	"math"
	"path"
	"path/filepath"
	"reflect"
	"strconv"
	"strings"
	"text/template"

	"github.com/caseweave/caseweave/pipeline/analysis"
	"github.com/caseweave/caseweave/pipeline/linelist"
)

// maxPartialDepth bounds partials that include themselves.
const maxPartialDepth = 16

// funcs is the report template function library. Every function returns Markdown in which
// data are already escaped (mdText), a plain value for a condition (bool, int), or an error
// that stops the render with the template's file and line.
func (st *renderState) funcs() template.FuncMap {
	return template.FuncMap{
		escapeFunc: escapeValue,
		"text":     func(v any) (mdText, error) { return escapeValue(v) },
		"num":      st.fnNum,
		"pct":      st.fnPct,
		"est":      func(e analysis.Estimate, digits int) (mdText, error) { return st.fnEst(e, digits, false) },
		"estpct":   func(e analysis.Estimate, digits int) (mdText, error) { return st.fnEst(e, digits, true) },
		"interval": st.fnInterval,
		"estimate": func(e, lo, hi *float64) analysis.Estimate {
			return analysis.Estimate{Estimate: e, Percentile: [2]*float64{lo, hi}, BCa: [2]*float64{lo, hi}}
		},
		"verdict": fnVerdict,
		"trend":   fnTrend,
		"count":   st.fnCount,
		"day":     fnDay,
		"isoday":  func(d linelist.Day) mdText { return mdText(escapeMarkdown(d.String())) },
		"week":    fnWeek,
		"plural":  fnPlural,
		"level":   func() mdText { return mdText(escapeMarkdown(st.levelText())) },
		"method":  func() mdText { return mdText(escapeMarkdown(st.intervalName())) },
		"chart":   st.fnChart,
		"table":   st.fnTable,
		"has":     st.fnHas,
		"foldout": st.fnFoldout,
		"endfold": func() mdText { return st.marker(&block{kind: blockFoldClose}) },
		"box":     st.fnBox,
		"endbox":  func() mdText { return st.marker(&block{kind: blockBoxClose}) },
		"partial": st.fnPartial,
		"title":   st.fnTitle,
		"show":    func(section string) bool { return st.cfg.shows(section) },
		"jurisdiction": func() mdText {
			return mdText(escapeMarkdown(st.cfg.Jurisdiction))
		},
		"place":         func() mdText { return mdText(escapeMarkdown(st.place())) },
		"contact":       func() mdText { return mdText(escapeMarkdown(st.cfg.Contact)) },
		"caution":       st.fnCaution,
		"caseid":        func(id string) mdText { return mdText(escapeMarkdown(id)) },
		"model":         func(id string) mdText { return mdText(escapeMarkdown(modelName(id))) },
		"problem":       func(c linelist.Code) mdText { return mdText(escapeMarkdown(c.Meaning())) },
		"threshold":     func() int { return st.threshold() },
		"value":         fnValue,
		"windowsource":  func() mdText { return mdText(escapeMarkdown(windowSource(st.s.Settings.CensorDaysSource))) },
		"pseudonymised": func() bool { return st.s.Settings.Pseudonymised },
		"ratio":         fnRatio,
		"minus":         func(a, b int) int { return a - b },
		"filename":      func(p string) mdText { return mdText(escapeMarkdown(path.Base(filepath.ToSlash(p)))) },
	}
}

// number extracts a float from the numeric kinds and their pointers; ok is false for nil.
func number(v any) (float64, bool, error) {
	rv := reflect.ValueOf(v)
	for rv.IsValid() && rv.Kind() == reflect.Pointer {
		if rv.IsNil() {
			return 0, false, nil
		}
		rv = rv.Elem()
	}
	switch rv.Kind() {
	case reflect.Float32, reflect.Float64:
		return rv.Float(), true, nil
	case reflect.Int, reflect.Int8, reflect.Int16, reflect.Int32, reflect.Int64:
		return float64(rv.Int()), true, nil
	case reflect.Uint, reflect.Uint8, reflect.Uint16, reflect.Uint32, reflect.Uint64:
		return float64(rv.Uint()), true, nil
	case reflect.Invalid:
		return 0, false, nil
	}
	return 0, false, errorf("expected a number, got %s", rv.Type())
}

// formatNumber prints x with the given decimals and a thin grouping of thousands, so 1234567
// reads "1,234,567". Non-finite values print as a dash (a Summary holds none; this is a guard).
func formatNumber(x float64, digits int) string {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return "—"
	}
	if digits < 0 {
		digits = 0
	}
	s := strconv.FormatFloat(x, 'f', digits, 64)
	if s == "-"+strconv.FormatFloat(0, 'f', digits, 64) {
		s = s[1:]
	}
	neg := strings.HasPrefix(s, "-")
	s = strings.TrimPrefix(s, "-")
	intPart, frac, _ := strings.Cut(s, ".")
	var b strings.Builder
	if neg {
		b.WriteByte('-')
	}
	for i, r := range intPart {
		if i > 0 && (len(intPart)-i)%3 == 0 {
			b.WriteByte(',')
		}
		b.WriteRune(r)
	}
	if frac != "" {
		b.WriteByte('.')
		b.WriteString(frac)
	}
	return b.String()
}

func (st *renderState) fnNum(v any, digits int) (mdText, error) {
	x, ok, err := number(v)
	if err != nil || !ok {
		return "—", err
	}
	return mdText(escapeMarkdown(formatNumber(x, digits))), nil
}

func (st *renderState) fnPct(v any, digits int) (mdText, error) {
	x, ok, err := number(v)
	if err != nil || !ok {
		return "—", err
	}
	return mdText(escapeMarkdown(formatNumber(100*x, digits) + "%")), nil
}

// levelText is the interval level as a percentage, e.g. "95%".
func (st *renderState) levelText() string {
	l := st.s.Settings.Level
	if l <= 0 || l >= 1 {
		l = 0.95
	}
	return strconv.FormatFloat(100*l, 'f', -1, 64) + "%"
}

// intervalName names the headline interval method.
func (st *renderState) intervalName() string {
	switch st.s.Settings.Interval {
	case analysis.IntervalBCa:
		return "bias-corrected and accelerated (BCa) bootstrap"
	case analysis.IntervalProfile:
		return "profile-likelihood (R and k) and percentile bootstrap"
	}
	return "percentile bootstrap"
}

// headline returns the bounds of the interval the run headlines (Settings.Interval).
func (st *renderState) headline(e analysis.Estimate) [2]*float64 {
	return e.Headline(st.s.Settings.Interval)
}

// estimateText formats an estimate with its headline interval: "0.80 (95% CI 0.74–0.88)".
// A missing bound is said in words (boundsText); a missing estimate reads "not estimable".
func (st *renderState) estimateText(e analysis.Estimate, digits int, percent bool) string {
	f := func(x float64) string {
		if percent {
			return formatNumber(100*x, digits) + "%"
		}
		return formatNumber(x, digits)
	}
	if e.Estimate == nil {
		return "not estimable"
	}
	b := st.headline(e)
	out := f(*e.Estimate) + " (" + st.levelText() + " CI "
	if b[0] == nil && b[1] == nil {
		return out + "not available)"
	}
	return out + boundsText(b, f, "–") + ")"
}

func (st *renderState) fnEst(e analysis.Estimate, digits int, percent bool) (mdText, error) {
	return mdText(escapeMarkdown(st.estimateText(e, digits, percent))), nil
}

// intervalText formats a pair of nullable bounds: "0.74–0.88".
func intervalText(b [2]*float64, digits int) string {
	if b[0] == nil && b[1] == nil {
		return "not available"
	}
	return boundsText(b, func(x float64) string { return formatNumber(x, digits) }, "–")
}

// boundsText writes an interval with at least one bound, num formatting each and sep between
// them; a missing bound is said in words, since a reader cannot guess what a mark means.
func boundsText(b [2]*float64, num func(float64) string, sep string) string {
	switch {
	case b[0] == nil:
		return "up to " + num(*b[1]) + ", no lower limit can be given"
	case b[1] == nil:
		return "from " + num(*b[0]) + ", no upper limit can be given"
	}
	return num(*b[0]) + sep + num(*b[1])
}

func (st *renderState) fnInterval(b [2]*float64, digits int) mdText {
	return mdText(escapeMarkdown(intervalText(b, digits)))
}

// withheldText stands for a count the release withheld. It does not say why (below the
// threshold, or withheld so that such a count cannot be worked out): saying which would
// tell the small counts apart.
const withheldText = "withheld"

// countText prints a count of a released view: null as withheldText, and, as a guard, a count
// from 1 to threshold − 1 the same way. Zero prints as 0: it discloses no individual.
func countText(v *int, threshold int) string {
	if v == nil || (*v > 0 && *v < threshold) {
		return withheldText
	}
	return formatNumber(float64(*v), 0)
}

func (st *renderState) fnCount(v any) (mdText, error) {
	x, ok, err := number(v)
	if err != nil {
		return "", err
	}
	var p *int
	if ok {
		n := int(x)
		p = &n
	}
	return mdText(escapeMarkdown(countText(p, st.threshold()))), nil
}

// dayText is the long form of a date, "4 March 2024", unambiguous in every locale.
func dayText(d linelist.Day) string { return d.Time().Format("2 January 2006") }

func fnDay(v any) (mdText, error) {
	switch d := v.(type) {
	case linelist.Day:
		return mdText(escapeMarkdown(dayText(d))), nil
	case *linelist.Day:
		if d == nil {
			return "—", nil
		}
		return mdText(escapeMarkdown(dayText(*d))), nil
	}
	return "", errorf("day: expected a date, got %T", v)
}

// weekText is the ISO 8601 week of d, "2024-W10".
func weekText(d linelist.Day) string {
	y, w := d.ISOWeek()
	return fmt.Sprintf("%d-W%02d", y, w)
}

func fnWeek(d linelist.Day) mdText { return mdText(escapeMarkdown(weekText(d))) }

func fnPlural(n any, one, many string) (mdText, error) {
	x, _, err := number(n)
	if err != nil {
		return "", err
	}
	if x == 1 {
		return mdText(escapeMarkdown(one)), nil
	}
	return mdText(escapeMarkdown(many)), nil
}

func (st *renderState) fnTitle(section string) (mdText, error) {
	t, err := st.cfg.title(section)
	return mdText(escapeMarkdown(t)), err
}

// place names what the report covers, for its title: the configured jurisdiction, and the
// value of a report of a batch (--by) when it is not that name already ("Vell Estuary
// Health Board — school"); either alone when the other is missing.
func (st *renderState) place() string {
	j := st.cfg.Jurisdiction
	sc := st.s.Scope
	switch {
	case sc == nil || sc.Value == j:
		return j
	case j == "":
		return sc.Value
	}
	return j + " — " + sc.Value
}

// fnCaution prints the configured caution text (or the default), escaped, keeping its
// paragraph breaks.
func (st *renderState) fnCaution() mdText {
	c := strings.TrimSpace(st.cfg.Caution)
	if c == "" {
		c = DefaultCaution
	}
	c = strings.ReplaceAll(c, "\r\n", "\n")
	var paras []string
	for _, p := range strings.Split(c, "\n\n") {
		if p = strings.TrimSpace(p); p != "" {
			paras = append(paras, escapeMarkdown(p))
		}
	}
	return mdText(strings.Join(paras, "\n\n"))
}

func (st *renderState) fnFoldout(title string) mdText {
	return st.marker(&block{kind: blockFoldOpen, title: plainText(title)})
}

func (st *renderState) fnBox(kind string) (mdText, error) {
	switch kind {
	case "headline", "caution", "note":
		return st.marker(&block{kind: blockBoxOpen, box: kind}), nil
	}
	return "", errorf("box: unknown kind %q (use headline, caution or note)", kind)
}

// fnPartial executes another template file of the folder with data (the Summary when
// omitted). Only files parsed from the template folder can be named.
func (st *renderState) fnPartial(name string, data ...any) (mdText, error) {
	t := st.set.Lookup(name)
	if t == nil || t.Tree == nil {
		return "", errorf("partial: no template file %q in the template folder", name)
	}
	if st.depth >= maxPartialDepth {
		return "", errorf("partial: %q nested more than %d deep", name, maxPartialDepth)
	}
	var dot any = st.s
	if len(data) > 0 {
		dot = data[0]
	}
	st.depth++
	defer func() { st.depth-- }()
	var buf bytes.Buffer
	if err := t.Execute(&buf, dot); err != nil {
		return "", asTemplateError(err, name)
	}
	return mdText(buf.String()), nil
}

// fnValue unwraps a nullable number for comparisons ({{ if lt (value .K.Estimate) 1.0 }});
// guard it with {{ with }} or {{ if }}: a null is an error, not a silent zero.
func fnValue(v any) (float64, error) {
	x, ok, err := number(v)
	if err != nil {
		return 0, err
	}
	if !ok {
		return 0, errorf("value: the number is null; test it with {{ with }} first")
	}
	return x, nil
}

// fnRatio is a/b, or 0 when b is 0 (a share of nothing is reported as none).
func fnRatio(a, b any) (float64, error) {
	x, _, err := number(a)
	if err != nil {
		return 0, err
	}
	y, _, err := number(b)
	if err != nil || y == 0 {
		return 0, err
	}
	return x / y, nil
}

// windowSource says in words where the censoring window came from.
func windowSource(src string) string {
	switch src {
	case "flag":
		return "set by the analyst"
	case "serial_interval_p95":
		return "the 95th percentile of the fitted serial interval"
	case "default":
		return "caseweave's default"
	}
	return src
}

// threshold is the small-count threshold the release applied.
func (st *renderState) threshold() int {
	if t := st.s.Settings.SuppressBelow; t > 0 {
		return t
	}
	return analysis.DefaultSuppressBelow
}

// fnVerdict says in a sentence what a verdict on R means for growth.
func fnVerdict(v analysis.Verdict) mdText {
	var out string
	switch v.Kind {
	case analysis.VerdictGrowing:
		out = "Transmission is growing: " + v.Reason + "."
	case analysis.VerdictShrinking:
		out = "Transmission is shrinking: " + v.Reason + "."
	default:
		out = "It cannot yet be said whether transmission is growing or shrinking: " + v.Reason + "."
	}
	return mdText(escapeMarkdown(out))
}

// fnTrend says how the last complete week compares with the week before.
func fnTrend(t *analysis.Trend) mdText {
	if t == nil {
		return ""
	}
	if t.Count == nil || t.PreviousCount == nil {
		return mdText(escapeMarkdown("Too few cases were reported in the last two complete weeks to compare them."))
	}
	out := fmt.Sprintf("%s cases had onset in the week of %s, against %s the week before", formatNumber(float64(*t.Count), 0), dayText(t.Week), formatNumber(float64(*t.PreviousCount), 0))
	p := ""
	if t.PValue != nil {
		p = " (p = " + formatNumber(*t.PValue, 2) + ")"
	}
	switch t.Kind {
	case "rising":
		out += ": a rise larger than chance alone would explain" + p + "."
	case "falling":
		out += ": a fall larger than chance alone would explain" + p + "."
	default:
		out += ": a difference within what chance alone gives" + p + "."
	}
	return mdText(escapeMarkdown(out))
}
