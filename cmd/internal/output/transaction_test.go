package output

import (
	"context"
	"errors"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"testing"
)

// snapshot reads every file under dir (names relative, with contents).
func snapshot(t *testing.T, dir string) map[string]string {
	t.Helper()
	out := map[string]string{}
	filepath.WalkDir(dir, func(p string, d os.DirEntry, err error) error {
		if err == nil && !d.IsDir() {
			b, _ := os.ReadFile(p)
			rel, _ := filepath.Rel(dir, p)
			out[rel] = string(b)
		}
		return nil
	})
	return out
}

func leftovers(t *testing.T, dir string) []string {
	t.Helper()
	var out []string
	entries, _ := os.ReadDir(dir)
	for _, e := range entries {
		if strings.Contains(e.Name(), stagePrefix) {
			out = append(out, e.Name())
		}
	}
	return out
}

func batch(root string, version string) *Transaction {
	tx := &Transaction{}
	f := tx.Folder(filepath.Join(root, "reports"))
	f.Add("index.html", []byte("index "+version))
	f.Add("a.html", []byte("a "+version))
	f.Add("tables/a/epicurve.csv", []byte("csv "+version))
	tx.File(filepath.Join(root, "summary.json"), []byte("json "+version))
	return tx
}

// A batch replaces its folder as a whole: files of the old batch that the new one lacks go.
func TestTransactionReplacesFolderAsAWhole(t *testing.T) {
	root := t.TempDir()
	if err := batch(root, "1").Commit(context.Background()); err != nil {
		t.Fatal(err)
	}
	os.WriteFile(filepath.Join(root, "reports", "b.html"), []byte("stale"), 0o644) // a report the next batch lacks
	tx := &Transaction{}
	f := tx.Folder(filepath.Join(root, "reports"))
	f.Add("index.html", []byte("index 2"))
	if err := tx.Commit(context.Background()); err != nil {
		t.Fatal(err)
	}
	got := snapshot(t, filepath.Join(root, "reports"))
	if len(got) != 2 || got["index.html"] != "index 2" || got[Manifest] != "index.html\n" {
		t.Errorf("folder after the second batch: %v", got)
	}
	if l := leftovers(t, root); len(l) > 0 {
		t.Errorf("staging left behind: %v", l)
	}
}

// A failure at any step, or an interruption, leaves every destination as it was and nothing
// staged behind.
func TestTransactionFailsWithoutDamage(t *testing.T) {
	root := t.TempDir()
	if err := batch(root, "1").Commit(context.Background()); err != nil {
		t.Fatal(err)
	}
	before := snapshot(t, root)
	steps := 0
	counting := batch(root, "2")
	counting.Fault = func(n int) error { steps = n; return nil }
	probe := t.TempDir()
	counting.folders[0].Dir = filepath.Join(probe, "reports")
	counting.files[0].path = filepath.Join(probe, "summary.json")
	if err := counting.Commit(context.Background()); err != nil {
		t.Fatal(err)
	}
	if steps < 6 {
		t.Fatalf("only %d steps counted", steps)
	}
	for n := 1; n <= steps; n++ {
		tx := batch(root, "2")
		tx.Fault = func(i int) error {
			if i == n {
				return errors.New("no space left on device")
			}
			return nil
		}
		if err := tx.Commit(context.Background()); err == nil || !strings.Contains(err.Error(), "no space") {
			t.Fatalf("step %d: error %v", n, err)
		}
		if after := snapshot(t, root); len(after) != len(before) {
			t.Fatalf("step %d: %d files, want %d: %v", n, len(after), len(before), after)
		} else {
			for k, v := range before {
				if after[k] != v {
					t.Fatalf("step %d: %s changed to %q", n, k, after[k])
				}
			}
		}
		if l := leftovers(t, root); len(l) > 0 {
			t.Fatalf("step %d: staging left behind: %v", n, l)
		}
	}
	ctx, cancel := context.WithCancel(context.Background())
	tx := batch(root, "3")
	tx.Fault = func(i int) error {
		if i == 2 {
			cancel()
		}
		return nil
	}
	if err := tx.Commit(ctx); !errors.Is(err, ErrInterrupted) {
		t.Errorf("interrupted: %v", err)
	}
	if after := snapshot(t, root); after["reports/a.html"] != "a 1" || len(leftovers(t, root)) > 0 {
		t.Errorf("after an interruption: %v, leftovers %v", after, leftovers(t, root))
	}
}

// A folder caseweave did not write is refused; the staged copies of a killed run are
// removed by the next, those of a live run are not.
func TestTransactionRefusesForeignFoldersAndCleansUp(t *testing.T) {
	root := t.TempDir()
	own := filepath.Join(root, "reports")
	os.MkdirAll(own, 0o755)
	os.WriteFile(filepath.Join(own, "thesis.docx"), []byte("mine"), 0o644)
	tx := &Transaction{}
	tx.Folder(own).Add("index.html", []byte("x"))
	var re *RefusedError
	if err := tx.Commit(context.Background()); !errors.As(err, &re) {
		t.Errorf("foreign folder: %v", err)
	}
	if b, _ := os.ReadFile(filepath.Join(own, "thesis.docx")); string(b) != "mine" {
		t.Error("the foreign file was touched")
	}
	dead := filepath.Join(root, ".out"+stagePrefix+"999999999-123")
	live := filepath.Join(root, ".out"+stagePrefix+"1-123") // pid 1 is always alive
	os.MkdirAll(dead, 0o755)
	os.MkdirAll(live, 0o755)
	tx = &Transaction{}
	tx.Folder(filepath.Join(root, "out")).Add("index.html", []byte("x"))
	if err := tx.Commit(context.Background()); err != nil {
		t.Fatal(err)
	}
	l := leftovers(t, root)
	sort.Strings(l)
	if len(l) != 1 || l[0] != filepath.Base(live) {
		t.Errorf("after cleanup: %v, want only the live run's", l)
	}
}
