package analysis

import (
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/caseweave/caseweave/pipeline/forest"
	"github.com/caseweave/caseweave/pipeline/linelist"
)

// With one file per region, a file's row counts are counts of cases by place: a released
// view withholds the small ones and whatever would give them away by subtraction from the
// totals, names files by their base names, and the disclosure check finds nothing.
func TestReleaseWithholdsSmallFileCounts(t *testing.T) {
	dir := t.TempDir()
	write := func(name string, n int, prefix string) string {
		var b strings.Builder
		b.WriteString("case_id,infector_id,onset_date\n")
		for i := 0; i < n; i++ {
			fmt.Fprintf(&b, "%s%d,,2026-01-%02d\n", prefix, i, 1+i%28)
		}
		p := filepath.Join(dir, name)
		if err := os.WriteFile(p, []byte(b.String()), 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	paths := []string{write("north.csv", 3, "N"), write("south.csv", 40, "S"), write("east.csv", 25, "E")}
	ll, err := linelist.ReadFiles(paths, linelist.Options{})
	if err != nil {
		t.Fatal(err)
	}
	full := CheckSummary(strings.Join(paths, ", "), ll, forest.BuildIndexed(ll.Cases, ll.ByID), 20500)
	if f := full.Input.Files; len(f) != 3 || *f[0].Used != 3 || *f[1].Rows != 40 || *f[2].Rejected != 0 || full.Input.SHA256 != "" {
		t.Fatalf("full input %+v", full.Input)
	}
	rel, err := Release(full, Policy{})
	if err != nil {
		t.Fatal(err)
	}
	r := rel.Summary()
	fs := r.Input.Files
	if fs[0].Used != nil || fs[0].Rows != nil {
		t.Errorf("north's 3 rows shown: %+v", fs[0])
	}
	// Rows and used add up to shown totals, so a second file's counts go with north's.
	if (fs[1].Used == nil) == (fs[2].Used == nil) {
		t.Errorf("exactly one more file's used count should be withheld: %v %v", fs[1].Used, fs[2].Used)
	}
	if r.Input.Path != "north.csv, south.csv, east.csv" || fs[1].Path != "south.csv" {
		t.Errorf("released paths %q, %q", r.Input.Path, fs[1].Path)
	}
	if d := CheckDisclosure(full, r); len(d) != 0 {
		t.Errorf("disclosures: %v", d)
	}
	// A planted leak of north's count is caught.
	three := 3
	r.Input.Files[0].Used = &three
	if d := CheckDisclosure(full, r); len(d) == 0 {
		t.Error("the disclosure check missed north's 3 used rows")
	}
}
