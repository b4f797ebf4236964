// Package smtptest runs an SMTP server on a loopback port for tests (github.com/emersion/go-smtp):
// TLS from a certificate made for the run, authentication required (PLAIN, offered only once
// the connection is encrypted), recipients it can be told to refuse, and every accepted
// message kept with what the connection looked like. Only tests import it.
package smtptest

import (
	"bytes"
	"crypto/ecdsa"
	"crypto/elliptic"
	"crypto/rand"
	"crypto/tls"
	"crypto/x509"
	"crypto/x509/pkix"
	"encoding/pem"
	"errors"
	"io"
	"math/big"
	"net"
	"strconv"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/emersion/go-sasl"
	"github.com/emersion/go-smtp"
)

// Received is one message the server accepted for one transaction.
type Received struct {
	From      string
	To        []string
	Data      []byte
	User      string // the authenticated user
	Encrypted bool   // the transaction ran inside TLS
}

// Server is a running test server.
type Server struct {
	Host   string // "127.0.0.1"
	Port   int
	CAPEM  []byte // the server's self-signed certificate, PEM, to trust
	Roots  *x509.CertPool
	User   string
	Secret string

	mu       sync.Mutex
	reject   map[string]bool
	received []Received
	authFail int
	logins   int
}

// Mode is how the server protects connections.
type Mode int

const (
	StartTLS       Mode = iota // offers STARTTLS; AUTH only after it
	Implicit                   // TLS from the first byte
	NoTLS                      // offers no TLS at all (and so no AUTH)
	NoTLSPlainAuth             // offers no TLS, and PLAIN authentication in the clear
)

// Start starts a server on a free loopback port with a fresh certificate; with a user, MAIL
// needs a login first. It stops when the test ends.
func Start(t testing.TB, mode Mode, user, secret string) *Server {
	t.Helper()
	cert, certPEM := selfSigned(t)
	s := &Server{Host: "127.0.0.1", CAPEM: certPEM, User: user, Secret: secret, reject: map[string]bool{}}
	s.Roots = x509.NewCertPool()
	s.Roots.AppendCertsFromPEM(certPEM)
	srv := smtp.NewServer(smtp.BackendFunc(func(c *smtp.Conn) (smtp.Session, error) {
		return &session{s: s, c: c}, nil
	}))
	srv.Domain = "localhost"
	srv.ReadTimeout, srv.WriteTimeout = 20*time.Second, 20*time.Second
	srv.MaxMessageBytes = 64 << 20
	tlsConfig := &tls.Config{Certificates: []tls.Certificate{cert}, MinVersion: tls.VersionTLS12}
	if mode == StartTLS || mode == Implicit {
		srv.TLSConfig = tlsConfig
	}
	srv.AllowInsecureAuth = mode == NoTLSPlainAuth
	l, err := net.Listen("tcp", "127.0.0.1:0")
	if err != nil {
		t.Fatal(err)
	}
	s.Port = l.Addr().(*net.TCPAddr).Port
	if mode == Implicit {
		l = tls.NewListener(l, tlsConfig)
	}
	go func() { _ = srv.Serve(l) }()
	t.Cleanup(func() { srv.Close() })
	return s
}

// Addr is HOST:PORT.
func (s *Server) Addr() string { return net.JoinHostPort(s.Host, strconv.Itoa(s.Port)) }

// Reject makes the server refuse an address at RCPT TO (550 5.1.1), or accept it again.
func (s *Server) Reject(addr string, on bool) {
	s.mu.Lock()
	defer s.mu.Unlock()
	s.reject[strings.ToLower(addr)] = on
}

// Received returns the messages accepted so far.
func (s *Server) Received() []Received {
	s.mu.Lock()
	defer s.mu.Unlock()
	return append([]Received(nil), s.received...)
}

// Reset forgets the messages received so far.
func (s *Server) Reset() {
	s.mu.Lock()
	defer s.mu.Unlock()
	s.received = nil
}

// Logins counts the logins attempted (the password reached the server), refused or not.
func (s *Server) Logins() int {
	s.mu.Lock()
	defer s.mu.Unlock()
	return s.logins
}

// AuthFailures counts refused logins.
func (s *Server) AuthFailures() int {
	s.mu.Lock()
	defer s.mu.Unlock()
	return s.authFail
}

type session struct {
	s    *Server
	c    *smtp.Conn
	user string
	cur  Received
}

func (ss *session) AuthMechanisms() []string { return []string{sasl.Plain} }

func (ss *session) Auth(mech string) (sasl.Server, error) {
	return sasl.NewPlainServer(func(_, username, password string) error {
		ss.s.mu.Lock()
		ss.s.logins++
		ss.s.mu.Unlock()
		if username != ss.s.User || password != ss.s.Secret {
			ss.s.mu.Lock()
			ss.s.authFail++
			ss.s.mu.Unlock()
			return &smtp.SMTPError{Code: 535, EnhancedCode: smtp.EnhancedCode{5, 7, 8}, Message: "bad credentials"}
		}
		ss.user = username
		return nil
	}), nil
}

func (ss *session) Mail(from string, _ *smtp.MailOptions) error {
	if ss.s.User != "" && ss.user == "" {
		return smtp.ErrAuthRequired
	}
	ss.cur = Received{From: from, User: ss.user}
	return nil
}

func (ss *session) Rcpt(to string, _ *smtp.RcptOptions) error {
	ss.s.mu.Lock()
	refused := ss.s.reject[strings.ToLower(to)]
	ss.s.mu.Unlock()
	if refused {
		return &smtp.SMTPError{Code: 550, EnhancedCode: smtp.EnhancedCode{5, 1, 1}, Message: "mailbox " + to + " does not exist"}
	}
	ss.cur.To = append(ss.cur.To, to)
	return nil
}

func (ss *session) Data(r io.Reader) error {
	var buf bytes.Buffer
	if _, err := io.Copy(&buf, r); err != nil {
		return err
	}
	if len(ss.cur.To) == 0 {
		return errors.New("no recipients")
	}
	_, ss.cur.Encrypted = ss.c.TLSConnectionState()
	ss.cur.Data = buf.Bytes()
	ss.s.mu.Lock()
	ss.s.received = append(ss.s.received, ss.cur)
	ss.s.mu.Unlock()
	ss.cur = Received{}
	return nil
}

func (ss *session) Reset()        { ss.cur = Received{} }
func (ss *session) Logout() error { return nil }

// selfSigned makes an ECDSA P-256 certificate for 127.0.0.1 and localhost, valid for a day.
func selfSigned(t testing.TB) (tls.Certificate, []byte) {
	t.Helper()
	key, err := ecdsa.GenerateKey(elliptic.P256(), rand.Reader)
	if err != nil {
		t.Fatal(err)
	}
	tmpl := &x509.Certificate{
		SerialNumber:          big.NewInt(1),
		Subject:               pkix.Name{CommonName: "caseweave test SMTP"},
		NotBefore:             time.Now().Add(-time.Hour),
		NotAfter:              time.Now().Add(24 * time.Hour),
		KeyUsage:              x509.KeyUsageDigitalSignature | x509.KeyUsageCertSign,
		ExtKeyUsage:           []x509.ExtKeyUsage{x509.ExtKeyUsageServerAuth},
		IPAddresses:           []net.IP{net.ParseIP("127.0.0.1")},
		DNSNames:              []string{"localhost"},
		BasicConstraintsValid: true,
		IsCA:                  true,
	}
	der, err := x509.CreateCertificate(rand.Reader, tmpl, tmpl, &key.PublicKey, key)
	if err != nil {
		t.Fatal(err)
	}
	keyDER, err := x509.MarshalECPrivateKey(key)
	if err != nil {
		t.Fatal(err)
	}
	certPEM := pem.EncodeToMemory(&pem.Block{Type: "CERTIFICATE", Bytes: der})
	cert, err := tls.X509KeyPair(certPEM, pem.EncodeToMemory(&pem.Block{Type: "EC PRIVATE KEY", Bytes: keyDER}))
	if err != nil {
		t.Fatal(err)
	}
	return cert, certPEM
}
