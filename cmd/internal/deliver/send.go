package deliver

import (
	"context"
	"crypto/tls"
	"fmt"
	"net/mail"
	"time"

	gomail "github.com/wneessen/go-mail"
	"github.com/wneessen/go-mail/smtp"
)

// Security is how the connection to the SMTP server is protected.
type Security int

const (
	// StartTLS connects in the clear and requires the server to upgrade the connection with
	// STARTTLS before anything else is said (RFC 3207); a server that does not offer it is an
	// error, never a fall-back to plain text. Usually port 587.
	StartTLS Security = iota
	// ImplicitTLS speaks TLS from the first byte (RFC 8314 §3). Usually port 465.
	ImplicitTLS
	// Plain sends the messages unencrypted: only on an explicit request, for a relay on a
	// trusted network. A login then uses only a mechanism that does not send the password
	// itself (SCRAM, NTLM, CRAM-MD5; go-mail's discovery), never PLAIN or LOGIN.
	Plain
)

func (s Security) String() string {
	switch s {
	case StartTLS:
		return "STARTTLS"
	case ImplicitTLS:
		return "TLS"
	}
	return "plain text"
}

// Server is the SMTP server to send through.
type Server struct {
	Host     string
	Port     int
	Security Security
	// Username and Password authenticate when Username is set, with the strongest mechanism
	// the server offers (go-mail's discovery: over an unencrypted connection, none that sends
	// the password itself). The password is never written anywhere.
	Username string
	Password string
	// TLS is the TLS configuration; nil verifies the server against the system's roots.
	TLS *tls.Config
	// Timeout bounds the connection and each command; 0 means 30 s.
	Timeout time.Duration
}

// Result is what became of one message to one recipient.
type Result struct {
	Message   *Message
	Recipient *mail.Address
	Err       error // nil when the server accepted the message for the recipient
}

// Send delivers each message to each of its recipients for which pending returns true (nil:
// all), over one connection, one SMTP transaction per recipient: a server that refuses one
// address refuses only that recipient, and the others are still sent. done is called after
// each attempt, so a caller can keep a log that survives an interruption. A failure to
// connect, secure the connection or authenticate fails every pending recipient with it.
func Send(ctx context.Context, srv Server, msgs []*Message, pending func(*Message, *mail.Address) bool, done func(Result)) []Result {
	type job struct {
		m *Message
		r *mail.Address
	}
	var jobs []job
	for _, m := range msgs {
		for _, r := range m.Recipients {
			if pending == nil || pending(m, r) {
				jobs = append(jobs, job{m, r})
			}
		}
	}
	var results []Result
	report := func(r Result) {
		results = append(results, r)
		if done != nil {
			done(r)
		}
	}
	if len(jobs) == 0 {
		return nil
	}
	c, sc, err := dial(ctx, srv)
	if err != nil {
		for _, j := range jobs {
			report(Result{Message: j.m, Recipient: j.r, Err: err})
		}
		return results
	}
	defer func() { _ = c.CloseWithSMTPClient(sc) }()
	for _, j := range jobs {
		if err := ctx.Err(); err != nil {
			report(Result{Message: j.m, Recipient: j.r, Err: err})
			continue
		}
		err := transact(sc, j.m, j.r)
		if err != nil {
			_ = sc.Reset() // the next transaction starts clean; a dead connection fails it too
		}
		report(Result{Message: j.m, Recipient: j.r, Err: err})
	}
	return results
}

// dial connects, secures the connection as srv says, and authenticates.
func dial(ctx context.Context, srv Server) (*gomail.Client, *smtp.Client, error) {
	timeout := srv.Timeout
	if timeout <= 0 {
		timeout = 30 * time.Second
	}
	tc := srv.TLS
	if tc == nil {
		tc = &tls.Config{ServerName: srv.Host, MinVersion: tls.VersionTLS12}
	}
	opts := []gomail.Option{gomail.WithPort(srv.Port), gomail.WithTimeout(timeout), gomail.WithTLSConfig(tc)}
	switch srv.Security {
	case StartTLS:
		opts = append(opts, gomail.WithTLSPolicy(gomail.TLSMandatory))
	case ImplicitTLS:
		opts = append(opts, gomail.WithSSL())
	case Plain:
		opts = append(opts, gomail.WithTLSPolicy(gomail.NoTLS))
	default:
		return nil, nil, fmt.Errorf("unknown connection security %d", srv.Security)
	}
	if srv.Username != "" {
		opts = append(opts, gomail.WithSMTPAuth(gomail.SMTPAuthAutoDiscover),
			gomail.WithUsername(srv.Username), gomail.WithPassword(srv.Password))
	}
	c, err := gomail.NewClient(srv.Host, opts...)
	if err != nil {
		return nil, nil, fmt.Errorf("SMTP server %s:%d: %w", srv.Host, srv.Port, err)
	}
	sc, err := c.DialToSMTPClientWithContext(ctx)
	if err != nil {
		return nil, nil, fmt.Errorf("connecting to %s:%d with %s: %w", srv.Host, srv.Port, srv.Security, err)
	}
	return c, sc, nil
}

// transact sends one message to one recipient: MAIL FROM, RCPT TO, DATA.
func transact(sc *smtp.Client, m *Message, r *mail.Address) error {
	if err := sc.Mail(m.From.Address); err != nil {
		return fmt.Errorf("the server refused the sender %s: %w", m.From.Address, err)
	}
	if err := sc.Rcpt(r.Address); err != nil {
		return fmt.Errorf("the server refused the recipient: %w", err)
	}
	w, err := sc.Data()
	if err != nil {
		return fmt.Errorf("the server refused the message: %w", err)
	}
	if _, err := w.Write(m.EML); err != nil {
		_ = w.Close()
		return fmt.Errorf("sending the message: %w", err)
	}
	if err := w.Close(); err != nil {
		return fmt.Errorf("the server did not accept the message: %w", err)
	}
	return nil
}
