// Package render turns an analysis.Summary and a report template folder into one
// self-contained HTML file: the style sheet and the chart library (Apache ECharts, embedded)
// are inline, and the page makes no request of any kind.
//
// # Pipeline
//
// A template folder holds report.md and partials (Markdown with text/template actions),
// style.css and config.yaml (see Config). Rendering runs in three steps:
//
//  1. The template executes over the Summary. Every output action is rewritten at parse time
//     to end in an escaper, as html/template does, so a plain {{ .Scope.Value }} prints as
//     escaped Markdown text: ASCII punctuation is backslash-escaped and whitespace folded, so
//     data cannot become a heading, a link, a table cell boundary or markup. The function
//     library (num, pct, est, count, chart, table, foldout, box, partial, …) returns Markdown
//     that is already escaped.
//  2. goldmark renders the Markdown in its safe mode (raw HTML omitted, dangerous links
//     blanked) with the GFM table extension.
//  3. Structural blocks (charts, fold-outs, boxes) travel through the Markdown as fenced code
//     blocks with the reserved info string "caseweave-block" holding an index into a
//     per-render registry; an AST transformer replaces them with caseweave's own nodes, which
//     are written with html/template. Chart options come from go-echarts (Validate, then JSON)
//     and are placed by html/template inside a JSON script element, so "</script>" in data is
//     written as \u003c/script\u003e.
//
// Render takes an analysis.Released, never a bare Summary: what a report shows has passed the
// disclosure policy. Charts and tables are registries, one builder per file (chart_<name>.go,
// table_<name>.go), found by name. Template errors are *TemplateError values naming the
// file, line and field; the CLI maps them to exit code 3. Tables returns every table as CSV,
// with spreadsheet formula injection neutralised, for the command to write. Config is a
// template folder's config.yaml. Package render/browser drives a headless Chromium with
// every request blocked, for the browser tests and the PDF.
package render
