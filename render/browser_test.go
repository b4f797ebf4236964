package render

import (
	"context"
	"github.com/caseweave/caseweave/render/browser"
	"os"
	"os/exec"
	"path/filepath"
	"testing"
	"time"
)

// needBrowser fails (or skips with CASEWEAVE_SKIP_BROWSER=1) when chromium is missing.
func needBrowser(t *testing.T) {
	t.Helper()
	if os.Getenv("CASEWEAVE_SKIP_BROWSER") == "1" {
		t.Skip("CASEWEAVE_SKIP_BROWSER=1")
	}
	if err := browser.BrowserAvailable(); err != nil {
		t.Fatalf("browser tests: %v (or set CASEWEAVE_SKIP_BROWSER=1)", err)
	}
}

func TestBrowserDrawsEveryChartOffline(t *testing.T) {
	needBrowser(t)
	ctx, cancel := context.WithTimeout(context.Background(), 40*time.Second)
	defer cancel()
	html, err := Render(released(fixtureSummary()), Options{})
	if err != nil {
		t.Fatal(err)
	}
	check, err := browser.InspectInBrowser(ctx, html)
	if err != nil {
		t.Fatal(err)
	}
	if check.ChartsFound != 15 || check.ChartsDrawn != check.ChartsFound {
		t.Errorf("charts found %d, drawn %d (undrawn %v); want 15 drawn", check.ChartsFound, check.ChartsDrawn, check.Undrawn)
	}
	if len(check.ConsoleErrors) > 0 {
		t.Errorf("console errors: %v", check.ConsoleErrors)
	}
	if check.RequestsAttempted != 0 {
		t.Errorf("the report tried %d requests: %v", check.RequestsAttempted, check.RequestURLs)
	}
}

// The request counter must see a request when there is one, or the check above proves nothing.
func TestBrowserCountsAndBlocksRequests(t *testing.T) {
	needBrowser(t)
	ctx, cancel := context.WithTimeout(context.Background(), 40*time.Second)
	defer cancel()
	check, err := browser.InspectInBrowser(ctx, []byte(`<!DOCTYPE html><html><body><img src="http://example.invalid/pixel.png"><div data-cw-chart="x" id="x"></div></body></html>`))
	if err != nil {
		t.Fatal(err)
	}
	if check.RequestsAttempted < 1 {
		t.Errorf("a page with an external image made %d requests", check.RequestsAttempted)
	}
	if check.ChartsFound != 1 || check.ChartsDrawn != 0 {
		t.Errorf("an empty chart div: found %d, drawn %d; want 1, 0", check.ChartsFound, check.ChartsDrawn)
	}
}

func TestPrintPDFRendersToPNG(t *testing.T) {
	needBrowser(t)
	if _, err := exec.LookPath("pdftoppm"); err != nil {
		t.Fatal("pdftoppm missing: apt-get install -y poppler-utils")
	}
	ctx, cancel := context.WithTimeout(context.Background(), 40*time.Second)
	defer cancel()
	html, err := Render(released(fixtureSummary()), Options{})
	if err != nil {
		t.Fatal(err)
	}
	pdf, err := browser.PrintPDF(ctx, html)
	if err != nil {
		t.Fatal(err)
	}
	if len(pdf) < 1000 || string(pdf[:5]) != "%PDF-" {
		t.Fatalf("not a PDF (%d bytes)", len(pdf))
	}
	dir := t.TempDir()
	in := filepath.Join(dir, "report.pdf")
	if err := os.WriteFile(in, pdf, 0o644); err != nil {
		t.Fatal(err)
	}
	if out, err := exec.CommandContext(ctx, "pdftoppm", "-r", "30", "-png", in, filepath.Join(dir, "page")).CombinedOutput(); err != nil {
		t.Fatalf("pdftoppm: %v: %s", err, out)
	}
	pages, _ := filepath.Glob(filepath.Join(dir, "page-*.png"))
	if len(pages) < 5 {
		t.Errorf("pdftoppm made %d pages, want the whole report (at least 5)", len(pages))
	}
}
