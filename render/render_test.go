package render

import (
	"bytes"
	"errors"
	"math"
	"os"
	"regexp"
	"strings"
	"testing"
	"testing/fstest"

	"github.com/caseweave/caseweave/pipeline/analysis"
	"github.com/caseweave/caseweave/pipeline/linelist"
	"github.com/caseweave/caseweave/templates"
)

// released releases a test summary as the report command does, with the threshold of its
// settings (the default when unset) and its identifiers as recorded.
func released(s *analysis.Summary) *analysis.Released {
	r, err := analysis.Release(s, analysis.Policy{SuppressBelow: s.Settings.SuppressBelow})
	if err != nil {
		panic(err)
	}
	return r
}

func mustRender(t testing.TB, s *analysis.Summary, o Options) string {
	t.Helper()
	out, err := Render(released(s), o)
	if err != nil {
		t.Fatalf("Render: %v", err)
	}
	return string(out)
}

// renderReleased releases s under policy p and renders it.
func renderReleased(t testing.TB, s *analysis.Summary, p analysis.Policy, o Options) (*analysis.Released, string) {
	t.Helper()
	rel, err := analysis.Release(s, p)
	if err != nil {
		t.Fatal(err)
	}
	out, err := Render(rel, o)
	if err != nil {
		t.Fatalf("Render: %v", err)
	}
	return rel, string(out)
}

// outsideScripts removes script elements, leaving the markup a reader sees.
func outsideScripts(html string) string {
	return regexp.MustCompile(`(?s)<script[^>]*>.*?</script>`).ReplaceAllString(html, "")
}

func TestRenderIsDeterministic(t *testing.T) {
	a := mustRender(t, fixtureSummary(), Options{})
	b := mustRender(t, fixtureSummary(), Options{})
	if a != b {
		t.Fatal("two renders of the same Summary differ")
	}
}

func TestRenderIsSelfContained(t *testing.T) {
	html := mustRender(t, fixtureSummary(), Options{})
	if len(html) > 3<<20 {
		t.Errorf("report is %d bytes, over 3 MB", len(html))
	}
	markup := outsideScripts(html)
	for _, bad := range []string{"<link", "<img", "<iframe", " src=", "@import", "url(", "https://", "http://"} {
		if strings.Contains(markup, bad) {
			t.Errorf("markup contains %q", bad)
		}
	}
	for _, want := range []string{"default-src 'none'", "Apache License, Version 2.0", "Apache ECharts", "echarts.init(el, null, { renderer: \"canvas\" })"} {
		if !strings.Contains(html, want) {
			t.Errorf("report lacks %q", want)
		}
	}
	ids := regexp.MustCompile(`data-cw-chart="([^"]*)"`).FindAllStringSubmatch(html, -1)
	if len(ids) != 24 {
		t.Errorf("found %d charts, want 24", len(ids))
	}
	seen := map[string]bool{}
	for _, m := range ids {
		if !regexp.MustCompile(`^[a-z0-9_]+$`).MatchString(m[1]) || seen[m[1]] {
			t.Errorf("chart ID %q is not [a-z0-9_]+ or not unique", m[1])
		}
		seen[m[1]] = true
	}
}

func TestHostileDataIsInertText(t *testing.T) {
	html := mustRender(t, hostileSummary(), Options{})
	markup := outsideScripts(html)
	mustNot := []string{"<img", "<em>emph</em>", "<strong>bold</strong>", `href="javascript`, "<h1 id=\"heading\"", "<!-- comment -->", "<code>code</code>"}
	for _, bad := range mustNot {
		if strings.Contains(markup, bad) {
			t.Errorf("hostile data became markup: found %q", bad)
		}
	}
	mustHave := []string{
		"&lt;img src=x onerror=alert(1)&gt;",
		"&lt;/script&gt;&lt;script&gt;alert(2)&lt;/script&gt;",
		"*emph* _under_ **bold**",
		"[link](javascript:alert(3))",
		"<td dir=\"auto\">a | b | c</td>",
		"`code` and ```fence",
		"&quot;double&quot; 'single' &amp; &amp;amp;",
		"line one # heading - item",
		"&lt;!-- comment --&gt; __f__",
	}
	for _, want := range mustHave {
		if !strings.Contains(markup, want) {
			t.Errorf("hostile string not shown as text: want %q", want)
		}
	}
	// Inside the chart options the same strings stay data: no script breakout, __f__ kept.
	if n := strings.Count(strings.ToLower(html), "<script"); n != 24+3 {
		t.Errorf("found %d script elements, want %d (one option per chart + library + init + print)", n, 24+3)
	}
	for _, want := range []string{`\u003c/script\u003e\u003cscript\u003ealert(2)`, `\u003c!-- comment --\u003e __f__`} {
		if !strings.Contains(html, want) {
			t.Errorf("chart option lacks escaped %q", want)
		}
	}
}

func TestMinimalSummaryRendersNotes(t *testing.T) {
	html := mustRender(t, minimalSummary(), Options{})
	if strings.Contains(html, "data-cw-chart") || strings.Contains(html, "Apache ECharts") {
		t.Error("a report with no chart data still carries charts or the chart library")
	}
	for _, want := range []string{"Data quality", "No onset dates were available", "What these figures cannot tell", DefaultCaution[:40], "Provenance"} {
		if !strings.Contains(html, want) {
			t.Errorf("minimal report lacks %q", want)
		}
	}
}

func TestChartSubset(t *testing.T) {
	html := mustRender(t, fixtureSummary(), Options{Charts: []string{"epicurve", "outlook"}})
	if n := strings.Count(html, "data-cw-chart="); n != 2 {
		t.Errorf("%d charts drawn, want 2", n)
	}
	if !strings.Contains(html, "This chart was left out of this report.") {
		t.Error("left-out charts have no note")
	}
	if _, err := Render(released(fixtureSummary()), Options{Charts: []string{"pie"}}); err == nil {
		t.Error("an unknown chart name was accepted")
	}
}

// A Summary holds finite numbers only; a non-finite one is refused at the release, the gate
// every report passes, before any chart is drawn from it.
func TestNonFiniteValueIsRefused(t *testing.T) {
	for _, tc := range []struct {
		name  string
		spoil func(*analysis.Summary)
	}{
		{"offspring", func(s *analysis.Summary) { s.Offspring.Models[0].Expected[2] = math.NaN() }},
		{"concentration", func(s *analysis.Summary) { s.Offspring.Concentration[3].Y = math.Inf(1) }},
		{"end_of_outbreak", func(s *analysis.Summary) { s.EndOfOutbreak.Curve[5].Probability = math.NaN() }},
		{"weekly_r", func(s *analysis.Summary) { s.TimeVarying[4].Upper = fp(math.Inf(-1)) }},
	} {
		t.Run(tc.name, func(t *testing.T) {
			s := fixtureSummary()
			tc.spoil(s)
			_, err := analysis.Release(s, analysis.Policy{})
			if err == nil || !strings.Contains(err.Error(), "not finite") {
				t.Fatalf("error = %v, want one saying a number is not finite", err)
			}
		})
	}
}

// folder is a template folder holding report.md and extra files.
func folder(report string, extra map[string]string) fstest.MapFS {
	fs := fstest.MapFS{"report.md": {Data: []byte(report)}}
	for k, v := range extra {
		fs[k] = &fstest.MapFile{Data: []byte(v)}
	}
	return fs
}

func TestTemplateErrorsNameFileLineAndField(t *testing.T) {
	for _, tc := range []struct {
		name              string
		fs                fstest.MapFS
		file              string
		line              int
		field, msgContain string
	}{
		{"unknown field", folder("# T\n\n{{ .Offspring.Rr }}\n", nil), "report.md", 3, ".Offspring.Rr", "Rr"},
		{"parse error in a partial", folder("{{ partial \"partials/a.md\" . }}", map[string]string{"partials/a.md": "ok\n{{ if .AsOf }}\n"}), "partials/a.md", 2, "", "{{ if }} opened on line 2 has no {{ end }}"},
		{"exec error in a partial", folder("x\n{{ partial \"partials/a.md\" . }}", map[string]string{"partials/a.md": "\n\n{{ .Nope }}"}), "partials/a.md", 3, ".Nope", "Nope"},
		{"unknown function", folder("{{ sh \"ls\" }}", nil), "report.md", 1, "", "not defined"},
		{"unknown chart", folder("a\n{{ chart \"pie\" }}", nil), "report.md", 2, `chart "pie"`, "unknown chart"},
		{"struct printed directly", folder("{{ .Offspring.R }}", nil), "report.md", 1, "", "cannot be printed directly"},
		{"foldout without endfold", folder("{{ foldout \"t\" }}\n\ntext\n", nil), "report.md", 0, "", "without its endfold"},
		{"missing partial", folder("{{ partial \"../etc/passwd\" . }}", nil), "report.md", 1, `partial "../etc/passwd" .`, "no template file"},
		{"no report.md", fstest.MapFS{"other.md": {Data: []byte("x")}}, "report.md", 0, "", "no report.md"},
		{"style sheet fetching a URL", folder("x", map[string]string{"style.css": "body{}\nh1{background:url(http://x/y.png)}"}), "style.css", 2, "", "not allowed"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			_, err := Render(released(fixtureSummary()), Options{Templates: tc.fs})
			var te *TemplateError
			if !errors.As(err, &te) {
				t.Fatalf("error %v (%T) is not a *TemplateError", err, err)
			}
			if te.File != tc.file || te.Line != tc.line || te.Field != tc.field || !strings.Contains(te.Error(), tc.msgContain) {
				t.Errorf("got File=%q Line=%d Field=%q (%v); want %q, %d, %q containing %q", te.File, te.Line, te.Field, te, tc.file, tc.line, tc.field, tc.msgContain)
			}
		})
	}
}

func TestForgedBlockMarkerIsRejected(t *testing.T) {
	fs := folder("{{ chart \"epicurve\" }}\n\n```caseweave-block\n1\n```\n", nil)
	_, err := Render(released(fixtureSummary()), Options{Templates: fs})
	var te *TemplateError
	if !errors.As(err, &te) || !strings.Contains(err.Error(), "not made by the function library") {
		t.Fatalf("a reused block marker gave %v", err)
	}
}

func TestRawHTMLInTemplateIsDropped(t *testing.T) {
	fs := folder("<script>alert(1)</script>\n\n[x](javascript:alert(1))\n\n<b onclick=1>hi</b>\n", nil)
	html := mustRender(t, fixtureSummary(), Options{Templates: fs})
	body := html[strings.Index(html, "<main"):strings.Index(html, "</main>")]
	if strings.Contains(body, "<script") || strings.Contains(body, "<b ") || strings.Contains(body, "javascript:") {
		t.Errorf("raw HTML or a javascript: link survived: %s", body)
	}
	if !strings.Contains(body, "<!-- raw HTML omitted -->") {
		t.Error("goldmark's safe mode marker missing")
	}
}

// Released with a pseudonym key, neither the key nor a raw identifier reaches the report or
// its tables; released without pseudonyms (--show-ids) the identifiers are shown.
func TestPseudonymKeyNeverInOutput(t *testing.T) {
	const key = "sekrit-KEY-do-not-print-42"
	cfg, err := ParseConfig("config.yaml", []byte("jurisdiction: Test\npseudonym_key: "+key+"\n"))
	if err != nil {
		t.Fatal(err)
	}
	rel, html := renderReleased(t, fixtureSummary(), analysis.Policy{SuppressBelow: cfg.SuppressBelow, Pseudonyms: analysis.NewPseudonyms(cfg.PseudonymKey)}, Options{Config: &cfg})
	if strings.Contains(html, key) {
		t.Fatal("the pseudonym key appears in the report")
	}
	if strings.Contains(html, "PX-0041") {
		t.Error("a raw case identifier appears in the report")
	}
	if !regexp.MustCompile(`case-[0-9a-f]{10}`).MatchString(html) {
		t.Error("no keyed pseudonym in the report")
	}
	files, err := Tables(rel)
	if err != nil {
		t.Fatal(err)
	}
	for _, f := range files {
		if bytes.Contains(f.Data, []byte(key)) || bytes.Contains(f.Data, []byte("PX-0041")) {
			t.Errorf("%s contains the key or a raw identifier", f.Name)
		}
	}
	shown := mustRender(t, fixtureSummary(), Options{Config: &cfg})
	if !strings.Contains(shown, "PX-0041") || strings.Contains(shown, key) {
		t.Error("without pseudonyms the identifiers should show, and never the key")
	}
}

func TestSuppressionThresholdFromConfig(t *testing.T) {
	cfg := Config{SuppressBelow: 40}
	_, html := renderReleased(t, fixtureSummary(), analysis.Policy{SuppressBelow: cfg.SuppressBelow}, Options{Config: &cfg})
	// The care-home stratum has 32 cases: below 40 it is withheld with its mean.
	if !strings.Contains(html, "<td dir=\"auto\">care home</td>\n<td dir=\"auto\" style=\"text-align:right\">withheld</td>\n<td dir=\"auto\" style=\"text-align:right\">withheld</td>") {
		t.Error("counts below the configured threshold are not withheld")
	}
	if strings.Contains(outsideScripts(html), ">32<") {
		t.Error("a count of 32 is printed although the threshold is 40")
	}
}

func TestStarterTemplateRenders(t *testing.T) {
	dir := t.TempDir()
	if err := templates.WriteStarter(dir); err != nil {
		t.Fatal(err)
	}
	html := mustRender(t, fixtureSummary(), Options{Templates: os.DirFS(dir)})
	for _, want := range []string{"Example County Health Department", "<h2 id=\"summary\">Summary</h2>", "Decisions about control measures rest with the local public-health authority"} {
		if !strings.Contains(html, want) {
			t.Errorf("starter report lacks %q", want)
		}
	}
	if err := templates.WriteStarter(dir); err == nil {
		t.Error("WriteStarter overwrote an existing folder")
	}
}

func TestReportSizeForAMillionCases(t *testing.T) {
	s := fixtureSummary()
	// What a 1,000,000-case run aggregates to: two years of weeks, many settings, capped trees.
	weeks := 104
	s.EpiCurve.Weeks, s.EpiCurve.Total, s.EpiCurve.Series = nil, nil, nil
	for i := 0; i < weeks; i++ {
		s.EpiCurve.Weeks = append(s.EpiCurve.Weeks, day("2023-01-02")+linelist.Day(7*i))
		s.EpiCurve.Total = append(s.EpiCurve.Total, ip(9615))
	}
	for j := 0; j < 12; j++ {
		sr := analysis.Series{Name: "setting " + string(rune('a'+j))}
		for i := 0; i < weeks; i++ {
			sr.Counts = append(sr.Counts, ip(801))
		}
		s.EpiCurve.Series = append(s.EpiCurve.Series, sr)
	}
	s.Clusters.NodesShown = 300
	for i := range s.Clusters.Largest {
		tv := &s.Clusters.Largest[i]
		tv.Size = 20000
		for len(tv.Nodes) < 300 {
			n := len(tv.Nodes)
			tv.Nodes = append(tv.Nodes, analysis.TreeNode{ID: "X" + string(rune('A'+i)) + strings.Repeat("9", 12), Parent: (n - 1) / 4, Generation: 3, Onset: tv.Start})
		}
		tv.Hidden = tv.Size - 300
	}
	html := mustRender(t, s, Options{})
	if len(html) > 3<<20 {
		t.Fatalf("report for a million-case summary is %d bytes, over 3 MB", len(html))
	}
}

// TestBootstrapChartSaysWhatItLeavesOut checks that a bootstrap histogram's caption counts
// the replicates it does not draw: those beyond the 99th percentile and, for k, those in the
// Poisson limit.
func TestBootstrapChartSaysWhatItLeavesOut(t *testing.T) {
	s := fixtureSummary()
	html := mustRender(t, s, Options{Charts: []string{"bootstrap_k"}})
	if strings.Contains(html, "Not drawn") {
		t.Fatal("a caption speaks of undrawn replicates although none were left out")
	}
	s.Offspring.ReplicatesK.Overflow, s.Offspring.ReplicatesK.Infinite = 19, 1
	html = mustRender(t, s, Options{Charts: []string{"bootstrap_k"}})
	want := "Not drawn, but counted in the interval: 19 replicates above 1.16 (beyond the 99th percentile) and 1 replicate in the Poisson limit (k = ∞)."
	if !strings.Contains(html, want) {
		t.Fatalf("the k chart's caption does not say %q", want)
	}
}
