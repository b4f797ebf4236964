package main

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"
)

// simulated writes a simulated line list into dir and returns its path.
func simulated(t *testing.T, dir string, args ...string) string {
	t.Helper()
	p := filepath.Join(dir, "list.csv")
	base := []string{"simulate", "--R", "1.1", "--k", "0.4", "--index-cases", "25", "--until", "2026-03-25", "-o", p}
	if code, _, stderr := cli(t, append(base, args...)...); code != 0 {
		t.Fatal(stderr)
	}
	return p
}

func hasKeys(t *testing.T, where string, m map[string]any, keys ...string) {
	t.Helper()
	for _, k := range keys {
		if _, ok := m[k]; !ok {
			t.Errorf("%s has no %q", where, k)
		}
	}
}

// The documented estimate --json schema (pipeline/analysis/summary.go).
func TestEstimateJSONSchema(t *testing.T) {
	list := simulated(t, t.TempDir())
	code, stdout, stderr := cli(t, "estimate", "--as-of", "2026-03-27", "--bootstrap", "200", "--json", "-", list)
	if code != 0 {
		t.Fatal(stderr)
	}
	var doc map[string]any
	if err := json.Unmarshal([]byte(stdout), &doc); err != nil { // --json - writes JSON alone
		t.Fatal(err)
	}
	hasKeys(t, "summary", doc, "input", "tree", "offspring", "outlook", "as_of", "seed", "tool")
	o := doc["offspring"].(map[string]any)
	hasKeys(t, "offspring", o, "n", "censored", "censor_days", "mean", "variance", "histogram", "models",
		"best_model", "R", "k", "bootstrap", "chain_size_fit", "zero_share", "share_causing_80pct_observed", "superspreaders")
	for _, m := range o["models"].([]any) {
		mm := m.(map[string]any)
		hasKeys(t, "model", mm, "name", "parameters", "loglik", "aic", "delta_aic", "expected")
		for _, p := range mm["parameters"].([]any) {
			hasKeys(t, "parameter", p.(map[string]any), "name", "estimate", "se")
		}
	}
	for _, e := range []string{"R", "k"} {
		hasKeys(t, e, o[e].(map[string]any), "estimate", "percentile", "bca")
	}
	hasKeys(t, "bootstrap", o["bootstrap"].(map[string]any), "replicates", "seed", "unit", "level")
	hasKeys(t, "chain_size_fit", o["chain_size_fit"].(map[string]any), "R", "k", "loglik", "R_ci", "k_ci")
	ol := doc["outlook"].(map[string]any)
	hasKeys(t, "outlook", ol, "extinction_probability", "major_outbreak_probability", "share_causing_80pct", "sse_threshold", "active", "projection")
	for _, p := range ol["projection"].([]any) {
		hasKeys(t, "projection", p.(map[string]any), "generation", "mean", "p50", "p90")
	}
	hasKeys(t, "tool", doc["tool"].(map[string]any), "name", "version")
}

// Personal columns of an export never reach any output: not the report, its JSON, nor its
// tables (the brief's privacy standard).
func TestPersonalColumnsNeverReachOutputs(t *testing.T) {
	dir := t.TempDir()
	list := simulated(t, dir, "--contact-columns", "--jurisdictions", "North,South")
	raw, _ := os.ReadFile(list)
	rows, err := csv.NewReader(bytes.NewReader(raw)).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	var personal []string
	for _, r := range rows[1:] {
		personal = append(personal, r[8], r[9], r[10]) // full_name, phone, home_address
	}
	out := filepath.Join(dir, "r.html")
	code, _, stderr := cli(t, "report", "--as-of", "2026-03-27", "--bootstrap", "100", "-o", out,
		"--json", filepath.Join(dir, "r.json"), "--tables", filepath.Join(dir, "tables"), list)
	if code != 0 {
		t.Fatal(stderr)
	}
	files := []string{out, filepath.Join(dir, "r.json")}
	tables, _ := filepath.Glob(filepath.Join(dir, "tables", "*.csv"))
	if len(tables) == 0 {
		t.Fatal("no tables written")
	}
	files = append(files, tables...)
	for _, f := range files {
		b, _ := os.ReadFile(f)
		for _, p := range personal {
			if bytes.Contains(b, []byte(p)) {
				t.Fatalf("%s contains the personal value %q", f, p)
			}
		}
		// Identifiers are pseudonymised by default.
		if bytes.Contains(b, []byte(rows[1][0]+`"`)) || bytes.Contains(b, []byte(">"+rows[1][0]+"<")) {
			t.Fatalf("%s shows the raw case identifier %s", f, rows[1][0])
		}
	}
}

// Data values cannot become markup or script in the report, and a formula in a cell is
// neutralised in the exported tables.
func TestHostileValuesAreInert(t *testing.T) {
	dir := t.TempDir()
	var b strings.Builder
	b.WriteString("case_id,infector_id,onset_date,setting,age_group,jurisdiction\n")
	payloads := []string{`<img src=x onerror=alert(1)>`, `</script><script>alert(2)</script>`, `"quoted' <b>bold</b>`, `=HYPERLINK("http://x")`, `*emph* [l](javascript:alert(3))`}
	id := 0
	for d := 0; d < 40; d++ {
		for k, p := range payloads {
			id++
			inf := ""
			if d > 0 {
				inf = "c" + strconv.Itoa((d-1)*len(payloads)+k+1)
			}
			b.WriteString("c" + strconv.Itoa(id) + "," + inf + fmt.Sprintf(",2026-02-%02d,", 1+d%27) + csvQuote(p) + "," + csvQuote(p) + ",North\n")
		}
	}
	list := writeFile(t, dir, "hostile.csv", b.String())
	out := filepath.Join(dir, "r.html")
	code, _, stderr := cli(t, "report", "--as-of", "2026-03-10", "--bootstrap", "50", "-o", out, "--tables", filepath.Join(dir, "t"), list)
	if code != 0 {
		t.Fatal(stderr)
	}
	html, _ := os.ReadFile(out)
	for _, bad := range []string{`<img src=x`, `<script>alert(2)`, `<b>bold</b>`, `href="javascript:`} {
		if bytes.Contains(html, []byte(bad)) {
			t.Errorf("the report contains live markup %q", bad)
		}
	}
	// Compare the number of script elements with a report on harmless data.
	clean := strings.NewReplacer(payloads[0], "a", payloads[1], "b", payloads[2], "c", payloads[3], "d", payloads[4], "e").Replace(b.String())
	cleanList := writeFile(t, dir, "clean.csv", clean)
	cleanOut := filepath.Join(dir, "c.html")
	if code, _, stderr := cli(t, "report", "--as-of", "2026-03-10", "--bootstrap", "50", "-o", cleanOut, cleanList); code != 0 {
		t.Fatal(stderr)
	}
	cleanHTML, _ := os.ReadFile(cleanOut)
	if n, m := bytes.Count(html, []byte("<script")), bytes.Count(cleanHTML, []byte("<script")); n != m {
		t.Errorf("%d <script elements with hostile data, %d without", n, m)
	}
	tables, _ := filepath.Glob(filepath.Join(dir, "t", "*.csv"))
	found := false
	for _, f := range tables {
		data, _ := os.ReadFile(f)
		recs, err := csv.NewReader(bytes.NewReader(data)).ReadAll()
		if err != nil {
			t.Fatalf("%s: %v", f, err)
		}
		for _, r := range recs {
			for _, cell := range r {
				if strings.HasPrefix(cell, "=") || strings.HasPrefix(cell, "@") || strings.HasPrefix(cell, "+") {
					t.Errorf("%s: a cell starts with a formula character: %q", f, cell)
				}
				if strings.HasPrefix(cell, "'=HYPERLINK") {
					found = true
				}
			}
		}
	}
	if !found {
		t.Error("the hostile setting never reached a table, so the neutralisation was not exercised")
	}
}

// --by on a three-jurisdiction list writes a report and a JSON per value and an
// index linking them; two runs are byte-identical.
func TestReportByJurisdictionDeterministic(t *testing.T) {
	dir := t.TempDir()
	list := simulated(t, dir, "--jurisdictions", "Harbour Row,Upper Fenn,Saltmarsh")
	var outs []string
	for i := 0; i < 2; i++ {
		out := filepath.Join(dir, "run"+strconv.Itoa(i))
		code, _, stderr := cli(t, "report", "--as-of", "2026-03-27", "--bootstrap", "200", "--by", "jurisdiction", "-o", out, list)
		if code != 0 {
			t.Fatal(stderr)
		}
		outs = append(outs, out)
	}
	want := []string{".caseweave-batch", "harbour-row.html", "harbour-row.json", "index.html", "saltmarsh.html", "saltmarsh.json", "upper-fenn.html", "upper-fenn.json"}
	for _, name := range want {
		a, err := os.ReadFile(filepath.Join(outs[0], name))
		if err != nil {
			t.Fatal(err)
		}
		b, _ := os.ReadFile(filepath.Join(outs[1], name))
		if !bytes.Equal(a, b) {
			t.Errorf("%s differs between two identical runs", name)
		}
	}
	idx, _ := os.ReadFile(filepath.Join(outs[0], "index.html"))
	for _, link := range []string{`href="harbour-row.html"`, `href="upper-fenn.html"`, `href="saltmarsh.html"`} {
		if !bytes.Contains(idx, []byte(link)) {
			t.Errorf("index.html has no %s", link)
		}
	}
	entries, _ := os.ReadDir(outs[0])
	if len(entries) != len(want) {
		t.Errorf("%d files written, want %d (no temporary files left)", len(entries), len(want))
	}
}

// A failed run leaves the previous report untouched: a template error exits 3, an
// unwritable output exits 4.
func TestFailedRunKeepsPreviousReport(t *testing.T) {
	dir := t.TempDir()
	list := simulated(t, dir)
	out := filepath.Join(dir, "r.html")
	if err := os.WriteFile(out, []byte("previous report"), 0o644); err != nil {
		t.Fatal(err)
	}
	tpl := filepath.Join(dir, "tpl")
	os.MkdirAll(tpl, 0o755)
	writeFile(t, tpl, "report.md", "# Report\n\nLine two.\n\n{{ .Offspring.NoSuchField }}\n")
	code, _, stderr := cli(t, "report", "--as-of", "2026-03-27", "--bootstrap", "50", "--template", tpl, "-o", out, list)
	if code != exitTemplate {
		t.Fatalf("exit %d, want %d: %s", code, exitTemplate, stderr)
	}
	for _, want := range []string{"report.md", "5", "NoSuchField"} {
		if !strings.Contains(stderr, want) {
			t.Errorf("the template error should name %q: %s", want, stderr)
		}
	}
	if b, _ := os.ReadFile(out); string(b) != "previous report" {
		t.Fatal("the previous report was changed by a failed run")
	}
	code, _, stderr = cli(t, "report", "--as-of", "2026-03-27", "--bootstrap", "50", "-o", filepath.Join(dir, "no", "such", "dir", "r.html"), list)
	if code != exitOutput {
		t.Fatalf("exit %d, want %d: %s", code, exitOutput, stderr)
	}
	left, _ := filepath.Glob(filepath.Join(dir, ".*tmp*"))
	if len(left) != 0 {
		t.Fatalf("temporary files left behind: %v", left)
	}
}

func csvQuote(s string) string { return `"` + strings.ReplaceAll(s, `"`, `""`) + `"` }

// With --by, a value's own template folder is used when it exists, the default otherwise.
func TestReportByUsesValueTemplate(t *testing.T) {
	dir := t.TempDir()
	list := simulated(t, dir, "--jurisdictions", "Harbour Row,Upper Fenn")
	root := filepath.Join(dir, "templates")
	own := filepath.Join(root, "upper-fenn")
	if err := os.MkdirAll(own, 0o755); err != nil {
		t.Fatal(err)
	}
	writeFile(t, own, "report.md", "# Fenn weekly note\n\nCases: {{ count .Tree.Cases }}.\n")
	writeFile(t, own, "config.yaml", "jurisdiction: Upper Fenn district\nsuppress_below: 3\n")
	out := filepath.Join(dir, "out")
	if code, _, stderr := cli(t, "report", "--as-of", "2026-03-27", "--bootstrap", "50", "--by", "jurisdiction", "--template", root, "-o", out, list); code != 0 {
		t.Fatal(stderr)
	}
	fenn, _ := os.ReadFile(filepath.Join(out, "upper-fenn.html"))
	harbour, _ := os.ReadFile(filepath.Join(out, "harbour-row.html"))
	if !bytes.Contains(fenn, []byte("Fenn weekly note")) || bytes.Contains(fenn, []byte("Bootstrap distribution")) {
		t.Error("upper-fenn.html should come from its own template")
	}
	if bytes.Contains(harbour, []byte("Fenn weekly note")) || !bytes.Contains(harbour, []byte("How many people each case infected")) {
		t.Error("harbour-row.html should come from the default template")
	}
}

// A template cannot read a file outside its folder, not even through a symbolic link: the
// folder is opened as an os.Root.
func TestTemplateSymlinkCannotEscape(t *testing.T) {
	dir := t.TempDir()
	list := simulated(t, dir)
	secret := writeFile(t, dir, "secret.md", "TOP-SECRET-CONTENT\n")
	tpl := filepath.Join(dir, "tpl")
	os.MkdirAll(filepath.Join(tpl, "partials"), 0o755)
	writeFile(t, tpl, "report.md", "# Report\n\n{{ partial \"partials/evil.md\" . }}\n")
	if err := os.Symlink(secret, filepath.Join(tpl, "partials", "evil.md")); err != nil {
		t.Skip("no symlinks here:", err)
	}
	out := filepath.Join(dir, "r.html")
	code, _, stderr := cli(t, "report", "--as-of", "2026-03-27", "--bootstrap", "20", "--template", tpl, "-o", out, list)
	if code != exitTemplate {
		t.Fatalf("exit %d, want %d (%s)", code, exitTemplate, stderr)
	}
	if b, err := os.ReadFile(out); err == nil && bytes.Contains(b, []byte("TOP-SECRET")) {
		t.Fatal("the template read a file outside its folder")
	}
	if !strings.Contains(stderr, "evil.md") {
		t.Errorf("the error should name the partial: %s", stderr)
	}
}

// In a batch, a chain belongs to the report of every jurisdiction it touches, with its whole
// size: each report's chain-size table adds up to its own cases plus the cases its chains
// hold elsewhere, the largest chains count their local cases apart, the reports' case counts
// add up to the line list's, and one case has one label in every report.
func TestBatchChainCountsAgree(t *testing.T) {
	dir := sharedDemo(t)
	total, used := 0, 0
	sums, _ := filepath.Glob(filepath.Join(dir, "*.json"))
	byRoot := map[string]int{}
	for _, p := range sums {
		s := readSummary(t, p)
		used = s.Input.Used
		total += s.Tree.Cases
		n := 0
		for _, sc := range s.Clusters.SizeHistogram {
			n += sc.Size * sc.Count
		}
		if n != s.Tree.Cases+s.Tree.CasesElsewhere {
			t.Errorf("%s: chain sizes add up to %d, want %d here + %d elsewhere", filepath.Base(p), n, s.Tree.Cases, s.Tree.CasesElsewhere)
		}
		for _, tv := range s.Clusters.Largest {
			local := 0
			for _, nd := range tv.Nodes {
				if !nd.Elsewhere {
					local++
				}
			}
			if tv.Local > tv.Size || (tv.Hidden == 0 && local != tv.Local) {
				t.Errorf("%s: chain %s has %d local of %d, %d drawn local", filepath.Base(p), tv.Root, tv.Local, tv.Size, local)
			}
			byRoot[tv.Root+fmt.Sprint(tv.Size)]++
		}
	}
	if total != used {
		t.Errorf("the reports count %d cases, the line list %d", total, used)
	}
	// The index says how many cases each report holds: the same counts, adding up alike.
	index, err := os.ReadFile(filepath.Join(dir, "index.html"))
	if err != nil {
		t.Fatal(err)
	}
	listed := 0
	for _, m := range regexp.MustCompile(`(\d[\d,]*) cases \(`).FindAllStringSubmatch(string(index), -1) {
		n, _ := strconv.Atoi(strings.ReplaceAll(m[1], ",", ""))
		listed += n
	}
	if listed != used {
		t.Errorf("the index lists %d cases over its reports, the line list has %d", listed, used)
	}
	shared := 0
	for _, n := range byRoot {
		if n > 1 {
			shared++
		}
	}
	if shared == 0 {
		t.Error("no chain appears, under one label, in two reports of the demo")
	}
}

// One setting has one colour in every report of a batch, two settings never share one, and
// the epidemic curve draws (and so lists in its legend) only the settings that have a bar.
func TestBatchColoursAgree(t *testing.T) {
	dir := sharedDemo(t)
	pages, _ := filepath.Glob(filepath.Join(dir, "*.html"))
	colourOf := map[string]string{}
	nameOf := map[string]string{}
	curves := 0
	for _, p := range pages {
		b, err := os.ReadFile(p)
		if err != nil {
			t.Fatal(err)
		}
		for _, m := range chartOption.FindAllStringSubmatch(string(b), -1) {
			if m[1] != "cw_epicurve" {
				continue
			}
			curves++
			var opt struct {
				Series []struct {
					Name      string `json:"name"`
					ItemStyle struct {
						Color string `json:"color"`
					} `json:"itemStyle"`
					Data []struct {
						Value any `json:"value"`
					} `json:"data"`
				} `json:"series"`
			}
			if err := json.Unmarshal([]byte(m[2]), &opt); err != nil {
				t.Fatalf("%s: %v", p, err)
			}
			for _, s := range opt.Series {
				bar := false
				for _, d := range s.Data {
					if v, ok := d.Value.(float64); ok && v > 0 {
						bar = true
					}
				}
				if !bar {
					t.Errorf("%s: series %q has no bar but is drawn (and listed in the legend)", filepath.Base(p), s.Name)
				}
				c := s.ItemStyle.Color
				if c == "" {
					t.Errorf("%s: series %q has no colour of its own", filepath.Base(p), s.Name)
					continue
				}
				if prev, ok := colourOf[s.Name]; ok && prev != c {
					t.Errorf("%s: %q is %s here and %s in another report", filepath.Base(p), s.Name, c, prev)
				}
				if other, ok := nameOf[c]; ok && other != s.Name {
					t.Errorf("%s: %q and %q share the colour %s", filepath.Base(p), s.Name, other, c)
				}
				colourOf[s.Name], nameOf[c] = c, s.Name
			}
		}
	}
	if curves != 3 || len(colourOf) < 3 {
		t.Fatalf("read %d epidemic curves with %d settings; the demo has 3 reports and more settings", curves, len(colourOf))
	}
}
