package browser

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"

	"github.com/chromedp/cdproto/cdp"
	"github.com/chromedp/cdproto/page"
	"github.com/chromedp/chromedp"
)

// ScreenshotElement opens html as InspectInBrowser does (a fresh headless chromium, every
// request blocked), waits for the charts to draw, and returns a PNG of the first element that
// matches the CSS selector, at twice the CSS pixel density so it stays sharp on
// high-resolution screens. The element is found with querySelector in the page, since the
// document is set directly rather than navigated to.
func ScreenshotElement(ctx context.Context, html []byte, selector string) ([]byte, error) {
	s, err := openPage(ctx, html, 1280)
	if err != nil {
		return nil, err
	}
	defer s.cancel()
	sel, err := json.Marshal(selector)
	if err != nil {
		return nil, err
	}
	rect, err := chromedp.Run(s.ctx, chromedp.Evaluate[[]float64](`(function(){ var el = document.querySelector(`+string(sel)+`);
  if (!el) { return []; }
  var r = el.getBoundingClientRect();
  return [r.left + window.scrollX, r.top + window.scrollY, r.width, r.height]; })()`))
	if err != nil {
		return nil, fmt.Errorf("finding %s: %w", selector, err)
	}
	if len(rect) != 4 || rect[2] <= 0 || rect[3] <= 0 {
		return nil, errors.New("no visible element matches " + selector)
	}
	png, err := chromedp.Run(s.ctx, chromedp.Action[[]byte](func(ctx context.Context, t *chromedp.Target) ([]byte, error) {
		yes := true
		r, err := cdp.Call(ctx, t, page.CaptureScreenshot, page.CaptureScreenshotParams{
			Format:                page.CaptureScreenshotFormatPng,
			Clip:                  &page.Viewport{X: rect[0], Y: rect[1], Width: rect[2], Height: rect[3], Scale: 2},
			CaptureBeyondViewport: &yes,
			FromSurface:           &yes,
		})
		if err != nil {
			return nil, err
		}
		return r.Data, nil
	}))
	if err != nil {
		return nil, fmt.Errorf("taking a picture of %s: %w", selector, err)
	}
	return png, nil
}
