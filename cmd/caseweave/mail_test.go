package main

import (
	"bytes"
	"encoding/json"
	"fmt"
	"html"
	"mime"
	"os"
	"path/filepath"
	"regexp"
	"slices"
	"strings"
	"testing"

	"github.com/caseweave/caseweave/cmd/internal/deliver"
	"github.com/caseweave/caseweave/cmd/internal/smtptest"
	"github.com/caseweave/caseweave/render"
)

// mailTemplates is the demo's recipients (examples/mail: one folder per jurisdiction).
const mailTemplates = "../../examples/mail"

// demoRecipients are the addresses examples/mail names, by report.
var demoRecipients = map[string][]string{
	"marrowfield": {"health-office@marrowfield.example", "duty@marrowfield.example", "archive@vell-estuary.example"},
	"ostvale":     {"health-office@ostvale.example", "duty@ostvale.example", "archive@vell-estuary.example"},
	"quillan-bay": {"health-office@quillan-bay.example", "duty@quillan-bay.example", "archive@vell-estuary.example"},
}

// mailParts returns the plain-text and HTML parts of a message and its other parts.
func mailParts(t *testing.T, eml []byte) (text, htm string, parts []smtptest.Part) {
	t.Helper()
	_, parts, err := smtptest.Parse(eml)
	if err != nil {
		t.Fatalf("the message does not parse: %v", err)
	}
	for _, p := range parts {
		switch {
		case p.ContentType == "text/plain" && p.Disposition == "":
			text = string(p.Body)
		case p.ContentType == "text/html" && p.Disposition == "":
			htm = string(p.Body)
		}
	}
	return text, htm, parts
}

var (
	numberRE = regexp.MustCompile(`\d[\d,]*(?:\.\d+)?%?`)
	tagRE    = regexp.MustCompile(`<[^>]*>`)
)

// numbersOf lists the numbers of a text in order.
func numbersOf(s string) []string { return numberRE.FindAllString(s, -1) }

// Each jurisdiction's report goes to each of its recipients once, through a server that
// requires TLS and a password; a refused recipient is reported, the run exits 5, and the
// retry sends to that recipient only.
func TestMailSendsEachReportAndRetriesTheFailed(t *testing.T) {
	dir := demoBatch(t)
	srv := smtptest.Start(t, smtptest.StartTLS, "analyst", "Vell-pw 2026")
	srv.Reject("duty@ostvale.example", true)
	tmp := t.TempDir()
	ca := filepath.Join(tmp, "ca.pem")
	os.WriteFile(ca, srv.CAPEM, 0o600)
	pw := filepath.Join(tmp, "pw")
	os.WriteFile(pw, []byte("Vell-pw 2026\n"), 0o600)
	args := []string{"mail", "--template", mailTemplates, "--smtp", srv.Addr(), "--smtp-ca", ca,
		"--smtp-user", "analyst", "--password-file", pw, "--no-chart-image", dir}

	code, stdout, stderr := cli(t, args...)
	if code != exitMail {
		t.Fatalf("exit %d with a refused recipient, want %d\n%s%s", code, exitMail, stdout, stderr)
	}
	if !strings.Contains(stdout, "FAILED  ostvale to duty@ostvale.example: the server refused the recipient: 550") ||
		!strings.Contains(stdout, "8 sent, 1 failed") || !strings.Contains(stderr, "run the same command again") {
		t.Errorf("the summary does not say what failed and why:\n%s%s", stdout, stderr)
	}
	for _, out := range []string{stdout, stderr} {
		if strings.Contains(out, "Vell-pw") {
			t.Error("the password was printed")
		}
	}
	logb, _ := os.ReadFile(filepath.Join(dir, deliver.LogFile))
	if bytes.Contains(logb, []byte("Vell-pw")) || !bytes.Contains(logb, []byte(`"recipient": "duty@ostvale.example"`)) {
		t.Errorf("the send log holds the password or lacks the failure:\n%s", logb)
	}
	got := srv.Received()
	per := map[string]int{}
	for _, g := range got {
		if !g.Encrypted || g.User != "analyst" {
			t.Error("a message went unencrypted or unauthenticated")
		}
		for _, to := range g.To {
			per[to]++
		}
		msg, _, _ := smtptest.Parse(g.Data)
		subject, _ := new(mime.WordDecoder).DecodeHeader(msg.Header.Get("Subject"))
		slug := ""
		for s := range demoRecipients {
			if strings.Contains(strings.ToLower(strings.ReplaceAll(subject, " ", "-")), s) {
				slug = s
			}
		}
		if slug == "" {
			t.Fatalf("subject %q names no demo jurisdiction", subject)
		}
		text, htm, parts := mailParts(t, g.Data)
		// The report arrives byte for byte.
		want, _ := os.ReadFile(filepath.Join(dir, slug+".html"))
		found := false
		for _, p := range parts {
			if p.Disposition == "attachment" && p.Filename == slug+".html" {
				found = bytes.Equal(p.Body, want)
			}
		}
		if !found {
			t.Errorf("%s: the report attachment is missing or changed", slug)
		}
		if tag := render.ExternalReference([]byte(htm)); tag != "" || strings.Contains(strings.ToLower(htm), "<script") {
			t.Errorf("%s: the HTML part runs script or refers outside the message: %s", slug, tag)
		}
		// The plain part carries the same numbers as the HTML part, in the same order.
		shown := html.UnescapeString(tagRE.ReplaceAllString(htm[strings.Index(htm, "<body"):], " "))
		if a, b := numbersOf(text), numbersOf(shown); !slices.Equal(a, b) || len(a) < 20 {
			t.Errorf("%s: the parts' numbers differ:\nplain %v\nhtml  %v", slug, a, b)
		}
		// And they are the released summary's, as the report prints them.
		rel := readSummary(t, filepath.Join(dir, slug+".json"))
		r := fmt.Sprintf("%.2f", *rel.Offspring.R.Estimate)
		if !strings.Contains(text, "average "+r+" (95% CI") {
			t.Errorf("%s: the plain part lacks R = %s", slug, r)
		}
	}
	for slug, rs := range demoRecipients {
		for _, r := range rs {
			want := 1
			if strings.HasPrefix(r, "archive@") {
				want = 3 // copied on every jurisdiction's mail
			}
			if r == "duty@ostvale.example" {
				want = 0
			}
			if per[r] != want {
				t.Errorf("%s: %s received %d messages, want %d", slug, r, per[r], want)
			}
		}
	}
	// The retry sends only the refused one.
	srv.Reset()
	srv.Reject("duty@ostvale.example", false)
	code, stdout, stderr = cli(t, args...)
	got = srv.Received()
	if code != 0 || len(got) != 1 || got[0].To[0] != "duty@ostvale.example" || !strings.Contains(stdout, "skipped 8 already sent") {
		t.Fatalf("retry: exit %d, %d messages (%v)\n%s%s", code, len(got), got, stdout, stderr)
	}
	// A third run has nothing left to send.
	srv.Reset()
	if code, stdout, _ = cli(t, args...); code != 0 || len(srv.Received()) != 0 || !strings.Contains(stdout, "0 sent, 0 failed") {
		t.Errorf("a run after everything went: exit %d, %d sent\n%s", code, len(srv.Received()), stdout)
	}
}

// The password is read only from an owner-only file or the environment; TLS is not given up
// for a server that lacks it; and report --mail sends in one go.
func TestMailRefusesUnsafeSettings(t *testing.T) {
	dir := demoBatch(t)
	srv := smtptest.Start(t, smtptest.StartTLS, "analyst", "pw-123456")
	tmp := t.TempDir()
	ca := filepath.Join(tmp, "ca.pem")
	os.WriteFile(ca, srv.CAPEM, 0o600)
	open := filepath.Join(tmp, "pw-open")
	os.WriteFile(open, []byte("pw-123456\n"), 0o644)
	os.Chmod(open, 0o644)
	base := []string{"mail", "--template", mailTemplates, "--smtp", srv.Addr(), "--smtp-ca", ca, "--smtp-user", "analyst", "--no-chart-image"}
	code, _, stderr := cli(t, append(base, "--password-file", open, dir)...)
	if code != exitUsage || !strings.Contains(stderr, "chmod 600") || strings.Contains(stderr, "pw-123456") {
		t.Errorf("a password file others can read: exit %d: %s", code, stderr)
	}
	t.Setenv("CASEWEAVE_TEST_PW", "")
	if code, _, stderr := cli(t, append(base, "--password-env", "CASEWEAVE_TEST_PW", dir)...); code != exitUsage || !strings.Contains(stderr, "CASEWEAVE_TEST_PW") {
		t.Errorf("no password: exit %d: %s", code, stderr)
	}
	if len(srv.Received()) != 0 {
		t.Error("something was sent without a usable password")
	}
	plain := smtptest.Start(t, smtptest.NoTLS, "analyst", "pw-123456")
	t.Setenv("CASEWEAVE_TEST_PW", "pw-123456")
	code, stdout, _ := cli(t, "mail", "--template", mailTemplates, "--smtp", plain.Addr(), "--smtp-user", "analyst", "--password-env", "CASEWEAVE_TEST_PW", "--no-chart-image", dir)
	if code != exitMail || len(plain.Received()) != 0 || !strings.Contains(stdout, "STARTTLS") {
		t.Errorf("a server without TLS: exit %d, %d sent\n%s", code, len(plain.Received()), stdout)
	}
	// --insecure-smtp sends without TLS, saying so, and only when asked.
	open2 := smtptest.Start(t, smtptest.NoTLS, "", "")
	code, stdout, stderr = cli(t, "mail", "--template", mailTemplates, "--smtp", open2.Addr(), "--no-chart-image", dir)
	if code != exitMail || len(open2.Received()) != 0 {
		t.Errorf("without --insecure-smtp a server without TLS was used: exit %d, %d sent", code, len(open2.Received()))
	}
	code, stdout, stderr = cli(t, "mail", "--template", mailTemplates, "--smtp", open2.Addr(), "--insecure-smtp", "--no-chart-image", dir)
	if code != 0 || len(open2.Received()) != 9 || open2.Received()[0].Encrypted || !strings.Contains(stderr, "without encryption") {
		t.Errorf("--insecure-smtp: exit %d, %d sent\n%s%s", code, len(open2.Received()), stdout, stderr)
	}
	// A login over plain text never sends the password itself: this server offers only PLAIN.
	clear := smtptest.Start(t, smtptest.NoTLSPlainAuth, "analyst", "pw-123456")
	os.Remove(filepath.Join(dir, deliver.LogFile)) // the messages went above; send them again
	code, stdout, _ = cli(t, "mail", "--template", mailTemplates, "--smtp", clear.Addr(), "--insecure-smtp", "--smtp-user", "analyst", "--password-env", "CASEWEAVE_TEST_PW", "--no-chart-image", dir)
	if code != exitMail || len(clear.Received()) != 0 || clear.AuthFailures() != 0 || clear.Logins() != 0 {
		t.Errorf("PLAIN over plain text: exit %d, %d sent, %d logins\n%s", code, len(clear.Received()), clear.Logins(), stdout)
	}
	if code, _, stderr := cli(t, "mail", "--template", mailTemplates, "--smtp", srv.Addr(), "--insecure-smtp", "--smtp-security", "tls", dir); code != exitUsage {
		t.Errorf("--insecure-smtp with --smtp-security: exit %d: %s", code, stderr)
	}
	if code, _, stderr := cli(t, "mail", dir); code != exitUsage || !strings.Contains(stderr, "--smtp") {
		t.Errorf("no server and no dry run: exit %d: %s", code, stderr)
	}
	// Without recipients (the default template has none) nothing is built.
	if code, _, stderr := cli(t, "mail", "--dry-run", filepath.Join(tmp, "eml"), dir); code != exitInput || !strings.Contains(stderr, "mail.to") {
		t.Errorf("no recipients: exit %d: %s", code, stderr)
	}
	// report --mail: the batch, then its mail, in one command.
	list := filepath.Join(dir, "vell-estuary-linelist.csv")
	out := filepath.Join(tmp, "batch")
	code, stdout, stderr = cli(t, append([]string{"report", "--as-of", demoAsOf, "--bootstrap", "200", "--by", "jurisdiction", "-o", out, "--mail", "--template", mailTemplates,
		"--smtp", srv.Addr(), "--smtp-ca", ca, "--smtp-user", "analyst", "--password-env", "CASEWEAVE_TEST_PW", "--no-chart-image"}, list)...)
	if code != 0 || len(srv.Received()) != 9 || !strings.Contains(stdout, "9 sent, 0 failed") {
		t.Errorf("report --mail: exit %d, %d sent\n%s%s", code, len(srv.Received()), stdout, stderr)
	}
	if code, _, _ := cli(t, "report", "--mail", "--dry-run", tmp, list); code != exitUsage {
		t.Errorf("report --mail without --by: exit %d", code)
	}
}

// The demo's dry run writes one .eml per jurisdiction that Go's net/mail and mime/multipart
// read as the expected message: plain text and HTML alternatives, the epidemic curve as an
// inline picture the HTML part shows by its Content-ID, and the report attached. The same run
// gives the same bytes.
func TestMailDryRunOfTheDemo(t *testing.T) {
	needBrowser(t)
	dir := demoBatch(t)
	out := filepath.Join(t.TempDir(), "outbox")
	t.Setenv("SOURCE_DATE_EPOCH", "1795770000")
	code, stdout, stderr := cli(t, "mail", "--template", mailTemplates, "--dry-run", out, dir)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	if !strings.Contains(stdout, "ostvale: would send to health-office@ostvale.example, duty@ostvale.example, archive@vell-estuary.example") {
		t.Errorf("the dry run does not say who would receive what:\n%s", stdout)
	}
	for slug, rcpts := range demoRecipients {
		eml, err := os.ReadFile(filepath.Join(out, slug+".eml"))
		if err != nil {
			t.Fatal(err)
		}
		msg, _, err := smtptest.Parse(eml)
		if err != nil {
			t.Fatal(err)
		}
		to, _ := msg.Header.AddressList("To")
		cc, _ := msg.Header.AddressList("Cc")
		if len(to) != 2 || to[0].Address != rcpts[0] || to[1].Address != rcpts[1] || len(cc) != 1 || cc[0].Address != rcpts[2] {
			t.Errorf("%s: To %v, Cc %v", slug, to, cc)
		}
		text, htm, parts := mailParts(t, eml)
		var kinds []string
		cid := ""
		for _, p := range parts {
			kinds = append(kinds, p.ContentType+":"+p.Disposition)
			if p.ContentType == "image/png" {
				cid = p.ContentID
				if !bytes.HasPrefix(p.Body, []byte("\x89PNG\r\n\x1a\n")) || len(p.Body) < 10000 {
					t.Errorf("%s: the picture is not a PNG of a drawn chart (%d bytes)", slug, len(p.Body))
				}
			}
		}
		if got := strings.Join(kinds, " "); got != "text/plain: text/html: image/png:inline text/html:attachment" {
			t.Errorf("%s: parts %s", slug, got)
		}
		if cid == "" || !strings.Contains(htm, `src="cid:`+cid+`"`) {
			t.Errorf("%s: the HTML part does not show the picture (cid %q)", slug, cid)
		}
		if !strings.Contains(text, "The chart is in the attached report, "+slug+".html") {
			t.Errorf("%s: the plain part does not say where the chart is", slug)
		}
	}
	again := filepath.Join(t.TempDir(), "outbox")
	if code, _, stderr := cli(t, "mail", "--template", mailTemplates, "--dry-run", again, dir); code != 0 {
		t.Fatal(stderr)
	}
	for slug := range demoRecipients {
		a, _ := os.ReadFile(filepath.Join(out, slug+".eml"))
		b, _ := os.ReadFile(filepath.Join(again, slug+".eml"))
		if !bytes.Equal(a, b) {
			t.Errorf("%s: two dry runs of the same batch differ", slug)
		}
	}
	// Without a picture the HTML part says where the chart is.
	noimg := filepath.Join(t.TempDir(), "outbox")
	if code, _, stderr := cli(t, "mail", "--template", mailTemplates, "--dry-run", noimg, "--no-chart-image", dir); code != 0 {
		t.Fatal(stderr)
	}
	eml, _ := os.ReadFile(filepath.Join(noimg, "ostvale.eml"))
	if _, htm, _ := mailParts(t, eml); strings.Contains(htm, "<img") || !strings.Contains(htm, "The chart is in the attached report, ostvale.html") {
		t.Error("without a picture the HTML part should say where the chart is")
	}
}

// caseweave mail makes its view from the report's released JSON, released once more under
// its own threshold: every figure is the report's or withheld, and only the strata's mean
// offspring (whose case counts the released JSON does not carry) are withheld anew.
func TestMailReleasesTheReportsView(t *testing.T) {
	dir := sharedDemo(t)
	for slug := range demoRecipients {
		path := filepath.Join(dir, slug+".json")
		rel, err := releasedFrom(path)
		if err != nil {
			t.Fatal(err)
		}
		again, err := marshalJSON(rel.Summary())
		if err != nil {
			t.Fatal(err)
		}
		want, _ := os.ReadFile(path)
		var a, w any
		if err := json.Unmarshal(again, &a); err != nil {
			t.Fatal(err)
		}
		json.Unmarshal(want, &w)
		var changed []string
		var walk func(p string, a, w any)
		walk = func(p string, a, w any) {
			switch wv := w.(type) {
			case map[string]any:
				am, _ := a.(map[string]any)
				for k := range wv {
					walk(p+"."+k, am[k], wv[k])
				}
			case []any:
				as, _ := a.([]any)
				if len(as) != len(wv) {
					changed = append(changed, p+" (length)")
					return
				}
				for i := range wv {
					walk(p+"[]", as[i], wv[i])
				}
			default:
				if fmt.Sprint(a) != fmt.Sprint(w) {
					if a != nil {
						t.Errorf("%s: %s is %v in the mail's view, %v in the report", slug, p, a, w)
					}
					changed = append(changed, p)
				}
			}
		}
		walk("", a, w)
		for _, c := range changed {
			if c != ".strata[].mean_offspring" {
				t.Errorf("%s: %s withheld anew", slug, c)
			}
		}
	}
}
