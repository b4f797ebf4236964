package output

import (
	"os"
	"path/filepath"
	"testing"
)

func TestWriteFile(t *testing.T) {
	dir := t.TempDir()
	p := filepath.Join(dir, "report.html")
	if err := WriteFile(p, []byte("one")); err != nil {
		t.Fatal(err)
	}
	if err := WriteFile(p, []byte("two")); err != nil {
		t.Fatal(err)
	}
	if b, _ := os.ReadFile(p); string(b) != "two" {
		t.Errorf("content %q, want two", b)
	}
	// A failed rename (the target is a non-empty directory) leaves the target and no temp file.
	target := filepath.Join(dir, "occupied")
	os.MkdirAll(filepath.Join(target, "inner"), 0o755)
	if err := WriteFile(target, []byte("x")); err == nil {
		t.Error("writing over a directory succeeded")
	}
	if fi, err := os.Stat(target); err != nil || !fi.IsDir() {
		t.Error("the previous directory was disturbed")
	}
	left, _ := filepath.Glob(filepath.Join(dir, ".*tmp-*"))
	if len(left) != 0 {
		t.Errorf("temporary files left behind: %v", left)
	}
	if err := WriteFile(filepath.Join(dir, "missing", "x"), []byte("x")); err == nil {
		t.Error("writing into a missing directory succeeded")
	}
}
