// Package browser drives a headless Chromium for caseweave: it opens a report with every
// network request blocked and counted, checks that each chart drew (InspectInBrowser), and
// prints a report to A4 PDF (PrintPDF).
package browser

import (
	"context"
	"errors"
	"fmt"
	stdlog "log"
	"os"
	"os/exec"
	"strings"
	"sync"
	"time"

	"github.com/chromedp/cdproto/cdp"
	"github.com/chromedp/cdproto/emulation"
	"github.com/chromedp/cdproto/fetch"
	"github.com/chromedp/cdproto/log"
	"github.com/chromedp/cdproto/network"
	"github.com/chromedp/cdproto/page"
	"github.com/chromedp/cdproto/runtime"
	"github.com/chromedp/chromedp"
)

// ChromiumPath is where the browser is looked for (Debian's chromium package).
const ChromiumPath = "/usr/bin/chromium"

// ErrNoBrowser is returned when chromium is not installed.
var ErrNoBrowser = errors.New("chromium not found at " + ChromiumPath + "; install it with: apt-get install -y chromium")

// PageCheck is what a headless browser saw when it opened a report.
type PageCheck struct {
	ChartsFound       int      // chart elements in the page
	ChartsDrawn       int      // chart elements holding a canvas with size and non-blank pixels
	Undrawn           []string // IDs of chart elements that did not draw
	ConsoleErrors     []string // console errors, uncaught exceptions and browser-log errors
	RequestsAttempted int      // requests the page tried to make (all were blocked)
	RequestURLs       []string // their URLs
	// LabelsChecked counts the texts the charts drew (axis names and labels, titles,
	// legends, mark labels); Clipped lists those whose bounding box leaves their chart's
	// area, as "chart id: text [x0 y0 x1 y1] outside W×H".
	LabelsChecked int
	Clipped       []string
}

// labelProbe measures every text element each chart drew, through ECharts' renderer
// (zrender): its bounding rectangle in the chart's own pixels, after its transform, against
// the chart's width and height. A text a pixel or more outside is clipped on the page.
const labelProbe = `(function () {
  var out = {checked: 0, clipped: []};
  if (typeof echarts === "undefined") { return out; }
  document.querySelectorAll("[data-cw-chart]").forEach(function (el) {
    var ch = echarts.getInstanceByDom(el);
    if (!ch) { return; }
    var w = ch.getWidth(), h = ch.getHeight();
    ch.getZr().storage.getDisplayList(true).forEach(function (d) {
      if ((d.type !== "text" && d.type !== "tspan") || d.invisible || !d.style || !d.style.text) { return; }
      var r = d.getBoundingRect().clone();
      d.updateTransform();
      if (d.transform) { r.applyTransform(d.transform); }
      out.checked++;
      if (r.x < -1 || r.y < -1 || r.x + r.width > w + 1 || r.y + r.height > h + 1) {
        out.clipped.push(el.id + ": " + JSON.stringify(String(d.style.text)) + " [" +
          [r.x, r.y, r.x + r.width, r.y + r.height].map(Math.round).join(" ") + "] outside " + w + "×" + h);
      }
    });
  });
  return out;
})()`

type labelState struct {
	Checked int      `json:"checked"`
	Clipped []string `json:"clipped"`
}

// chartProbe reports, for each chart element, whether its canvas has a size and at least a
// few non-transparent pixels.
const chartProbe = `Array.from(document.querySelectorAll("[data-cw-chart]")).map(function (el) {
  var c = el.querySelector("canvas");
  if (!c || !c.width || !c.height) { return {id: el.id, drawn: false}; }
  var d = c.getContext("2d").getImageData(0, 0, c.width, c.height).data, n = 0;
  for (var i = 3; i < d.length; i += 4) { if (d[i] !== 0 && ++n > 50) { break; } }
  return {id: el.id, drawn: n > 50};
})`

type chartState struct {
	ID    string `json:"id"`
	Drawn bool   `json:"drawn"`
}

// session is one headless browser with every network request failed and counted.
type session struct {
	ctx    context.Context
	cancel func()
	mu     sync.Mutex
	check  PageCheck
}

// BrowserAvailable returns ErrNoBrowser when the chromium that InspectInBrowser and
// PrintPDF drive is not installed, and nil when it is.
func BrowserAvailable() error {
	if _, err := exec.LookPath(ChromiumPath); err != nil {
		return ErrNoBrowser
	}
	return nil
}

// openPage starts a fresh headless chromium (its own profile directory, no network), loads
// html into a blank page with every request blocked, and waits for the charts to initialise.
func openPage(ctx context.Context, html []byte, width int64) (*session, error) {
	if err := BrowserAvailable(); err != nil {
		return nil, err
	}
	profile, err := os.MkdirTemp("", "caseweave-chromium-")
	if err != nil {
		return nil, err
	}
	allocCtx, cancelAlloc := chromedp.NewExecAllocator(ctx,
		chromedp.ExecPath(ChromiumPath),
		chromedp.Flag("headless", true),
		chromedp.Flag("hide-scrollbars", true),
		chromedp.NoSandbox,
		chromedp.DisableGPU,
		chromedp.NoFirstRun,
		chromedp.Flag("disable-quic", true),
		chromedp.Flag("disable-background-networking", true),
		chromedp.Flag("disable-component-update", true),
		chromedp.Flag("disable-sync", true),
		chromedp.Flag("no-default-browser-check", true),
		chromedp.UserDataDir(profile),
		chromedp.WindowSize(int(width), 1000),
	)
	// Replacing the document of the blank tab makes chromedp log that it saw a DOM update
	// before a frame; that message is expected here and says nothing about the report.
	tabCtx, cancelTab := chromedp.NewContext(allocCtx, chromedp.WithErrorf(func(format string, args ...any) {
		if msg := fmt.Sprintf(format, args...); !strings.Contains(msg, "no top-level frame") {
			stdlog.Print(msg)
		}
	}))
	s := &session{ctx: tabCtx}
	s.cancel = func() {
		cancelTab()
		cancelAlloc()
		os.RemoveAll(profile)
	}
	fail := func(err error) (*session, error) {
		s.cancel()
		return nil, err
	}
	// Start the browser before subscribing, so the subscriptions attach to this tab.
	if err := chromedp.Do(tabCtx, chromedp.Func(func(ctx context.Context, t *chromedp.Target) error {
		_, err := cdp.Call(ctx, t, runtime.Enable, cdp.Empty{})
		if err == nil {
			_, err = cdp.Call(ctx, t, log.Enable, cdp.Empty{})
		}
		return err
	})); err != nil {
		return fail(fmt.Errorf("starting chromium: %w", err))
	}
	paused := chromedp.Events(tabCtx, fetch.RequestPaused)
	go func() {
		for ev, err := range paused {
			if err != nil {
				return
			}
			s.mu.Lock()
			s.check.RequestsAttempted++
			if ev.Request != nil {
				s.check.RequestURLs = append(s.check.RequestURLs, ev.Request.URL)
			}
			s.mu.Unlock()
			_ = chromedp.Do(tabCtx, chromedp.Func(func(ctx context.Context, t *chromedp.Target) error {
				_, err := cdp.Call(ctx, t, fetch.FailRequest, fetch.FailRequestParams{RequestID: ev.RequestID, ErrorReason: network.ErrorReasonBlockedByClient})
				return err
			}))
		}
	}()
	console := chromedp.Console(tabCtx)
	go func() {
		for m, err := range console {
			if err != nil {
				return
			}
			if m.Type == chromedp.ConsoleError || m.IsException() {
				s.mu.Lock()
				s.check.ConsoleErrors = append(s.check.ConsoleErrors, m.String())
				s.mu.Unlock()
			}
		}
	}()
	err = chromedp.Do(tabCtx, chromedp.Func(func(ctx context.Context, t *chromedp.Target) error {
		if _, err := cdp.Call(ctx, t, fetch.Enable, fetch.EnableParams{Patterns: []*fetch.RequestPattern{{URLPattern: "*"}}}); err != nil {
			return err
		}
		if _, err := cdp.Call(ctx, t, emulation.SetDeviceMetricsOverride, emulation.SetDeviceMetricsOverrideParams{Width: width, Height: 1000, DeviceScaleFactor: 1}); err != nil {
			return err
		}
		tree, err := cdp.Call(ctx, t, page.GetFrameTree, cdp.Empty{})
		if err != nil {
			return err
		}
		_, err = cdp.Call(ctx, t, page.SetDocumentContent, page.SetDocumentContentParams{FrameID: tree.FrameTree.Frame.ID, HTML: string(html)})
		return err
	}))
	if err != nil {
		return fail(fmt.Errorf("loading the report: %w", err))
	}
	// Charts initialise synchronously at the end of the page; wait for the flag the init
	// script sets (or for a page without charts), then one more frame for the canvas.
	deadline := time.Now().Add(20 * time.Second)
	for {
		ready, err := chromedp.Run(tabCtx, chromedp.Evaluate[bool](
			`document.readyState === "complete" && (document.documentElement.getAttribute("data-cw-charts") === "ready" || typeof echarts === "undefined")`))
		if err != nil {
			return fail(fmt.Errorf("waiting for the report: %w", err))
		}
		if ready {
			break
		}
		if time.Now().After(deadline) {
			return fail(errors.New("the report's charts did not initialise within 20 s"))
		}
		if err := chromedp.Do(tabCtx, chromedp.Sleep(100*time.Millisecond)); err != nil {
			return fail(err)
		}
	}
	if err := chromedp.Do(tabCtx, chromedp.Sleep(300*time.Millisecond)); err != nil {
		return fail(err)
	}
	return s, nil
}

// InspectInBrowser opens html in a fresh headless chromium 1280 pixels wide with all
// network blocked and reports the charts found and drawn, the chart texts drawn outside
// their chart, console errors and requests attempted.
func InspectInBrowser(ctx context.Context, html []byte) (*PageCheck, error) {
	return InspectAtWidth(ctx, html, 1280)
}

// A4Width is the width in CSS pixels of an A4 page (210 mm at 96 pixels to the inch).
const A4Width = 794

// InspectAtWidth is InspectInBrowser in a window width pixels wide (A4Width for paper).
func InspectAtWidth(ctx context.Context, html []byte, width int64) (*PageCheck, error) {
	s, err := openPage(ctx, html, width)
	if err != nil {
		return nil, err
	}
	defer s.cancel()
	states, err := chromedp.Run(s.ctx, chromedp.Evaluate[[]chartState](chartProbe))
	if err != nil {
		return nil, fmt.Errorf("probing charts: %w", err)
	}
	labels, err := chromedp.Run(s.ctx, chromedp.Evaluate[labelState](labelProbe))
	if err != nil {
		return nil, fmt.Errorf("measuring chart labels: %w", err)
	}
	// Give late console messages and requests a moment to arrive.
	if err := chromedp.Do(s.ctx, chromedp.Sleep(200*time.Millisecond)); err != nil {
		return nil, err
	}
	s.mu.Lock()
	defer s.mu.Unlock()
	check := s.check
	check.LabelsChecked, check.Clipped = labels.Checked, labels.Clipped
	check.ChartsFound = len(states)
	for _, c := range states {
		if c.Drawn {
			check.ChartsDrawn++
		} else {
			check.Undrawn = append(check.Undrawn, c.ID)
		}
	}
	return &check, nil
}

// pdfFooter is the footer of every printed page: the report's title (its <title>, which
// names the place and the analysis date) and the page number of the total. Chromium fills
// the spans of these classes; a footer has no font size of its own, so it sets one.
const pdfFooter = `<div style="font: 8pt system-ui, Arial, sans-serif; color: #5b6670; width: 100%; margin: 0 14mm; display: flex; justify-content: space-between;">` +
	`<span class="title"></span><span>page <span class="pageNumber"></span> of <span class="totalPages"></span></span></div>`

// PrintPDF prints html to PDF on A4 with backgrounds and a footer on every page (the title
// and "page n of m"), with every fold-out opened so the "how this was computed" notes are on
// paper too.
func PrintPDF(ctx context.Context, html []byte) ([]byte, error) {
	s, err := openPage(ctx, html, 1280)
	if err != nil {
		return nil, err
	}
	defer s.cancel()
	if _, err := chromedp.Run(s.ctx, chromedp.Evaluate[bool](
		`(function(){ document.querySelectorAll("details").forEach(function(d){ d.open = true; }); return true; })()`)); err != nil {
		return nil, fmt.Errorf("opening fold-outs: %w", err)
	}
	pdf, err := chromedp.Run(s.ctx, chromedp.PrintToPDF(
		chromedp.PDFPaper(chromedp.PaperA4),
		chromedp.PDFPrintBackground(),
		chromedp.PDFPreferCSSPageSize(),
		chromedp.PDFMargins(0.55, 0.6, 0.7, 0.6),
		chromedp.PDFHeaderTemplate(`<span></span>`),
		chromedp.PDFFooterTemplate(pdfFooter),
	))
	if err != nil {
		return nil, fmt.Errorf("printing to PDF: %w", err)
	}
	return pdf, nil
}
