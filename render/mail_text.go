package render

import (
	"bufio"
	"bytes"
	"html"
	"strconv"
	"strings"
	"unicode/utf8"

	"github.com/yuin/goldmark/ast"
	extast "github.com/yuin/goldmark/extension/ast"
	ghtml "github.com/yuin/goldmark/renderer/html"
)

// mailPlain writes goldmark's tree of the mail as plain text: headings underlined, lists
// with dashes or numbers, tables with padded columns, fold-outs as titled paragraphs, and in
// a chart's place the sentence saying where it is.
func mailPlain(doc ast.Node, src []byte, chartNote string) string {
	w := &plainWriter{src: src, note: chartNote}
	w.blocks(doc, "")
	return strings.TrimSpace(w.b.String()) + "\n"
}

type plainWriter struct {
	b    strings.Builder
	src  []byte
	note string
}

// para ends a block with a blank line.
func (w *plainWriter) para(s, indent string) {
	s = strings.TrimSpace(s)
	if s == "" {
		return
	}
	for _, line := range strings.Split(s, "\n") {
		w.b.WriteString(strings.TrimRight(indent+line, " ") + "\n")
	}
	w.b.WriteByte('\n')
}

func (w *plainWriter) blocks(n ast.Node, indent string) {
	for c := n.FirstChild(); c != nil; c = c.NextSibling() {
		w.block(c, indent)
	}
}

func (w *plainWriter) block(n ast.Node, indent string) {
	switch n := n.(type) {
	case *ast.Heading:
		t := w.inline(n)
		mark := "-"
		if n.Level == 1 {
			mark = "="
		}
		w.para(t+"\n"+strings.Repeat(mark, utf8.RuneCountInString(t)), indent)
	case *ast.Paragraph, *ast.TextBlock:
		w.para(w.inline(n), indent)
	case *ast.List:
		num := n.Start
		for it := n.FirstChild(); it != nil; it = it.NextSibling() {
			bullet := "- "
			if n.IsOrdered() {
				bullet = strconv.Itoa(num) + ". "
				num++
			}
			var sub plainWriter
			sub.src, sub.note = w.src, w.note
			sub.blocks(it, "")
			body := strings.TrimSpace(sub.b.String())
			pad := strings.Repeat(" ", len(bullet))
			w.b.WriteString(indent + bullet + strings.ReplaceAll(body, "\n", "\n"+indent+pad) + "\n")
		}
		w.b.WriteByte('\n')
	case *ast.ThematicBreak:
		w.para(strings.Repeat("-", 40), indent)
	case *ast.Blockquote:
		w.blocks(n, indent+"> ")
	case *extast.Table:
		w.table(n, indent)
	case *blockNode:
		switch n.b.kind {
		case blockFoldOpen:
			w.para(n.b.title+":", indent)
			w.blocks(n, indent+"  ")
		case blockBoxOpen:
			w.blocks(n, indent)
		case blockChart:
			if w.note != "" {
				w.para(w.note, indent)
			}
		}
	default:
		w.blocks(n, indent)
	}
}

// inline is the text of n's inline children.
func (w *plainWriter) inline(n ast.Node) string {
	var b strings.Builder
	w.inlines(&b, n)
	return b.String()
}

func (w *plainWriter) inlines(b *strings.Builder, n ast.Node) {
	for c := n.FirstChild(); c != nil; c = c.NextSibling() {
		switch c := c.(type) {
		case *ast.Text:
			b.WriteString(w.text(c.Segment.Value(w.src), c.IsRaw()))
			switch {
			case c.HardLineBreak():
				b.WriteByte('\n')
			case c.SoftLineBreak():
				b.WriteByte(' ')
			}
		case *ast.String:
			b.WriteString(w.text(c.Value, c.IsRaw() || c.IsCode()))
		case *ast.CodeSpan:
			for t := c.FirstChild(); t != nil; t = t.NextSibling() {
				if tx, ok := t.(*ast.Text); ok {
					b.Write(tx.Segment.Value(w.src))
				}
			}
		case *ast.Link:
			t := w.inline(c)
			b.WriteString(t)
			if dest := string(c.Destination); dest != "" && dest != t {
				b.WriteString(" <" + dest + ">")
			}
		case *ast.AutoLink:
			b.Write(c.URL(w.src))
		default:
			w.inlines(b, c)
		}
	}
}

// text is the characters a segment of the Markdown stands for: goldmark's writer resolves
// backslash escapes and entity references as it writes HTML, and the HTML is then read
// back as text, so the plain part says exactly what the HTML part shows.
func (w *plainWriter) text(v []byte, raw bool) string {
	if raw {
		return string(v)
	}
	var buf bytes.Buffer
	bw := bufio.NewWriter(&buf)
	ghtml.DefaultWriter.Write(bw, v)
	_ = bw.Flush() // a bytes.Buffer does not fail
	return html.UnescapeString(buf.String())
}

// table writes a table with each column padded to its widest cell.
func (w *plainWriter) table(t *extast.Table, indent string) {
	var rows [][]string
	for r := t.FirstChild(); r != nil; r = r.NextSibling() {
		var row []string
		for c := r.FirstChild(); c != nil; c = c.NextSibling() {
			row = append(row, strings.TrimSpace(w.inline(c)))
		}
		rows = append(rows, row)
	}
	width := map[int]int{}
	for _, r := range rows {
		for i, c := range r {
			width[i] = max(width[i], utf8.RuneCountInString(c))
		}
	}
	var b strings.Builder
	for k, r := range rows {
		var line strings.Builder
		for i, c := range r {
			if i > 0 {
				line.WriteString("  ")
			}
			pad := strings.Repeat(" ", width[i]-utf8.RuneCountInString(c))
			if i < len(t.Alignments) && t.Alignments[i] == extast.AlignRight {
				line.WriteString(pad + c)
			} else {
				line.WriteString(c + pad)
			}
		}
		b.WriteString(strings.TrimRight(line.String(), " ") + "\n")
		if k == 0 {
			var rule []string
			for i := range r {
				rule = append(rule, strings.Repeat("-", width[i]))
			}
			b.WriteString(strings.Join(rule, "  ") + "\n")
		}
	}
	w.para(b.String(), indent)
}
