package render

import (
	"errors"
	"html"
	"math"
	"reflect"
	"regexp"
	"slices"
	"strings"
	"testing"
	"testing/fstest"

	"github.com/caseweave/caseweave/pipeline/analysis"
	"github.com/caseweave/caseweave/pipeline/linelist"
)

// fuzzReport exercises the function library on data the fuzzer controls. Data reach a fold-out
// title, a table cell written by the template, list items, a partial and every library table
// and chart named below; the structure (which charts and tables exist) does not depend on the
// fuzzed values, so every run has the same script elements as the clean render.
const fuzzReport = `# Report {{ jurisdiction }}: {{ text .Scope.Value }}

{{ with .Scope }}{{ .Column }} = {{ .Value }}{{ end }} · {{ day .AsOf }} · {{ isoday .AsOf }} · {{ week .AsOf }} · {{ contact }}

{{ box "headline" }}

R is {{ est .Offspring.R 2 }}; k is {{ estpct .Offspring.K 1 }}; mean {{ num .Offspring.Mean 3 }};
{{ pct .Offspring.ZeroShare 0 }} infected no one; {{ count .Tree.Imported }} imported
{{ plural .Tree.Imported "case" "cases" }}; {{ num (ratio .Tree.Linked .Tree.Cases) 2 }} linked.

{{ endbox }}

{{ foldout .Input.Path }}
Serial interval mean {{ interval .SerialInterval.MeanCI 1 }} days; best model {{ .SerialInterval.BestModel }}.
{{ endfold }}

{{ range .Notes }}
- {{ . }}
{{- end }}

{{ chart "epicurve" }}
{{ chart "offspring" }}
{{ chart "age_mixing" }}
{{ chart "trees" }}

{{ table "strata" }}

{{ table "superspreaders" }}

{{ table "serial_models" }}

{{ if has "problems" }}{{ table "problems" }}{{ end }}

{{ partial "partials/p.md" . }}

| Path | Pseudonym | File |
| --- | --- | --- |
| {{ .Input.Path }} | {{ caseid .Input.Path }} | {{ filename .Input.Path }} |

{{ box "caution" }}
{{ caution }}
{{ endbox }}
`

const fuzzPartial = `{{ with .Offspring }}Best model {{ .BestModel }}; {{ range .Superspreaders }}{{ caseid . }} {{ end }}{{ end }}
`

// fuzzSummary is the fixture with the fuzzed text and numbers put where the line list's
// values land: a is setting-like text (scope, strata, notes), b names series, age groups and
// tree settings, c is a path, identifiers and model names.
func fuzzSummary(a, b, c string, x float64, n int, d int32) *analysis.Summary {
	s := fixtureSummary()
	s.AsOf = linelist.Day(d)
	s.Scope = &analysis.Scope{Column: b, Value: a}
	s.Notes = []string{a, b, c}
	s.Strata[0].Value = a
	s.Strata[1].Column = b
	s.Strata[1].Cases = &n
	s.Strata[1].MeanOffspring = &x
	s.EpiCurve.Series[0].Name = b
	s.EpiCurve.Series[1].Counts[3] = &n
	s.AgeMixing.Groups[1] = b
	s.AgeMixing.Counts[2][1] = &n
	s.Clusters.Largest[0].Nodes[1].Setting = b
	s.Clusters.Largest[0].Nodes[2].ID = c
	s.Input.Path = c
	s.Input.Rows = n
	s.Offspring.Superspreaders = []string{c, a}
	s.Offspring.BestModel = c
	s.Offspring.Models[1].Name = c
	s.Offspring.R.Estimate = &x
	s.Offspring.K.BCa[1] = &x
	s.Offspring.Mean = x
	s.Offspring.ZeroShare = x
	s.Offspring.Histogram[2] = n
	s.Tree.Imported = n
	s.Tree.Linked = n
	s.SerialInterval.MeanCI[0] = &x
	s.SerialInterval.BestModel = a
	s.SerialInterval.Models[0].Params = map[string]float64{b: x}
	s.ProblemCounts[0].Code = linelist.Code(c)
	return s
}

// scriptOpen counts script elements, in any letter case: data can only add one by breaking
// out of its context. It counts in the markup (the page with script contents cut out, start
// tags kept), so the chart library is not lower-cased on every fuzz run.
func scriptOpen(page string) int { return strings.Count(strings.ToLower(markupOf(page)), "<script") }

func FuzzTemplateFunctions(f *testing.F) {
	fsys := fstest.MapFS{
		"report.md":      {Data: []byte(fuzzReport)},
		"partials/p.md":  {Data: []byte(fuzzPartial)},
		"config.yaml":    {Data: []byte("jurisdiction: Ostvale\ncontact: \"Outbreak desk\"\nsuppress_below: 5\n")},
		"partials/x.txt": {Data: []byte("not a template")},
	}
	clean, err := Render(released(fuzzSummary("household", "school", "cases.csv", 0.8, 12, int32(day("2024-03-24")))), Options{Templates: fsys})
	if err != nil {
		f.Fatalf("clean render: %v", err)
	}
	cleanShape := shapeOf(string(clean))
	wantScripts := scriptOpen(string(clean))
	if wantScripts < 5 { // four charts' options at least, plus library, init and print
		f.Fatalf("clean render has %d script elements; the template draws no charts", wantScripts)
	}

	f.Add("household", "school", "cases.csv", 0.8, 12, int32(19806))
	f.Add(`<img src=x onerror=alert(1)>`, `</script><script>alert(1)</script>`, `"'><svg onload=alert(1)>`, 1e300, -3, int32(0))
	f.Add("{{.Input.Path}}", "[x](javascript:alert(1))", "../../etc/passwd", math.Copysign(0, -1), 0, int32(-719528))
	f.Add("a | b\n# h\n\n```caseweave-block\n1\n```", "\x00\x01\x1b[31m", "\xff\xfe\xc3(", 123456789.123, 1<<40, int32(2932896))
	f.Add("<!-- x --> &amp; &#60;", "*a* _b_ ~c~", "C:\\Users\\x\\linelist.csv", math.Inf(1), 4, int32(math.MaxInt32))
	f.Fuzz(func(t *testing.T, a, b, c string, x float64, n int, d int32) {
		rel, err := analysis.Release(fuzzSummary(a, b, c, x, n, d), analysis.Policy{})
		if err != nil {
			if !math.IsNaN(x) && !math.IsInf(x, 0) {
				t.Fatalf("a summary of finite numbers was not released: %v", err)
			}
			return
		}
		out, err := Render(rel, Options{Templates: fsys})
		if err != nil {
			var te *TemplateError
			if errors.As(err, &te) && te.File == "" {
				t.Fatalf("template error without a file: %v", err)
			}
			if err.Error() == "" {
				t.Fatal("error with an empty message")
			}
			if !math.IsNaN(x) && !math.IsInf(x, 0) {
				// With finite numbers the Summary is valid; the template must render.
				t.Fatalf("finite input failed to render: %v", err)
			}
			return
		}
		page := string(out)
		if got := scriptOpen(page); got != wantScripts {
			t.Fatalf("%d script elements, want %d as in the clean render", got, wantScripts)
		}
		checkShape(t, page, cleanShape)
	})
}

func FuzzParseConfig(f *testing.F) {
	for _, s := range []string{
		"",
		"jurisdiction: Ostvale\ncontact: \"Outbreak desk, +00 0000 0000\"\nsuppress_below: 5\n",
		"suppress_below: 0\n",
		"suppress_below: -4\n",
		"suppress_below: 99999999999999999999\n",
		"incubation_days: 0\n",
		"incubation_days: 14\nlabels:\n  headline: Kurz\n  outlook: Ausblick\n",
		"labels: {nope: x}\n",
		"sections: [headline, cautions]\n",
		"sections: [headline, nope]\n",
		"caution: |\n  one\n\n  two\n",
		"input:\n  columns:\n    case_id: \"Case Ref\"\n  date_format: dmy\n  delimiter: \";\"\n",
		"a: &x [*x, *x]\n",
		"[1, 2, 3]\n",
		"jurisdiction: !!binary gIGC\n",
		"jurisdiction: x\njurisdiction: y\n",
		"? [a]\n: b\n",
		"---\n---\n",
		"labels: &l {headline: a}\nsections: *l\n",
		"\t\x00",
	} {
		f.Add([]byte(s))
	}
	known := SectionNames()
	f.Fuzz(func(t *testing.T, data []byte) {
		cfg, err := ParseConfig("config.yaml", data)
		if err != nil {
			var fe *linelist.FileError
			if !errors.As(err, &fe) || fe.Code != linelist.FileBadConfig || fe.Path != "config.yaml" || fe.Err == nil {
				t.Fatalf("error %v (%T) is not a bad_config *linelist.FileError naming config.yaml", err, err)
			}
			return
		}
		if cfg.SuppressBelow < 1 {
			t.Fatalf("accepted suppress_below %d", cfg.SuppressBelow)
		}
		if cfg.IncubationDays != nil && *cfg.IncubationDays < 1 {
			t.Fatalf("accepted incubation_days %d", *cfg.IncubationDays)
		}
		for _, s := range cfg.Sections {
			if !slices.Contains(known, s) {
				t.Fatalf("accepted unknown section %q", s)
			}
		}
		for k := range cfg.Labels {
			if !slices.Contains(known, k) {
				t.Fatalf("accepted a label for unknown section %q", k)
			}
		}
		for _, s := range known {
			if _, err := cfg.title(s); err != nil {
				t.Fatalf("title(%q): %v", s, err)
			}
		}
		again, err := ParseConfig("config.yaml", data)
		if err != nil || !reflect.DeepEqual(cfg, again) {
			t.Fatalf("parsing the same bytes twice differs: %v", err)
		}
	})
}

var (
	anyTag     = regexp.MustCompile(`</?([a-zA-Z][a-zA-Z0-9]*)([^>]*)>`)
	headingTag = regexp.MustCompile(`^<h1 id="[^"<>&]*">`)
)

// FuzzEscapeMarkdown: escaped data rendered by the report's own goldmark setup is text and
// only text, in a paragraph, a heading and a table cell, and reads back as the input.
func FuzzEscapeMarkdown(f *testing.F) {
	for _, s := range []string{
		"plain", "*a* _b_ **c**", "<img src=x onerror=alert(1)>", "</script><script>alert(1)</script>",
		"[x](javascript:alert(1))", "<http://example.invalid>", "a | b | c", "```caseweave-block\n1\n```",
		"# h\n\n- item\n1. item", "&amp; &#x3c; &lt;", "    indented code", "---", "===", "\\", "\\*",
		"\x00\x01\x7f\u0085\u2028", "\xff\xfe", "![i](data:image/png;base64,AAAA)", "<!-- c -->",
		"~~~\nfence", "line\\\nbreak", "trailing  ", "  ", "a\u00a0\u00a0b", "{{.Input.Path}}", "[^1]: note",
	} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		esc := escapeMarkdown(s)
		if strings.ContainsAny(esc, "\n\r") {
			t.Fatalf("escapeMarkdown(%q) = %q spans lines", s, esc)
		}
		want := plainText(s)
		render := func(src string) string {
			st := &renderState{s: minimalSummary()}
			out, err := st.markdownToHTML([]byte(src))
			if err != nil {
				t.Fatalf("markdownToHTML(%q): %v", src, err)
			}
			return string(out)
		}

		// A paragraph: exactly <p>text</p>, the text reading as the input.
		p := render(esc)
		if want == "" {
			if p != "" {
				t.Fatalf("blank input %q rendered as %q", s, p)
			}
		} else {
			inner, ok := strings.CutPrefix(p, "<p>")
			inner, ok2 := strings.CutSuffix(inner, "</p>\n")
			if !ok || !ok2 || strings.ContainsAny(inner, "<>") {
				t.Fatalf("escaped %q rendered as %q, not one plain paragraph", s, p)
			}
			if got := html.UnescapeString(inner); got != want {
				t.Fatalf("escaped %q reads back as %q, want %q", s, got, want)
			}
		}

		// A heading written by a template around data: one h1, nothing inside it.
		h := render("# Report " + esc)
		hi := headingTag.FindStringIndex(h)
		if hi == nil || !strings.HasSuffix(h, "</h1>\n") || strings.ContainsAny(h[hi[1]:len(h)-len("</h1>\n")], "<>") {
			t.Fatalf("heading around %q rendered as %q", s, h)
		}

		// A table cell: one row of one cell; a bar in data never opens a second.
		tb := render("| Value |\n| --- |\n| " + esc + " |\n")
		if n := strings.Count(tb, "<td"); n != 1 {
			t.Fatalf("table cell holding %q has %d cells: %q", s, n, tb)
		}
		for _, m := range anyTag.FindAllStringSubmatch(tb, -1) {
			if !slices.Contains([]string{"table", "thead", "tbody", "tr", "th", "td"}, m[1]) {
				t.Fatalf("table cell holding %q contains <%s>: %q", s, m[1], tb)
			}
		}
	})
}
