package history

import (
	"bytes"
	"database/sql"
	"encoding/json"
	"errors"
	"os"
	"path/filepath"
	"slices"
	"sync"
	"testing"

	"github.com/caseweave/caseweave/pipeline/analysis"
	"github.com/caseweave/caseweave/pipeline/linelist"
)

const fixtures = "../../../testdata/history/"

func day(t *testing.T, s string) linelist.Day {
	t.Helper()
	d, err := linelist.ParseISODay(s)
	if err != nil {
		t.Fatal(err)
	}
	return d
}

func readCases(t *testing.T, name string) []linelist.Case {
	t.Helper()
	l, err := linelist.ReadFile(fixtures+name, linelist.Options{})
	if err != nil {
		t.Fatal(err)
	}
	if l.Rejected != 0 {
		t.Fatalf("%s: %d rows rejected", name, l.Rejected)
	}
	return l.Cases
}

// run is a run of the given export with a minimal summary.
func run(t *testing.T, name, asOf string) Run {
	s := &analysis.Summary{AsOf: day(t, asOf)}
	cs := readCases(t, name)
	s.Tree.Cases = len(cs)
	js, err := json.Marshal(s)
	if err != nil {
		t.Fatal(err)
	}
	return Run{Jurisdiction: "North", AsOf: s.AsOf, Version: "test", InputSHA256: "00", Released: js, Summary: s, Cases: cs}
}

func ptr(v int) *int { return &v }

// TestRevisionsOfFixturePair checks every count and list of SinceLast against the
// revisions planted in week2.csv (testdata/history/README.md).
func TestRevisionsOfFixturePair(t *testing.T) {
	path := filepath.Join(t.TempDir(), "a.sqlite")
	a, err := Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer a.Close()
	if err := a.Record([]Run{run(t, "week1.csv", "2026-03-13")}); err != nil {
		t.Fatal(err)
	}
	s := &analysis.Summary{AsOf: day(t, "2026-03-20")}
	if err := a.Annotate(s, "North", readCases(t, "week2.csv"), nil); err != nil {
		t.Fatal(err)
	}
	sl := s.SinceLast
	if sl == nil {
		t.Fatal("no SinceLast with an earlier run in the archive")
	}
	if sl.Previous != day(t, "2026-03-13") {
		t.Errorf("previous run %s, want 2026-03-13", sl.Previous)
	}
	want := analysis.Revisions{Late: ptr(1), Removed: ptr(1), OnsetChanged: ptr(1), LinksAdded: ptr(2), LinksRemoved: ptr(1), LinksMoved: ptr(1)}
	got, _ := json.Marshal(sl.Revisions)
	w, _ := json.Marshal(want)
	if !bytes.Equal(got, w) {
		t.Errorf("revisions %s, want %s", got, w)
	}
	if *sl.NewByOnset != 3 || *sl.NewByReport != 4 {
		t.Errorf("new by onset %d, by report %d; want 3 and 4", *sl.NewByOnset, *sl.NewByReport)
	}
	ids := sl.IDs
	for _, c := range []struct {
		got, want []string
	}{
		{ids.Late, []string{"A10"}}, {ids.OnsetChanged, []string{"A4"}}, {ids.LinksAdded, []string{"A3", "A7"}},
		{ids.LinksRemoved, []string{"A6"}}, {ids.LinksMoved, []string{"A5"}},
	} {
		if !slices.Equal(c.got, c.want) {
			t.Errorf("identifiers %v, want %v", c.got, c.want)
		}
	}
	if len(ids.Removed) != 1 || ids.Removed[0] == "A8" {
		t.Errorf("removed %v, want one hashed identifier", ids.Removed)
	}
	if len(s.Trend) != 2 || s.Trend[0].Cases != 9 || s.Trend[1].AsOf != s.AsOf {
		t.Errorf("trend %+v, want the archived run then this one", s.Trend)
	}
	// Another jurisdiction has no earlier run.
	o := &analysis.Summary{AsOf: s.AsOf}
	if err := a.Annotate(o, "South", nil, nil); err != nil || o.SinceLast != nil {
		t.Errorf("another jurisdiction: %v, %+v", err, o.SinceLast)
	}
}

// TestTwoRunsAtOnce records from two archives open on one new file at the same time: both
// succeed, and the file holds both runs with one hashing key.
func TestTwoRunsAtOnce(t *testing.T) {
	path := filepath.Join(t.TempDir(), "a.sqlite")
	var wg sync.WaitGroup
	errs := make([]error, 4)
	for i := range errs {
		wg.Add(1)
		go func() {
			defer wg.Done()
			a, err := Open(path)
			if err != nil {
				errs[i] = err
				return
			}
			defer a.Close()
			r := run(t, "week1.csv", "2026-03-13")
			errs[i] = a.Record([]Run{r})
		}()
	}
	wg.Wait()
	for i, err := range errs {
		if err != nil {
			t.Errorf("run %d: %v", i, err)
		}
	}
	db, err := sql.Open("sqlite", dsn(path, true))
	if err != nil {
		t.Fatal(err)
	}
	defer db.Close()
	var runs, keys, cases int
	db.QueryRow("SELECT count(*) FROM runs").Scan(&runs)
	db.QueryRow("SELECT count(*) FROM meta WHERE key = 'hash_key'").Scan(&keys)
	db.QueryRow("SELECT count(DISTINCT key) FROM cases").Scan(&cases)
	if runs != len(errs) || keys != 1 || cases != 9 {
		t.Errorf("%d runs, %d keys, %d distinct case hashes; want %d, 1, 9", runs, keys, cases, len(errs))
	}
}

// TestRefusesAndKeeps: a foreign, truncated or garbage file is an *Error and stays
// byte for byte as it was.
func TestRefusesAndKeeps(t *testing.T) {
	dir := t.TempDir()
	good := filepath.Join(dir, "good.sqlite")
	a, err := Open(good)
	if err != nil {
		t.Fatal(err)
	}
	for _, d := range []string{"2026-03-06", "2026-03-13"} {
		if err := a.Record([]Run{run(t, "week1.csv", d)}); err != nil {
			t.Fatal(err)
		}
	}
	a.Close()
	whole, err := os.ReadFile(good)
	if err != nil {
		t.Fatal(err)
	}
	foreign := filepath.Join(dir, "foreign.sqlite")
	db, err := sql.Open("sqlite", "file:"+foreign)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := db.Exec("CREATE TABLE t(x)"); err != nil {
		t.Fatal(err)
	}
	db.Close()
	files := map[string][]byte{
		"text":      []byte("case_id,onset_date\nA1,2026-03-01\n"),
		"truncated": whole[:len(whole)/2],
		"header":    whole[:100],
	}
	for name, b := range files {
		if err := os.WriteFile(filepath.Join(dir, name), b, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	names := []string{"foreign.sqlite", "text", "truncated", "header"}
	for _, n := range names {
		p := filepath.Join(dir, n)
		before, _ := os.ReadFile(p)
		a, err := Open(p)
		var he *Error
		if !errors.As(err, &he) {
			a.Close()
			t.Errorf("%s: opened (%v), want an *Error", n, err)
			continue
		}
		t.Logf("%s: %v", n, err)
		after, _ := os.ReadFile(p)
		if !bytes.Equal(before, after) {
			t.Errorf("%s: changed by a refused open", n)
		}
		if _, err := os.Stat(p + "-wal"); err == nil {
			t.Errorf("%s: a WAL file was made", n)
		}
	}
}

// TestFailedRecordWritesNothing: a record that fails part-way — its second run's cases are
// refused by a trigger after the first run went in — leaves the archive as it was.
func TestFailedRecordWritesNothing(t *testing.T) {
	path := filepath.Join(t.TempDir(), "a.sqlite")
	a, err := Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer a.Close()
	if err := a.Record([]Run{run(t, "week1.csv", "2026-03-06")}); err != nil {
		t.Fatal(err)
	}
	bad := run(t, "week1.csv", "2026-03-13")
	if _, err := a.db.Exec(`CREATE TRIGGER refuse BEFORE INSERT ON cases WHEN NEW.onset > 20515
		BEGIN SELECT RAISE(ABORT, 'refused by the test'); END`); err != nil {
		t.Fatal(err)
	}
	good := run(t, "week1.csv", "2026-03-13")
	good.Cases = good.Cases[:1]
	if err := a.Record([]Run{good, bad}); err == nil {
		t.Fatal("the refused insert did not fail the record")
	}
	var runs, cases int
	a.db.QueryRow("SELECT count(*) FROM runs").Scan(&runs)
	a.db.QueryRow("SELECT count(*) FROM cases").Scan(&cases)
	if runs != 1 || cases != 9 {
		t.Errorf("after the failed record: %d runs, %d cases; want 1 and 9 (the first run only)", runs, cases)
	}
}

func mustJSON(t *testing.T, v any) []byte {
	t.Helper()
	b, err := json.Marshal(v)
	if err != nil {
		t.Fatal(err)
	}
	return b
}
