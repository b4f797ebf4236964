package render

import (
	"bytes"
	"encoding/json"
	"errors"
	"html"
	"os"
	"path/filepath"
	"reflect"
	"regexp"
	"strings"
	"testing"
	"unicode/utf8"

	"github.com/caseweave/caseweave/pipeline/analysis"
	"github.com/caseweave/caseweave/pipeline/linelist"
)

// pageShape is what a page's markup is made of: the attribute names seen on each element
// (the empty name marks the element itself) and the number of script elements. Data that
// stays text cannot add to it.
type pageShape struct {
	attrs   map[string]map[string]bool
	scripts int
}

var attrRE = regexp.MustCompile(`([a-zA-Z_:][-a-zA-Z0-9_:.]*)(?:\s*=\s*("[^"]*"|'[^']*'|[^\s"'=<>` + "`" + `]+))?`)

// urlAttrs are the attributes a browser follows as a URL.
var urlAttrs = map[string]bool{"href": true, "src": true, "action": true, "formaction": true, "xlink:href": true, "srcset": true, "poster": true}

// scriptEl is one script element: the attributes of its start tag and its content.
type scriptEl struct{ attrs, body string }

// splitScripts cuts the script elements out of page, leaving each as an empty
// <script ATTRS></script> in the markup. It uses plain searches, not a regular expression,
// so the megabyte of the chart library costs next to nothing to skip (the fuzzer runs it).
func splitScripts(page string) (markup string, scripts []scriptEl) {
	var b strings.Builder
	for {
		i := strings.Index(page, "<script")
		if i < 0 {
			b.WriteString(page)
			return b.String(), scripts
		}
		b.WriteString(page[:i])
		rest := page[i+len("<script"):]
		gt := strings.IndexByte(rest, '>')
		if gt < 0 {
			b.WriteString(page[i:])
			return b.String(), scripts
		}
		end := strings.Index(rest[gt+1:], "</script>")
		if end < 0 {
			end = len(rest) - gt - 1
		}
		el := scriptEl{attrs: rest[:gt], body: rest[gt+1 : gt+1+end]}
		scripts = append(scripts, el)
		b.WriteString("<script" + el.attrs + "></script>")
		page = rest[min(len(rest), gt+1+end+len("</script>")):]
	}
}

// markupOf is the page without the content of its script elements: what a reader sees.
func markupOf(page string) string { m, _ := splitScripts(page); return m }

func shapeOf(page string) pageShape {
	sh := pageShape{attrs: map[string]map[string]bool{}, scripts: scriptOpen(page)}
	for _, m := range anyTag.FindAllStringSubmatch(markupOf(page), -1) {
		name := strings.ToLower(m[1])
		if sh.attrs[name] == nil {
			sh.attrs[name] = map[string]bool{"": true}
		}
		for _, a := range attrRE.FindAllStringSubmatch(m[2], -1) {
			sh.attrs[name][strings.ToLower(a[1])] = true
		}
	}
	return sh
}

// checkShape fails unless page is made of the same kinds of element and attribute as the
// clean render, has as many script elements, keeps every chart option a JSON value with no
// '<' in it, and has no event handler or link or source pointing at javascript:.
func checkShape(t testing.TB, page string, clean pageShape) {
	t.Helper()
	sh := shapeOf(page)
	if sh.scripts != clean.scripts {
		t.Fatalf("%d script elements, want %d as in the clean render", sh.scripts, clean.scripts)
	}
	for el, attrs := range sh.attrs {
		if clean.attrs[el] == nil {
			t.Fatalf("data made a <%s> element", el)
		}
		for a := range attrs {
			if !clean.attrs[el][a] {
				t.Fatalf("data made a %q attribute on <%s>", a, el)
			}
		}
	}
	markup, scripts := splitScripts(page)
	for _, sc := range scripts {
		if !strings.Contains(sc.attrs, "application/json") {
			continue
		}
		if !json.Valid([]byte(sc.body)) || strings.Contains(sc.body, "<") {
			t.Fatalf("a chart option is not inert JSON: %.200q", sc.body)
		}
	}
	for _, m := range anyTag.FindAllStringSubmatch(markup, -1) {
		for _, a := range attrRE.FindAllStringSubmatch(m[2], -1) {
			name := strings.ToLower(a[1])
			v := strings.ToLower(strings.Trim(html.UnescapeString(a[2]), "\"' \t\n"))
			url := urlAttrs[name] && (strings.HasPrefix(v, "javascript:") || strings.HasPrefix(v, "data:text"))
			if url || strings.HasPrefix(name, "on") {
				t.Fatalf("attribute %s=%s in the markup", a[1], a[2])
			}
		}
	}
	lower := strings.ToLower(markup)
	for _, bad := range []string{"<img", "<svg", "<iframe", "<object", "<a ", "<base", "<form"} {
		if strings.Contains(lower, bad) {
			t.Fatalf("markup contains %q", bad)
		}
	}
}

// setEveryString writes p into every string the Summary holds, named string types (problem
// codes, severities) and map keys included, and returns how many it set.
func setEveryString(v reflect.Value, p string) int {
	n := 0
	switch v.Kind() {
	case reflect.Pointer, reflect.Interface:
		if !v.IsNil() {
			n += setEveryString(v.Elem(), p)
		}
	case reflect.Struct:
		for i := 0; i < v.NumField(); i++ {
			if v.Type().Field(i).IsExported() {
				n += setEveryString(v.Field(i), p)
			}
		}
	case reflect.Slice, reflect.Array:
		for i := 0; i < v.Len(); i++ {
			n += setEveryString(v.Index(i), p)
		}
	case reflect.Map:
		if v.Type().Key().Kind() == reflect.String && v.Len() > 0 {
			keys := v.MapKeys()
			first := v.MapIndex(keys[0])
			for _, k := range keys {
				v.SetMapIndex(k, reflect.Value{})
			}
			v.SetMapIndex(reflect.ValueOf(p).Convert(v.Type().Key()), first)
			n++
		}
	case reflect.String:
		if v.CanSet() {
			v.SetString(p)
			n++
		}
	}
	return n
}

// hostileFixture is the full fixture with a scope and the per-row problems filled in, so every
// text field of a Summary is present, and then p written into each of them.
func hostileFixture(p string) (*analysis.Summary, int) {
	s := fixtureSummary()
	s.Scope = &analysis.Scope{Column: "jurisdiction", Value: "Ostvale"}
	s.Problems = []analysis.Problem{
		{Row: 17, Column: "case_id", Code: linelist.CodeDuplicateID, Severity: linelist.SeverityError, Message: "seen before"},
		{Row: 23, Column: "infector_id", Code: linelist.CodeUnknownInfector, Severity: linelist.SeverityWarning, Message: "no such case"},
	}
	// A reason in NotYet replaces the end-of-outbreak curve by a sentence; the clean render
	// gives one too, so that both pages have the same shape.
	s.EndOfOutbreak.NotYet = "the last onset is recent"
	if p == "" {
		return s, 0
	}
	return s, setEveryString(reflect.ValueOf(s), p)
}

var hostilePayloads = []struct{ name, p string }{
	{"img onerror", `<img src=x onerror=alert(1)>`},
	{"script breakout", `</script><script>alert(1)</script>`},
	{"attribute breakout", `"'><svg onload=alert(1)>`},
	{"javascript URL", `javascript:alert(1)`},
	{"template action", `{{.Input.Path}}`},
	{"100 KB", strings.Repeat("<b onmouseover=alert(1)>x</b> & | * _ `{{.Seed}}`\n", 2200)[:100<<10]},
	{"NUL and control bytes", "a\x00b\x01c\x07d\x08e\x0bf\x0cg\x1b[31mh\x7fi\r\nj"},
	{"invalid UTF-8", "bad \xff\xfe \xc3\x28 \xed\xa0\x80 \xf4\x90\x80\x80 end"},
}

// controlBytes counts C0 control bytes other than tab, newline and carriage return, and DEL.
func controlBytes(b []byte) int {
	n := 0
	for _, c := range b {
		if (c < 0x20 && c != '\t' && c != '\n' && c != '\r') || c == 0x7f {
			n++
		}
	}
	return n
}

func TestHostileTextInEveryField(t *testing.T) {
	cleanSummary, _ := hostileFixture("")
	cleanHTML := mustRender(t, cleanSummary, Options{})
	clean := shapeOf(cleanHTML)
	if controlBytes([]byte(cleanHTML)) != 0 || !utf8.ValidString(cleanHTML) {
		t.Fatal("the clean render already holds control bytes or invalid UTF-8")
	}
	sizes := map[string]int{}
	for _, tc := range hostilePayloads {
		t.Run(tc.name, func(t *testing.T) {
			s, fields := hostileFixture(tc.p)
			if fields < 60 {
				t.Fatalf("only %d string fields set; the walk missed part of the Summary", fields)
			}
			page := mustRender(t, s, Options{})
			sizes[tc.name] = len(page)
			checkShape(t, page, clean)
			if strings.ContainsAny(tc.p, "<>\"") && strings.Contains(page, tc.p) {
				t.Error("the payload appears unescaped in the page")
			}
			// Outside scripts no control byte; inside the JSON options they are \u escapes
			// (json.Valid above), DEL excepted, which JSON and HTML allow in a script.
			if n := controlBytes([]byte(markupOf(page))); n != 0 {
				t.Errorf("%d control bytes reached the markup", n)
			}
			if !utf8.ValidString(page) {
				t.Error("the page is not valid UTF-8")
			}
			// The payload reached the reader as text: decoded, the markup shows it (with
			// whitespace folded), in more than one place.
			text := html.UnescapeString(markupOf(page))
			if want := plainText(tc.p); len(want) < 1000 && strings.Count(text, want) < 3 {
				t.Errorf("payload shown as text %d times, want at least 3", strings.Count(text, want))
			}
		})
	}

	// Size: the 100 KB payload grows the page in proportion to a 1 KB one of the same text,
	// so nothing repeats data without bound.
	big := hostilePayloads[5].p
	small, fields := hostileFixture(big[:1<<10])
	smallSize := len(mustRender(t, small, Options{}))
	grow, growSmall := sizes["100 KB"]-len(cleanHTML), smallSize-len(cleanHTML)
	if growSmall <= 0 || grow > 110*growSmall || sizes["100 KB"] > 64<<20 {
		t.Errorf("a 100 KB value grows the page by %d bytes, a 1 KB value by %d (page %d bytes)", grow, growSmall, sizes["100 KB"])
	}
	t.Logf("clean %d bytes; 1 KB value in each of %d fields %d; 100 KB value in each %d", len(cleanHTML), fields, smallSize, sizes["100 KB"])
}

// TestTemplateActionInDataIsNotExecuted puts the action {{.Input.Path}} in every text field
// but the path itself: executed, it would print the path's sentinel in each of those places.
func TestTemplateActionInDataIsNotExecuted(t *testing.T) {
	const sentinel = "sentinel-7f3a9c"
	count := func(p string) int {
		s, _ := hostileFixture(p)
		s.Input.Path = "/srv/exports/" + sentinel + ".csv"
		return strings.Count(mustRender(t, s, Options{}), sentinel)
	}
	plain, action := count("plain"), count("{{.Input.Path}}")
	if plain == 0 || action != plain {
		t.Fatalf("the path is printed %d times with plain text in the fields and %d times with a template action", plain, action)
	}
	s, _ := hostileFixture("{{.Input.Path}}")
	page := html.UnescapeString(mustRender(t, s, Options{}))
	if !strings.Contains(page, "{{.Input.Path}}") {
		t.Error("the action is not shown as typed")
	}
}

func writeFolder(t *testing.T, dir string, files map[string]string) {
	t.Helper()
	for name, body := range files {
		p := filepath.Join(dir, filepath.FromSlash(name))
		if err := os.MkdirAll(filepath.Dir(p), 0o755); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(p, []byte(body), 0o644); err != nil {
			t.Fatal(err)
		}
	}
}

func TestMissingFieldInFolderNamesFileLineField(t *testing.T) {
	for _, tc := range []struct {
		name        string
		files       map[string]string
		file        string
		line        int
		field       string
		messagePart string
	}{
		{"in report.md", map[string]string{"report.md": "# Report\n\nCases: {{ num .Tree.Cases 0 }}\n{{ .Tree.Casez }}\n"},
			"report.md", 4, ".Tree.Casez", "Casez"},
		{"in a partial", map[string]string{
			"report.md":             "# Report\n{{ partial \"partials/outlook.md\" . }}\n",
			"partials/outlook.md":   "## Outlook\n\n{{ with .Outlook }}\nDie-out {{ estpct .Extinction 0 }}\n{{ end }}\n",
			"partials/unrelated.md": "fine\n"},
			"partials/outlook.md", 4, ".Extinction", "Extinction"},
		{"behind a with", map[string]string{"report.md": "{{ with .Offspring }}\n\n\n{{ num .Rr 2 }}{{ end }}\n"},
			"report.md", 4, ".Rr", "Rr"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			dir := t.TempDir()
			writeFolder(t, dir, tc.files)
			_, err := Render(released(fixtureSummary()), Options{Templates: os.DirFS(dir)})
			var te *TemplateError
			if !errors.As(err, &te) {
				t.Fatalf("error %v (%T) is not a *TemplateError", err, err)
			}
			if te.File != tc.file || te.Line != tc.line || te.Field != tc.field || !strings.Contains(te.Error(), tc.messagePart) {
				t.Errorf("got %q (File %q, Line %d, Field %q); want File %q, Line %d, Field %q", te, te.File, te.Line, te.Field, tc.file, tc.line, tc.field)
			}
			if want := tc.file + " line "; !strings.HasPrefix(te.Error(), want) {
				t.Errorf("message %q does not start with %q", te, want)
			}
		})
	}
}

func TestPartialOutsideTheFolderIsRefused(t *testing.T) {
	root := t.TempDir()
	const secret = "OUTSIDE-SECRET-41c7"
	writeFolder(t, root, map[string]string{"outside.md": secret + "\n", "tmpl/partials/ok.md": "inside\n"})
	outside := filepath.Join(root, "outside.md")
	for _, name := range []string{
		"../outside.md",
		"../../etc/passwd",
		"/etc/passwd",
		outside,
		filepath.ToSlash(outside),
		"partials/../../outside.md",
		"./partials/ok.md",
		"partials//ok.md",
		`..\outside.md`,
	} {
		t.Run(name, func(t *testing.T) {
			dir := filepath.Join(root, "tmpl")
			writeFolder(t, dir, map[string]string{"report.md": "# R\n\n{{ partial \"partials/ok.md\" . }}\n{{ partial " + jsonQuote(name) + " . }}\n"})
			out, err := Render(released(fixtureSummary()), Options{Templates: os.DirFS(dir)})
			if bytes.Contains(out, []byte(secret)) {
				t.Fatal("a file outside the template folder reached the report")
			}
			var te *TemplateError
			if !errors.As(err, &te) {
				t.Fatalf("partial %q gave %v (%T), want a *TemplateError", name, err, err)
			}
			if te.File != "report.md" || te.Line != 4 || !strings.Contains(te.Error(), "no template file") {
				t.Errorf("partial %q: got %q (File %q, Line %d)", name, te, te.File, te.Line)
			}
		})
	}
}

// jsonQuote quotes s as a Go template string literal (Go and JSON quoting agree here).
func jsonQuote(s string) string {
	b, _ := json.Marshal(s)
	return string(b)
}

func TestHasScriptEnd(t *testing.T) {
	for _, tc := range []struct {
		in   string
		want bool
	}{
		{"", false}, {"var a = 1 </ 2;", false}, {"</scrip", false}, {"</style>", false}, {"< /script>", false},
		{"x</script>", true}, {"</SCRIPT", true}, {"a</b></ScRiPt >", true}, {"</</script", true},
	} {
		if got := hasScriptEnd(tc.in); got != tc.want {
			t.Errorf("hasScriptEnd(%q) = %v, want %v", tc.in, got, tc.want)
		}
	}
}
