package main

import (
	"bytes"
	"encoding/json"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"sync"
	"testing"

	"github.com/caseweave/caseweave/cmd/internal/history"
	"github.com/caseweave/caseweave/pipeline/analysis"
	"github.com/caseweave/caseweave/pipeline/linelist"
)

const historyFixtures = "../../testdata/history/"

// archivedRuns counts the runs of the archive at path before 2100-01-01.
func archivedRuns(t *testing.T, path string) int {
	t.Helper()
	a, err := history.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer a.Close()
	far, _ := linelist.ParseISODay("2100-01-01")
	runs, err := a.Runs("", far)
	if err != nil {
		t.Fatal(err)
	}
	return len(runs)
}

// TestHistoryReportsRevisions runs report on the fixture pair of exports into one archive
// and checks the second report's comparison against the revisions planted in week2.csv
// (testdata/history/README.md), in the internal summary and, withheld, in the released one.
func TestHistoryReportsRevisions(t *testing.T) {
	dir := t.TempDir()
	arch := filepath.Join(dir, "runs.sqlite")
	code, _, stderr := cli(t, "report", "--as-of", "2026-03-13", "--bootstrap", "50", "--history", arch, "-o", filepath.Join(dir, "r1.html"), historyFixtures+"week1.csv")
	if code != 0 {
		t.Fatalf("first report: exit %d: %s", code, stderr)
	}
	internal, released := filepath.Join(dir, "full.json"), filepath.Join(dir, "rel.json")
	code, _, stderr = cli(t, "report", "--as-of", "2026-03-20", "--bootstrap", "50", "--history", arch, "-o", filepath.Join(dir, "r2.html"),
		"--internal-json", internal, "--json", released, historyFixtures+"week2.csv")
	if code != 0 {
		t.Fatalf("second report: exit %d: %s", code, stderr)
	}
	var full, rel analysis.Summary
	for p, s := range map[string]*analysis.Summary{internal: &full, released: &rel} {
		b, err := os.ReadFile(p)
		if err != nil {
			t.Fatal(err)
		}
		if err := json.Unmarshal(b, s); err != nil {
			t.Fatal(err)
		}
	}
	sl := full.SinceLast
	if sl == nil {
		t.Fatal("no since_last in the internal summary")
	}
	r := sl.Revisions
	got := []int{*sl.NewByOnset, *sl.NewByReport, *r.Late, *r.Removed, *r.OnsetChanged, *r.LinksAdded, *r.LinksRemoved, *r.LinksMoved}
	want := []int{3, 4, 1, 1, 1, 2, 1, 1}
	for i := range want {
		if got[i] != want[i] {
			t.Errorf("counts %v, want %v (new by onset, by report, late, removed, onset changed, links added, removed, moved)", got, want)
			break
		}
	}
	if sl.IDs == nil || strings.Join(sl.IDs.LinksAdded, ",") != "A3,A7" {
		t.Errorf("internal identifier lists %+v", sl.IDs)
	}
	// Every count is from 1 to 4: the released view withholds all of them.
	rr := rel.SinceLast
	if rr == nil || rr.IDs != nil || rr.NewByOnset != nil || rr.Revisions.Late != nil || rr.Revisions.LinksAdded != nil {
		t.Errorf("released since_last %+v", rr)
	}
	if len(rel.Trend) != 2 {
		t.Errorf("released trend has %d points, want 2", len(rel.Trend))
	}
	html, _ := os.ReadFile(filepath.Join(dir, "r2.html"))
	if !bytes.Contains(html, []byte("Since the last report")) || bytes.Contains(html, []byte("A10")) {
		t.Error("the report lacks its section, or names a revised case")
	}
	if n := archivedRuns(t, arch); n != 2 {
		t.Errorf("%d runs archived, want 2", n)
	}
	// estimate records into the same archive too.
	code, _, stderr = cli(t, "estimate", "--as-of", "2026-03-27", "--bootstrap", "50", "--history", arch, historyFixtures+"week2.csv")
	if code != 0 {
		t.Fatalf("estimate: exit %d: %s", code, stderr)
	}
	if n := archivedRuns(t, arch); n != 3 {
		t.Errorf("%d runs archived after estimate, want 3", n)
	}
}

// TestHistoryTwoReportsAtOnce runs two report processes writing one archive at the same
// time, on a new archive and on one that exists: all succeed and every run is recorded.
func TestHistoryTwoReportsAtOnce(t *testing.T) {
	if testing.Short() {
		t.Skip("builds the program; skipped with -short")
	}
	dir := t.TempDir()
	bin := program(t)
	arch := filepath.Join(dir, "runs.sqlite")
	for round := range 2 {
		var wg sync.WaitGroup
		outs := make([][]byte, 2)
		errs := make([]error, 2)
		for i, asOf := range []string{"2026-03-13", "2026-03-20"} {
			wg.Add(1)
			go func() {
				defer wg.Done()
				cmd := exec.Command(bin, "report", "--as-of", asOf, "--bootstrap", "200", "--history", arch,
					"-o", filepath.Join(dir, asOf+".html"), historyFixtures+"week2.csv")
				outs[i], errs[i] = cmd.CombinedOutput()
			}()
		}
		wg.Wait()
		for i := range errs {
			if errs[i] != nil {
				t.Errorf("round %d, process %d: %v\n%s", round, i, errs[i], outs[i])
			}
		}
		if n := archivedRuns(t, arch); n != 2 {
			// Runs keeps the last run of each analysis date.
			t.Errorf("round %d: %d analysis dates archived, want 2", round, n)
		}
	}
}

// TestHistoryFailedRunWritesNothing: a report whose output cannot be written exits 4 and
// leaves the archive byte for byte as it was, and creates none where there was none.
func TestHistoryFailedRunWritesNothing(t *testing.T) {
	dir := t.TempDir()
	arch := filepath.Join(dir, "runs.sqlite")
	bad := filepath.Join(dir, "no", "such", "dir", "r.html")
	code, _, stderr := cli(t, "report", "--as-of", "2026-03-13", "--bootstrap", "50", "--history", arch, "-o", bad, historyFixtures+"week1.csv")
	if code != exitOutput {
		t.Fatalf("exit %d, want %d: %s", code, exitOutput, stderr)
	}
	if _, err := os.Stat(arch); err == nil {
		t.Fatal("a failed run created the archive")
	}
	code, _, stderr = cli(t, "report", "--as-of", "2026-03-13", "--bootstrap", "50", "--history", arch, "-o", filepath.Join(dir, "r.html"), historyFixtures+"week1.csv")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	before, err := os.ReadFile(arch)
	if err != nil {
		t.Fatal(err)
	}
	code, _, stderr = cli(t, "report", "--as-of", "2026-03-20", "--bootstrap", "50", "--history", arch, "-o", bad, historyFixtures+"week2.csv")
	if code != exitOutput {
		t.Fatalf("exit %d, want %d: %s", code, exitOutput, stderr)
	}
	after, _ := os.ReadFile(arch)
	if !bytes.Equal(before, after) {
		t.Error("a failed run changed the archive")
	}
	if n := archivedRuns(t, arch); n != 1 {
		t.Errorf("%d runs archived, want 1", n)
	}
}

// TestHistoryRefusesDamagedArchive: a truncated archive, another program's database and a
// text file each exit 1 with a message naming the file, and are not modified.
func TestHistoryRefusesDamagedArchive(t *testing.T) {
	dir := t.TempDir()
	good := filepath.Join(dir, "good.sqlite")
	code, _, stderr := cli(t, "report", "--as-of", "2026-03-13", "--bootstrap", "50", "--history", good, "-o", filepath.Join(dir, "r.html"), historyFixtures+"week1.csv")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	whole, err := os.ReadFile(good)
	if err != nil {
		t.Fatal(err)
	}
	files := map[string][]byte{
		"truncated.sqlite": whole[:len(whole)/2],
		"notes.txt":        []byte("these are not the runs you are looking for\n"),
	}
	for name, b := range files {
		writeFile(t, dir, name, string(b))
	}
	foreign, err := os.ReadFile(historyFixtures + "v1.sqlite")
	if err != nil {
		t.Fatal(err)
	}
	// Another program's database: the fixture with its application id changed (header
	// bytes 68–71, SQLite file format).
	foreign = append([]byte(nil), foreign...)
	copy(foreign[68:72], []byte{0, 0, 0, 7})
	writeFile(t, dir, "other.sqlite", string(foreign))
	for _, name := range []string{"truncated.sqlite", "notes.txt", "other.sqlite"} {
		p := filepath.Join(dir, name)
		before, _ := os.ReadFile(p)
		for _, cmd := range []string{"report", "estimate"} {
			code, _, stderr := cli(t, cmd, "--as-of", "2026-03-20", "--bootstrap", "50", "--history", p, "-o", filepath.Join(dir, name+".html"), historyFixtures+"week2.csv")
			if cmd == "estimate" {
				code, _, stderr = cli(t, cmd, "--as-of", "2026-03-20", "--bootstrap", "50", "--history", p, historyFixtures+"week2.csv")
			}
			if code != exitInput || !strings.Contains(stderr, "run archive "+p) || !strings.Contains(stderr, "left as it is") {
				t.Errorf("%s %s: exit %d, want %d with a clear message: %s", cmd, name, code, exitInput, stderr)
			}
		}
		after, _ := os.ReadFile(p)
		if !bytes.Equal(before, after) {
			t.Errorf("%s was modified", name)
		}
		if _, err := os.Stat(filepath.Join(dir, name+".html")); err == nil {
			t.Errorf("%s: a report was written", name)
		}
	}
}
