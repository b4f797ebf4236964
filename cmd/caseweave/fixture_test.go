package main

import (
	"bytes"
	"fmt"
	"io/fs"
	"os"
	"os/exec"
	"path/filepath"
	"sync"
	"testing"
)

// fixtureRoot is a folder made once per test binary for outputs several tests only read:
// the demo batch and the built program. Tests never write into it; one that must write
// takes a copy (demoBatch).
var fixtureRoot string

func TestMain(m *testing.M) {
	dir, err := os.MkdirTemp("", "caseweave-cmd-test-")
	if err != nil {
		fmt.Fprintln(os.Stderr, err)
		os.Exit(1)
	}
	fixtureRoot = dir
	code := m.Run()
	os.RemoveAll(dir)
	os.Exit(code)
}

// once runs build at most once per test binary and remembers its path or failure, so every
// caller of a shared fixture fails for the fixture's own reason.
type once struct {
	sync.Once
	path string
	err  error
}

func (o *once) get(t testing.TB, build func() (string, error)) string {
	t.Helper()
	o.Do(func() { o.path, o.err = build() })
	if o.err != nil {
		t.Fatal(o.err)
	}
	return o.path
}

var sharedDemoOnce, programOnce once

// sharedDemo returns the folder of one `caseweave demo` run, made on first use. It is
// read-only: a test that writes into a batch folder uses demoBatch.
func sharedDemo(t testing.TB) string {
	return sharedDemoOnce.get(t, func() (string, error) {
		dir := filepath.Join(fixtureRoot, "demo")
		var out, errb bytes.Buffer
		if code := run([]string{"demo", "-o", dir}, env{stdout: &out, stderr: &errb}); code != 0 {
			return "", fmt.Errorf("demo exit %d: %s", code, errb.String())
		}
		return dir, nil
	})
}

// demoBatch returns a private copy of the shared demo batch, for tests that write into the
// batch folder (the mail command's send log).
func demoBatch(t *testing.T) string {
	t.Helper()
	src := sharedDemo(t)
	dst := filepath.Join(t.TempDir(), "demo")
	err := filepath.WalkDir(src, func(p string, d fs.DirEntry, err error) error {
		if err != nil {
			return err
		}
		rel, _ := filepath.Rel(src, p)
		if d.IsDir() {
			return os.MkdirAll(filepath.Join(dst, rel), 0o755)
		}
		b, err := os.ReadFile(p)
		if err != nil {
			return err
		}
		return os.WriteFile(filepath.Join(dst, rel), b, 0o644)
	})
	if err != nil {
		t.Fatal(err)
	}
	return dst
}

// program returns the path of the caseweave program built once per test binary, for tests
// that run it as a separate process.
func program(t testing.TB) string {
	return programOnce.get(t, func() (string, error) {
		bin := filepath.Join(fixtureRoot, "caseweave")
		if out, err := exec.Command("go", "build", "-o", bin, ".").CombinedOutput(); err != nil {
			return "", fmt.Errorf("build: %v\n%s", err, out)
		}
		return bin, nil
	})
}
