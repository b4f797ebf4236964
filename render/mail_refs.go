package render

import "regexp"

// externalRef matches, inside a tag, what would make a mail client fetch or run anything: a
// script, a style sheet, frame, object, form or base, an event handler, a URL in CSS, and
// any src, href, srcset, background or action that is not a Content-ID of the message.
var externalRef = regexp.MustCompile(`(?i)^<(?:script|link|iframe|frame|object|embed|style|form|base|meta\s+http-equiv\s*=\s*"?refresh)|\son[a-z]+\s*=|url\(|@import|\s(?:src|href|background|action|srcset|poster|data)\s*=\s*"?(?:[^c"]|c[^i]|ci[^d]|cid[^:])`)

// htmlTag matches a tag: text in an HTML part has its "<" escaped.
var htmlTag = regexp.MustCompile(`<[^>]*>`)

// ExternalReference returns the first tag of an HTML mail part that runs script or refers
// outside the message, or "" when there is none. RenderMail refuses a part that has one, and
// the tests of every mail check the parts they receive with it.
func ExternalReference(page []byte) string {
	for _, tag := range htmlTag.FindAll(page, -1) {
		if externalRef.Match(tag) {
			return string(tag)
		}
	}
	return ""
}
