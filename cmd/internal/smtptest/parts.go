package smtptest

import (
	"bytes"
	"encoding/base64"
	"fmt"
	"io"
	"mime"
	"mime/multipart"
	"mime/quotedprintable"
	"net/mail"
	"strings"
)

// Part is one leaf part of a message, its body decoded.
type Part struct {
	ContentType string // media type, lower case: "text/plain"
	Disposition string // "attachment", "inline" or ""
	Filename    string
	ContentID   string // without angle brackets
	Body        []byte
}

// Parse reads a message with Go's net/mail and mime/multipart and returns its header and
// every leaf part, depth first.
func Parse(eml []byte) (*mail.Message, []Part, error) {
	msg, err := mail.ReadMessage(bytes.NewReader(eml))
	if err != nil {
		return nil, nil, err
	}
	var parts []Part
	err = walk(msg.Header.Get("Content-Type"), msg.Header.Get("Content-Transfer-Encoding"), nil, msg.Body, &parts)
	return msg, parts, err
}

func walk(ctype, cte string, h map[string][]string, body io.Reader, out *[]Part) error {
	mt, params, err := mime.ParseMediaType(ctype)
	if err != nil {
		return fmt.Errorf("content type %q: %w", ctype, err)
	}
	if strings.HasPrefix(mt, "multipart/") {
		mr := multipart.NewReader(body, params["boundary"])
		for {
			p, err := mr.NextRawPart()
			if err == io.EOF {
				return nil
			}
			if err != nil {
				return err
			}
			if err := walk(p.Header.Get("Content-Type"), p.Header.Get("Content-Transfer-Encoding"), p.Header, p, out); err != nil {
				return err
			}
		}
	}
	var r io.Reader = body
	switch strings.ToLower(cte) {
	case "base64":
		r = base64.NewDecoder(base64.StdEncoding, newlineStripper{body})
	case "quoted-printable":
		r = quotedprintable.NewReader(body)
	}
	b, err := io.ReadAll(r)
	if err != nil {
		return fmt.Errorf("%s part: %w", mt, err)
	}
	p := Part{ContentType: mt, Body: b}
	get := func(k string) string {
		if v := h[k]; len(v) > 0 {
			return v[0]
		}
		return ""
	}
	if d := get("Content-Disposition"); d != "" {
		disp, dp, err := mime.ParseMediaType(d)
		if err != nil {
			return err
		}
		p.Disposition, p.Filename = disp, dp["filename"]
	}
	p.ContentID = strings.Trim(get("Content-Id"), "<>")
	*out = append(*out, p)
	return nil
}

// newlineStripper drops CR and LF, which base64 bodies carry every 76 characters.
type newlineStripper struct{ r io.Reader }

func (n newlineStripper) Read(p []byte) (int, error) {
	k, err := n.r.Read(p)
	j := 0
	for _, c := range p[:k] {
		if c != '\r' && c != '\n' {
			p[j] = c
			j++
		}
	}
	return j, err
}
