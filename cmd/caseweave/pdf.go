package main

import (
	"context"
	"time"

	"github.com/caseweave/caseweave/render/browser"
)

// pdfTimeout bounds one PDF print; a report prints in a few seconds.
const pdfTimeout = 2 * time.Minute

// printPDF prints a rendered report to A4 PDF with headless Chromium.
func printPDF(html []byte) ([]byte, error) {
	ctx, cancel := context.WithTimeout(context.Background(), pdfTimeout)
	defer cancel()
	return browser.PrintPDF(ctx, html)
}
