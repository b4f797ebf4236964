// Package deliver turns a report's cover mail (render.RenderMail) into an RFC 5322 message
// with its pictures and attachments (Build), and sends messages over SMTP with TLS required
// unless the caller says otherwise (Send), one SMTP transaction per recipient so that one
// refused address costs only that recipient. The MIME encoding and the SMTP client are
// github.com/wneessen/go-mail's.
package deliver

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"net/mail"
	"regexp"
	"strings"
	"time"

	gomail "github.com/wneessen/go-mail"
)

// File is a file the message carries: an attachment, or a picture the HTML part shows by
// its Content-ID.
type File struct {
	Name        string
	ContentType string
	Data        []byte
	// ContentID, for a picture, is the Content-ID without angle brackets ("epicurve.north@caseweave");
	// the HTML part refers to it as cid:ContentID.
	ContentID string
}

// Parts is everything one message is made of.
type Parts struct {
	From    *mail.Address
	To, Cc  []*mail.Address
	Subject string
	Text    string // the plain-text part
	HTML    []byte // the HTML part
	Inline  []File // pictures the HTML part shows
	Attach  []File // attachments
	// Date is the message's Date header; Build keeps it to the second.
	Date time.Time
	// Mailer names the program in the User-Agent and X-Mailer headers.
	Mailer string
}

// Message is one built message.
type Message struct {
	From       *mail.Address
	Recipients []*mail.Address // To then Cc, each address once
	// ID is the Message-ID without angle brackets. It is a digest of the message's content
	// (not of its date or MIME boundaries), so rebuilding the same mail gives the same ID and
	// a send log can tell a retry from a new mail.
	ID  string
	EML []byte // the whole message, CRLF line ends
}

// Build encodes p as a multipart message: multipart/mixed of a multipart/related (the
// multipart/alternative of the plain-text and HTML parts, then the pictures) and the
// attachments. The same parts give the same bytes: go-mail draws its MIME boundaries at
// random, and Build replaces each with one derived from the content (a boundary that begins
// "=_" cannot occur in quoted-printable or base64 text, RFC 2045 §6.7 and §6.8).
func Build(p Parts) (*Message, error) {
	if p.From == nil {
		return nil, errors.New("no sender: set mail.from in the jurisdiction's config.yaml")
	}
	rcpts := recipients(p.To, p.Cc)
	if len(p.To) == 0 {
		return nil, errors.New("no recipients: set mail.to in the jurisdiction's config.yaml")
	}
	id := contentID(p)
	m := gomail.NewMsg(gomail.WithNoDefaultUserAgent())
	m.FromMailAddress(p.From)
	m.ToMailAddress(p.To...)
	if len(p.Cc) > 0 {
		m.CcMailAddress(p.Cc...)
	}
	m.Subject(p.Subject)
	m.SetDateWithValue(p.Date.Truncate(time.Second))
	m.SetMessageIDWithValue(id)
	if p.Mailer != "" {
		m.SetUserAgent(p.Mailer)
	}
	m.SetBodyString(gomail.TypeTextPlain, p.Text)
	m.AddAlternativeString(gomail.TypeTextHTML, string(p.HTML))
	for _, f := range p.Inline {
		if err := m.EmbedReader(f.Name, bytes.NewReader(f.Data), gomail.WithFileContentID("<"+f.ContentID+">"),
			gomail.WithFileContentType(gomail.ContentType(f.ContentType))); err != nil {
			return nil, fmt.Errorf("embedding %s: %w", f.Name, err)
		}
	}
	for _, f := range p.Attach {
		if err := m.AttachReader(f.Name, bytes.NewReader(f.Data), gomail.WithFileContentType(gomail.ContentType(f.ContentType))); err != nil {
			return nil, fmt.Errorf("attaching %s: %w", f.Name, err)
		}
	}
	var buf bytes.Buffer
	if _, err := m.WriteTo(&buf); err != nil {
		return nil, fmt.Errorf("encoding the message: %w", err)
	}
	return &Message{From: p.From, Recipients: rcpts, ID: id, EML: fixBoundaries(buf.Bytes())}, nil
}

// recipients lists To then Cc, each address once (compared without letter case).
func recipients(lists ...[]*mail.Address) []*mail.Address {
	seen := map[string]bool{}
	var out []*mail.Address
	for _, l := range lists {
		for _, a := range l {
			if a == nil || seen[strings.ToLower(a.Address)] {
				continue
			}
			k := strings.ToLower(a.Address)
			seen[k] = true
			out = append(out, a)
		}
	}
	return out
}

// contentID is the Message-ID of p: a digest of what it says and to whom, at the sender's
// domain.
func contentID(p Parts) string {
	h := sha256.New()
	field := func(b []byte) {
		fmt.Fprintf(h, "%d:", len(b))
		h.Write(b)
	}
	field([]byte(p.From.String()))
	for _, a := range recipients(p.To, p.Cc) {
		field([]byte(a.String()))
	}
	field([]byte(p.Subject))
	field([]byte(p.Text))
	field(p.HTML)
	for _, f := range p.Attach {
		field([]byte(f.Name))
		field(f.Data)
	}
	domain := "caseweave.invalid"
	if _, d, ok := strings.Cut(p.From.Address, "@"); ok && d != "" {
		domain = d
	}
	return "caseweave." + hex.EncodeToString(h.Sum(nil))[:32] + "@" + domain
}

// boundaryParam finds go-mail's boundaries, which it writes unquoted.
var boundaryParam = regexp.MustCompile(`boundary=([0-9A-Za-z'()+_,\-./:?]+)`)

// fixBoundaries replaces each MIME boundary of eml, in order of first appearance, by
// "=_cw<n>_" and a digest of the message with the boundaries blanked, so the bytes depend
// on the content only.
func fixBoundaries(eml []byte) []byte {
	var bs []string
	for _, m := range boundaryParam.FindAllSubmatch(eml, -1) {
		bs = append(bs, string(m[1]))
	}
	blank := eml
	for _, b := range bs {
		blank = bytes.ReplaceAll(blank, []byte(b), nil)
	}
	sum := sha256.Sum256(blank)
	tag := hex.EncodeToString(sum[:])[:24]
	out := eml
	for i, b := range bs {
		// "=" is special in a header parameter, so the new boundary is quoted there.
		nb := fmt.Sprintf("=_cw%d_%s", i+1, tag)
		out = bytes.ReplaceAll(out, []byte("boundary="+b), []byte(`boundary="`+nb+`"`))
		out = bytes.ReplaceAll(out, []byte(b), []byte(nb))
	}
	return out
}
