package templates

import (
	"io/fs"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

func TestDefaultHasTheTemplateFiles(t *testing.T) {
	for _, name := range []string{"report.md", "style.css", "config.yaml", "partials/headline.md", "partials/provenance.md"} {
		if _, err := fs.Stat(Default(), name); err != nil {
			t.Errorf("default template lacks %s: %v", name, err)
		}
	}
}

func TestWriteStarter(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "mine")
	if err := WriteStarter(dir); err != nil {
		t.Fatal(err)
	}
	cfg, err := os.ReadFile(filepath.Join(dir, "config.yaml"))
	if err != nil || !strings.Contains(string(cfg), "# caseweave report settings") {
		t.Errorf("starter config.yaml is not the commented one: %v", err)
	}
	for _, name := range []string{"report.md", "README.md", "style.css", "partials/outlook.md"} {
		if _, err := os.Stat(filepath.Join(dir, name)); err != nil {
			t.Errorf("starter lacks %s", name)
		}
	}
	// Refuses to overwrite: even one existing file stops it, and that file is untouched.
	other := t.TempDir()
	keep := filepath.Join(other, "style.css")
	os.WriteFile(keep, []byte("mine"), 0o644)
	if err := WriteStarter(other); err == nil || !strings.Contains(err.Error(), "already exists") {
		t.Fatalf("WriteStarter over an existing file: %v", err)
	}
	if b, _ := os.ReadFile(keep); string(b) != "mine" {
		t.Error("an existing file was overwritten")
	}
	if _, err := os.Stat(filepath.Join(other, "report.md")); err == nil {
		t.Error("WriteStarter wrote files although it refused")
	}
}
