package render

import (
	"fmt"
	"reflect"
	"strings"
	"unicode"
)

// mdText is Markdown source produced by the function library: every data value inside it has
// already been escaped for Markdown. Templates cannot make one (they cannot convert types), so
// the only way text reaches the Markdown unescaped is through the library.
type mdText string

// escapeMarkdown makes s inert as Markdown text: every ASCII punctuation character is
// backslash-escaped (CommonMark §2.4 allows a backslash before any of them, and GFM tables
// read \| as a literal bar inside a cell), and runs of whitespace, newlines included, fold to
// one space so data cannot start a new block (a heading, a fence, a list, a table row).
func escapeMarkdown(s string) string {
	var b strings.Builder
	b.Grow(len(s) + len(s)/4)
	space := false
	for _, r := range s {
		switch {
		case unicode.IsSpace(r) || unicode.IsControl(r):
			space = true
			continue
		case space && b.Len() > 0:
			b.WriteByte(' ')
		}
		space = false
		if r < 0x80 && strings.ContainsRune("!\"#$%&'()*+,-./:;<=>?@[\\]^_`{|}~", r) {
			b.WriteByte('\\')
		}
		b.WriteRune(r)
	}
	return b.String()
}

// escapeValue is appended to every output action of a report template (see rewriteOutputs),
// so {{ .Scope.Value }} prints as escaped text. Library results (mdText) pass through
// unchanged; nil pointers print as an em dash. Only scalars print directly: a struct, slice or
// map would print Go syntax (and pointer addresses, which are not deterministic), so those are
// an error that tells the author which function to use.
func escapeValue(v any) (mdText, error) {
	if m, ok := v.(mdText); ok {
		return m, nil
	}
	rv := reflect.ValueOf(v)
	for rv.IsValid() && (rv.Kind() == reflect.Pointer || rv.Kind() == reflect.Interface) {
		if rv.IsNil() {
			return "—", nil
		}
		rv = rv.Elem()
	}
	if !rv.IsValid() {
		return "", nil
	}
	switch rv.Kind() {
	case reflect.String, reflect.Bool,
		reflect.Int, reflect.Int8, reflect.Int16, reflect.Int32, reflect.Int64,
		reflect.Uint, reflect.Uint8, reflect.Uint16, reflect.Uint32, reflect.Uint64,
		reflect.Float32, reflect.Float64:
	default:
		return "", fmt.Errorf("a %s cannot be printed directly; use a library function (est, num, table) or range over it", rv.Type())
	}
	x := rv.Interface()
	if m, ok := x.(mdText); ok {
		return m, nil
	}
	return mdText(escapeMarkdown(fmt.Sprint(x))), nil
}

// plainText is s as one line of valid UTF-8: invalid bytes become U+FFFD and runs of
// whitespace and control characters fold to one space, as in escapeMarkdown. It is for text
// that html/template writes (chart and fold-out titles, captions, the page's metadata):
// html/template escapes markup but passes control bytes and invalid UTF-8 through.
func plainText(s string) string {
	var b strings.Builder
	b.Grow(len(s))
	space := false
	for _, r := range s {
		if unicode.IsSpace(r) || unicode.IsControl(r) {
			space = true
			continue
		}
		if space && b.Len() > 0 {
			b.WriteByte(' ')
		}
		space = false
		b.WriteRune(r)
	}
	return b.String()
}

// modelName is how a report writes a model's name: the summary's identifiers
// ("negative_binomial") in the words of the trade ("negative binomial").
func modelName(id string) string {
	switch id {
	case "poisson":
		return "Poisson"
	case "negative_binomial":
		return "negative binomial"
	case "weibull":
		return "Weibull"
	}
	return id
}
