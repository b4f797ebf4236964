package main

import (
	"bytes"
	"context"
	"errors"
	"os"
	"os/exec"
	"path/filepath"
	"testing"
	"time"

	"github.com/caseweave/caseweave/render/browser"
)

// needBrowser fails when chromium is missing (the test command installs it), unless
// CASEWEAVE_SKIP_BROWSER=1.
func needBrowser(t *testing.T) {
	t.Helper()
	if os.Getenv("CASEWEAVE_SKIP_BROWSER") == "1" {
		t.Skip("CASEWEAVE_SKIP_BROWSER=1")
	}
	if err := browser.BrowserAvailable(); err != nil {
		t.Fatalf("browser tests: %v (`bash .ci/test` installs it)", err)
	}
}

// The demo's reports open with all network blocked; every chart initialises and
// draws, nothing is logged as an error and no request leaves the page. The demo is also
// byte-identical across runs, into any folder.
func TestDemoReportsInBrowser(t *testing.T) {
	needBrowser(t)
	dir := sharedDemo(t)
	reports := []string{"marrowfield.html", "ostvale.html", "quillan-bay.html"}
	for _, name := range reports {
		html, err := os.ReadFile(filepath.Join(dir, name))
		if err != nil {
			t.Fatal(err)
		}
		if len(html) > 3<<20 {
			t.Errorf("%s is %d bytes, over 3 MB", name, len(html))
		}
		ctx, cancel := context.WithTimeout(context.Background(), 2*time.Minute)
		pc, err := browser.InspectInBrowser(ctx, html)
		cancel()
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		t.Logf("%s: %d charts found, %d drawn, %d console errors, %d requests", name, pc.ChartsFound, pc.ChartsDrawn, len(pc.ConsoleErrors), pc.RequestsAttempted)
		if pc.ChartsFound < 6 || pc.ChartsDrawn != pc.ChartsFound {
			t.Errorf("%s: %d of %d charts drew (undrawn: %v)", name, pc.ChartsDrawn, pc.ChartsFound, pc.Undrawn)
		}
		if len(pc.ConsoleErrors) != 0 {
			t.Errorf("%s: console errors %v", name, pc.ConsoleErrors)
		}
		if pc.RequestsAttempted != 0 {
			t.Errorf("%s: %d requests left the page: %v", name, pc.RequestsAttempted, pc.RequestURLs)
		}
		for _, c := range pc.Clipped {
			t.Errorf("%s: chart text drawn outside its chart: %s", name, c)
		}
	}
	// Run again into another folder (the summary records the line list's name, not its
	// folder) and compare.
	again := t.TempDir()
	code, stdout, stderr := cli(t, "demo", "-o", again)
	if code != 0 {
		t.Fatalf("demo exit %d: %s", code, stderr)
	}
	if !bytes.Contains([]byte(stdout), []byte("index.html")) {
		t.Errorf("demo should say where the index is: %s", stdout)
	}
	for _, name := range append(reports, "index.html", "vell-estuary-linelist.csv", "ostvale.json") {
		first, _ := os.ReadFile(filepath.Join(dir, name))
		b, _ := os.ReadFile(filepath.Join(again, name))
		if len(b) == 0 || !bytes.Equal(first, b) {
			t.Errorf("%s differs between two demo runs", name)
		}
	}
}

// --pdf prints the report with headless chromium; pdftoppm renders its pages.
func TestReportPDF(t *testing.T) {
	needBrowser(t)
	pdftoppm, err := exec.LookPath("pdftoppm")
	if err != nil {
		t.Fatal("the PDF test needs pdftoppm (Debian package poppler-utils; `bash .ci/test` installs it)")
	}
	dir := t.TempDir()
	list := simulated(t, dir)
	out := filepath.Join(dir, "r.html")
	if code, _, stderr := cli(t, "report", "--pdf", "--as-of", "2026-03-27", "--bootstrap", "100", "-o", out, list); code != 0 {
		t.Fatal(stderr)
	}
	pdf, err := os.ReadFile(filepath.Join(dir, "r.pdf"))
	if err != nil || !bytes.HasPrefix(pdf, []byte("%PDF-")) {
		t.Fatalf("no PDF: %v", err)
	}
	cmd := exec.Command(pdftoppm, "-png", "-r", "40", filepath.Join(dir, "r.pdf"), filepath.Join(dir, "page"))
	if outb, err := cmd.CombinedOutput(); err != nil {
		var ee *exec.ExitError
		errors.As(err, &ee)
		t.Fatalf("pdftoppm: %v %s", err, outb)
	}
	pages, _ := filepath.Glob(filepath.Join(dir, "page-*.png"))
	if len(pages) < 4 {
		t.Fatalf("%d pages rendered, want a multi-page report", len(pages))
	}
	for _, p := range pages {
		if st, err := os.Stat(p); err != nil || st.Size() < 1000 {
			t.Errorf("page %s is empty", p)
		}
	}
}
