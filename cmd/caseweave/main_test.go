package main

import (
	"bytes"
	"encoding/json"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"testing"
)

// cli runs one caseweave command line in-process and returns its exit code and output.
func cli(t *testing.T, args ...string) (code int, stdout, stderr string) {
	t.Helper()
	var out, errb bytes.Buffer
	code = run(args, env{stdout: &out, stderr: &errb})
	return code, out.String(), errb.String()
}

func writeFile(t *testing.T, dir, name, content string) string {
	t.Helper()
	p := filepath.Join(dir, name)
	if err := os.WriteFile(p, []byte(content), 0o644); err != nil {
		t.Fatal(err)
	}
	return p
}

func TestCheckExitCodes(t *testing.T) {
	dir := t.TempDir()
	good := writeFile(t, dir, "good.csv", "case_id,infector_id,onset_date\nA,,2026-01-01\nB,A,2026-01-05\n")
	missing := writeFile(t, dir, "nocol.csv", "Case ID,Infector,When\nA,,2026-01-01\n")
	empty := writeFile(t, dir, "empty.csv", "")
	headerOnly := writeFile(t, dir, "header.csv", "case_id,onset_date\n")
	binary := writeFile(t, dir, "bin.csv", "PK\x03\x04\x00\x00\x08\x00\x00\x00\xff\xfe\x00\x01")
	tests := []struct {
		name string
		args []string
		code int
		msg  string // part of stderr
	}{
		{"clean file", []string{"check", "--as-of", "2026-02-01", good}, exitOK, ""},
		{"row problems are not fatal", []string{"check", "--as-of", "2026-04-01", "../../testdata/linelist/all-codes.csv"}, exitOK, ""},
		{"strict fails on error problems", []string{"check", "--strict", "--as-of", "2026-04-01", "../../testdata/linelist/all-codes.csv"}, exitInput, "--strict"},
		{"strict passes a clean file", []string{"check", "--strict", "--as-of", "2026-02-01", good}, exitOK, ""},
		{"missing required column names it and the headers seen", []string{"check", missing}, exitInput, "onset_date"},
		{"empty file", []string{"check", empty}, exitInput, "empty"},
		{"header only", []string{"check", headerOnly}, exitInput, "no data rows"},
		{"binary file", []string{"check", binary}, exitInput, ""},
		{"no such file", []string{"check", filepath.Join(dir, "nope.csv")}, exitInput, "nope.csv"},
		{"no argument", []string{"check"}, exitUsage, "one or more line-list files"},
		{"unknown flag", []string{"check", "--bogus", good}, exitUsage, "unknown flag"},
		{"bad as-of", []string{"check", "--as-of", "03/04/2026", good}, exitUsage, "YYYY-MM-DD"},
		{"unknown command", []string{"frobnicate"}, exitUsage, "unknown command"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			code, _, stderr := cli(t, tt.args...)
			if code != tt.code {
				t.Fatalf("exit %d, want %d; stderr: %s", code, tt.code, stderr)
			}
			if !strings.Contains(stderr, tt.msg) {
				t.Fatalf("stderr %q does not mention %q", stderr, tt.msg)
			}
			if strings.Contains(stderr, "goroutine ") || strings.Contains(stderr, "panic") {
				t.Fatalf("stack trace on stderr: %s", stderr)
			}
		})
	}
	// The missing-column message names the headers it saw.
	_, _, stderr := cli(t, "check", missing)
	if !strings.Contains(stderr, "Infector") || !strings.Contains(stderr, "When") {
		t.Fatalf("the message should list the headers seen: %s", stderr)
	}
}

// Every problem code on one fixture, rows read = used + rejected, and the
// documented check --json schema.
func TestCheckJSONEveryProblemCode(t *testing.T) {
	code, stdout, stderr := cli(t, "check", "--as-of", "2026-04-01", "--json", "-", "../../testdata/linelist/all-codes.csv")
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	js := stdout
	var doc struct {
		Input    map[string]any   `json:"input"`
		Problems []map[string]any `json:"problems"`
		Tree     map[string]any   `json:"tree"`
	}
	if err := json.Unmarshal([]byte(js), &doc); err != nil {
		t.Fatalf("%v in %s", err, js)
	}
	for _, k := range []string{"path", "sha256", "rows", "used", "rejected"} {
		if _, ok := doc.Input[k]; !ok {
			t.Errorf("input has no %q", k)
		}
	}
	for _, k := range []string{"cases", "linked", "roots", "clusters", "largest_cluster", "max_generation"} {
		if _, ok := doc.Tree[k]; !ok {
			t.Errorf("tree has no %q", k)
		}
	}
	rows, used, rejected := doc.Input["rows"].(float64), doc.Input["used"].(float64), doc.Input["rejected"].(float64)
	if rows != used+rejected || rows != 13 || rejected != 4 {
		t.Errorf("rows %v used %v rejected %v; want 13 = 9 + 4", rows, used, rejected)
	}
	got := map[string][]int{}
	for _, p := range doc.Problems {
		for _, k := range []string{"row", "column", "code", "severity", "message"} {
			if _, ok := p[k]; !ok {
				t.Errorf("problem %v has no %q", p, k)
			}
		}
		c := p["code"].(string)
		got[c] = append(got[c], int(p["row"].(float64)))
	}
	want := map[string][]int{
		"field_count": {4}, "missing_id": {5}, "duplicate_id": {6}, "bad_date": {7}, "bad_value": {8},
		"unknown_infector": {9}, "self_infector": {10}, "cycle": {11, 12},
		"onset_before_infector": {13}, "future_onset": {14},
	}
	for c, rows := range want {
		g := got[c]
		sort.Ints(g)
		if len(g) != len(rows) {
			t.Errorf("%s at lines %v, want %v", c, g, rows)
			continue
		}
		for i := range rows {
			if g[i] != rows[i] {
				t.Errorf("%s at lines %v, want %v", c, g, rows)
			}
		}
	}
	if len(got) != len(want) {
		t.Errorf("codes %v, want exactly %v", got, want)
	}
}

// A simulated line list passes check cleanly.
func TestSimulatedListIsClean(t *testing.T) {
	dir := t.TempDir()
	list := filepath.Join(dir, "sim.csv")
	if code, _, stderr := cli(t, "simulate", "--until", "2026-03-31", "--jurisdictions", "A,B,C", "--contact-columns", "-o", list); code != 0 {
		t.Fatal(stderr)
	}
	code, stdout, stderr := cli(t, "check", "--strict", "--as-of", "2026-03-31", list)
	if code != exitOK || !strings.Contains(stdout, "Problems   none") {
		t.Fatalf("exit %d\n%s\n%s", code, stdout, stderr)
	}
}

func TestOutlookUsage(t *testing.T) {
	tests := []struct {
		args []string
		code int
	}{
		{[]string{"outlook", "--model", "negbin", "--R", "2.5", "--k", "0.1"}, exitOK},
		{[]string{"outlook", "--model", "negbin", "--R", "2.5"}, exitUsage},
		{[]string{"outlook", "--model", "poisson"}, exitUsage},
		{[]string{"outlook", "--pmf", "0.5,0.3"}, exitUsage},
		{[]string{"outlook", "--pmf", "0.5,0.3", "--normalize"}, exitOK},
		{[]string{"outlook", "--pmf", "0.5,-0.1,0.6"}, exitUsage},
		{[]string{"outlook", "--pmf", "0.5,0.5", "--model", "poisson", "--R", "1"}, exitUsage},
		{[]string{"outlook", "--model", "poisson", "--R", "1.5", "--generations", "0"}, exitUsage},
	}
	for _, tt := range tests {
		if code, _, stderr := cli(t, tt.args...); code != tt.code {
			t.Errorf("%v: exit %d, want %d (%s)", tt.args, code, tt.code, stderr)
		}
	}
	code, stdout, _ := cli(t, "outlook", "--model", "poisson", "--R", "1.5", "--json", "-")
	if code != 0 {
		t.Fatal(code)
	}
	var doc map[string]any
	if err := json.Unmarshal([]byte(stdout), &doc); err != nil {
		t.Fatal(err)
	}
	for _, k := range []string{"model", "mean", "extinction_probability", "major_outbreak_probability",
		"share_causing_80pct", "share_causing_80pct_offspring", "sse_threshold", "generations", "chain_size"} {
		if _, ok := doc[k]; !ok {
			t.Errorf("outlook JSON has no %q", k)
		}
	}
}

// The outlook JSON names the model and its dispersion: k of a gamma-distributed ν (1 for the
// geometric, which is the negative binomial with k = 1), null for a list, which has no ν.
func TestOutlookJSONModel(t *testing.T) {
	for _, c := range []struct {
		args []string
		name string
		k    any
	}{
		{[]string{"--model", "geometric", "--R", "0.8"}, "geometric", 1.0},
		{[]string{"--model", "negbin", "--R", "2.5", "--k", "0.1"}, "negative_binomial", 0.1},
		{[]string{"--model", "poisson", "--R", "1.5"}, "poisson", nil},
		{[]string{"--pmf", "0.3,0.3,0.2,0.2"}, "empirical", nil},
	} {
		code, stdout, stderr := cli(t, append(append([]string{"outlook"}, c.args...), "--json", "-")...)
		if code != 0 {
			t.Fatal(stderr)
		}
		var doc struct {
			Model map[string]any `json:"model"`
		}
		if err := json.Unmarshal([]byte(stdout), &doc); err != nil {
			t.Fatal(err)
		}
		if doc.Model["name"] != c.name || doc.Model["k"] != c.k {
			t.Errorf("%v: model %v, want name %s and k %v", c.args, doc.Model, c.name, c.k)
		}
	}
}

// A prediction bound beyond the decoded range is null in the summary and never a number on
// the terminal, never a sentinel such as -1.
func TestFmtCountsMissingBound(t *testing.T) {
	lo := 3
	if got := fmtCounts([2]*int{&lo, nil}); got != "3–?" {
		t.Errorf("fmtCounts = %q, want 3–?", got)
	}
	if got := fmtCounts([2]*int{nil, nil}); strings.Contains(got, "-1") {
		t.Errorf("fmtCounts = %q", got)
	}
}
