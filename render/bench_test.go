package render

import "testing"

func BenchmarkRender(b *testing.B) {
	s := fixtureSummary()
	for b.Loop() {
		if _, err := Render(released(s), Options{}); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkEscapeMarkdown(b *testing.B) {
	for b.Loop() {
		escapeMarkdown("care home <b>*ward* 3|4</b> [x](y) and a longer ordinary sentence")
	}
}
