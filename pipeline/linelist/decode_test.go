package linelist

import (
	"bytes"
	"testing"
	"unicode/utf8"
)

func TestASCIIPrefix(t *testing.T) {
	// The eight-byte fast path must stop exactly where a byte-by-byte scan does
	// (common practice: compare with the plain loop at every position and length).
	for n := 0; n <= 20; n++ {
		for at := 0; at <= n; at++ {
			b := bytes.Repeat([]byte{'a'}, n)
			if at < n {
				b[at] = 0xC3
			}
			want := 0
			for want < len(b) && b[want] < utf8.RuneSelf {
				want++
			}
			if got := asciiPrefix(b); got != want {
				t.Fatalf("len %d, non-ASCII at %d: asciiPrefix = %d, want %d", n, at, got, want)
			}
		}
	}
}
