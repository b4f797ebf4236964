package main

import (
	"bytes"
	"strings"
	"testing"
	"time"
)

// TestProgressBar checks when the bootstrap progress bar is drawn: never when stderr is not
// a terminal (logs and pipes stay clean), not before its delay has passed, and, once
// drawn, labelled and cleared at the end.
func TestProgressBar(t *testing.T) {
	var buf bytes.Buffer
	if f := progressAfter(env{stderr: &buf}, 0); f != nil {
		t.Fatal("a progress callback was made for a stderr that is not a terminal")
	}

	f := progressAfter(env{stderr: &buf, stderrIsTerminal: true}, time.Hour)
	for done := 1; done <= 100; done++ {
		f(done, 100)
	}
	if buf.Len() != 0 {
		t.Fatalf("the bar was drawn before its delay: %q", buf.String())
	}

	f = progressAfter(env{stderr: &buf, stderrIsTerminal: true}, 0)
	f(10, 100)
	if !strings.Contains(buf.String(), "bootstrap") {
		t.Fatalf("after the delay the bar shows %q, want it labelled bootstrap", buf.String())
	}
	drawn := buf.Len()
	f(100, 100)
	if rest := buf.String()[drawn:]; rest == "" || strings.Trim(rest, "\r ") != "" {
		t.Fatalf("finishing wrote %q, want the line blanked out (carriage returns and spaces)", rest)
	}
}
