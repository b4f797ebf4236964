package main

import (
	"crypto/sha256"
	"encoding/hex"
	"unicode"
	"unicode/utf8"

	"golang.org/x/text/unicode/norm"

	"errors"
	"fmt"
	"github.com/caseweave/caseweave/cmd/internal/history"
	"github.com/caseweave/caseweave/cmd/internal/output"
	"io/fs"
	"os"
	"path/filepath"
	"sort"
	"strings"

	"github.com/spf13/cobra"

	"github.com/caseweave/caseweave/pipeline/analysis"
	"github.com/caseweave/caseweave/pipeline/linelist"
	"github.com/caseweave/caseweave/render"
	"github.com/caseweave/caseweave/templates"
)

// reportFlags are report's own flags, on top of estimate's.
type reportFlags struct {
	estimateFlags
	// categories are the settings of the whole line list, which colour every report alike.
	categories []string
	template   string
	out        string
	tablesDir  string
	by         string
	pdf        bool
	showIDs    bool
	incub      int
	mail       bool
	mailFlags  mailFlags
	// backtest adds the backtest of the report's own line list (analysis.RunBacktest).
	backtest bool
	// templateConfig is set when the config was taken from the --template folder.
	templateConfig bool
	// pseudonyms are the batch's, one per pseudonym key.
	pseudonyms map[string]*analysis.Pseudonyms
	// inputPaths are the line lists read; extra are more files for a --by batch's folder
	// (the demo's line list).
	inputPaths []string
	extra      map[string][]byte
	// archive is the run archive of --history, nil without one.
	archive *history.Archive
}

func newReportCmd(e env) *cobra.Command { return reportCommand(e, nil) }

// reportCommand is the report command; extra files go into a --by batch's folder.
func reportCommand(e env, extra map[string][]byte) *cobra.Command {
	f := reportFlags{extra: extra}
	c := &cobra.Command{
		Use:   "report [flags] LINELIST...",
		Short: "Write the self-contained HTML report (one per jurisdiction with --by)",
		Long: `report runs the whole analysis and renders a self-contained HTML report from a template
folder (Markdown with template actions; the built-in default unless --template is given).
The HTML carries its style sheet and chart library inline and makes no network request.
With --by COLUMN, -o names a directory that receives one <slug>.html and <slug>.json per
value of the column, and an index.html linking them. Case identifiers are pseudonymised
unless --show-ids is given; small counts in stratified tables are suppressed.`,
		Args: lineListArgs,
		RunE: func(c *cobra.Command, args []string) error {
			return f.run(c, e, args)
		},
	}
	f.estimateFlags.register(c)
	fl := c.Flags()
	fl.StringVar(&f.template, "template", "", "template folder (report.md, partials, style.css, config.yaml); with --by, a folder of per-value folders")
	fl.StringVarP(&f.out, "output", "o", "", "report file to write (default report.html; with --by, a directory, default reports)")
	fl.StringVar(&f.tablesDir, "tables", "", "also write each table of the report as CSV into DIR")
	fl.StringVar(&f.by, "by", "", "one report per value of this column: "+strings.Join(linelist.StratumColumns(), ", "))
	fl.BoolVar(&f.pdf, "pdf", false, "also print each report to PDF with headless Chromium")
	fl.IntVar(&f.incub, "incubation-days", 0, "longest incubation period in days, for the end-of-outbreak rule of thumb (overrides the template config's incubation_days)")
	fl.BoolVar(&f.showIDs, "show-ids", false, "print case identifiers as they are instead of pseudonyms")
	fl.BoolVar(&f.backtest, "backtest", false, "add a section scoring the forecasts past analysis dates would have made (as caseweave backtest --every 7)")
	fl.BoolVar(&f.mail, "mail", false, "with --by, then send each report as caseweave mail does (see 'caseweave mail --help')")
	f.mailFlags.register(c, false)
	return c
}

// page is one rendered report, kept in memory until every report of the run has succeeded.
type page struct {
	slug, value  string
	html, json   []byte
	pdf          []byte
	internalJSON []byte
	tables       []render.TableFile
	released     *analysis.Released
	internal     *analysis.Summary
	hist         *history.Run // what the run archive records, nil without one
}

func (f *reportFlags) run(c *cobra.Command, e env, paths []string) error {
	byCol, ok := stratumColumn(f.by)
	if f.by != "" && !ok {
		return usageErrorf("--by must be one of %s, got %q", strings.Join(linelist.StratumColumns(), ", "), f.by)
	}
	if f.mail {
		if f.by == "" {
			return usageErrorf("--mail needs --by: each jurisdiction's report goes to its own recipients")
		}
		if f.mailFlags.dryRun == "" {
			if _, err := f.mailFlags.serverConfig(); err != nil {
				return err
			}
		}
		f.mailFlags.template = f.template
	}
	tmplRoot, err := openTemplateDir(f.template)
	if err != nil {
		return err
	}
	// One report from a template folder reads its export with the folder's own config
	// (unless --config names another), parsed once for the reader and the report.
	if f.config == "" && f.template != "" && f.by == "" {
		if _, err := os.Stat(filepath.Join(f.template, render.ConfigFile)); err == nil {
			f.config, f.templateConfig = filepath.Join(f.template, render.ConfigFile), true
		}
	}
	for _, p := range paths {
		if p != linelist.StdinPath {
			f.inputPaths = append(f.inputPaths, p)
		}
	}
	ld, err := f.load(e, paths)
	if err != nil {
		return err
	}
	f.categories = analysis.SettingLabels(ld.list.Cases)
	if f.archive, err = f.openHistory(ld.config); err != nil {
		return err
	}
	defer f.archive.Close()
	var pages []page
	if f.by == "" {
		p, err := f.one(c, e, ld, tmplRoot, nil)
		if err != nil {
			return err
		}
		pages = append(pages, p)
	} else {
		// With --by, --template DIR may hold one folder per value (DIR/<slug>/report.md);
		// a value without one uses DIR itself when it is a template, else the default.
		fallback := tmplRoot
		if f.template != "" {
			if _, err := os.Stat(filepath.Join(f.template, render.MainTemplate)); err != nil {
				fallback = templates.Default()
			}
		}
		values := strataValues(ld.list.Cases, byCol)
		names := fileNames(values)
		for _, v := range values {
			sel := func(cs *linelist.Case) bool { return byCol.Stratum(cs) == v }
			fsys := fallback
			if f.template != "" {
				if sub, ok := valueTemplate(f.template, slugBase(v)); ok {
					fsys = sub
				}
			}
			p, err := f.one(c, e, ld, fsys, &scoped{value: v, sel: sel})
			if err != nil {
				return fmt.Errorf("%s %q: %w", f.by, v, err)
			}
			p.slug = names[v]
			pages = append(pages, p)
		}
	}
	if err := f.write(e, pages, f.extra); err != nil {
		return err
	}
	if err := record(f.archive, archiveRuns(pages)); err != nil {
		return err
	}
	if f.mail {
		srcs := make([]mailSource, len(pages))
		for i, p := range pages {
			srcs[i] = mailSource{slug: p.slug, rel: p.released, html: p.html, pdf: p.pdf}
		}
		return f.mailFlags.deliver(e, f.batchDir(), srcs)
	}
	return nil
}

// batchDir is the folder a --by run writes.
func (f *reportFlags) batchDir() string {
	if f.out == "" {
		return "reports"
	}
	return f.out
}

type scoped struct {
	value string
	sel   func(*linelist.Case) bool
}

// one analyses and renders one report.
func (f *reportFlags) one(c *cobra.Command, e env, ld *loaded, fsys fs.FS, sc *scoped) (page, error) {
	var rc render.Config
	if f.templateConfig {
		rc = *ld.config
	} else {
		var err error
		if rc, err = render.LoadConfig(fsys); err != nil {
			return page{}, withCode(exitInput, err)
		}
	}
	o, err := f.options(c, e, ld)
	if err != nil {
		return page{}, err
	}
	if f.incub < 0 {
		return page{}, usageErrorf("--incubation-days must be positive, got %d", f.incub)
	}
	if f.incub > 0 {
		rc.IncubationDays = &f.incub
	}
	if rc.IncubationDays != nil {
		o.IncubationDays = *rc.IncubationDays
	}
	p := page{slug: "report"}
	if sc != nil {
		o.Select = sc.sel
		o.Scope = &analysis.Scope{Column: f.by, Value: sc.value}
		p.value = sc.value
		if rc.Jurisdiction == "" && f.by == linelist.ColJurisdiction {
			rc.Jurisdiction = sc.value
		}
	}
	s, err := runAnalysis(ld, o)
	if err != nil {
		return page{}, err
	}
	if f.backtest {
		if s.Backtest, err = analysis.RunBacktest(ld.list, o, analysis.BacktestOptions{}); err != nil {
			return page{}, withCode(exitInput, err)
		}
	}
	if err := annotate(f.archive, s, archiveKey(&rc, sc, f.by), ld, o.Select); err != nil {
		return page{}, err
	}
	rel, err := analysis.Release(s, f.policy(rc))
	if err != nil {
		return page{}, withCode(exitInput, err)
	}
	html, err := render.Render(rel, render.Options{Templates: fsys, Config: &rc, Categories: f.categories})
	if err != nil {
		var te *render.TemplateError
		var fe *linelist.FileError
		switch {
		case errors.As(err, &te):
			return page{}, withCode(exitTemplate, err)
		case errors.As(err, &fe):
			return page{}, withCode(exitInput, err)
		}
		return page{}, withCode(exitOutput, err)
	}
	p.html, p.released, p.internal = html, rel, s
	if p.json, err = marshalJSON(rel.Summary()); err != nil {
		return page{}, withCode(exitOutput, err)
	}
	if f.archive != nil {
		r := archiveRun(archiveKey(&rc, sc, f.by), s, rel, p.json, ld, o.Select)
		p.hist = &r
	}
	if f.internalJSON != "" {
		if p.internalJSON, err = marshalJSON(s); err != nil {
			return page{}, withCode(exitOutput, err)
		}
	}
	if f.tablesDir != "" {
		if p.tables, err = render.Tables(rel); err != nil {
			return page{}, withCode(exitOutput, err)
		}
	}
	if f.pdf {
		if p.pdf, err = printPDF(html); err != nil {
			return page{}, withCode(exitOutput, err)
		}
	}
	return p, nil
}

// write puts every file of the run in place as one transaction, only after all reports have
// rendered: a failed or interrupted run leaves earlier output as it was (see output).
func (f *reportFlags) write(e env, pages []page, extra map[string][]byte) error {
	var tx output.Transaction
	var stdout [][]byte
	toFile := func(path string, data []byte) {
		switch path {
		case "":
		case "-":
			stdout = append(stdout, data)
		default:
			tx.File(path, data)
		}
	}
	var wrote string
	if f.by == "" {
		p := pages[0]
		out := f.out
		if out == "" {
			out = "report.html"
		}
		tx.File(out, p.html)
		if f.pdf {
			tx.File(strings.TrimSuffix(out, filepath.Ext(out))+".pdf", p.pdf)
		}
		toFile(f.jsonOut, p.json)
		toFile(f.internalJSON, p.internalJSON)
		if f.tablesDir != "" {
			tables := tx.Folder(f.tablesDir)
			for _, t := range p.tables {
				tables.Add(t.Name, t.Data)
			}
		}
		wrote = out
	} else {
		dir := f.batchDir()
		batch := tx.Folder(dir)
		for name, data := range extra {
			batch.Add(name, data)
		}
		var tables, internal *output.Folder
		if f.tablesDir != "" {
			tables = tx.Folder(f.tablesDir)
		}
		if f.internalJSON != "" {
			internal = tx.Folder(f.internalJSON)
			internal.Private = true
		}
		var entries []render.IndexEntry
		for _, p := range pages {
			batch.Add(p.slug+".html", p.html)
			batch.Add(p.slug+".json", p.json)
			if f.pdf {
				batch.Add(p.slug+".pdf", p.pdf)
			}
			for _, t := range p.tables {
				tables.Add(p.slug+"/"+t.Name, t.Data)
			}
			if internal != nil {
				internal.Add(p.slug+".json", p.internalJSON)
			}
			entries = append(entries, render.IndexEntry{Value: p.value, File: p.slug + ".html", Report: p.released})
		}
		idx, err := render.Index(f.by, entries)
		if err != nil {
			return withCode(exitOutput, err)
		}
		batch.Add("index.html", idx)
		if f.jsonOut != "" {
			fmt.Fprintln(e.stderr, "note: with --by, each value's summary is written as <slug>.json beside its report; --json is ignored")
		}
		wrote = fmt.Sprintf("%d reports and index.html to %s", len(pages), dir)
	}
	if err := refuseOverwrites(&tx, f.inputs()); err != nil {
		return err
	}
	if err := commit(e, &tx); err != nil {
		return err
	}
	for _, b := range stdout {
		if _, err := e.stdout.Write(b); err != nil {
			return withCode(exitOutput, err)
		}
	}
	fmt.Fprintf(e.stderr, "wrote %s\n", wrote)
	return nil
}

// inputs are the files this run reads, which no output may replace.
func (f *reportFlags) inputs() []string {
	in := append([]string(nil), f.inputPaths...)
	if f.config != "" {
		in = append(in, f.config)
	}
	return in
}

// policy is the disclosure policy of a report under config rc: its threshold, and the
// batch's pseudonyms for its key (one label per person in every report that shares the key),
// or none with --show-ids.
func (f *reportFlags) policy(rc render.Config) analysis.Policy {
	p := analysis.Policy{SuppressBelow: rc.SuppressBelow}
	if f.showIDs {
		return p
	}
	if f.pseudonyms == nil {
		f.pseudonyms = map[string]*analysis.Pseudonyms{}
	}
	if f.pseudonyms[rc.PseudonymKey] == nil {
		f.pseudonyms[rc.PseudonymKey] = analysis.NewPseudonyms(rc.PseudonymKey)
	}
	p.Pseudonyms = f.pseudonyms[rc.PseudonymKey]
	return p
}

func marshalJSON(v any) ([]byte, error) {
	b, err := jsonIndent(v)
	if err != nil {
		return nil, err
	}
	return append(b, '\n'), nil
}

// openTemplateDir returns the template folder's file system (the embedded default when
// dir is empty). Templates read only inside it: the folder is opened as an os.Root, which
// refuses paths — and symbolic links — that lead outside it.
func openTemplateDir(dir string) (fs.FS, error) {
	if dir == "" {
		return templates.Default(), nil
	}
	st, err := os.Stat(dir)
	if err != nil || !st.IsDir() {
		return nil, usageErrorf("--template %q is not a folder", dir)
	}
	root, err := os.OpenRoot(dir)
	if err != nil {
		return nil, usageErrorf("--template %q cannot be opened: %v", dir, err)
	}
	return root.FS(), nil
}

// valueTemplate finds the per-value template folder DIR/<slug>, if it has a report.md.
func valueTemplate(dir, slug string) (fs.FS, bool) {
	sub := filepath.Join(dir, slug)
	if _, err := os.Stat(filepath.Join(sub, render.MainTemplate)); err != nil {
		return nil, false
	}
	fsys, err := openTemplateDir(sub)
	if err != nil {
		return nil, false
	}
	return fsys, true
}

// stratumColumn is the descriptive column --by names.
func stratumColumn(name string) (linelist.Column, bool) {
	c, ok := linelist.ColumnNamed(name)
	return c, ok && c.Stratum != nil
}

// strataValues lists the values of a descriptive column, sorted.
func strataValues(cases []linelist.Case, col linelist.Column) []string {
	m := map[string]bool{}
	for i := range cases {
		m[col.Stratum(&cases[i])] = true
	}
	vs := make([]string, 0, len(m))
	for v := range m {
		vs = append(vs, v)
	}
	sort.Strings(vs)
	return vs
}

// maxSlugBytes bounds the part of a file name taken from a value, so that name.html and its
// staging copy stay well under the 255 bytes file systems allow.
const maxSlugBytes = 64

// reservedSlugs are names a value may not take: the batch's own index, and the device names
// Windows keeps, so that a batch can be copied there.
var reservedSlugs = map[string]bool{"index": true, "con": true, "prn": true, "aux": true, "nul": true,
	"com1": true, "com2": true, "com3": true, "com4": true, "com5": true, "com6": true, "com7": true, "com8": true, "com9": true,
	"lpt1": true, "lpt2": true, "lpt3": true, "lpt4": true, "lpt5": true, "lpt6": true, "lpt7": true, "lpt8": true, "lpt9": true}

// slugBase makes a file name from a value: Unicode-normalised (NFC) and lower-cased, with
// its letters, marks and digits of any script and every other run of characters as one
// hyphen; "not-recorded" for a value with none.
func slugBase(v string) string {
	var b strings.Builder
	dash := false
	for _, r := range norm.NFC.String(strings.ToLower(v)) {
		switch {
		case unicode.IsLetter(r) || unicode.IsDigit(r) || unicode.IsMark(r):
			b.WriteRune(r)
			dash = false
		case !dash && b.Len() > 0:
			b.WriteByte('-')
			dash = true
		}
	}
	s := strings.TrimSuffix(b.String(), "-")
	if s == "" {
		s = "not-recorded"
	}
	return s
}

// cutUTF8 cuts s to at most n bytes at a character boundary.
func cutUTF8(s string, n int) string {
	if len(s) <= n {
		return s
	}
	for n > 0 && !utf8.RuneStart(s[n]) {
		n--
	}
	return strings.TrimSuffix(s[:n], "-")
}

// fileNames gives every value of a batch its own file name, unique by construction: the
// value's slug, and, where the slug was cut to length, is reserved or would be shared with
// another value (letter case, punctuation, a value that spells another's name), the slug
// followed by a short hash of the whole value, lengthened until no two names are alike.
func fileNames(values []string) map[string]string {
	hash := func(v string, n int) string {
		h := sha256.Sum256([]byte(v))
		return hex.EncodeToString(h[:])[:n]
	}
	base := map[string]string{}
	count := map[string]int{}
	for _, v := range values {
		b := slugBase(v)
		base[v] = b
		count[b]++
	}
	names := map[string]string{}
	hashed := map[string]int{} // hash length of the values that need one
	for _, v := range values {
		b := base[v]
		if len(b) > maxSlugBytes || count[b] > 1 || reservedSlugs[b] {
			hashed[v] = 8
		}
	}
	for {
		seen := map[string][]string{}
		for _, v := range values {
			n := base[v]
			if l, ok := hashed[v]; ok {
				n = cutUTF8(n, max(0, maxSlugBytes-l-1)) + "-" + hash(v, l)
			}
			names[v] = n
			seen[n] = append(seen[n], v)
		}
		clash := false
		for _, vs := range seen {
			if len(vs) < 2 {
				continue
			}
			clash = true
			for _, v := range vs {
				hashed[v] = min(max(hashed[v], 8)+4, 32) // 32 hex digits are 128 bits
			}
		}
		if !clash {
			return names
		}
	}
}
