package render

import (
	"bytes"
	"errors"
	"fmt"
	"html/template"
	"io/fs"
	"strings"

	"github.com/yuin/goldmark"
	"github.com/yuin/goldmark/ast"
	"github.com/yuin/goldmark/extension"
	extast "github.com/yuin/goldmark/extension/ast"
	"github.com/yuin/goldmark/parser"
	"github.com/yuin/goldmark/renderer"
	"github.com/yuin/goldmark/text"
	"github.com/yuin/goldmark/util"

	"github.com/caseweave/caseweave/pipeline/analysis"
)

// MailTemplate is the template of a report's cover mail in a template folder. It defines
// the subject as {{ define "subject" }}…{{ end }} (unless config.yaml's mail.subject gives
// one) and prints the body; it has the report's escaping and function library, and its
// partials.
const MailTemplate = "mail.md"

// mailSubject is the template mail.md defines for the subject line.
const mailSubject = "subject"

// configSubject names config.yaml's mail.subject in the template set and in errors.
const configSubject = ConfigFile + " mail.subject"

// MailOptions tune one cover mail.
type MailOptions struct {
	// Templates is the template folder; nil means the embedded templates/default.
	Templates fs.FS
	// Config overrides the folder's config.yaml when non-nil.
	Config *Config
	// Images maps a chart name to the Content-ID (without angle brackets) of its picture,
	// attached inline to the message; the HTML part shows it where mail.md draws the chart.
	Images map[string]string
	// ChartNote is the sentence printed where a chart has no picture (and in the plain-text
	// part for every chart), saying where to find it, e.g. "The chart is in the attached
	// report north.html."
	ChartNote string
}

// Mail is the text of a report's cover mail, made from a released view only.
type Mail struct {
	Subject string // one line of plain text
	Text    string // the plain-text part
	HTML    []byte // the HTML part: inline styles only, no script, no reference outside the message
}

// RenderMail executes the folder's mail.md over the released view r and returns the subject,
// a plain-text part and an HTML part made for mail clients, which run no script and often
// drop style sheets: every element carries its style inline, and a chart is a picture the
// message carries (Images) or a sentence saying where it is. The same view and options give
// the same bytes.
func RenderMail(r *analysis.Released, opts MailOptions) (*Mail, error) {
	if r == nil {
		return nil, errors.New("render: no released summary")
	}
	s := r.Summary()
	fsys, cfg, err := folderConfig(opts.Templates, opts.Config)
	if err != nil {
		return nil, err
	}
	st := &renderState{s: s, cfg: cfg}
	set, err := parseFolder(fsys, st.funcs(), MailTemplate)
	if err != nil {
		return nil, err
	}
	st.set = set
	subjectName := mailSubject
	if cfg.Mail.Subject != "" {
		t, err := set.New(configSubject).Parse(cfg.Mail.Subject)
		if err != nil {
			te := asTemplateError(err, configSubject).(*TemplateError)
			te.File, te.Line = ConfigFile, cfg.Mail.SubjectLine
			return nil, te
		}
		rewriteOutputs(t.Tree.Root)
		subjectName = configSubject
	} else if t := set.Lookup(mailSubject); t == nil || t.Tree == nil {
		return nil, &TemplateError{File: MailTemplate, Err: errors.New(`mail.md defines no subject: add {{ define "subject" }}…{{ end }} or mail.subject to config.yaml`)}
	}
	var subj, body bytes.Buffer
	if err := set.ExecuteTemplate(&subj, subjectName, s); err != nil {
		te := asTemplateError(err, subjectName)
		if subjectName == configSubject {
			if t, ok := te.(*TemplateError); ok {
				t.File, t.Line = ConfigFile, cfg.Mail.SubjectLine
			}
		}
		return nil, te
	}
	if err := set.ExecuteTemplate(&body, MailTemplate, s); err != nil {
		return nil, asTemplateError(err, MailTemplate)
	}
	out := &Mail{}
	subjDoc, subjSrc, err := st.parseMarkdown(subj.Bytes(), MailTemplate)
	if err != nil {
		return nil, err
	}
	out.Subject = plainText(mailPlain(subjDoc, subjSrc, opts.ChartNote))
	doc, src, err := st.parseMarkdown(body.Bytes(), MailTemplate)
	if err != nil {
		return nil, err
	}
	out.Text = mailPlain(doc, src, opts.ChartNote)
	if out.HTML, err = mailHTML(doc, src, opts, out.Subject); err != nil {
		return nil, err
	}
	if tag := ExternalReference(out.HTML); tag != "" {
		return nil, fmt.Errorf("render: the mail's HTML part would run a script or fetch from outside the message: %.80s", tag)
	}
	return out, nil
}

// ChartPage renders a page holding only the named chart, for a headless browser to take its
// picture: the report's own chart, drawn from the same released view, in the default style.
func ChartPage(r *analysis.Released, name string, cfg *Config) ([]byte, error) {
	if r == nil {
		return nil, errors.New("render: no released summary")
	}
	fsys, c, err := folderConfig(nil, cfg)
	if err != nil {
		return nil, err
	}
	st := &renderState{s: r.Summary(), cfg: c}
	md, err := st.fnChart(name)
	if err != nil {
		return nil, err
	}
	body, err := st.markdownToHTML([]byte(md))
	if err != nil {
		return nil, err
	}
	css, err := loadCSS(fsys)
	if err != nil {
		return nil, err
	}
	return pageHTML(st, body, css)
}

// HasChart reports whether the released view has data for the named chart.
func HasChart(r *analysis.Released, name string) bool {
	d, ok := chartDefs[name]
	if !ok || r == nil {
		return false
	}
	ok, _ = d.available(r.Summary())
	return ok
}

// mailMarkdown is the goldmark of the mail: the report's (GFM tables, safe mode, the
// structural blocks).
func (st *renderState) mailMarkdown(extra ...renderer.Option) goldmark.Markdown {
	return goldmark.New(
		goldmark.WithExtensions(extension.Table),
		goldmark.WithParserOptions(
			parser.WithASTTransformers(util.Prioritized(&blockTransformer{st: st}, 100), util.Prioritized(mailStyler{}, 200)),
		),
		goldmark.WithRendererOptions(extra...),
	)
}

// parseMarkdown parses executed template Markdown into goldmark's tree with the structural
// blocks in place.
func (st *renderState) parseMarkdown(src []byte, file string) (ast.Node, []byte, error) {
	st.errs = nil
	doc := st.mailMarkdown().Parser().Parse(text.NewReader(src))
	if len(st.errs) > 0 {
		return nil, nil, &TemplateError{File: file, Err: errors.Join(st.errs...)}
	}
	return doc, src, nil
}

// Inline styles of the mail's HTML part, one per element. Mail clients keep a style
// attribute where they drop style elements; the palette is the report's.
var mailStyles = map[ast.NodeKind]string{
	ast.KindHeading:       "font-family:Arial,Helvetica,sans-serif;color:" + colInk + ";margin:18px 0 8px 0;",
	ast.KindParagraph:     "font-family:Arial,Helvetica,sans-serif;font-size:15px;line-height:1.45;color:" + colInk + ";margin:0 0 10px 0;",
	ast.KindList:          "font-family:Arial,Helvetica,sans-serif;font-size:15px;line-height:1.45;color:" + colInk + ";margin:0 0 10px 0;padding-left:22px;",
	ast.KindListItem:      "margin:0 0 6px 0;",
	ast.KindEmphasis:      "color:" + colInk + ";",
	ast.KindThematicBreak: "border:0;border-top:1px solid " + colLight + ";margin:16px 0;",
}

// Table styles: a mail client lays out tables with attributes and inline styles only.
const (
	mailTableStyle = "border-collapse:collapse;font-family:Arial,Helvetica,sans-serif;font-size:14px;color:" + colInk + ";margin:0 0 12px 0;"
	mailCellStyle  = "border:1px solid " + colLight + ";padding:4px 8px;vertical-align:top"
	mailHeadStyle  = "border:1px solid " + colLight + ";padding:4px 8px;background:#eef2f4;text-align:left"
)

// mailStyler sets the style attribute of every element of the mail.
type mailStyler struct{}

func (mailStyler) Transform(doc *ast.Document, _ text.Reader, _ parser.Context) {
	_ = ast.Walk(doc, func(n ast.Node, entering bool) (ast.WalkStatus, error) {
		if !entering {
			return ast.WalkContinue, nil
		}
		style, ok := mailStyles[n.Kind()]
		switch n.Kind() {
		case extast.KindTable:
			style, ok = mailTableStyle, true
		case extast.KindTableCell:
			style, ok = mailCellStyle, true
			if n.Parent() != nil && n.Parent().Kind() == extast.KindTableHeader {
				style = mailHeadStyle
			}
		}
		if ok {
			if h, isH := n.(*ast.Heading); isH {
				style += "font-size:" + []string{"", "22px", "18px", "16px", "15px", "15px", "15px"}[h.Level] + ";"
			}
			n.SetAttributeString("style", []byte(style))
		}
		return ast.WalkContinue, nil
	})
}

// mailBlockHTML writes the structural blocks for a mail client: a fold-out is a titled
// section, always open (a mail has no script to open it); a box a bordered panel; a chart its
// picture by Content-ID, or the sentence saying where it is.
const mailBlockHTML = `
{{- define "fold-open"}}<div style="margin:8px 0 12px 0;padding:8px 12px;border-left:3px solid ` + colLight + `;"><p style="font-family:Arial,Helvetica,sans-serif;font-size:14px;font-weight:bold;color:` + colMuted + `;margin:0 0 6px 0;">{{.}}</p>
{{end -}}
{{- define "fold-close"}}</div>
{{end -}}
{{- define "box-open"}}<div style="margin:0 0 14px 0;padding:10px 14px;border:1px solid ` + colLight + `;border-left:4px solid {{if eq . "caution"}}` + colAccent + `{{else}}#1f5c6e{{end}};background:#f7f9fa;">
{{end -}}
{{- define "box-close"}}</div>
{{end -}}
{{- define "image"}}<p style="margin:0 0 12px 0;"><img src="cid:{{.CID}}" alt="{{.Title}}" width="680" style="display:block;width:100%;max-width:680px;height:auto;border:0;"></p>
{{- if .Caption}}<p style="font-family:Arial,Helvetica,sans-serif;font-size:13px;color:` + colMuted + `;margin:0 0 12px 0;">{{.Caption}}</p>{{end}}
{{end -}}
{{- define "note"}}<p style="font-family:Arial,Helvetica,sans-serif;font-size:14px;font-style:italic;color:` + colMuted + `;margin:0 0 12px 0;">{{.}}</p>
{{end -}}
{{- define "page"}}<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>{{.Title}}</title>
</head>
<body style="margin:0;padding:0;background:#ffffff;">
<div style="max-width:720px;margin:0 auto;padding:16px 20px;">
{{.Body}}</div>
</body>
</html>
{{end -}}`

// chartName is the chart a spec draws: its ID is "cw_<name>_<n>" (newChartID).
func chartName(id string) string {
	id = strings.TrimPrefix(id, "cw_")
	if i := strings.LastIndexByte(id, '_'); i >= 0 {
		return id[:i]
	}
	return id
}

// mailCharts writes a chart block of the HTML part: each chart with a picture in images
// (keyed by chart name) as that picture, and for the charts without one the note, once.
func mailCharts(tmpl *template.Template, images map[string]string, note string) func(util.BufWriter, []chartSpec) error {
	return func(w util.BufWriter, charts []chartSpec) error {
		noted := false
		for _, c := range charts {
			var err error
			if cid, ok := images[chartName(c.ID)]; ok {
				err = tmpl.ExecuteTemplate(w, "image", map[string]string{"CID": cid, "Title": plainText(c.Title), "Caption": plainText(c.Caption)})
			} else if !noted && note != "" {
				err, noted = tmpl.ExecuteTemplate(w, "note", plainText(note)), true
			}
			if err != nil {
				return err
			}
		}
		return nil
	}
}

// mailHTML writes the HTML part: goldmark's HTML of the tree (safe mode: raw HTML in the
// template is dropped) with the mail's block renderer, in a page of inline styles.
func mailHTML(doc ast.Node, src []byte, opts MailOptions, title string) ([]byte, error) {
	tmpl, err := template.New("mail").Parse(mailBlockHTML)
	if err != nil {
		return nil, err
	}
	md := (&renderState{}).mailMarkdown(renderer.WithNodeRenderers(
		util.Prioritized(&blockRenderer{tmpl: tmpl, charts: mailCharts(tmpl, opts.Images, opts.ChartNote)}, 100)))
	var body bytes.Buffer
	if err := md.Renderer().Render(&body, src, doc); err != nil {
		return nil, err
	}
	var page bytes.Buffer
	err = tmpl.ExecuteTemplate(&page, "page", map[string]any{
		"Title": title,
		"Body":  template.HTML(body.String()), // goldmark output in safe mode; data escaped before it
	})
	return page.Bytes(), err
}
