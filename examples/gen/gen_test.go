package main

import (
	"bytes"
	"os"
	"strings"
	"testing"
)

// TestCommittedExportIsReproducible: the committed export is exactly what the generator
// writes, so the example and its generator cannot drift apart.
func TestCommittedExportIsReproducible(t *testing.T) {
	var b bytes.Buffer
	if err := Write(&b); err != nil {
		t.Fatal(err)
	}
	committed, err := os.ReadFile("../ostvale-export.csv")
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(b.Bytes(), committed) {
		t.Fatal("examples/ostvale-export.csv differs from the generator's output; run go run ./examples/gen -o examples/ostvale-export.csv")
	}
}

// TestExportCarriesItsDeliberateProblems: one repeated reference, one impossible date, one
// unknown source case, and personal columns on every row.
func TestExportCarriesItsDeliberateProblems(t *testing.T) {
	rows := Rows()
	if len(rows) < 50 || len(rows) > 70 {
		t.Fatalf("%d rows, want about 60", len(rows))
	}
	refs := map[string]int{}
	bad, unknown := 0, 0
	for _, r := range rows {
		refs[r.Ref]++
		if r.Onset == "31.11.2026" {
			bad++
		}
		if strings.HasPrefix(r.Source, "OV-25-") {
			unknown++
		}
		if r.Surname == "" || r.Given == "" || r.Phone == "" || r.Address == "" {
			t.Errorf("row %s lacks a personal column", r.Ref)
		}
	}
	dups := 0
	for _, n := range refs {
		if n > 1 {
			dups += n - 1
		}
	}
	if dups != 1 || bad != 1 || unknown != 1 {
		t.Errorf("%d repeated references, %d bad dates, %d unknown sources; want one of each", dups, bad, unknown)
	}
}
