package linelist

import (
	"bytes"
	"runtime"
	"strings"
	"testing"

	"github.com/xuri/excelize/v2"
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

// BenchmarkReadWorkbook100k reads a 100,000-row workbook of the same export (dates as
// serial-number cells, written with excelize's stream writer) and reports time per row.
func BenchmarkReadWorkbook100k(b *testing.B) {
	const rows = 100_000
	data := genWorkbook(b, genLineList(rows))
	b.SetBytes(int64(len(data)))
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		ll, err := Read(bytes.NewReader(data), Options{AsOf: 20454 + 120})
		if err != nil || len(ll.Cases) != rows {
			b.Fatalf("read %v, err %v", len(ll.Cases), err)
		}
	}
	b.StopTimer()
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/rows, "ns/row")
}

// genWorkbook writes a CSV text as a one-sheet workbook, its date columns as serial numbers.
func genWorkbook(b *testing.B, csvText string) []byte {
	f := excelize.NewFile()
	defer f.Close()
	sw, err := f.NewStreamWriter("Sheet1")
	if err != nil {
		b.Fatal(err)
	}
	for r, line := range strings.Split(strings.TrimSuffix(csvText, "\n"), "\n") {
		fields := strings.Split(line, ",")
		cells := make([]any, len(fields))
		for i, v := range fields {
			cells[i] = v
			if d, err := ParseISODay(v); err == nil && r > 0 {
				cells[i] = float64(d + 25569) // serial number, 1900 system
			}
		}
		ref, _ := excelize.CoordinatesToCellName(1, r+1)
		if err := sw.SetRow(ref, cells); err != nil {
			b.Fatal(err)
		}
	}
	if err := sw.Flush(); err != nil {
		b.Fatal(err)
	}
	var buf bytes.Buffer
	if err := f.Write(&buf); err != nil {
		b.Fatal(err)
	}
	return buf.Bytes()
}
