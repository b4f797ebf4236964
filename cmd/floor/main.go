// Command floor is the speed floor behind the ingest target of BENCHMARKS.md: one bare
// encoding/csv pass over a line list that does nothing but index the case identifiers
// (the first column) in a map, as any reader that links infectors must at least do.
//
//	go run ./cmd/floor big.csv
//
// It prints the elapsed time, the number of data rows and the heap held by the index.
package main

import (
	"bufio"
	"encoding/csv"
	"fmt"
	"io"
	"os"
	"runtime"
	"strings"
	"time"
)

func main() {
	if len(os.Args) != 2 {
		fmt.Fprintln(os.Stderr, "usage: floor LINELIST.csv")
		os.Exit(2)
	}
	start := time.Now()
	index, err := indexIDs(os.Args[1])
	elapsed := time.Since(start)
	if err != nil {
		fmt.Fprintln(os.Stderr, "floor:", err)
		os.Exit(1)
	}
	runtime.GC()
	var ms runtime.MemStats
	runtime.ReadMemStats(&ms)
	fmt.Printf("elapsed %v rows %d ns/row %.0f heap_bytes/row %.0f\n",
		elapsed, len(index), float64(elapsed.Nanoseconds())/float64(len(index)),
		float64(ms.HeapAlloc)/float64(len(index)))
	runtime.KeepAlive(index)
}

// indexIDs maps each case identifier to its data-row number.
func indexIDs(path string) (map[string]int32, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	cr := csv.NewReader(bufio.NewReaderSize(f, 64<<10))
	cr.ReuseRecord = true
	cr.FieldsPerRecord = -1
	if _, err := cr.Read(); err != nil { // header
		return nil, err
	}
	index := make(map[string]int32)
	for row := int32(0); ; row++ {
		rec, err := cr.Read()
		if err == io.EOF {
			return index, nil
		}
		if err != nil {
			return nil, err
		}
		index[strings.Clone(rec[0])] = row
	}
}
