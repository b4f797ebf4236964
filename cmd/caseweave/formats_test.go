package main

import (
	"archive/zip"
	"bufio"
	"bytes"
	"compress/flate"
	"compress/gzip"
	"context"
	"encoding/json"
	"fmt"
	"io"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"

	"github.com/xuri/excelize/v2"
)

const workbookFixtures = "../../testdata/linelist/workbook"

// check on a workbook says which sheet it read, why, and on which row it found the header.
func TestCheckWorkbookSaysSheetAndHeader(t *testing.T) {
	code, out, stderr := cli(t, "check", "--as-of", "2026-03-01", filepath.Join(workbookFixtures, "regions-1904.xlsx"))
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	for _, want := range []string{
		"Format     xlsx, 1904 date system\n",
		"Sheet      Cases (the first sheet whose header has the required columns; passed over \"Notes\")\n",
		"Header     row 3\n",
		"bad_date               error          2  Cases!C9, Cases!C17",
	} {
		if !strings.Contains(out, want) {
			t.Errorf("check output lacks %q:\n%s", want, out)
		}
	}
	code, _, stderr = cli(t, "check", "--as-of", "2026-03-01", "--sheet", "Notes", filepath.Join(workbookFixtures, "regions-1900.xlsx"))
	if code != exitInput || !strings.Contains(stderr, `sheet "Notes"`) || !strings.Contains(stderr, "required column case_id not found") {
		t.Fatalf("--sheet Notes: exit %d, want %d: %s", code, exitInput, stderr)
	}
}

// Several files, one of them standard input compressed with gzip: every file is listed
// with its checksum and counts, a case in two files is a duplicate_id at the later place
// naming the earlier, and the released JSON names files by their base names only.
func TestSeveralFilesOneRun(t *testing.T) {
	dir := t.TempDir()
	north := writeFile(t, dir, "north.csv", "case_id,infector_id,onset_date\nN1,,2026-01-02\nW-03,N1,2026-01-04\nN2,W-01,2026-01-06\n")
	raw, err := os.ReadFile(filepath.Join(workbookFixtures, "cases.csv"))
	if err != nil {
		t.Fatal(err)
	}
	var gz bytes.Buffer
	zw := gzip.NewWriter(&gz)
	zw.Write(raw)
	zw.Close()
	full, released := filepath.Join(dir, "full.json"), filepath.Join(dir, "released.json")
	var out, errb bytes.Buffer
	code := run([]string{"check", "--as-of", "2026-03-01", "--internal-json", full, "--json", released, north, filepath.Join(workbookFixtures, "regions-1900.xlsx"), "-"},
		env{stdin: bytes.NewReader(gz.Bytes()), stdout: &out, stderr: &errb})
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, errb.String())
	}
	type doc struct {
		Input struct {
			Path  string
			Rows  int
			Files []struct {
				Path, SHA256, Format, Sheet string
				Gzip                        bool
				Rows, Used, Rejected        *int
			}
		}
		Problems []struct{ File, Place, Code, Message string }
	}
	read := func(p string) doc {
		var d doc
		b, err := os.ReadFile(p)
		if err != nil {
			t.Fatal(err)
		}
		if err := json.Unmarshal(b, &d); err != nil {
			t.Fatal(err)
		}
		return d
	}
	d := read(full)
	fs := d.Input.Files
	if len(fs) != 3 || d.Input.Rows != 35 || fs[2].Path != "standard input" || !fs[2].Gzip || fs[1].Sheet != "Cases" || len(fs[0].SHA256) != 64 {
		t.Fatalf("input %+v", d.Input)
	}
	for i, want := range [][3]int{{3, 3, 0}, {16, 13, 3}, {16, 0, 16}} {
		if *fs[i].Rows != want[0] || *fs[i].Used != want[1] || *fs[i].Rejected != want[2] {
			t.Errorf("file %s: rows %d used %d rejected %d, want %v", fs[i].Path, *fs[i].Rows, *fs[i].Used, *fs[i].Rejected, want)
		}
	}
	var dup bool
	for _, p := range d.Problems {
		if p.Code == "duplicate_id" && p.File == filepath.Join(workbookFixtures, "regions-1900.xlsx") && p.Place == "Cases!A6" && strings.Contains(p.Message, north+" line 3") {
			dup = true
		}
	}
	if !dup {
		t.Errorf("no duplicate_id for W-03 at Cases!A6 naming %s line 3: %+v", north, d.Problems)
	}
	for _, want := range []string{"Line list  " + north, "Line list  standard input", "Format     csv, gzip-compressed", "Rows       16 read, 13 used, 3 rejected"} {
		if !strings.Contains(out.String(), want) {
			t.Errorf("check output lacks %q:\n%s", want, out.String())
		}
	}
	r := read(released)
	for _, f := range r.Input.Files {
		if strings.Contains(f.Path, "/") {
			t.Errorf("released view names %q", f.Path)
		}
	}
	for _, p := range r.Problems {
		if strings.Contains(p.File, "/") || strings.Contains(p.Message, "W-") {
			t.Errorf("released problem %+v", p)
		}
	}
}

// The workbook and compression gauntlet. Each hostile input is read by the built program
// under a two-minute guard against a hang (not a speed test: the times, logged here, are
// well under 10 s on an idle two-core machine; BENCHMARKS.md), and its peak resident memory must stay under
// 500 MB; it ends with exit 1 and a message saying what is wrong, or exit 0 with its rows
// accounted for. The inputs are generated here, not checked in. The kernel's peak resident
// size of a child counts the test process's own pages at the moment of exec too, so the
// bound errs on the safe side.
func TestWorkbookGauntlet(t *testing.T) {
	if testing.Short() {
		t.Skip("builds the program; skipped with -short")
	}
	dir := t.TempDir()
	bin := program(t)
	runBin := func(t *testing.T, args ...string) (int, string) {
		t.Helper()
		ctx, cancel := context.WithTimeout(context.Background(), 2*time.Minute)
		defer cancel()
		cmd := exec.CommandContext(ctx, bin, append([]string{"check", "--as-of", "2026-06-01"}, args...)...)
		start := time.Now()
		out, err := cmd.CombinedOutput()
		elapsed := time.Since(start)
		if ctx.Err() != nil {
			t.Fatalf("no answer within two minutes (a hang): %s", out)
		}
		code := 0
		if err != nil {
			ee, ok := err.(*exec.ExitError)
			if !ok {
				t.Fatal(err)
			}
			code = ee.ExitCode()
		}
		peak := cmd.ProcessState.SysUsage().(*syscall.Rusage).Maxrss << 10        // Linux: KiB
		t.Logf("%.1f s, peak resident memory %d MB", elapsed.Seconds(), peak>>20) // logged, not asserted
		if peak >= 500<<20 {
			t.Fatalf("peak memory %d MB, over 500 MB", peak>>20)
		}
		if strings.Contains(string(out), "goroutine ") || strings.Contains(string(out), "panic") {
			t.Fatalf("crash: %s", out)
		}
		return code, string(out)
	}
	expect := func(t *testing.T, path string, code int, says ...string) {
		t.Helper()
		got, out := runBin(t, path)
		t.Logf("exit %d: %.400s", got, out)
		if got != code {
			t.Fatalf("exit %d, want %d: %.2000s", got, code, out)
		}
		for _, s := range says {
			if !strings.Contains(out, s) {
				t.Errorf("output lacks %q: %.2000s", s, out)
			}
		}
	}
	header := []string{"case_id", "infector_id", "onset_date"}
	data := [][]string{{"A", "", "46031"}, {"B", "A", "46033"}, {"C", "A", "46034"}}

	t.Run("zip bomb declaring 5 GiB", func(t *testing.T) {
		p := filepath.Join(dir, "bomb.xlsx")
		writeZip(t, p, func(zw *zip.Writer) {
			body := deflated(t, bytes.Repeat([]byte{'<'}, 1<<20))
			w, err := zw.CreateRaw(&zip.FileHeader{Name: "xl/worksheets/sheet1.xml", Method: zip.Deflate, CompressedSize64: uint64(len(body)), UncompressedSize64: 5 << 30})
			if err != nil {
				t.Fatal(err)
			}
			w.Write(body)
			workbookParts(t, zw)
		})
		expect(t, p, exitInput, "too_large", "compression bomb")
	})
	t.Run("zip bomb that lies about its size", func(t *testing.T) {
		p := filepath.Join(dir, "liar.xlsx")
		writeZip(t, p, func(zw *zip.Writer) {
			body := deflated(t, make([]byte, 64<<20))
			w, err := zw.CreateRaw(&zip.FileHeader{Name: "xl/worksheets/sheet1.xml", Method: zip.Deflate, CompressedSize64: uint64(len(body)), UncompressedSize64: 1 << 10})
			if err != nil {
				t.Fatal(err)
			}
			w.Write(body)
			workbookParts(t, zw)
		})
		expect(t, p, exitInput, "not_workbook")
	})
	t.Run("gzip bomb", func(t *testing.T) {
		p := filepath.Join(dir, "bomb.csv.gz")
		f, err := os.Create(p)
		if err != nil {
			t.Fatal(err)
		}
		zw, _ := gzip.NewWriterLevel(f, gzip.BestCompression)
		zw.Write([]byte("case_id,infector_id,onset_date\n"))
		row := bytes.Repeat([]byte("A,,2026-01-01\n"), 1<<16)
		for i := 0; i < 40; i++ { // 56 MiB of rows
			zw.Write(row)
		}
		zw.Close()
		f.Close()
		expect(t, p, exitInput, "too_large", "compression bomb")
	})
	t.Run("a million empty styled rows", func(t *testing.T) {
		p := filepath.Join(dir, "styled.xlsx")
		writeSheet(t, p, func(w io.Writer) {
			sheetRow(w, 1, header)
			for i, r := range data {
				sheetRow(w, i+2, r)
			}
			// Half of them as bare styled rows, half holding a styled cell with no value, as
			// spreadsheet programs write a formatted range.
			for r := 5; r < 5+1_000_000; r++ {
				if r%2 == 0 {
					fmt.Fprintf(w, `<row r="%d" s="1" customFormat="1" ht="15" customHeight="1"/>`, r)
				} else {
					fmt.Fprintf(w, `<row r="%d"><c r="A%d" s="1"/></row>`, r, r)
				}
			}
		})
		expect(t, p, exitOK, "Used              3", "Rejected          0")
	})
	t.Run("16,384 columns", func(t *testing.T) {
		p := filepath.Join(dir, "wide.xlsx")
		const cols = 16384
		writeSheet(t, p, func(w io.Writer) {
			h := make([]string, cols)
			for i := range h {
				h[i] = fmt.Sprintf("extra%d", i)
			}
			copy(h[cols-3:], header) // the line-list columns at XFB..XFD
			sheetRow(w, 1, h)
			for i, r := range data {
				v := make([]string, cols)
				for j := range v {
					v[j] = "v"
				}
				copy(v[cols-3:], r)
				sheetRow(w, i+2, v)
			}
		})
		expect(t, p, exitOK, "Used              3")
		// A cell beyond the last column a sheet can have is a clear error.
		p = filepath.Join(dir, "wider.xlsx")
		writeSheet(t, p, func(w io.Writer) {
			sheetRow(w, 1, header)
			fmt.Fprintf(w, `<row r="2"><c r="XFE2" t="inlineStr"><is><t>x</t></is></c></row>`)
		})
		expect(t, p, exitInput, "wider.xlsx", "row 2")
	})
	t.Run("encrypted workbook", func(t *testing.T) {
		f := excelize.NewFile()
		f.SetSheetRow("Sheet1", "A1", &[]string{"case_id", "onset_date"})
		f.SetSheetRow("Sheet1", "A2", &[]string{"A", "2026-01-01"})
		p := filepath.Join(dir, "locked.xlsx")
		if err := f.SaveAs(p, excelize.Options{Password: "secret"}); err != nil {
			t.Fatal(err)
		}
		expect(t, p, exitInput, "encrypted", "password")
	})
	t.Run(".xlsx that is really CSV", func(t *testing.T) {
		p := writeFile(t, dir, "export.xlsx", "case_id,infector_id,onset_date\nA,,2026-01-01\nB,A,2026-01-03\n")
		expect(t, p, exitOK, "Note       the name ends in .xlsx but the content is delimited text, so it was read as CSV", "Used              2")
	})
}

func writeZip(t *testing.T, path string, fill func(*zip.Writer)) {
	t.Helper()
	f, err := os.Create(path)
	if err != nil {
		t.Fatal(err)
	}
	zw := zip.NewWriter(f)
	fill(zw)
	if err := zw.Close(); err != nil {
		t.Fatal(err)
	}
	if err := f.Close(); err != nil {
		t.Fatal(err)
	}
}

func deflated(t *testing.T, b []byte) []byte {
	var buf bytes.Buffer
	fw, _ := flate.NewWriter(&buf, flate.BestSpeed)
	fw.Write(b)
	fw.Close()
	return buf.Bytes()
}

// workbookParts copies every part of a one-sheet workbook made by excelize except its
// sheet, which the caller writes; the style table gains a style 1 for styled rows.
func workbookParts(t *testing.T, zw *zip.Writer) {
	t.Helper()
	f := excelize.NewFile()
	if _, err := f.NewStyle(&excelize.Style{Fill: excelize.Fill{Type: "pattern", Pattern: 1, Color: []string{"FFFF00"}}}); err != nil {
		t.Fatal(err)
	}
	buf, err := f.WriteToBuffer()
	if err != nil {
		t.Fatal(err)
	}
	zr, err := zip.NewReader(bytes.NewReader(buf.Bytes()), int64(buf.Len()))
	if err != nil {
		t.Fatal(err)
	}
	for _, e := range zr.File {
		if e.Name == "xl/worksheets/sheet1.xml" {
			continue
		}
		if err := zw.Copy(e); err != nil {
			t.Fatal(err)
		}
	}
}

// writeSheet writes a workbook whose one sheet's rows body writes, streamed into the zip.
func writeSheet(t *testing.T, path string, body func(io.Writer)) {
	t.Helper()
	writeZip(t, path, func(zw *zip.Writer) {
		w, err := zw.Create("xl/worksheets/sheet1.xml")
		if err != nil {
			t.Fatal(err)
		}
		bw := bufio.NewWriterSize(w, 1<<20)
		bw.WriteString(`<?xml version="1.0" encoding="UTF-8" standalone="yes"?><worksheet xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main"><sheetData>`)
		body(bw)
		bw.WriteString(`</sheetData></worksheet>`)
		if err := bw.Flush(); err != nil {
			t.Fatal(err)
		}
		workbookParts(t, zw)
	})
}

// sheetRow writes spreadsheet row r: numbers as number cells, other values as inline text.
func sheetRow(w io.Writer, r int, cells []string) {
	fmt.Fprintf(w, `<row r="%d">`, r)
	for i, v := range cells {
		if v == "" {
			continue
		}
		ref, _ := excelize.CoordinatesToCellName(i+1, r)
		if v[0] >= '0' && v[0] <= '9' {
			fmt.Fprintf(w, `<c r="%s"><v>%s</v></c>`, ref, v)
		} else {
			fmt.Fprintf(w, `<c r="%s" t="inlineStr"><is><t>%s</t></is></c>`, ref, v)
		}
	}
	io.WriteString(w, "</row>")
}
