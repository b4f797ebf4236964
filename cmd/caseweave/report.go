package main

import (
	"errors"
	"fmt"
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
	template  string
	out       string
	tablesDir string
	by        string
	pdf       bool
	showIDs   bool
	incub     int
	// templateConfig is set when the config was taken from the --template folder.
	templateConfig bool
	// pseudonyms are the batch's, one per pseudonym key.
	pseudonyms map[string]*analysis.Pseudonyms
}

func newReportCmd(e env) *cobra.Command {
	var f reportFlags
	c := &cobra.Command{
		Use:   "report [flags] LINELIST.csv",
		Short: "Write the self-contained HTML report (one per jurisdiction with --by)",
		Long: `report runs the whole analysis and renders a self-contained HTML report from a template
folder (Markdown with template actions; the built-in default unless --template is given).
The HTML carries its style sheet and chart library inline and makes no network request.
With --by COLUMN, -o names a directory that receives one <slug>.html and <slug>.json per
value of the column, and an index.html linking them. Case identifiers are pseudonymised
unless --show-ids is given; small counts in stratified tables are suppressed.`,
		Args: exactArgs(1, "one line-list file"),
		RunE: func(c *cobra.Command, args []string) error {
			return f.run(c, e, args[0])
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
}

func (f *reportFlags) run(c *cobra.Command, e env, path string) error {
	byCol, ok := stratumColumn(f.by)
	if f.by != "" && !ok {
		return usageErrorf("--by must be one of %s, got %q", strings.Join(linelist.StratumColumns(), ", "), f.by)
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
	ld, err := f.load(path)
	if err != nil {
		return err
	}
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
		for _, v := range strataValues(ld.list.Cases, byCol) {
			sel := func(cs *linelist.Case) bool { return byCol.Stratum(cs) == v }
			fsys := fallback
			if f.template != "" {
				if sub, ok := valueTemplate(f.template, slug(v)); ok {
					fsys = sub
				}
			}
			p, err := f.one(c, e, ld, fsys, &scoped{value: v, sel: sel})
			if err != nil {
				return fmt.Errorf("%s %q: %w", f.by, v, err)
			}
			pages = append(pages, p)
		}
		uniqueSlugs(pages)
	}
	return f.write(e, pages)
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
		p.value, p.slug = sc.value, slug(sc.value)
		if rc.Jurisdiction == "" && f.by == linelist.ColJurisdiction {
			rc.Jurisdiction = sc.value
		}
	}
	s, err := runAnalysis(ld, o)
	if err != nil {
		return page{}, err
	}
	rel, err := analysis.Release(s, f.policy(rc))
	if err != nil {
		return page{}, withCode(exitInput, err)
	}
	html, err := render.Render(rel, render.Options{Templates: fsys, Config: &rc})
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

// write puts every file of the run in place, each atomically, only after all reports have
// rendered: a failed run leaves earlier reports untouched.
func (f *reportFlags) write(e env, pages []page) error {
	if f.by == "" {
		p := pages[0]
		out := f.out
		if out == "" {
			out = "report.html"
		}
		if err := writeFileAtomic(out, p.html); err != nil {
			return err
		}
		if f.pdf {
			if err := writeFileAtomic(strings.TrimSuffix(out, filepath.Ext(out))+".pdf", p.pdf); err != nil {
				return err
			}
		}
		if err := writeOut(e, f.jsonOut, p.json); err != nil {
			return err
		}
		if err := writeOut(e, f.internalJSON, p.internalJSON); err != nil {
			return err
		}
		if f.tablesDir != "" {
			if err := writeTables(p.tables, f.tablesDir); err != nil {
				return err
			}
		}
		fmt.Fprintf(e.stderr, "wrote %s\n", out)
		return nil
	}
	dir := f.out
	if dir == "" {
		dir = "reports"
	}
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return withCode(exitOutput, fmt.Errorf("cannot create %s: %w", dir, err))
	}
	var entries []render.IndexEntry
	for _, p := range pages {
		for _, file := range []struct {
			name string
			data []byte
			want bool
		}{{p.slug + ".html", p.html, true}, {p.slug + ".json", p.json, true}, {p.slug + ".pdf", p.pdf, f.pdf}} {
			if !file.want {
				continue
			}
			if err := writeFileAtomic(filepath.Join(dir, file.name), file.data); err != nil {
				return err
			}
		}
		if f.tablesDir != "" {
			if err := writeTables(p.tables, filepath.Join(f.tablesDir, p.slug)); err != nil {
				return err
			}
		}
		if f.internalJSON != "" {
			if err := os.MkdirAll(f.internalJSON, 0o700); err != nil {
				return withCode(exitOutput, fmt.Errorf("cannot create %s: %w", f.internalJSON, err))
			}
			if err := writeFileAtomic(filepath.Join(f.internalJSON, p.slug+".json"), p.internalJSON); err != nil {
				return err
			}
		}
		entries = append(entries, render.IndexEntry{Value: p.value, File: p.slug + ".html", Report: p.released})
	}
	idx, err := render.Index(f.by, entries)
	if err != nil {
		return withCode(exitOutput, err)
	}
	if err := writeFileAtomic(filepath.Join(dir, "index.html"), idx); err != nil {
		return err
	}
	if f.jsonOut != "" {
		fmt.Fprintln(e.stderr, "note: with --by, each value's summary is written as <slug>.json beside its report; --json is ignored")
	}
	fmt.Fprintf(e.stderr, "wrote %d reports and index.html to %s\n", len(pages), dir)
	return nil
}

func writeTables(tables []render.TableFile, dir string) error {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return withCode(exitOutput, fmt.Errorf("cannot create %s: %w", dir, err))
	}
	for _, t := range tables {
		if err := writeFileAtomic(filepath.Join(dir, t.Name), t.Data); err != nil {
			return err
		}
	}
	return nil
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

// slug makes a file name from a value: lower-case ASCII letters and digits, other runs of
// characters as one hyphen.
func slug(v string) string {
	var b strings.Builder
	dash := false
	for _, r := range strings.ToLower(v) {
		switch {
		case r >= 'a' && r <= 'z' || r >= '0' && r <= '9':
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
	if s == "index" {
		s = "index-value"
	}
	return s
}

// uniqueSlugs appends -2, -3, … to slugs that two values share.
func uniqueSlugs(pages []page) {
	seen := map[string]int{}
	for i := range pages {
		s := pages[i].slug
		seen[s]++
		if n := seen[s]; n > 1 {
			pages[i].slug = fmt.Sprintf("%s-%d", s, n)
		}
	}
}
