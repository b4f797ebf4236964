package render

import (
	"errors"
	"github.com/caseweave/caseweave/pipeline/linelist"
	"strings"
	"testing"
	"testing/fstest"

	"github.com/caseweave/caseweave/pipeline/analysis"
)

func TestEscapeMarkdown(t *testing.T) {
	for _, tc := range []struct{ in, want string }{
		{"plain words", "plain words"},
		{"*emph*", `\*emph\*`},
		{"a | b", `a \| b`},
		{"[x](javascript:y)", `\[x\]\(javascript\:y\)`},
		{"<img src=x>", `\<img src\=x\>`},
		{"```", "\\`\\`\\`"},
		{"two\nlines\r\n\tand  tabs", "two lines and tabs"},
		{"# not a heading", `\# not a heading`},
		{"1. not a list", `1\. not a list`},
		{"0–17 ünïcode", "0–17 ünïcode"},
		{`back\slash`, `back\\slash`},
	} {
		if got := escapeMarkdown(tc.in); got != tc.want {
			t.Errorf("escapeMarkdown(%q) = %q, want %q", tc.in, got, tc.want)
		}
	}
}

func TestEscapeValue(t *testing.T) {
	var nilp *float64
	for _, tc := range []struct {
		in      any
		want    mdText
		wantErr bool
	}{
		{"a*b", `a\*b`, false},
		{mdText("**kept**"), "**kept**", false},
		{nilp, "—", false},
		{fp(0.5), `0\.5`, false},
		{42, "42", false},
		{day("2024-03-04"), `2024\-03\-04`, false},
		{analysis.Estimate{}, "", true},
		{[]string{"x"}, "", true},
	} {
		got, err := escapeValue(tc.in)
		if (err != nil) != tc.wantErr || got != tc.want {
			t.Errorf("escapeValue(%#v) = %q, %v; want %q, error %v", tc.in, got, err, tc.want, tc.wantErr)
		}
	}
}

func TestNumberFormats(t *testing.T) {
	st := &renderState{s: fixtureSummary(), cfg: Config{SuppressBelow: 5}}
	e := est(0.8, 0.74, 0.88, 0.70, 0.90)
	for _, tc := range []struct {
		name, got, want string
	}{
		{"grouping", formatNumber(1234567.891, 2), "1,234,567.89"},
		{"negative zero", formatNumber(-0.0001, 2), "0.00"},
		{"negative", formatNumber(-1234, 0), "-1,234"},
		{"estimate, bca headline", st.estimateText(e, 2, false), "0.80 (95% CI 0.70–0.90)"},
		{"estimate as percent", st.estimateText(e, 0, true), "80% (95% CI 70%–90%)"},
		{"open upper bound", st.estimateText(analysis.Estimate{Estimate: fp(3), BCa: [2]*float64{fp(1), nil}}, 1, false), "3.0 (95% CI from 1.0, no upper limit can be given)"},
		{"open lower bound", st.estimateText(analysis.Estimate{Estimate: fp(3), BCa: [2]*float64{nil, fp(4)}}, 1, false), "3.0 (95% CI up to 4.0, no lower limit can be given)"},
		{"no estimate", st.estimateText(analysis.Estimate{}, 2, false), "not estimable"},
		{"interval", intervalText([2]*float64{fp(6.6), nil}, 1), "from 6.6, no upper limit can be given"},
		{"interval without lower", intervalText([2]*float64{nil, fp(2)}, 1), "up to 2.0, no lower limit can be given"},
		{"interval both", intervalText([2]*float64{fp(1), fp(2)}, 1), "1.0–2.0"},
		{"count suppressed", countText(ip(3), 5), "withheld"},
		{"count null", countText(nil, 10), "withheld"},
		{"count zero shown", countText(ip(0), 5), "0"},
		{"count shown", countText(ip(5), 5), "5"},
		{"day", dayText(day("2024-03-04")), "4 March 2024"},
		{"ISO week", weekText(day("2024-12-30")), "2025-W01"},
	} {
		if tc.got != tc.want {
			t.Errorf("%s: got %q, want %q", tc.name, tc.got, tc.want)
		}
	}
	st.s.Settings.Interval = "percentile"
	if got := st.estimateText(e, 2, false); got != "0.80 (95% CI 0.74–0.88)" {
		t.Errorf("percentile headline: got %q", got)
	}
}

func TestParseConfig(t *testing.T) {
	for _, tc := range []struct {
		name, yaml, errContains string
		check                   func(Config) bool
	}{
		{"empty gives defaults", "", "", func(c Config) bool { return c.SuppressBelow == 5 && len(c.Sections) == 0 }},
		{"all keys", "jurisdiction: X\ncontact: Y\nsuppress_below: 10\nlabels: {headline: Key facts}\nsections: [headline, cautions]\ncaution: C\nincubation_days: 21\npseudonym_key: k\n", "",
			func(c Config) bool {
				return c.Jurisdiction == "X" && c.SuppressBelow == 10 && c.Labels["headline"] == "Key facts" && *c.IncubationDays == 21 && c.shows("cautions") && !c.shows("outlook")
			}},
		{"input for the reader", "input:\n  columns: {case_id: ID}\n  date_format: dmy\n", "", func(c Config) bool {
			return c.SuppressBelow == 5 && c.Input.Columns["case_id"] == "ID" && c.Input.DateFormat == "dmy"
		}},
		{"input checked", "input:\n  columns: {case_id: ID}\n  anything: [1, 2]\n", "config.yaml: line 3: bad_config: unknown key input.anything", nil},
		{"unknown key", "jurisdiction: X\nsupress_below: 3\n", `config.yaml: line 2: bad_config: unknown key "supress_below"`, nil},
		{"unknown section", "sections: [headline, pie]\n", `line 1: bad_config: sections: unknown section "pie"`, nil},
		{"unknown label", "labels: {nope: X}\n", `line 1: bad_config: labels: unknown section "nope"`, nil},
		{"bad threshold", "suppress_below: -1\n", "line 1: bad_config: suppress_below must be a whole number of at least 1", nil},
		{"threshold in words", "contact: x\nsuppress_below: five\n", `line 2: bad_config: suppress_below must be a whole number, not "five"`, nil},
		{"not a mapping", "- a\n- b\n", "line 1: bad_config: the config must be a mapping", nil},
		{"duplicate key", "contact: a\ncontact: b\n", "line 2: bad_config: key \"contact\" is given twice", nil},
		{"invalid YAML", "contact: [\n", "bad_config: the config is not valid YAML", nil},
	} {
		t.Run(tc.name, func(t *testing.T) {
			c, err := ParseConfig("config.yaml", []byte(tc.yaml))
			if tc.errContains != "" {
				var fe *linelist.FileError
				if err == nil || !errors.As(err, &fe) || fe.Code != linelist.FileBadConfig || fe.Path != "config.yaml" || !strings.Contains(err.Error(), tc.errContains) {
					t.Fatalf("error %v, want a bad_config *linelist.FileError containing %q", err, tc.errContains)
				}
				return
			}
			if err != nil || !tc.check(c) {
				t.Fatalf("ParseConfig: %+v, %v", c, err)
			}
		})
	}
}

func TestCSVCell(t *testing.T) {
	for _, tc := range []struct{ in, want string }{
		{"=SUM(A1)", "'=SUM(A1)"},
		{"+1+1", "'+1+1"},
		{"-1+cmd|' /C calc'!A0", "'-1+cmd|' /C calc'!A0"},
		{"@SUM(1)", "'@SUM(1)"},
		{"\tx", "'\tx"},
		{"\rx", "'\rx"},
		{"-341.20", "-341.20"},
		{"12", "12"},
		{"household", "household"},
		{"", ""},
	} {
		if got := csvCell(tc.in); got != tc.want {
			t.Errorf("csvCell(%q) = %q, want %q", tc.in, got, tc.want)
		}
	}
}

func TestTables(t *testing.T) {
	files, err := Tables(released(hostileSummary()))
	if err != nil {
		t.Fatal(err)
	}
	byName := map[string][]byte{}
	for _, f := range files {
		byName[f.Name] = f.Data
	}
	for _, name := range TableNames() {
		if byName[name+".csv"] == nil {
			t.Errorf("table %s missing", name)
		}
	}
	strata := byName["strata.csv"]
	if !strings.Contains(string(strata), `'=HYPERLINK(""http://x"")`) {
		t.Errorf("formula not neutralised in strata.csv:\n%s", strata)
	}
	if !strings.Contains(string(strata), "prison,withheld,withheld") {
		t.Errorf("small count not suppressed in strata.csv:\n%s", strata)
	}
	models := byName["models.csv"]
	if !strings.Contains(string(models), ",-341.2000,") {
		t.Errorf("negative number altered in models.csv:\n%s", models)
	}
	if _, err := Tables(released(minimalSummary())); err != nil {
		t.Errorf("minimal summary: %v", err)
	}
}

// A style sheet may call no function that fetches (url, image-set in any form, image,
// cross-fade, element, src, paint), import, declare a font or escape characters; ordinary
// CSS passes.
func TestStyleSheetRefusesFetching(t *testing.T) {
	for _, bad := range []string{
		`body { background: url(x.png) }`, `a { background-image: image-set("http://x/a.png" 1x) }`,
		`a { background: -webkit-image-set("x.png" 1x) }`, `a { background: IMAGE( "x.png") }`,
		`a { background: cross-fade(url(a), url(b)) }`, `a { background: element(#x) }`,
		`@import "x.css";`, `@font-face { font-family: x; src: local(x) }`, `a { b: u\72l(x) }`,
		`a { width: expression(alert(1)) }`, `</style><script>`,
	} {
		if _, err := loadCSS(fstest.MapFS{StyleFile: {Data: []byte(bad)}}); err == nil {
			t.Errorf("style sheet %q accepted", bad)
		}
	}
	good := `main { color: #222; background: linear-gradient(#fff, #eee); width: calc(100% - 2em) }`
	if _, err := loadCSS(fstest.MapFS{StyleFile: {Data: []byte(good)}}); err != nil {
		t.Errorf("ordinary CSS refused: %v", err)
	}
}

// Data values are isolated from the text around them: every table cell has dir="auto", and
// the index wraps each value in <bdi>, so right-to-left text or bidirectional overrides in
// a value cannot reorder what stands beside it (UAX #9).
func TestBidiIsolation(t *testing.T) {
	s := fixtureSummary()
	s.Strata[0].Value = "\u202eevil\u202c"
	html := mustRender(t, s, Options{})
	if strings.Contains(html, "<td>") || !strings.Contains(html, `<td dir="auto">`+"\u202eevil\u202c") {
		t.Error("a table cell is not isolated")
	}
	idx, err := Index("jurisdiction", []IndexEntry{{Value: "\u202eQuillan", File: "q.html", Report: released(s)}})
	if err != nil || !strings.Contains(string(idx), "<bdi>\u202eQuillan</bdi>") {
		t.Errorf("index link not isolated: %v", err)
	}
}

// An unclosed block names the line where it opened, not only "unexpected EOF".
func TestUnclosedActionNamesItsLine(t *testing.T) {
	_, err := parseFolder(fstest.MapFS{"report.md": {Data: []byte("# R\n\n{{ with .Offspring }}\n{{ if .PoissonLimit }}\nx\n{{ end }}\n\nmore\n")}}, (&renderState{s: minimalSummary()}).funcs(), MainTemplate)
	var te *TemplateError
	if !errors.As(err, &te) || te.Line != 3 || !strings.Contains(err.Error(), "{{ with }} opened on line 3 has no {{ end }}") {
		t.Errorf("error %v", err)
	}
}

func TestCategoryColours(t *testing.T) {
	batch := []string{"care home", "event", "household", "school"}
	a := &renderState{s: &analysis.Summary{}, categories: batch}
	b := &renderState{s: &analysis.Summary{}, categories: batch, cfg: Config{Colours: map[string]string{"school": "#123456"}}}
	if a.categoryColour("event") != b.categoryColour("event") || a.categoryColour("household") == a.categoryColour("event") {
		t.Errorf("event %s / %s, household %s", a.categoryColour("event"), b.categoryColour("event"), a.categoryColour("household"))
	}
	if got := b.categoryColour("school"); got != "#123456" {
		t.Errorf("a pinned colour: got %s", got)
	}
	for _, v := range batch {
		if a.categoryColour(v) == colMuted {
			t.Errorf("%s takes the grey of the combined small groups", v)
		}
	}
	if _, err := ParseConfig("config.yaml", []byte("colours:\n  school: blue\n")); err == nil || !strings.Contains(err.Error(), "line 2") {
		t.Errorf("a colour that is not #rrggbb: %v", err)
	}
}

// A long tail is grouped: every count in exactly one range, singles up to 30, then ranges
// doubling in width, so half a million counts need some forty bars.
func TestOffspringBins(t *testing.T) {
	for _, n := range []int{1, 5, 31, 32, 100, 500_001} {
		bins := offspringBins(n)
		next := 0
		for _, b := range bins {
			if b[0] != next || b[1] < b[0] {
				t.Fatalf("n %d: range %v after %d", n, b, next-1)
			}
			next = b[1] + 1
		}
		if next != n {
			t.Errorf("n %d: ranges end at %d", n, next-1)
		}
		if n <= offspringSingleBars && len(bins) != n {
			t.Errorf("n %d: %d bins, want one per count", n, len(bins))
		}
		if len(bins) > 50 {
			t.Errorf("n %d: %d bins", n, len(bins))
		}
	}
}
