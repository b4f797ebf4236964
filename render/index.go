package render

import (
	"bytes"
	"fmt"
	"html/template"
	"io/fs"

	"github.com/caseweave/caseweave/pipeline/analysis"
	"github.com/caseweave/caseweave/templates"
)

// IndexEntry is one report of a --by run: the column's value, the report's file name and
// the released view it was built from.
type IndexEntry struct {
	Value  string
	File   string
	Report *analysis.Released
}

// indexRow is what the index page shows of one report.
type indexRow struct {
	Value, File, Status string
}

var indexPage = template.Must(template.New("index").Parse(`<!DOCTYPE html>
<html lang="en"><head><meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>Transmission reports by {{.Column}}</title>
<style>{{.CSS}}</style></head>
<body><main class="cw-report">
<h1>Transmission reports by {{.Column}}</h1>
<p>Analysis date {{.AsOf}} · {{len .Rows}} reports · made by {{.Tool}}</p>
<table><thead><tr><th>{{.Column}}</th><th>status</th></tr></thead><tbody>
{{range .Rows}}<tr><td><a href="{{.File}}"><bdi>{{.Value}}</bdi></a></td><td>{{.Status}}</td></tr>
{{end}}</tbody></table>
<p class="cw-figure-note">Each report covers the cases of one value; offspring are counted over all of a case's infectees, wherever they live. Decisions rest with the local public-health authority and its guidance.</p>
</main></body></html>
`))

// Index renders the page that links the reports of a --by run, one line of status each.
// Every value is escaped by html/template; the style sheet is the default template's.
func Index(column string, entries []IndexEntry) ([]byte, error) {
	css, err := fs.ReadFile(templates.Default(), "style.css")
	if err != nil {
		return nil, fmt.Errorf("render: the default style sheet is missing: %w", err)
	}
	data := struct {
		Column, AsOf, Tool string
		CSS                template.CSS // the embedded style sheet, not data
		Rows               []indexRow
	}{Column: column, CSS: template.CSS(css)}
	for _, e := range entries {
		var s *analysis.Summary
		if e.Report != nil {
			s = e.Report.Summary()
			data.AsOf = s.AsOf.String()
			data.Tool = s.Tool.Name + " " + s.Tool.Version
		}
		value := e.Value
		if value == "" {
			value = "(not recorded)"
		}
		data.Rows = append(data.Rows, indexRow{Value: value, File: e.File, Status: status(s)})
	}
	var buf bytes.Buffer
	if err := indexPage.Execute(&buf, data); err != nil {
		return nil, err
	}
	return buf.Bytes(), nil
}

// status is the index's one-line summary of a report.
func status(s *analysis.Summary) string {
	if s == nil {
		return ""
	}
	line := fmt.Sprintf("%d cases", s.Tree.Cases)
	if s.Tree.CrossingChains > 0 {
		line += fmt.Sprintf(" (%d chains reach elsewhere)", s.Tree.CrossingChains)
	}
	if o := s.Offspring; o != nil && o.R.Estimate != nil {
		line += fmt.Sprintf("; R %.2f", *o.R.Estimate)
		iv := o.R.Headline(s.Settings.Interval)
		if iv[0] != nil && iv[1] != nil {
			line += fmt.Sprintf(" (%g%% CI %.2f–%.2f)", 100*s.Settings.Level, *iv[0], *iv[1])
		}
		if o.K.Estimate != nil {
			line += fmt.Sprintf(", k %.2f", *o.K.Estimate)
		}
	} else {
		line += "; too few cases for an estimate"
	}
	if ol := s.Outlook; ol != nil {
		line += fmt.Sprintf("; %d still able to transmit", ol.Active)
	}
	if e := s.EndOfOutbreak; e != nil {
		line += fmt.Sprintf("; last onset %s", e.LastOnset)
	}
	return line + sinceStatus(s)
}
