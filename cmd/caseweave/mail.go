package main

import (
	"context"
	"crypto/sha256"
	"crypto/tls"
	"crypto/x509"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"io/fs"
	"net"
	"net/mail"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"time"

	"github.com/spf13/cobra"

	"github.com/caseweave/caseweave/cmd/internal/deliver"
	"github.com/caseweave/caseweave/cmd/internal/output"
	"github.com/caseweave/caseweave/pipeline/analysis"
	"github.com/caseweave/caseweave/pipeline/linelist"
	"github.com/caseweave/caseweave/render"
	"github.com/caseweave/caseweave/render/browser"
	"github.com/caseweave/caseweave/templates"
)

// exitMail: some message was not accepted by the server (the others were sent).
const exitMail = 5

// defaultPasswordEnv is the environment variable the SMTP password is read from.
const defaultPasswordEnv = "CASEWEAVE_SMTP_PASSWORD"

// mailFlags are the flags of mail, shared by report --mail.
type mailFlags struct {
	template     string
	dryRun       string
	server       string
	security     string
	insecure     bool
	user         string
	passwordEnv  string
	passwordFile string
	caFile       string
	noImage      bool
}

func (f *mailFlags) register(c *cobra.Command, withTemplate bool) {
	fl := c.Flags()
	if withTemplate {
		fl.StringVar(&f.template, "template", "", "template folder (mail.md, config.yaml with mail:), or a folder of per-report folders as for report --by")
	}
	fl.StringVar(&f.dryRun, "dry-run", "", "write each message as DIR/<report>.eml instead of sending")
	fl.StringVar(&f.server, "smtp", "", "SMTP server as HOST:PORT (port 587 uses STARTTLS, 465 TLS)")
	fl.StringVar(&f.security, "smtp-security", "", "starttls or tls (default: tls on port 465, starttls otherwise); the connection is always encrypted unless --insecure-smtp")
	fl.BoolVar(&f.insecure, "insecure-smtp", false, "send WITHOUT encryption: the messages cross the network readable by anyone on the way (a login then uses no mechanism that sends the password itself); only for a relay on a trusted network")
	fl.StringVar(&f.user, "smtp-user", "", "user name for SMTP authentication (the password is read from --password-env or --password-file)")
	fl.StringVar(&f.passwordEnv, "password-env", defaultPasswordEnv, "environment variable holding the SMTP password")
	fl.StringVar(&f.passwordFile, "password-file", "", "file holding the SMTP password, readable by its owner only (chmod 600)")
	fl.StringVar(&f.caFile, "smtp-ca", "", "PEM file of the certificate authorities to trust for the SMTP server (default: the system's)")
	fl.BoolVar(&f.noImage, "no-chart-image", false, "do not draw the epidemic curve as a picture (the body says where the chart is)")
}

func newMailCmd(e env) *cobra.Command {
	var f mailFlags
	c := &cobra.Command{
		Use:   "mail [flags] REPORT_DIR",
		Short: "Send each report of a report --by folder to its jurisdiction's recipients",
		Long: `mail reads the folder report --by wrote and sends each report to the recipients its
jurisdiction's config.yaml names (mail: from, to, cc, subject). The message has a plain-text
and an HTML part made from mail.md with the released figures only, the epidemic curve as a
picture, and the report's HTML (and PDF, when written) attached. --dry-run DIR writes the
messages as .eml files instead. Every attempt is recorded in REPORT_DIR/` + deliver.LogFile + `;
running the same command again sends only what failed. The exit code is ` + strconv.Itoa(exitMail) + ` when any
message was not accepted.`,
		Args: exactArgs(1, "the folder report --by wrote"),
		RunE: func(c *cobra.Command, args []string) error {
			return f.run(e, args[0])
		},
	}
	f.register(c, true)
	return c
}

// outgoing is one report's mail.
type outgoing struct {
	slug string
	msg  *deliver.Message
}

// mailSource is one report to mail: its released view and the files to attach.
type mailSource struct {
	slug      string
	rel       *analysis.Released
	html, pdf []byte
}

func (f *mailFlags) run(e env, dir string) error {
	if f.dryRun == "" {
		if _, err := f.serverConfig(); err != nil { // flags first: nothing is built for a bad command line
			return err
		}
	}
	slugs, err := reportSlugs(dir)
	if err != nil {
		return err
	}
	var srcs []mailSource
	for _, slug := range slugs {
		src, err := readSource(dir, slug)
		if err != nil {
			return fmt.Errorf("%s: %w", slug, err)
		}
		srcs = append(srcs, src)
	}
	return f.deliver(e, dir, srcs)
}

// deliver builds each report's message and writes (--dry-run) or sends them; dir is the
// report folder, which keeps the send log.
func (f *mailFlags) deliver(e env, dir string, srcs []mailSource) error {
	now := messageDate()
	var out []outgoing
	for _, src := range srcs {
		m, err := f.build(e, src, now)
		if err != nil {
			return fmt.Errorf("%s: %w", src.slug, err)
		}
		out = append(out, outgoing{src.slug, m})
	}
	if f.dryRun != "" {
		return f.writeDryRun(e, dir, out)
	}
	return f.send(e, dir, out)
}

// readSource reads one report of a report --by folder.
func readSource(dir, slug string) (mailSource, error) {
	src := mailSource{slug: slug}
	var err error
	if src.rel, err = releasedFrom(filepath.Join(dir, slug+".json")); err != nil {
		return src, err
	}
	if src.html, err = os.ReadFile(filepath.Join(dir, slug+".html")); err != nil {
		return src, withCode(exitInput, err)
	}
	if pdf, err := os.ReadFile(filepath.Join(dir, slug+".pdf")); err == nil {
		src.pdf = pdf
	}
	return src, nil
}

// reportSlugs lists the reports of a report --by folder: each <slug>.json with its
// <slug>.html beside it.
func reportSlugs(dir string) ([]string, error) {
	st, err := os.Stat(dir)
	if err != nil || !st.IsDir() {
		return nil, usageErrorf("%q is not a folder written by report --by", dir)
	}
	jsons, _ := filepath.Glob(filepath.Join(dir, "*.json"))
	var slugs []string
	for _, j := range jsons {
		slug := strings.TrimSuffix(filepath.Base(j), ".json")
		if _, err := os.Stat(filepath.Join(dir, slug+".html")); err == nil && slug != "index" {
			slugs = append(slugs, slug)
		}
	}
	if len(slugs) == 0 {
		return nil, withCode(exitInput, fmt.Errorf("%s holds no report (<name>.html with its <name>.json); write one with report --by", dir))
	}
	slices.Sort(slugs)
	return slugs, nil
}

// releasedFrom reads a report's JSON and releases it again under its own threshold, so the
// mail, like every stakeholder output, is made from an *analysis.Released even when the file
// is not what report wrote (an --internal-json document, an edited file). Releasing a
// released view shows nothing it withheld and withholds a little more: the strata's mean
// offspring, whose case counts the released view no longer carries
// (TestMailReleasesTheReportsView). report --mail mails the views it made instead.
func releasedFrom(path string) (*analysis.Released, error) {
	b, err := os.ReadFile(path)
	if err != nil {
		return nil, withCode(exitInput, err)
	}
	var s analysis.Summary
	if err := json.Unmarshal(b, &s); err != nil {
		return nil, withCode(exitInput, fmt.Errorf("%s is not a caseweave summary: %v", path, err))
	}
	rel, err := analysis.Release(&s, analysis.Policy{SuppressBelow: s.Settings.SuppressBelow})
	return rel, withCode(exitInput, err)
}

// mailTemplate finds the template folder and config of one report: the per-report folder
// TEMPLATE/<slug> when there is one, else TEMPLATE, else the default. The folder's mail.md
// is used when it has one, else the default's (a jurisdiction's folder may hold only its
// config.yaml).
func (f *mailFlags) mailTemplate(slug string) (fs.FS, render.Config, error) {
	dir := f.template
	if dir != "" {
		if st, err := os.Stat(filepath.Join(dir, slug)); err == nil && st.IsDir() {
			dir = filepath.Join(dir, slug)
		}
	}
	folder, err := openTemplateDir(dir)
	if err != nil {
		return nil, render.Config{}, err
	}
	cfg, err := render.LoadConfig(folder)
	if err != nil {
		return nil, render.Config{}, withCode(exitInput, err)
	}
	fsys := folder
	if _, err := fs.Stat(folder, render.MailTemplate); err != nil {
		fsys = templates.Default()
	}
	return fsys, cfg, nil
}

// build makes one report's message.
func (f *mailFlags) build(e env, src mailSource, date time.Time) (*deliver.Message, error) {
	slug, rel := src.slug, src.rel
	fsys, cfg, err := f.mailTemplate(slug)
	if err != nil {
		return nil, err
	}
	s := rel.Summary()
	if cfg.Jurisdiction == "" && s.Scope != nil && s.Scope.Column == linelist.ColJurisdiction {
		cfg.Jurisdiction = s.Scope.Value
	}
	if cfg.Mail.From == nil || len(cfg.Mail.To) == 0 {
		return nil, withCode(exitInput, errors.New("no sender or recipients: set mail.from and mail.to in the config.yaml of its template folder (--template)"))
	}
	attach := []deliver.File{{Name: slug + ".html", ContentType: "text/html", Data: src.html}}
	if src.pdf != nil {
		attach = append(attach, deliver.File{Name: slug + ".pdf", ContentType: "application/pdf", Data: src.pdf})
	}
	opts := render.MailOptions{Templates: fsys, Config: &cfg,
		ChartNote: "The chart is in the attached report, " + slug + ".html (open it in a web browser)."}
	var inline []deliver.File
	if png := f.chartImage(e, slug, rel, &cfg); png != nil {
		// A Content-ID is ASCII (RFC 2392); a report's name may not be.
		sum := sha256.Sum256([]byte(slug))
		cid := "epicurve." + hex.EncodeToString(sum[:6]) + "@caseweave.invalid"
		opts.Images = map[string]string{"epicurve": cid}
		inline = append(inline, deliver.File{Name: "epicurve.png", ContentType: "image/png", Data: png, ContentID: cid})
	}
	m, err := render.RenderMail(rel, opts)
	if err != nil {
		var te *render.TemplateError
		if errors.As(err, &te) {
			return nil, withCode(exitTemplate, err)
		}
		return nil, withCode(exitInput, err)
	}
	msg, err := deliver.Build(deliver.Parts{From: cfg.Mail.From, To: cfg.Mail.To, Cc: cfg.Mail.Cc,
		Subject: m.Subject, Text: m.Text, HTML: m.HTML, Inline: inline, Attach: attach,
		Date: date, Mailer: s.Tool.Name + " " + s.Tool.Version})
	return msg, withCode(exitInput, err)
}

// chartImage draws the epidemic curve with headless Chromium, or returns nil (with a note
// on stderr when a browser was there but failed) so the body says where the chart is.
func (f *mailFlags) chartImage(e env, slug string, rel *analysis.Released, cfg *render.Config) []byte {
	if f.noImage || !render.HasChart(rel, "epicurve") || browser.BrowserAvailable() != nil {
		return nil
	}
	page, err := render.ChartPage(rel, "epicurve", cfg)
	if err == nil {
		ctx, cancel := context.WithTimeout(context.Background(), pdfTimeout)
		defer cancel()
		var png []byte
		if png, err = browser.ScreenshotElement(ctx, page, "[data-cw-chart]"); err == nil {
			return png
		}
	}
	fmt.Fprintf(e.stderr, "note: %s: the epidemic curve could not be drawn as a picture (%v); the mail says where to find it\n", slug, err)
	return nil
}

// messageDate is the Date of the messages: now, or SOURCE_DATE_EPOCH (seconds since 1970,
// the reproducible-builds convention) when set, so a dry run can be repeated byte for byte.
func messageDate() time.Time {
	if v := os.Getenv("SOURCE_DATE_EPOCH"); v != "" {
		if n, err := strconv.ParseInt(v, 10, 64); err == nil {
			return time.Unix(n, 0).UTC()
		}
	}
	return time.Now().UTC()
}

func (f *mailFlags) writeDryRun(e env, reportDir string, out []outgoing) error {
	var tx output.Transaction
	var inputs []string
	for _, o := range out {
		tx.File(filepath.Join(f.dryRun, o.slug+".eml"), o.msg.EML)
		inputs = append(inputs, filepath.Join(reportDir, o.slug+".html"), filepath.Join(reportDir, o.slug+".json"))
	}
	if err := os.MkdirAll(f.dryRun, 0o755); err != nil {
		return withCode(exitOutput, err)
	}
	if err := refuseOverwrites(&tx, inputs); err != nil {
		return err
	}
	if err := commit(e, &tx); err != nil {
		return err
	}
	for _, o := range out {
		fmt.Fprintf(e.stdout, "%s: would send to %s\n", o.slug, addressList(o.msg))
	}
	fmt.Fprintf(e.stderr, "wrote %d messages to %s (nothing sent)\n", len(out), f.dryRun)
	return nil
}

func addressList(m *deliver.Message) string {
	var as []string
	for _, a := range m.Recipients {
		as = append(as, a.Address)
	}
	return strings.Join(as, ", ")
}

// serverConfig turns the flags into the server to send through, reading the password.
func (f *mailFlags) serverConfig() (deliver.Server, error) {
	var srv deliver.Server
	if f.server == "" {
		return srv, usageErrorf("--smtp HOST:PORT is needed to send (or --dry-run DIR to write the messages)")
	}
	host, port, err := net.SplitHostPort(f.server)
	if err != nil {
		return srv, usageErrorf("--smtp must be HOST:PORT, got %q", f.server)
	}
	srv.Host = host
	if srv.Port, err = strconv.Atoi(port); err != nil || srv.Port < 1 || srv.Port > 65535 {
		return srv, usageErrorf("--smtp port must be a number from 1 to 65535, got %q", port)
	}
	switch {
	case f.insecure:
		if f.security != "" {
			return srv, usageErrorf("--insecure-smtp and --smtp-security contradict each other; give one")
		}
		srv.Security = deliver.Plain
	case f.security == "tls" || (f.security == "" && srv.Port == 465):
		srv.Security = deliver.ImplicitTLS
	case f.security == "starttls" || f.security == "":
		srv.Security = deliver.StartTLS
	default:
		return srv, usageErrorf("--smtp-security must be starttls or tls, got %q", f.security)
	}
	srv.TLS = &tls.Config{ServerName: host, MinVersion: tls.VersionTLS12}
	if f.caFile != "" {
		pem, err := os.ReadFile(f.caFile)
		if err != nil {
			return srv, usageErrorf("--smtp-ca: %v", err)
		}
		pool := x509.NewCertPool()
		if !pool.AppendCertsFromPEM(pem) {
			return srv, usageErrorf("--smtp-ca %s holds no PEM certificate", f.caFile)
		}
		srv.TLS.RootCAs = pool
	}
	if f.user != "" {
		srv.Username = f.user
		pw, err := deliver.ReadPassword(f.passwordEnv, f.passwordFile, os.LookupEnv)
		if err != nil {
			return srv, usageErrorf("--smtp-user %s needs a password: %v (set %s, or give --password-file)", f.user, err, f.passwordEnv)
		}
		srv.Password = pw
	}
	return srv, nil
}

func (f *mailFlags) send(e env, dir string, out []outgoing) error {
	srv, err := f.serverConfig()
	if err != nil {
		return err
	}
	if srv.Security == deliver.Plain {
		fmt.Fprintf(e.stderr, "warning: --insecure-smtp: sending to %s without encryption; the messages can be read on the way\n", f.server)
	}
	logPath := filepath.Join(dir, deliver.LogFile)
	log, err := deliver.ReadLog(logPath)
	if err != nil {
		return withCode(exitInput, err)
	}
	slugOf := map[*deliver.Message]string{}
	var msgs []*deliver.Message
	for _, o := range out {
		slugOf[o.msg] = o.slug
		msgs = append(msgs, o.msg)
	}
	already := 0
	pending := func(m *deliver.Message, r *mail.Address) bool {
		if log.Sent(m.ID, r.Address) {
			already++
			return false
		}
		return true
	}
	var logErr error
	sent, failed := 0, 0
	done := func(r deliver.Result) {
		log.Record(slugOf[r.Message], r, time.Now())
		if r.Err == nil {
			sent++
			fmt.Fprintf(e.stdout, "sent    %s to %s\n", slugOf[r.Message], r.Recipient.Address)
		} else {
			failed++
			fmt.Fprintf(e.stdout, "FAILED  %s to %s: %v\n", slugOf[r.Message], r.Recipient.Address, r.Err)
		}
		// The log is rewritten after each attempt, so an interrupted run still knows what went.
		if b, err := log.JSON(); err == nil {
			if err := output.WriteFile(logPath, b); err != nil && logErr == nil {
				logErr = err
			}
		}
	}
	deliver.Send(context.Background(), srv, msgs, pending, done)
	if already > 0 {
		fmt.Fprintf(e.stdout, "skipped %d already sent (see %s)\n", already, logPath)
	}
	fmt.Fprintf(e.stdout, "%d sent, %d failed\n", sent, failed)
	if logErr != nil {
		return withCode(exitOutput, fmt.Errorf("the send log %s could not be written: %w", logPath, logErr))
	}
	if failed > 0 {
		return &exitError{exitMail, fmt.Errorf("%d of %d messages were not accepted; run the same command again to send only those (the log is %s)", failed, sent+failed, logPath)}
	}
	return nil
}
