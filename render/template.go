package render

import (
	"errors"
	"fmt"
	"io/fs"
	"path"
	"regexp"
	"strconv"
	"strings"
	"text/template"
	"text/template/parse"
)

// MainTemplate is the template a folder's report starts from; other *.md files in the folder
// (partials/ by convention) are available to it through the partial function.
const MainTemplate = "report.md"

// escapeFunc is the name of the function rewriteOutputs appends to every output action.
const escapeFunc = "_cw_escape"

// TemplateError is a report template that failed to parse or execute. The CLI maps it to exit
// code 3.
type TemplateError struct {
	File  string // template file inside the folder, e.g. "partials/outlook.md"
	Line  int    // 0 when unknown
	Field string // the action or field involved, e.g. ".Offspring.Rr", when known
	Err   error
}

func (e *TemplateError) Error() string {
	var b strings.Builder
	b.WriteString(e.File)
	if e.Line > 0 {
		b.WriteString(" line ")
		b.WriteString(strconv.Itoa(e.Line))
	}
	if e.Field != "" {
		b.WriteString(" at ")
		b.WriteString(e.Field)
	}
	b.WriteString(": ")
	b.WriteString(e.Err.Error())
	return b.String()
}

func (e *TemplateError) Unwrap() error { return e.Err }

// text/template reports "template: NAME:LINE[:COL]: [executing "NAME" at <FIELD>: ]MSG".
var templateErrRE = regexp.MustCompile(`^template: ([^:]+):(\d+)(?::\d+)?: (?:executing "[^"]*" at <([^>]*)>: )?(.*)$`)

// asTemplateError turns an error from text/template into a *TemplateError; fallback names the
// file when the message does not.
func asTemplateError(err error, fallback string) error {
	var te *TemplateError
	if errors.As(err, &te) {
		return te
	}
	var ee template.ExecError
	msg := err.Error()
	if errors.As(err, &ee) {
		msg = ee.Err.Error()
	}
	// The innermost template error carries the place; a partial nests its own.
	if i := strings.LastIndex(msg, "template: "); i > 0 {
		msg = msg[i:]
	}
	m := templateErrRE.FindStringSubmatch(msg)
	if m == nil {
		return &TemplateError{File: fallback, Err: errors.New(strings.TrimPrefix(msg, "template: "))}
	}
	line, _ := strconv.Atoi(m[2])
	field := m[3]
	if field == escapeFunc {
		field = "" // the escaper added to every output action; the message says what was printed
	}
	return &TemplateError{File: m[1], Line: line, Field: field, Err: errors.New(strings.ReplaceAll(m[4], "error calling "+escapeFunc+": ", ""))}
}

// parseFolder parses every *.md file of the folder into one set named by path, then rewrites
// each output action so its value is escaped for Markdown. The folder must hold main (the
// report's or the mail's template).
func parseFolder(fsys fs.FS, funcs template.FuncMap, main string) (*template.Template, error) {
	set := template.New("").Funcs(funcs).Option("missingkey=error")
	found := false
	err := fs.WalkDir(fsys, ".", func(p string, d fs.DirEntry, err error) error {
		if err != nil {
			return err
		}
		if d.IsDir() || path.Ext(p) != ".md" || strings.EqualFold(path.Base(p), "README.md") {
			return nil // a folder's README documents it; it is not part of the report
		}
		src, err := fs.ReadFile(fsys, p)
		if err != nil {
			return err
		}
		if _, err := set.New(p).Parse(string(src)); err != nil {
			te := asTemplateError(err, p)
			if kw, line, ok := unclosedAction(string(src)); ok && strings.Contains(err.Error(), "unexpected EOF") {
				return &TemplateError{File: p, Line: line, Err: fmt.Errorf("the {{ %s }} opened on line %d has no {{ end }}", kw, line)}
			}
			return te
		}
		if p == main {
			found = true
		}
		return nil
	})
	if err != nil {
		var te *TemplateError
		if errors.As(err, &te) {
			return nil, te
		}
		return nil, &TemplateError{File: ".", Err: err}
	}
	if !found {
		return nil, &TemplateError{File: main, Err: errors.New("the template folder has no " + main)}
	}
	for _, t := range set.Templates() {
		if t.Tree != nil {
			rewriteOutputs(t.Tree.Root)
		}
	}
	return set, nil
}

// rewriteOutputs appends escapeFunc to the pipeline of every action that prints, the way
// html/template adds its escapers: {{ .X }} becomes {{ .X | _cw_escape }}. Actions that only
// declare or assign a variable print nothing and are left alone.
func rewriteOutputs(n parse.Node) {
	switch n := n.(type) {
	case *parse.ListNode:
		if n == nil {
			return
		}
		for _, c := range n.Nodes {
			rewriteOutputs(c)
		}
	case *parse.ActionNode:
		if len(n.Pipe.Decl) > 0 {
			return
		}
		id := parse.NewIdentifier(escapeFunc).SetPos(n.Pos)
		n.Pipe.Cmds = append(n.Pipe.Cmds, &parse.CommandNode{NodeType: parse.NodeCommand, Pos: n.Pos, Args: []parse.Node{id}})
	case *parse.IfNode:
		rewriteOutputs(n.List)
		rewriteOutputs(n.ElseList)
	case *parse.RangeNode:
		rewriteOutputs(n.List)
		rewriteOutputs(n.ElseList)
	case *parse.WithNode:
		rewriteOutputs(n.List)
		rewriteOutputs(n.ElseList)
	}
}

// errorf is a template-function error; text/template adds the file and line.
func errorf(format string, args ...any) error { return fmt.Errorf(format, args...) }

// unclosedAction finds the innermost block action (if, range, with, define, block) of a
// template's source that has no matching end, with the line it opened on: text/template
// reports such a template only as "unexpected EOF", at the last line.
func unclosedAction(src string) (keyword string, line int, ok bool) {
	type open struct {
		kw   string
		line int
	}
	var stack []open
	for i := 0; ; {
		j := strings.Index(src[i:], "{{")
		if j < 0 {
			break
		}
		start := i + j
		k := strings.Index(src[start+2:], "}}")
		if k < 0 {
			break
		}
		body := strings.TrimSpace(strings.TrimPrefix(strings.TrimSpace(src[start+2:start+2+k]), "-"))
		i = start + 2 + k + 2
		if strings.HasPrefix(body, "/*") {
			continue
		}
		word := body
		if f := strings.Fields(body); len(f) > 0 {
			word = f[0]
		}
		switch word {
		case "if", "range", "with", "define", "block":
			stack = append(stack, open{word, 1 + strings.Count(src[:start], "\n")})
		case "end":
			if len(stack) > 0 {
				stack = stack[:len(stack)-1]
			}
		}
	}
	if len(stack) == 0 {
		return "", 0, false
	}
	top := stack[len(stack)-1]
	return top.kw, top.line, true
}
