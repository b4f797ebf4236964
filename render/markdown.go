package render

import (
	"bytes"
	"errors"
	"fmt"
	extast "github.com/yuin/goldmark/extension/ast"
	"html/template"
	"strconv"
	"strings"

	"github.com/yuin/goldmark"
	"github.com/yuin/goldmark/ast"
	"github.com/yuin/goldmark/extension"
	"github.com/yuin/goldmark/parser"
	"github.com/yuin/goldmark/renderer"
	"github.com/yuin/goldmark/text"
	"github.com/yuin/goldmark/util"
)

// blockFence is the info string of the fenced code blocks that stand for structural blocks
// (charts, fold-outs, boxes). Only the function library writes them: data are escaped, so a
// backtick or tilde in data can never open a fence, and each marker names an entry of this
// render's registry, used at most once.
const blockFence = "caseweave-block"

type blockKind int

const (
	blockChart blockKind = iota
	blockFoldOpen
	blockFoldClose
	blockBoxOpen
	blockBoxClose
)

// block is one registry entry.
type block struct {
	kind   blockKind
	title  string      // fold-out summary line
	box    string      // box kind: headline, caution, note
	charts []chartSpec // blockChart: one figure, or several (the largest trees)
	used   bool
}

// marker registers b and returns the fence that stands for it in the Markdown.
func (st *renderState) marker(b *block) mdText {
	st.blocks = append(st.blocks, b)
	return mdText("\n\n```" + blockFence + "\n" + strconv.Itoa(len(st.blocks)) + "\n```\n\n")
}

// kindBlock is the AST node kind of a structural block (goldmark registers node kinds once).
var kindBlock = ast.NewNodeKind("CaseweaveBlock")

// blockNode replaces a marker fence in the AST. Fold-outs and boxes hold the blocks between
// their opening and closing markers as children.
type blockNode struct {
	ast.BaseBlock
	b *block
}

func (n *blockNode) Kind() ast.NodeKind { return kindBlock }

func (n *blockNode) Dump(source []byte, level int) {
	ast.DumpHelper(n, source, level, map[string]string{"kind": strconv.Itoa(int(n.b.kind))}, nil)
}

// blockTransformer swaps marker fences for blockNodes and nests the content of fold-outs and
// boxes inside them.
type blockTransformer struct{ st *renderState }

func (t *blockTransformer) Transform(doc *ast.Document, reader text.Reader, _ parser.Context) {
	src := reader.Source()
	var fences []*ast.FencedCodeBlock
	_ = ast.Walk(doc, func(n ast.Node, entering bool) (ast.WalkStatus, error) {
		if f, ok := n.(*ast.FencedCodeBlock); ok && entering && string(f.Language(src)) == blockFence {
			fences = append(fences, f)
		}
		// A table cell holds data: dir="auto" isolates its direction, so a value with
		// right-to-left text or bidirectional control characters cannot reorder its
		// neighbours (Unicode Bidirectional Algorithm, UAX #9, isolates).
		if entering && n.Kind() == extast.KindTableCell {
			n.SetAttributeString("dir", []byte("auto"))
		}
		return ast.WalkContinue, nil
	})
	for _, f := range fences {
		var body strings.Builder
		for i := 0; i < f.Lines().Len(); i++ {
			seg := f.Lines().At(i)
			body.Write(seg.Value(src))
		}
		id, err := strconv.Atoi(strings.TrimSpace(body.String()))
		if err != nil || id < 1 || id > len(t.st.blocks) || t.st.blocks[id-1].used {
			t.st.errs = append(t.st.errs, errors.New("a "+blockFence+" block not made by the function library (or used twice)"))
			f.Parent().RemoveChild(f.Parent(), f)
			continue
		}
		b := t.st.blocks[id-1]
		b.used = true
		if b.kind != blockChart && f.Parent() != doc {
			t.st.errs = append(t.st.errs, errors.New("foldout/endfold and box/endbox must stand on lines of their own, outside lists and quotes"))
		}
		f.Parent().ReplaceChild(f.Parent(), f, &blockNode{b: b})
	}
	t.nest(doc)
}

// nest moves the siblings between an opening and its closing marker into the opening node.
func (t *blockTransformer) nest(doc *ast.Document) {
	var stack []*blockNode
	for c := doc.FirstChild(); c != nil; {
		next := c.NextSibling()
		bn, isBlock := c.(*blockNode)
		switch {
		case isBlock && (bn.b.kind == blockFoldClose || bn.b.kind == blockBoxClose):
			doc.RemoveChild(doc, c)
			want := blockFoldOpen
			if bn.b.kind == blockBoxClose {
				want = blockBoxOpen
			}
			if len(stack) == 0 || stack[len(stack)-1].b.kind != want {
				t.st.errs = append(t.st.errs, errors.New("endfold or endbox without its matching foldout or box"))
				break
			}
			stack = stack[:len(stack)-1]
		default:
			if len(stack) > 0 {
				doc.RemoveChild(doc, c)
				top := stack[len(stack)-1]
				top.AppendChild(top, c)
			}
			if isBlock && (bn.b.kind == blockFoldOpen || bn.b.kind == blockBoxOpen) {
				stack = append(stack, bn)
			}
		}
		c = next
	}
	if len(stack) > 0 {
		t.st.errs = append(t.st.errs, errors.New("foldout or box without its endfold or endbox"))
	}
}

// blockHTML holds the html/template snippets structural blocks are written with; data land
// in them contextually escaped (text, attributes, and the chart option as JSON in a script).
const blockHTML = `
{{- define "fold-open"}}<details class="cw-fold"><summary>{{.}}</summary><div class="cw-fold-body">
{{end -}}
{{- define "fold-close"}}</div></details>
{{end -}}
{{- define "box-open"}}<section class="cw-box cw-box-{{.}}">
{{end -}}
{{- define "box-close"}}</section>
{{end -}}
{{- define "chart"}}<figure class="cw-figure" id="{{.ID}}_figure">
{{- if .Title}}<figcaption class="cw-figure-title">{{.Title}}</figcaption>{{end}}
<div class="cw-chart" id="{{.ID}}" data-cw-chart="{{.ID}}" style="height: {{.Height}}px" role="img" aria-label="{{.Title}}"></div>
<script type="application/json" id="{{.ID}}_option">{{.Option}}</script>
{{- if .Caption}}<p class="cw-figure-note">{{.Caption}}</p>{{end}}
</figure>
{{end -}}`

// blockRenderer writes blockNodes: fold-outs and boxes from the templates "fold-open",
// "fold-close", "box-open" and "box-close" of tmpl, and a chart block's charts through
// charts, the report writing each as an interactive chart and the mail as a picture.
type blockRenderer struct {
	tmpl   *template.Template
	charts func(w util.BufWriter, charts []chartSpec) error
}

func (r *blockRenderer) RegisterFuncs(reg renderer.NodeRendererFuncRegisterer) {
	reg.Register(kindBlock, r.render)
}

func (r *blockRenderer) render(w util.BufWriter, _ []byte, n ast.Node, entering bool) (ast.WalkStatus, error) {
	b := n.(*blockNode).b
	var err error
	switch {
	case b.kind == blockFoldOpen && entering:
		err = r.tmpl.ExecuteTemplate(w, "fold-open", b.title)
	case b.kind == blockFoldOpen:
		err = r.tmpl.ExecuteTemplate(w, "fold-close", nil)
	case b.kind == blockBoxOpen && entering:
		err = r.tmpl.ExecuteTemplate(w, "box-open", b.box)
	case b.kind == blockBoxOpen:
		err = r.tmpl.ExecuteTemplate(w, "box-close", nil)
	case b.kind == blockChart && entering:
		err = r.charts(w, b.charts)
	}
	if err != nil {
		return ast.WalkStop, fmt.Errorf("writing a report block: %w", err)
	}
	return ast.WalkContinue, nil
}

// reportCharts writes a chart block of the report: each chart as an interactive figure
// (the template "chart"), its title and caption as plain text.
func reportCharts(tmpl *template.Template) func(util.BufWriter, []chartSpec) error {
	return func(w util.BufWriter, charts []chartSpec) error {
		for _, c := range charts {
			c.Title, c.Caption = plainText(c.Title), plainText(c.Caption)
			if err := tmpl.ExecuteTemplate(w, "chart", c); err != nil {
				return err
			}
		}
		return nil
	}
}

// markdownToHTML renders the executed template. goldmark stays in its default safe mode: raw
// HTML is dropped and dangerous link destinations (javascript:, data: other than images…) are
// blanked, so even a template author's stray HTML cannot become markup.
func (st *renderState) markdownToHTML(src []byte) ([]byte, error) {
	tmpl, err := template.New("blocks").Parse(blockHTML)
	if err != nil {
		return nil, err
	}
	md := goldmark.New(
		goldmark.WithExtensions(extension.Table),
		goldmark.WithParserOptions(
			parser.WithAutoHeadingID(),
			parser.WithASTTransformers(util.Prioritized(&blockTransformer{st: st}, 100)),
		),
		goldmark.WithRendererOptions(
			renderer.WithNodeRenderers(util.Prioritized(&blockRenderer{tmpl: tmpl, charts: reportCharts(tmpl)}, 100)),
		),
	)
	var out bytes.Buffer
	if err := md.Convert(src, &out); err != nil {
		return nil, err
	}
	if len(st.errs) > 0 {
		return nil, &TemplateError{File: MainTemplate, Err: errors.Join(st.errs...)}
	}
	return out.Bytes(), nil
}
