package render

import (
	"bytes"
	_ "embed"
	"errors"
	"fmt"
	"html/template"
	"io/fs"
	"regexp"
	"strings"
	texttemplate "text/template"

	"github.com/caseweave/caseweave/pipeline/analysis"
	"github.com/caseweave/caseweave/templates"
)

//go:embed assets/echarts/echarts.min.js
var echartsJS string

//go:embed assets/echarts/NOTICE
var echartsNotice string

// Options tune one render. The zero value renders the embedded default template with its
// own config.yaml and every chart.
type Options struct {
	// Templates is the template folder (report.md, partials, style.css, config.yaml).
	// Nil means the embedded templates/default.
	Templates fs.FS
	// Config overrides the folder's config.yaml when non-nil.
	Config *Config
	// Charts names the charts to draw (see ChartNames); nil draws all. A chart left out is
	// replaced by a one-line note.
	Charts []string
	// Categories lists every value of the category columns the charts colour by (the
	// settings) across a batch of reports, in one order, so that a value has one colour in
	// every report of the batch (CategoryColour); nil takes the values of this report.
	Categories []string
}

// renderState is everything one render needs; nothing outlives the call.
type renderState struct {
	s      *analysis.Summary
	cfg    Config
	charts []string
	// categories are the category values in batch order (Options.Categories, categoryList).
	categories []string
	set        *texttemplate.Template
	depth      int
	blocks     []*block
	chartSeq   int
	errs       []error
}

// Render executes the report template over the released view r (analysis.Release: the
// only form in which a Summary reaches a stakeholder) and returns one self-contained HTML
// file: the style sheet and the chart library are inline, and the page makes no request of
// any kind. The same view and options give byte-identical output.
func Render(r *analysis.Released, opts Options) ([]byte, error) {
	if r == nil {
		return nil, errors.New("render: no released summary")
	}
	s := r.Summary()
	fsys := opts.Templates
	if fsys == nil {
		fsys = templates.Default()
	}
	var cfg Config
	if opts.Config != nil {
		cfg = *opts.Config
	} else {
		c, err := LoadConfig(fsys)
		if err != nil {
			return nil, err
		}
		cfg = c
	}
	for _, c := range opts.Charts {
		if !isChartName(c) {
			return nil, fmt.Errorf("render: unknown chart %q (known: %s)", c, strings.Join(ChartNames(), ", "))
		}
	}
	st := &renderState{s: s, cfg: cfg, charts: opts.Charts, categories: opts.Categories}
	set, err := parseFolder(fsys, st.funcs())
	if err != nil {
		return nil, err
	}
	st.set = set
	var md bytes.Buffer
	if err := set.ExecuteTemplate(&md, MainTemplate, s); err != nil {
		return nil, asTemplateError(err, MainTemplate)
	}
	body, err := st.markdownToHTML(md.Bytes())
	if err != nil {
		return nil, err
	}
	css, err := loadCSS(fsys)
	if err != nil {
		return nil, err
	}
	page, err := pageHTML(st, body, css)
	if err != nil {
		return nil, err
	}
	return page, nil
}

// StyleFile is the style sheet of a template folder.
const StyleFile = "style.css"

// cssForbidden matches what could end the style element or fetch anything: the report must
// stay self-contained, so a style sheet may not import, declare fonts, or call any function
// that takes a URL (url, image-set and its prefixed forms, image, cross-fade, element, src,
// paint) or runs script (expression); a backslash escape, which could spell any of these, is
// refused as well.
var cssForbidden = regexp.MustCompile(`(?i)</style|<!--|<script|@import|@font-face|@namespace|(?:url|image-set|image|cross-fade|element|src|paint|expression)\s*\(|\\`)

// loadCSS reads the folder's style sheet. It is the template author's file, placed inline as
// CSS only after the checks above; the author's Markdown has no such power (raw HTML is dropped).
func loadCSS(fsys fs.FS) (template.CSS, error) {
	b, err := fs.ReadFile(fsys, StyleFile)
	if errors.Is(err, fs.ErrNotExist) {
		return "", nil
	}
	if err != nil {
		return "", &TemplateError{File: StyleFile, Err: err}
	}
	if loc := cssForbidden.FindIndex(b); loc != nil {
		line := 1 + bytes.Count(b[:loc[0]], []byte("\n"))
		return "", &TemplateError{File: StyleFile, Line: line,
			Err: fmt.Errorf("%q is not allowed: the report must not load anything or leave the style element", b[loc[0]:loc[1]])}
	}
	return template.CSS(b), nil // checked above; see cssForbidden
}

// chartScript is the embedded chart library with its licence notice beside it. Both are
// compiled into the binary (render/assets/echarts, see SOURCE.md), never read from a template
// folder or data; the check below keeps them from ending the script element.
func chartScript() (template.JS, error) {
	notice := strings.ReplaceAll(strings.TrimSpace(echartsNotice), "*/", "* /")
	js := "/*! Apache ECharts 5.4.3, inlined unchanged from the npm package dist/echarts.min.js.\n" +
		notice + "\nLicensed under the Apache License, Version 2.0; the full licence text ships with caseweave (render/assets/echarts/LICENSE). */\n" +
		echartsJS
	if hasScriptEnd(js) || strings.Contains(js, "<!--") {
		return "", errors.New("render: embedded chart library contains a script terminator")
	}
	return template.JS(js), nil // embedded asset, checked above
}

// hasScriptEnd reports whether s holds "</script" in any letter case. It looks only at each
// "</", so the megabyte of the chart library is not lower-cased on every render.
func hasScriptEnd(s string) bool {
	for {
		i := strings.Index(s, "</")
		if i < 0 {
			return false
		}
		s = s[i+2:]
		if len(s) >= len("script") && strings.EqualFold(s[:len("script")], "script") {
			return true
		}
	}
}

// pageTemplate is the HTML shell. The Content-Security-Policy forbids every fetch; only the
// inline style and scripts run.
const pageTemplate = `<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<meta http-equiv="Content-Security-Policy" content="default-src 'none'; style-src 'unsafe-inline'; script-src 'unsafe-inline'; img-src data:">
<meta name="generator" content="{{.Generator}}">
<title>{{.Title}}</title>
<style>{{.CSS}}</style>
</head>
<body>
<main class="cw-report">
{{.Body}}
</main>
{{- if .HasCharts}}
<script>{{.Library}}</script>
<script>
(function () {
  var nodes = document.querySelectorAll("[data-cw-chart]");
  for (var i = 0; i < nodes.length; i++) {
    var el = nodes[i];
    var src = document.getElementById(el.id + "_option");
    if (!src) { continue; }
    var chart = echarts.init(el, null, { renderer: "canvas" });
    chart.setOption(JSON.parse(src.textContent));
  }
  document.documentElement.setAttribute("data-cw-charts", "ready");
})();
</script>
{{- end}}
<script>
window.addEventListener("beforeprint", function () {
  var folds = document.querySelectorAll("details");
  for (var i = 0; i < folds.length; i++) { folds[i].open = true; }
});
</script>
</body>
</html>
`

func pageHTML(st *renderState, body []byte, css template.CSS) ([]byte, error) {
	t, err := template.New("page").Parse(pageTemplate)
	if err != nil {
		return nil, err
	}
	hasCharts := false
	for _, b := range st.blocks {
		if b.kind == blockChart && len(b.charts) > 0 {
			hasCharts = true
		}
	}
	var lib template.JS
	if hasCharts {
		if lib, err = chartScript(); err != nil {
			return nil, err
		}
	}
	title := "Transmission report"
	if p := st.place(); p != "" {
		title += " — " + p
	}
	title += " — data to " + dayText(st.s.AsOf)
	var out bytes.Buffer
	err = t.Execute(&out, map[string]any{
		"Title":     plainText(title),
		"Generator": plainText(st.s.Tool.Name + " " + st.s.Tool.Version),
		"CSS":       css,
		"Body":      template.HTML(body), // goldmark output in safe mode; data escaped before it
		"HasCharts": hasCharts,
		"Library":   lib,
	})
	return out.Bytes(), err
}
