package main

import (
	"bufio"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
)

// A 10,000,000-row line list is read, validated and linked in under 2 GB of memory.
// It builds the real program and reads the peak resident set size the kernel reports for
// it. It writes a 640 MB file, so it runs only with CASEWEAVE_BIG=1 (.ci/test sets it, in
// a run without the race detector, whose shadow memory would be measured too).
func TestTenMillionRowsUnderTwoGB(t *testing.T) {
	if os.Getenv("CASEWEAVE_BIG") != "1" {
		t.Skip("set CASEWEAVE_BIG=1 to run the 10,000,000-row memory test")
	}
	dir := t.TempDir()
	bin := program(t)
	list := filepath.Join(dir, "ten-million.csv")
	f, err := os.Create(list)
	if err != nil {
		t.Fatal(err)
	}
	w := bufio.NewWriterSize(f, 1<<20)
	w.WriteString("case_id,infector_id,onset_date,report_date,setting,age_group,jurisdiction,imported,full_name\n")
	const n = 10_000_000
	settings := []string{"household", "school", "workplace", "care home", "community"}
	for i := 0; i < n; i++ {
		inf := ""
		if i >= 10_000 {
			inf = fmt.Sprintf("C%08d", i-1-(i*7919)%10_000) // an earlier case, within 10,000 rows
		}
		d := i / 30_000
		fmt.Fprintf(w, "C%08d,%s,2026-%02d-%02d,,%s,18-39,North,no,Invented Name %d\n", i, inf, 1+(d/28)%12, 1+d%28, settings[i%5], i)
	}
	if err := w.Flush(); err != nil {
		t.Fatal(err)
	}
	f.Close()
	cmd := exec.Command(bin, "check", "--as-of", "2027-01-01", list)
	cmd.Env = append(os.Environ(), "GOMEMLIMIT=") // the program's own default limit
	out, err := cmd.CombinedOutput()
	if err != nil {
		t.Fatalf("check: %v\n%s", err, out)
	}
	if !strings.Contains(string(out), "Used       10000000") {
		t.Fatalf("not every row was used:\n%s", out)
	}
	ru := cmd.ProcessState.SysUsage().(*syscall.Rusage)
	peak := ru.Maxrss << 10 // Linux reports kilobytes
	t.Logf("peak resident set size %.2f GB for %d rows (%.0f bytes a row)", float64(peak)/1e9, n, float64(peak)/n)
	if peak >= 2<<30 {
		t.Fatalf("peak memory %.2f GB, over 2 GB", float64(peak)/(1<<30))
	}
}
