package main

import (
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// checkLedger runs check --json on a file and asserts the ledger invariant: every row read
// is used or rejected, and every rejected row has an error naming its line.
func checkLedger(t *testing.T, path string, extra ...string) (code int, doc ledger, stderr string) {
	t.Helper()
	jsonPath := filepath.Join(t.TempDir(), "check.json")
	args := append([]string{"check", "--as-of", "2026-06-01", "--json", jsonPath}, extra...)
	code, _, stderr = cli(t, append(args, path)...)
	if strings.Contains(stderr, "goroutine ") || strings.Contains(stderr, "panic") || strings.Contains(stderr, "internal error") {
		t.Fatalf("crash: %s", stderr)
	}
	if code != exitOK {
		return code, doc, stderr
	}
	b, err := os.ReadFile(jsonPath)
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(b, &doc); err != nil {
		t.Fatal(err)
	}
	if doc.Input.Rows != doc.Input.Used+doc.Input.Rejected {
		t.Fatalf("rows %d != used %d + rejected %d", doc.Input.Rows, doc.Input.Used, doc.Input.Rejected)
	}
	rejectedLines := map[int]bool{}
	for _, p := range doc.Problems {
		if p.Severity == "error" && p.Row > 0 && (p.Code == "field_count" || p.Code == "missing_id" || p.Code == "duplicate_id" || (p.Code == "bad_date" && p.Column == "onset_date") || (p.Code == "bad_value" && p.Column == "case_id")) {
			rejectedLines[p.Row] = true
		}
	}
	if len(rejectedLines) != doc.Input.Rejected {
		t.Fatalf("%d rejected rows but %d lines carry a rejecting problem", doc.Input.Rejected, len(rejectedLines))
	}
	return code, doc, stderr
}

type ledger struct {
	Input struct {
		Rows, Used, Rejected int
	} `json:"input"`
	Problems []struct {
		Row      int    `json:"row"`
		Column   string `json:"column"`
		Code     string `json:"code"`
		Severity string `json:"severity"`
		Message  string `json:"message"`
	} `json:"problems"`
	Tree struct {
		Cases, Linked, Roots, Clusters int
		LargestCluster                 int `json:"largest_cluster"`
		MaxGeneration                  int `json:"max_generation"`
	} `json:"tree"`
}

func (l ledger) has(code string, row int) bool {
	for _, p := range l.Problems {
		if p.Code == code && (row == 0 || p.Row == row) {
			return true
		}
	}
	return false
}

// The input gauntlet: each hostile file ends with exit 1 and a message naming what is
// wrong, or exit 0 with its problems in the ledger; never a panic.
func TestInputGauntlet(t *testing.T) {
	dir := t.TempDir()
	header := "case_id,infector_id,onset_date\n"
	write := func(name, content string) string { return writeFile(t, dir, name, content) }
	t.Run("10 MB field", func(t *testing.T) {
		p := write("big.csv", header+"A,,2026-01-01\nB,A,\""+strings.Repeat("x", 10<<20)+"\"\nC,A,2026-01-03\n")
		code, doc, stderr := checkLedger(t, p)
		if code != exitOK || !doc.has("bad_date", 3) || doc.Input.Used != 2 {
			t.Fatalf("exit %d, %+v, %s", code, doc.Input, stderr)
		}
		for _, pr := range doc.Problems {
			if len(pr.Message) > 2000 {
				t.Fatalf("a %d-byte message: the field should be clipped", len(pr.Message))
			}
		}
	})
	t.Run("100,000 columns", func(t *testing.T) {
		cols := make([]string, 100000)
		vals := make([]string, 100000)
		for i := range cols {
			cols[i], vals[i] = fmt.Sprintf("extra%d", i), "v"
		}
		cols[0], cols[1], vals[0], vals[1] = "case_id", "onset_date", "A", "2026-01-01"
		p := write("wide.csv", strings.Join(cols, ",")+"\n"+strings.Join(vals, ",")+"\n")
		if code, doc, stderr := checkLedger(t, p); code != exitOK || doc.Input.Used != 1 {
			t.Fatalf("exit %d %+v %s", code, doc.Input, stderr)
		}
		// And without the required columns: exit 1, with a bounded message.
		cols[0], cols[1] = "x", "y"
		p = write("wide2.csv", strings.Join(cols, ",")+"\n"+strings.Join(vals, ",")+"\n")
		code, _, stderr := checkLedger(t, p)
		if code != exitInput || !strings.Contains(stderr, "case_id") || len(stderr) > 5000 {
			t.Fatalf("exit %d, %d-byte message: %.300s", code, len(stderr), stderr)
		}
	})
	t.Run("NUL bytes and invalid UTF-8 mid-file", func(t *testing.T) {
		p := write("nul.csv", header+"A,,2026-01-01\nB\x00,A,2026-01-02\nC,A\xff\xfe,2026-01-03\nD,A,2026-01-04\n")
		code, doc, stderr := checkLedger(t, p)
		if code != exitOK || doc.Input.Rows != 4 {
			t.Fatalf("exit %d %+v %s", code, doc.Input, stderr)
		}
		if !doc.has("bad_value", 0) {
			t.Fatalf("NUL or invalid bytes in identifiers should be a bad_value problem: %+v", doc.Problems)
		}
	})
	t.Run("mixed delimiters", func(t *testing.T) {
		p := write("mixed.csv", header+"A,,2026-01-01\nB;A;2026-01-02\nC,A,2026-01-03\n")
		code, doc, stderr := checkLedger(t, p)
		if code != exitOK || !doc.has("field_count", 3) || doc.Input.Used != 2 {
			t.Fatalf("exit %d %+v %v %s", code, doc.Input, doc.Problems, stderr)
		}
	})
	t.Run("impossible and far dates", func(t *testing.T) {
		p := write("dates.csv", header+"A,,0000-00-00\nB,,9999-12-31\nC,,2026-02-30\nD,,2026-01-01\n")
		code, doc, stderr := checkLedger(t, p)
		if code != exitOK || doc.Input.Used != 1 || !doc.has("bad_date", 2) || !doc.has("bad_date", 3) || !doc.has("bad_date", 4) {
			t.Fatalf("exit %d %+v %v %s", code, doc.Input, doc.Problems, stderr)
		}
	})
	t.Run("identifiers with spaces, quotes and look-alikes stay distinct", func(t *testing.T) {
		// Latin A, Cyrillic А (U+0410), Greek Α (U+0391); a quoted id with a comma and quotes.
		p := write("ids.csv", header+"A 1,,2026-01-01\nА 1,A 1,2026-01-02\nΑ 1,А 1,2026-01-03\n\"say \"\"hi\"\", ok\",Α 1,2026-01-04\n")
		code, doc, stderr := checkLedger(t, p)
		if code != exitOK || doc.Input.Used != 4 || doc.Tree.Linked != 3 || doc.Tree.MaxGeneration != 3 {
			t.Fatalf("exit %d %+v %+v %v %s", code, doc.Input, doc.Tree, doc.Problems, stderr)
		}
	})
	t.Run("cycles of length 1 and 10,000", func(t *testing.T) {
		var b strings.Builder
		b.WriteString(header + "S,S,2026-01-01\n")
		for i := 0; i < 10000; i++ {
			fmt.Fprintf(&b, "c%d,c%d,2026-01-%02d\n", i, (i+9999)%10000, 1+i%28)
		}
		code, doc, stderr := checkLedger(t, write("cycles.csv", b.String()))
		if code != exitOK || !doc.has("self_infector", 2) {
			t.Fatalf("exit %d %s", code, stderr)
		}
		n := 0
		for _, p := range doc.Problems {
			if p.Code == "cycle" {
				n++
			}
		}
		if n != 10000 || doc.Tree.Linked != 0 {
			t.Fatalf("%d cycle problems, %d linked; want 10000 and 0", n, doc.Tree.Linked)
		}
	})
	t.Run("a config mapping two canonical names to one column", func(t *testing.T) {
		cfg := write("cfg.yaml", "input:\n  columns:\n    case_id: ID\n    infector_id: ID\n    onset_date: Onset\n")
		p := write("cfgd.csv", "ID,Onset\nA,2026-01-01\n")
		code, _, stderr := checkLedger(t, p, "--config", cfg)
		if code != exitInput || !strings.Contains(stderr, "case_id") || !strings.Contains(stderr, "infector_id") {
			t.Fatalf("exit %d: %s", code, stderr)
		}
	})
	t.Run("max-rows guard", func(t *testing.T) {
		p := write("rows.csv", header+"A,,2026-01-01\nB,A,2026-01-02\nC,A,2026-01-03\n")
		code, _, stderr := checkLedger(t, p, "--max-rows", "2")
		if code != exitInput || !strings.Contains(stderr, "2") {
			t.Fatalf("exit %d: %s", code, stderr)
		}
	})
}

// An infector chain 1,000,000 cases deep is read, linked and summarised without exhausting
// the stack.
func TestMillionDeepChain(t *testing.T) {
	if testing.Short() {
		t.Skip("short")
	}
	var b strings.Builder
	b.Grow(30 << 20)
	b.WriteString("case_id,infector_id,onset_date\nc0,,2026-01-01\n")
	for i := 1; i < 1000000; i++ {
		fmt.Fprintf(&b, "c%d,c%d,2026-01-01\n", i, i-1)
	}
	p := writeFile(t, t.TempDir(), "deep.csv", b.String())
	code, doc, stderr := checkLedger(t, p)
	if code != exitOK || doc.Tree.MaxGeneration != 999999 || doc.Tree.LargestCluster != 1000000 || doc.Tree.Clusters != 1 {
		t.Fatalf("exit %d %+v %s", code, doc.Tree, stderr)
	}
}
