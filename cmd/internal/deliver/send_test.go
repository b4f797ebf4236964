package deliver

import (
	"bytes"
	"context"
	"crypto/rand"
	"crypto/tls"
	"mime"
	"net/mail"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/caseweave/caseweave/cmd/internal/smtptest"
)

func addr(t *testing.T, s string) *mail.Address {
	t.Helper()
	a, err := mail.ParseAddress(s)
	if err != nil {
		t.Fatal(err)
	}
	return a
}

// testParts is a message with a picture and two attachments of random bytes, so a byte
// that an encoding changed cannot go unnoticed.
func testParts(t *testing.T, to ...string) Parts {
	t.Helper()
	blob := func(n int) []byte {
		b := make([]byte, n)
		if _, err := rand.Read(b); err != nil {
			t.Fatal(err)
		}
		return b
	}
	p := Parts{From: addr(t, "Desk <desk@vell.example>"), Subject: "Report: Nørdby — data to 27 November 2026",
		Text: "R is 1.16 (95% CI 0.79–1.59).\n", HTML: []byte("<p>R is 1.16 (95% CI 0.79–1.59).</p><img src=\"cid:pic@t\">"),
		Inline: []File{{Name: "epicurve.png", ContentType: "image/png", Data: blob(3000), ContentID: "pic@t"}},
		Attach: []File{{Name: "north.html", ContentType: "text/html", Data: append([]byte("<html>\r\n.\r\n.."), blob(200000)...)},
			{Name: "north.pdf", ContentType: "application/pdf", Data: blob(50000)}},
		Date: time.Date(2026, 11, 27, 9, 0, 0, 0, time.UTC), Mailer: "caseweave test"}
	for i, s := range to {
		if i == len(to)-1 && len(to) > 1 {
			p.Cc = append(p.Cc, addr(t, s))
		} else {
			p.To = append(p.To, addr(t, s))
		}
	}
	return p
}

func server(t *testing.T, srv *smtptest.Server, sec Security) Server {
	return Server{Host: srv.Host, Port: srv.Port, Security: sec, Username: "analyst", Password: "s3cret pass",
		TLS: &tls.Config{ServerName: srv.Host, RootCAs: srv.Roots, MinVersion: tls.VersionTLS12}, Timeout: 10 * time.Second}
}

func TestSendDeliversOneMessageToEachRecipient(t *testing.T) {
	for _, mode := range []struct {
		name string
		m    smtptest.Mode
		sec  Security
	}{{"starttls", smtptest.StartTLS, StartTLS}, {"implicit", smtptest.Implicit, ImplicitTLS}} {
		t.Run(mode.name, func(t *testing.T) {
			srv := smtptest.Start(t, mode.m, "analyst", "s3cret pass")
			p1 := testParts(t, "a@north.example", "b@north.example", "Archive <arch@vell.example>")
			p2 := testParts(t, "c@south.example")
			m1, err := Build(p1)
			if err != nil {
				t.Fatal(err)
			}
			m2, err := Build(p2)
			if err != nil {
				t.Fatal(err)
			}
			res := Send(context.Background(), server(t, srv, mode.sec), []*Message{m1, m2}, nil, nil)
			for _, r := range res {
				if r.Err != nil {
					t.Fatalf("%s: %v", r.Recipient, r.Err)
				}
			}
			got := srv.Received()
			per := map[string]int{}
			for _, g := range got {
				if !g.Encrypted || g.User != "analyst" {
					t.Errorf("a message went unencrypted (%v) or unauthenticated (%q)", g.Encrypted, g.User)
				}
				for _, to := range g.To {
					per[to]++
				}
			}
			for _, want := range []string{"a@north.example", "b@north.example", "arch@vell.example", "c@south.example"} {
				if per[want] != 1 {
					t.Errorf("%s received %d messages, want 1", want, per[want])
				}
			}
			if len(got) != 4 || len(res) != 4 {
				t.Fatalf("%d messages received, %d results; want 4", len(got), len(res))
			}
			// What arrived is the message built, and its attachments are the bytes given.
			for _, g := range got {
				want := m1
				if g.To[0] == "c@south.example" {
					want = m2
				}
				if !bytes.Equal(bytes.TrimSuffix(g.Data, []byte("\r\n")), bytes.TrimSuffix(want.EML, []byte("\r\n"))) {
					t.Errorf("message to %s arrived changed", g.To[0])
				}
				hdr, parts, err := smtptest.Parse(g.Data)
				if err != nil {
					t.Fatal(err)
				}
				if s, _ := new(mime.WordDecoder).DecodeHeader(hdr.Header.Get("Subject")); s != p1.Subject {
					t.Errorf("subject %q", s)
				}
				var files int
				for _, part := range parts {
					for _, f := range append(append([]File{}, p1.Attach...), p1.Inline...) {
						if part.Filename == f.Name {
							files++
							src := f.Data
							if g.To[0] == "c@south.example" {
								src = fileNamed(p2, f.Name)
							}
							if !bytes.Equal(part.Body, src) {
								t.Errorf("%s arrived with %d bytes differing from the %d sent", f.Name, len(part.Body), len(src))
							}
						}
					}
				}
				if files != 3 {
					t.Errorf("%d files in the message, want 3", files)
				}
			}
		})
	}
}

func fileNamed(p Parts, name string) []byte {
	for _, f := range append(append([]File{}, p.Attach...), p.Inline...) {
		if f.Name == name {
			return f.Data
		}
	}
	return nil
}

func TestSendRefusedRecipientAndRetry(t *testing.T) {
	srv := smtptest.Start(t, smtptest.StartTLS, "analyst", "s3cret pass")
	srv.Reject("b@north.example", true)
	m, err := Build(testParts(t, "a@north.example", "b@north.example", "arch@vell.example"))
	if err != nil {
		t.Fatal(err)
	}
	log := &Log{}
	res := Send(context.Background(), server(t, srv, StartTLS), []*Message{m}, nil, func(r Result) { log.Record("north", r, time.Now()) })
	var failed []string
	for _, r := range res {
		if r.Err != nil {
			failed = append(failed, r.Recipient.Address)
			if !strings.Contains(r.Err.Error(), "550") || !strings.Contains(r.Err.Error(), "refused the recipient") {
				t.Errorf("the refusal reads %q; want the server's 550 and what was refused", r.Err)
			}
		}
	}
	if len(failed) != 1 || failed[0] != "b@north.example" || len(srv.Received()) != 2 {
		t.Fatalf("failed %v, %d delivered; want only b refused and the two others delivered", failed, len(srv.Received()))
	}
	// The retry, reading the log, sends only to the refused recipient.
	srv.Reset()
	srv.Reject("b@north.example", false)
	res = Send(context.Background(), server(t, srv, StartTLS), []*Message{m}, func(m *Message, r *mail.Address) bool { return !log.Sent(m.ID, r.Address) }, nil)
	got := srv.Received()
	if len(res) != 1 || res[0].Err != nil || len(got) != 1 || got[0].To[0] != "b@north.example" {
		t.Fatalf("retry: %d results, %d received (%v); want one, to b", len(res), len(got), got)
	}
}

func TestSendRefusesWhatIsNotSafe(t *testing.T) {
	m, err := Build(testParts(t, "a@north.example"))
	if err != nil {
		t.Fatal(err)
	}
	// A server without TLS: STARTTLS is required, so nothing goes.
	plain := smtptest.Start(t, smtptest.NoTLS, "analyst", "s3cret pass")
	res := Send(context.Background(), server(t, plain, StartTLS), []*Message{m}, nil, nil)
	if len(res) != 1 || res[0].Err == nil || len(plain.Received()) != 0 {
		t.Errorf("a server without STARTTLS was used: %v", res)
	}
	// A certificate the client does not trust.
	srv := smtptest.Start(t, smtptest.StartTLS, "analyst", "s3cret pass")
	untrusted := server(t, srv, StartTLS)
	untrusted.TLS = &tls.Config{ServerName: srv.Host}
	if res := Send(context.Background(), untrusted, []*Message{m}, nil, nil); res[0].Err == nil {
		t.Error("an untrusted certificate was accepted")
	}
	// A wrong password fails every recipient, and the error does not quote it.
	bad := server(t, srv, StartTLS)
	bad.Password = "wrong-Pa55word"
	res = Send(context.Background(), bad, []*Message{m}, nil, nil)
	if res[0].Err == nil || strings.Contains(res[0].Err.Error(), bad.Password) || srv.AuthFailures() == 0 {
		t.Errorf("wrong password: %v", res[0].Err)
	}
	if len(srv.Received()) != 0 {
		t.Error("a message went through without authentication")
	}
}

func TestBuildIsDeterministicAndParses(t *testing.T) {
	p := testParts(t, "a@north.example", "arch@vell.example")
	a, err := Build(p)
	if err != nil {
		t.Fatal(err)
	}
	b, _ := Build(p)
	if !bytes.Equal(a.EML, b.EML) || a.ID != b.ID {
		t.Error("the same parts gave different messages")
	}
	p2 := p
	p2.Date = p.Date.Add(time.Hour)
	if c, _ := Build(p2); c.ID != a.ID {
		t.Error("the Message-ID depends on the date; a retry would not be recognised")
	}
	_, parts, err := smtptest.Parse(a.EML)
	if err != nil {
		t.Fatal(err)
	}
	var kinds []string
	for _, q := range parts {
		kinds = append(kinds, q.ContentType+":"+q.Disposition)
	}
	if got := strings.Join(kinds, " "); got != "text/plain: text/html: image/png:inline text/html:attachment application/pdf:attachment" {
		t.Errorf("parts %s", got)
	}
	if _, err := Build(Parts{From: p.From}); err == nil {
		t.Error("a message without recipients was built")
	}
}

func TestReadPassword(t *testing.T) {
	env := func(k string) (string, bool) {
		if k == "PW" {
			return "from-env", true
		}
		return "", false
	}
	if pw, err := ReadPassword("PW", "", env); err != nil || pw != "from-env" {
		t.Errorf("env: %q %v", pw, err)
	}
	if _, err := ReadPassword("NOPE", "", env); err == nil {
		t.Error("a missing variable gave a password")
	}
	dir := t.TempDir()
	ok := filepath.Join(dir, "pw")
	os.WriteFile(ok, []byte("from-file\n"), 0o600)
	if pw, err := ReadPassword("PW", ok, env); err != nil || pw != "from-file" {
		t.Errorf("file: %q %v", pw, err)
	}
	open := filepath.Join(dir, "pw-open")
	os.WriteFile(open, []byte("secret-in-open-file\n"), 0o644)
	os.Chmod(open, 0o644)
	_, err := ReadPassword("PW", open, env)
	if err == nil || !strings.Contains(err.Error(), "chmod 600") || strings.Contains(err.Error(), "secret-in-open-file") {
		t.Errorf("a file others can read: %v", err)
	}
	if _, err := ReadPassword("PW", dir, env); err == nil {
		t.Error("a folder was read as a password file")
	}
}
