package main

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/caseweave/caseweave/cmd/internal/history"
	"github.com/caseweave/caseweave/pipeline/analysis"
	"github.com/caseweave/caseweave/pipeline/linelist"
)

// smallArchive writes an archive of three runs (two of "North" a week apart, one of
// "South") whose released summaries carry R = 1.1, 1.3, 0.8 with known intervals, and
// one case each, so the fingerprints table is not empty.
func smallArchive(t *testing.T) string {
	t.Helper()
	path := filepath.Join(t.TempDir(), "runs.sqlite")
	a, err := history.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer a.Close()
	f := func(x float64) *float64 { return &x }
	var runs []history.Run
	for _, r := range []struct {
		j, date     string
		est, lo, hi float64
		cases       int
	}{{"North", "2026-03-13", 1.1, 0.7, 1.6, 12}, {"North", "2026-03-20", 1.3, 0.9, 1.8, 15}, {"South", "2026-03-20", 0.8, 0.5, 1.2, 9}} {
		day, err := linelist.ParseISODay(r.date)
		if err != nil {
			t.Fatal(err)
		}
		s := &analysis.Summary{AsOf: day, Tree: analysis.Tree{Cases: r.cases},
			Offspring: &analysis.Offspring{R: analysis.Estimate{Estimate: f(r.est), Percentile: [2]*float64{f(r.lo), f(r.hi)}}}}
		js, err := json.Marshal(s)
		if err != nil {
			t.Fatal(err)
		}
		runs = append(runs, history.Run{Jurisdiction: r.j, AsOf: day, Version: "v9.9.9", InputSHA256: "ab12" + r.date,
			Released: js, Summary: s, Cases: []linelist.Case{{ID: "SECRET-ID-1", Onset: day - 3}}})
	}
	if err := a.Record(runs); err != nil {
		t.Fatal(err)
	}
	return path
}

func TestHistoryListFilters(t *testing.T) {
	arch := smallArchive(t)
	for _, c := range []struct {
		args []string
		want []string // the first column (run number) of each row
	}{
		{nil, []string{"1", "2", "3"}},
		{[]string{"--jurisdiction", "North"}, []string{"1", "2"}},
		{[]string{"--from", "2026-03-14"}, []string{"2", "3"}},
		{[]string{"--to", "2026-03-13"}, []string{"1"}},
		{[]string{"--jurisdiction", "South", "--to", "2026-03-19"}, nil},
	} {
		code, out, stderr := cli(t, append(append([]string{"history", "list"}, c.args...), arch)...)
		if code != 0 {
			t.Fatalf("%v: exit %d: %s", c.args, code, stderr)
		}
		lines := strings.Split(strings.TrimSpace(out), "\n")[1:]
		var got []string
		for _, l := range lines {
			got = append(got, strings.Fields(l)[0])
		}
		if strings.Join(got, ",") != strings.Join(c.want, ",") {
			t.Errorf("%v: runs %v, want %v\n%s", c.args, got, c.want, out)
		}
	}
	_, out, _ := cli(t, "history", "list", "--jurisdiction", "North", "--from", "2026-03-20", arch)
	if !strings.Contains(out, "2026-03-20") || !strings.Contains(out, "v9.9.9") || !strings.Contains(out, "ab122026-03-20") || !strings.Contains(out, "1.30 (0.90 to 1.80)") {
		t.Errorf("list row lacks date, version, input hash or R with interval:\n%s", out)
	}
}

func TestHistoryShowAndExport(t *testing.T) {
	arch := smallArchive(t)
	code, out, stderr := cli(t, "history", "show", arch, "3")
	if code != 0 || !strings.Contains(out, "South") || !strings.Contains(out, "0.80 (0.50 to 1.20)") || !strings.Contains(out, "cases          9") {
		t.Errorf("show 3: exit %d: %s%s", code, out, stderr)
	}
	if code, _, stderr := cli(t, "history", "show", arch, "7"); code != exitInput || !strings.Contains(stderr, "no run 7") {
		t.Errorf("show 7: exit %d: %s", code, stderr)
	}

	code, out, stderr = cli(t, "history", "export", "--jurisdiction", "North", arch)
	if code != 0 {
		t.Fatalf("export csv: exit %d: %s", code, stderr)
	}
	rows, err := csv.NewReader(strings.NewReader(out)).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	if len(rows) != 3 || strings.Join(rows[0][:9], ",") != "run,as_of,jurisdiction,version,input_sha256,cases,R,R_lower,R_upper" {
		t.Fatalf("csv rows %v", rows)
	}
	if got := strings.Join(rows[2][:9], ","); got != "2,2026-03-20,North,v9.9.9,ab122026-03-20,15,1.3,0.9,1.8" {
		t.Errorf("csv row 2: %s", got)
	}

	dest := filepath.Join(t.TempDir(), "runs.json")
	if code, _, stderr := cli(t, "history", "export", "--format", "json", "--from", "2026-03-20", "-o", dest, arch); code != 0 {
		t.Fatalf("export json: exit %d: %s", code, stderr)
	}
	b, err := os.ReadFile(dest)
	if err != nil {
		t.Fatal(err)
	}
	if bytes.Contains(b, []byte("SECRET-ID-1")) {
		t.Error("the export holds a case identifier")
	}
	var got []struct {
		Run          int64            `json:"run"`
		Jurisdiction string           `json:"jurisdiction"`
		Summary      analysis.Summary `json:"summary"`
	}
	if err := json.Unmarshal(b, &got); err != nil {
		t.Fatal(err)
	}
	if len(got) != 2 || got[0].Run != 2 || got[1].Jurisdiction != "South" || got[1].Summary.Offspring == nil || *got[1].Summary.Offspring.R.Estimate != 0.8 || got[1].Summary.Tree.Cases != 9 {
		t.Errorf("json export %+v", got)
	}
}

func TestHistoryCommandBadInput(t *testing.T) {
	dir := t.TempDir()
	missing := filepath.Join(dir, "none.sqlite")
	if code, _, stderr := cli(t, "history", "list", missing); code != exitInput || !strings.Contains(stderr, "no such file") {
		t.Errorf("missing archive: exit %d: %s", code, stderr)
	}
	if _, err := os.Stat(missing); !os.IsNotExist(err) {
		t.Error("listing a missing archive created it")
	}
	foreign := filepath.Join(dir, "notes.txt")
	text := []byte("not an archive\n")
	if err := os.WriteFile(foreign, text, 0o644); err != nil {
		t.Fatal(err)
	}
	if code, _, _ := cli(t, "history", "export", foreign); code != exitInput {
		t.Errorf("foreign file: exit %d, want %d", code, exitInput)
	}
	if b, _ := os.ReadFile(foreign); !bytes.Equal(b, text) {
		t.Error("the foreign file was changed")
	}
	arch := smallArchive(t)
	for _, args := range [][]string{{"list", "--from", "13/03/2026", arch}, {"list", "--from", "2026-03-20", "--to", "2026-03-13", arch}, {"export", "--format", "xml", arch}, {"show", arch, "x"}} {
		if code, _, _ := cli(t, append([]string{"history"}, args...)...); code != exitUsage {
			t.Errorf("%v: exit %d, want %d", args, code, exitUsage)
		}
	}
}
