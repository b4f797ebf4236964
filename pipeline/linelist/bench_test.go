package linelist

import (
	"runtime"
	"strings"
	"testing"
)

// BenchmarkRead1M reads a generated 1,000,000-row canonical export (plus one extra column)
// from memory and reports time and allocation per row.
func BenchmarkRead1M(b *testing.B) {
	const rows = 1_000_000
	data := genLineList(rows)
	b.SetBytes(int64(len(data)))
	b.ReportAllocs()
	var before, after runtime.MemStats
	runtime.ReadMemStats(&before)
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		ll, err := Read(strings.NewReader(data), Options{AsOf: 20454 + 120})
		if err != nil || len(ll.Cases) != rows {
			b.Fatalf("read %v, err %v", len(ll.Cases), err)
		}
	}
	b.StopTimer()
	runtime.ReadMemStats(&after)
	n := float64(b.N) * rows
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/n, "ns/row")
	b.ReportMetric(float64(after.TotalAlloc-before.TotalAlloc)/n, "B/row")
	b.ReportMetric(float64(after.Mallocs-before.Mallocs)/n, "allocs/row")
}
