package render

import (
	"context"
	"fmt"
	"github.com/caseweave/caseweave/render/browser"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
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
	if check.ChartsFound != 24 || check.ChartsDrawn != check.ChartsFound {
		t.Errorf("charts found %d, drawn %d (undrawn %v); want 24 drawn", check.ChartsFound, check.ChartsDrawn, check.Undrawn)
	}
	if len(check.ConsoleErrors) > 0 {
		t.Errorf("console errors: %v", check.ConsoleErrors)
	}
	if check.RequestsAttempted != 0 {
		t.Errorf("the report tried %d requests: %v", check.RequestsAttempted, check.RequestURLs)
	}
}

// No chart text (axis name, tick label, legend, mark label) is drawn outside its chart, on
// screen and at the width of an A4 page.
func TestBrowserChartLabelsInsideTheirCharts(t *testing.T) {
	needBrowser(t)
	html, err := Render(released(fixtureSummary()), Options{})
	if err != nil {
		t.Fatal(err)
	}
	for _, w := range []int64{1280, browser.A4Width} {
		ctx, cancel := context.WithTimeout(context.Background(), 40*time.Second)
		check, err := browser.InspectAtWidth(ctx, html, w)
		cancel()
		if err != nil {
			t.Fatal(err)
		}
		if check.LabelsChecked < 100 {
			t.Errorf("%d px: only %d chart texts measured; the probe is not reading the charts", w, check.LabelsChecked)
		}
		for _, c := range check.Clipped {
			t.Errorf("%d px: clipped %s", w, c)
		}
	}
}

// The label probe must see a label drawn outside its chart, or the check above proves nothing.
func TestBrowserSeesAClippedLabel(t *testing.T) {
	needBrowser(t)
	ctx, cancel := context.WithTimeout(context.Background(), 40*time.Second)
	defer cancel()
	html, err := Render(released(fixtureSummary()), Options{Charts: []string{"epicurve"}})
	if err != nil {
		t.Fatal(err)
	}
	// Push the y axis name far beyond the left edge of the chart.
	bad := strings.Replace(string(html), `"nameGap":40`, `"nameGap":400`, 1)
	if bad == string(html) {
		t.Fatal("the epidemic curve's y axis has no nameGap of 40 to change")
	}
	check, err := browser.InspectInBrowser(ctx, []byte(bad))
	if err != nil {
		t.Fatal(err)
	}
	if len(check.Clipped) == 0 {
		t.Errorf("an axis name 400 px off the chart was not found among %d texts", check.LabelsChecked)
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
	// Page one is the summary (title, headline, epidemic curve) and every page has the
	// footer with the title and its number; pdftotext is poppler's, beside pdftoppm.
	text := func(page int) string {
		out, err := exec.CommandContext(ctx, "pdftotext", "-f", strconv.Itoa(page), "-l", strconv.Itoa(page), in, "-").Output()
		if err != nil {
			t.Fatalf("pdftotext page %d: %v", page, err)
		}
		return string(out)
	}
	first := text(1)
	for _, want := range []string{"Transmission report", "At a glance", "Cases by week of symptom onset", "page 1 of " + strconv.Itoa(len(pages))} {
		if !strings.Contains(first, want) {
			t.Errorf("page 1 lacks %q:\n%s", want, first)
		}
	}
	if strings.Contains(first, "Data quality") {
		t.Error("page 1 runs on past the summary into the data-quality section")
	}
	last := text(len(pages))
	if want := fmt.Sprintf("page %d of %d", len(pages), len(pages)); !strings.Contains(last, want) || !strings.Contains(last, "Transmission report") {
		t.Errorf("the last page's footer lacks %q or the title:\n%s", want, last)
	}
}
