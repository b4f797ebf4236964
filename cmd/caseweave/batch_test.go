package main

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"net/url"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"syscall"
	"testing"
	"time"
	"unicode/utf8"
)

// batchList writes a line list with one case per jurisdiction of the given names.
func batchList(t *testing.T, dir string, jurisdictions []string) string {
	t.Helper()
	var b strings.Builder
	b.WriteString("case_id,onset_date,jurisdiction\n")
	for i, j := range jurisdictions {
		fmt.Fprintf(&b, "C%d,2026-10-%02d,%q\n", i, 1+i%28, j)
	}
	p := filepath.Join(dir, "batch.csv")
	if err := os.WriteFile(p, []byte(b.String()), 0o600); err != nil {
		t.Fatal(err)
	}
	return p
}

// tree snapshots every file under dir, names relative.
func tree(t *testing.T, dir string) map[string][]byte {
	t.Helper()
	out := map[string][]byte{}
	filepath.WalkDir(dir, func(p string, d os.DirEntry, err error) error {
		if err == nil && !d.IsDir() {
			b, _ := os.ReadFile(p)
			rel, _ := filepath.Rel(dir, p)
			out[rel] = b
		}
		return nil
	})
	return out
}

func sameTree(t *testing.T, what string, a, b map[string][]byte) {
	t.Helper()
	if len(a) != len(b) {
		t.Errorf("%s: %d files, want %d", what, len(b), len(a))
	}
	for k, v := range a {
		if !bytes.Equal(b[k], v) {
			t.Errorf("%s: %s changed", what, k)
		}
	}
}

func staged(dir string) []string {
	var out []string
	entries, _ := os.ReadDir(dir)
	for _, e := range entries {
		if strings.Contains(e.Name(), ".caseweave-") && e.Name() != ".caseweave-batch" {
			out = append(out, e.Name())
		}
	}
	return out
}

var indexLink = regexp.MustCompile(`<a href="([^"]+)"><bdi>([^<]*)</bdi></a>`)

// No two values of a batch share a file, whatever their letter case, punctuation, script or
// length, and the index links every value to its own report: the collision set of the issue
// (Quillan Bay, quillan bay, Quillan Bay-2, "-" beside not-recorded-2, a blank value), values
// in other scripts, a name longer than a file system allows, and the reserved "index".
func TestBatchFileNamesAreUniqueAndLinked(t *testing.T) {
	dir := t.TempDir()
	long := strings.Repeat("Ö", 150) // 300 bytes
	values := []string{"Quillan Bay", "quillan bay", "Quillan Bay-2", "-", "not-recorded-2", "", "日本", "Ünïcödé", long, "index", "CON", "a/b", ".."}
	list := batchList(t, dir, values)
	out := filepath.Join(dir, "reports")
	code, _, stderr := cli(t, "report", "--as-of", "2026-11-27", "--bootstrap", "20", "--by", "jurisdiction", "-o", out, list)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	reports, _ := filepath.Glob(filepath.Join(out, "*.html"))
	if len(reports) != len(values)+1 {
		t.Fatalf("%d HTML files for %d values and the index", len(reports), len(values))
	}
	idx, _ := os.ReadFile(filepath.Join(out, "index.html"))
	links := indexLink.FindAllStringSubmatch(string(idx), -1)
	if len(links) != len(values) {
		t.Fatalf("%d index links for %d values", len(links), len(values))
	}
	seen := map[string]bool{}
	for _, l := range links {
		file, err := url.PathUnescape(l[1]) // html/template percent-encodes the link
		if err != nil {
			t.Fatal(err)
		}
		if seen[file] || strings.ContainsAny(file, `/\`) || len(file) > 100 {
			t.Errorf("file name %q shared, with a separator or too long", file)
		}
		seen[file] = true
		b, err := os.ReadFile(filepath.Join(out, strings.TrimSuffix(file, ".html")+".json"))
		if err != nil {
			t.Fatal(err)
		}
		var s struct {
			Scope struct{ Value string } `json:"scope"`
		}
		json.Unmarshal(b, &s)
		want := htmlUnescape(l[2])
		if want == "(not recorded)" {
			want = ""
		}
		if s.Scope.Value != want {
			t.Errorf("index links %q to %s, whose summary is of %q", want, file, s.Scope.Value)
		}
	}
	for _, w := range []string{"日本.html", "ünïcödé.html"} {
		if !seen[w] {
			t.Errorf("no %s: letters of other scripts should stay in the name (%v)", w, seen)
		}
	}
	for f := range seen {
		if !utf8.ValidString(f) {
			t.Errorf("file name %q is not valid UTF-8", f)
		}
	}
}

func htmlUnescape(s string) string {
	return strings.NewReplacer("&amp;", "&", "&lt;", "<", "&gt;", ">", "&#34;", `"`, "&#39;", "'").Replace(s)
}

// A failed batch — a full disk at any step of the write, or an interruption by SIGINT or
// SIGTERM — leaves the previous batch byte for byte as it was, with nothing staged left
// behind, and exits 4, 130 or 143.
func TestFailedBatchKeepsThePreviousOne(t *testing.T) {
	dir := t.TempDir()
	list := batchList(t, dir, []string{"Marrowfield", "Ostvale", "Quillan Bay"})
	out, tables := filepath.Join(dir, "reports"), filepath.Join(dir, "tables")
	args := []string{"report", "--as-of", "2026-11-27", "--bootstrap", "20", "--by", "jurisdiction", "-o", out, "--tables", tables, list}
	if code, _, stderr := cli(t, args...); code != 0 {
		t.Fatal(stderr)
	}
	before, beforeTables := tree(t, out), tree(t, tables)
	steps := 0
	count := env{stdout: &bytes.Buffer{}, stderr: &bytes.Buffer{}, writeFault: func(n int) error { steps = n; return nil }}
	probe := append([]string(nil), args...)
	probe[8], probe[10] = filepath.Join(dir, "probe"), filepath.Join(dir, "probe-tables")
	if code := run(probe, count); code != 0 {
		t.Fatalf("probe run exit %d", code)
	}
	if steps < 8 {
		t.Fatalf("only %d write steps", steps)
	}
	for _, n := range []int{1, 2, steps / 2, steps - 1, steps} {
		for _, kind := range []string{"full disk", "SIGINT", "SIGTERM"} {
			var stderr bytes.Buffer
			e := env{stdout: &bytes.Buffer{}, stderr: &stderr, writeFault: func(i int) error {
				if i != n {
					return nil
				}
				switch kind {
				case "SIGINT":
					syscall.Kill(os.Getpid(), syscall.SIGINT)
					time.Sleep(300 * time.Millisecond)
				case "SIGTERM":
					syscall.Kill(os.Getpid(), syscall.SIGTERM)
					time.Sleep(300 * time.Millisecond)
				default:
					return syscall.ENOSPC
				}
				return nil
			}}
			code := run(args, e)
			want := map[string]int{"full disk": exitOutput, "SIGINT": exitInterrupt, "SIGTERM": exitTerminated}[kind]
			if kind != "full disk" && n >= steps-1 {
				// Past the last check the swap runs to its end: the run completes.
				want = code
			}
			if code != want {
				t.Errorf("%s at step %d: exit %d, want %d: %s", kind, n, code, want, stderr.String())
			}
			if code != 0 {
				sameTree(t, fmt.Sprintf("%s at step %d", kind, n), before, tree(t, out))
				sameTree(t, fmt.Sprintf("%s at step %d (tables)", kind, n), beforeTables, tree(t, tables))
			}
			if l := staged(dir); len(l) > 0 {
				t.Errorf("%s at step %d: staging left behind: %v", kind, n, l)
			}
		}
	}
}

// Outputs may not replace an input or each other, and a batch folder may not hold an input
// (it is replaced as a whole) or files caseweave did not write: each is a usage error
// naming both, and nothing is written.
func TestOutputsNeverReplaceInputs(t *testing.T) {
	dir := t.TempDir()
	list := simulated(t, dir)
	orig, _ := os.ReadFile(list)
	link := filepath.Join(dir, "link.html")
	os.Symlink(list, link)
	own := filepath.Join(dir, "mine")
	os.MkdirAll(own, 0o755)
	os.WriteFile(filepath.Join(own, "notes.txt"), []byte("mine"), 0o644)
	for _, c := range []struct {
		args []string
		want string
	}{
		{[]string{"-o", list}, "would replace input"},
		{[]string{"-o", link}, "would replace input"},
		{[]string{"-o", filepath.Join(dir, "r.html"), "--json", filepath.Join(dir, "r.html")}, "would replace output"},
		{[]string{"--by", "jurisdiction", "-o", dir}, "inside the output folder"},
		{[]string{"--by", "jurisdiction", "-o", own}, "did not write"},
	} {
		args := append(append([]string{"report", "--as-of", "2026-03-27", "--bootstrap", "20"}, c.args...), list)
		code, _, stderr := cli(t, args...)
		if code != exitUsage || !strings.Contains(stderr, c.want) {
			t.Errorf("%v: exit %d, %s", c.args, code, stderr)
		}
	}
	if now, _ := os.ReadFile(list); !bytes.Equal(now, orig) {
		t.Fatal("the line list was overwritten")
	}
	if b, _ := os.ReadFile(filepath.Join(own, "notes.txt")); string(b) != "mine" {
		t.Fatal("a folder of the user's was replaced")
	}
}

// Inputs that lose everything or hide a problem say so: a file whose every row is rejected
// exits 1 with its reasons and delimiter; a dropped value fails check --strict; a CR-only
// file is read; an impossible time rejects the onset; --as-of follows the dates' rule; a
// message names the file once.
func TestInputMessages(t *testing.T) {
	dir := t.TempDir()
	write := func(name, content string) string {
		p := filepath.Join(dir, name)
		os.WriteFile(p, []byte(content), 0o600)
		return p
	}
	semi := write("semi.csv", "case_id,onset_date\nA;2026-01-01\nB;2026-01-02\n")
	if code, _, stderr := cli(t, "report", "--as-of", "2026-03-01", "-o", filepath.Join(dir, "r.html"), semi); code != exitInput ||
		!strings.Contains(stderr, "none of the 2 data rows") || !strings.Contains(stderr, "delimiter") {
		t.Errorf("all rows rejected: exit %d %s", code, stderr)
	}
	if _, err := os.Stat(filepath.Join(dir, "r.html")); !errors.Is(err, os.ErrNotExist) {
		t.Error("a report was written about no cases")
	}
	maybe := write("maybe.csv", "case_id,onset_date,imported\nA,2026-01-01,maybe\nB,2026-01-02,no\n")
	if code, _, stderr := cli(t, "check", "--as-of", "2026-03-01", "--strict", maybe); code != exitInput {
		t.Errorf("a dropped value passed --strict: exit %d %s", code, stderr)
	}
	cr := write("cr.csv", "case_id,onset_date\rA,2026-01-01\rB,2026-01-02\r")
	if code, stdout, stderr := cli(t, "check", "--as-of", "2026-03-01", cr); code != 0 || !strings.Contains(stdout, "Used              2") && !strings.Contains(stdout, "Used       ") {
		t.Errorf("CR-only file: exit %d %s %s", code, stdout, stderr)
	}
	hour := write("hour.csv", "case_id,onset_date\nA,2026-01-01T25:00\nB,2026-01-02\n")
	if code, stdout, _ := cli(t, "check", "--as-of", "2026-03-01", hour); code != 0 || !strings.Contains(stdout, "bad_date") {
		t.Errorf("hour 25 accepted: %s", stdout)
	}
	if code, _, stderr := cli(t, "check", "--as-of", "0001-01-01", hour); code != exitUsage {
		t.Errorf("--as-of 0001-01-01: exit %d %s", code, stderr)
	}
	empty := write("empty.csv", "")
	if _, _, stderr := cli(t, "check", empty); strings.Count(stderr, "empty.csv") != 1 {
		t.Errorf("the message should name the file once: %s", stderr)
	}
}
