package linelist

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"
)

// checkLedger asserts the accounting every LineList must satisfy: each row read is a case
// or rejected, and each rejected row has an error problem on its own line.
func checkLedger(t testing.TB, ll *LineList) {
	t.Helper()
	if ll.Rows != len(ll.Cases)+ll.Rejected {
		t.Fatalf("Rows = %d, but len(Cases) = %d and Rejected = %d", ll.Rows, len(ll.Cases), ll.Rejected)
	}
	accepted := map[int]bool{}
	ids := map[string]bool{}
	for _, c := range ll.Cases {
		accepted[c.Row] = true
		if c.ID == "" {
			t.Fatalf("case on line %d has a blank ID", c.Row)
		}
		if ids[c.ID] {
			t.Fatalf("case ID %q kept twice", c.ID)
		}
		ids[c.ID] = true
	}
	rejectedRows := map[int]bool{}
	for _, p := range ll.Problems {
		if p.Row <= 0 || p.Message == "" || p.Code == "" {
			t.Fatalf("problem without place or message: %+v", p)
		}
		if p.Severity == SeverityError && !accepted[p.Row] {
			rejectedRows[p.Row] = true
		}
	}
	if len(rejectedRows) != ll.Rejected {
		t.Fatalf("Rejected = %d but %d lines carry an error problem and no case: %v", ll.Rejected, len(rejectedRows), ll.Problems)
	}
}

func mustRead(t testing.TB, data string, opts Options) *LineList {
	t.Helper()
	ll, err := Read(strings.NewReader(data), opts)
	if err != nil {
		t.Fatalf("Read: %v", err)
	}
	checkLedger(t, ll)
	return ll
}

func day(t testing.TB, s string) Day {
	t.Helper()
	d, err := ParseISODay(s)
	if err != nil {
		t.Fatal(err)
	}
	return d
}

type probKey struct {
	Row      int
	Column   string
	Code     Code
	Severity Severity
}

func keys(ps []Problem) []probKey {
	out := make([]probKey, len(ps))
	for i, p := range ps {
		out[i] = probKey{p.Row, p.Column, p.Code, p.Severity}
	}
	return out
}

func caseIDs(ll *LineList) []string {
	ids := make([]string, len(ll.Cases))
	for i, c := range ll.Cases {
		ids[i] = c.ID
	}
	return ids
}

func TestEveryProblemCode(t *testing.T) {
	ll, err := ReadFile(filepath.Join("testdata", "linelist", "problems.csv"), Options{AsOf: day(t, "2026-04-01")})
	if err != nil {
		t.Fatal(err)
	}
	checkLedger(t, ll)
	want := []probKey{
		{4, ColReportDate, CodeBadDate, SeverityError},
		{4, ColImported, CodeBadValue, SeverityError},
		{5, ColCaseID, CodeMissingID, SeverityError},
		{6, ColCaseID, CodeDuplicateID, SeverityError},
		{7, ColOnsetDate, CodeBadDate, SeverityError},
		{8, "", CodeFieldCount, SeverityError},
		{9, ColOnsetDate, CodeFutureOnset, SeverityWarning},
	}
	if got := keys(ll.Problems); fmt.Sprint(got) != fmt.Sprint(want) {
		t.Errorf("problems:\n got %v\nwant %v", got, want)
	}
	if got := caseIDs(ll); fmt.Sprint(got) != "[A1 A2 A3 A7]" {
		t.Errorf("cases = %v", got)
	}
	if ll.Rows != 8 || ll.Rejected != 4 {
		t.Errorf("Rows, Rejected = %d, %d; want 8, 4", ll.Rows, ll.Rejected)
	}
	for _, p := range ll.Problems {
		if p.Code == CodeDuplicateID && !strings.Contains(p.Message, "line 3") {
			t.Errorf("duplicate_id message does not name the first line: %q", p.Message)
		}
		if p.Code == CodeBadDate && p.Row == 7 && !strings.Contains(p.Message, "date_format") {
			t.Errorf("non-ISO bad_date message does not say how to set date_format: %q", p.Message)
		}
	}
	a3 := ll.Cases[2]
	if a3.HasReport || a3.Imported || a3.Setting != "school" || a3.InfectorID != "A1" {
		t.Errorf("A3 = %+v; want report dropped, not imported, setting kept", a3)
	}
	if !ll.Cases[0].Imported || ll.Cases[0].Report != day(t, "2026-03-03") || !ll.Cases[0].HasReport {
		t.Errorf("A1 = %+v", ll.Cases[0])
	}
	if ll.Cases[0].Setting != "household" || ll.Cases[1].Setting != "household" {
		t.Errorf("settings = %q, %q", ll.Cases[0].Setting, ll.Cases[1].Setting)
	}
	if unsafeSameString(ll.Cases[0].Setting, ll.Cases[1].Setting) == false {
		t.Errorf("repeated setting values are not interned")
	}
	raw, _ := os.ReadFile(filepath.Join("testdata", "linelist", "problems.csv"))
	sum := sha256.Sum256(raw)
	if ll.Sources[0].SHA256 != hex.EncodeToString(sum[:]) {
		t.Errorf("SHA256 = %s, want %x", ll.Sources[0].SHA256, sum)
	}
	for _, c := range ll.Cases {
		for _, s := range []string{c.ID, c.InfectorID, c.Setting, c.AgeGroup, c.Jurisdiction} {
			if strings.Contains(s, "Example") {
				t.Errorf("an extra column's value reached a case: %+v", c)
			}
		}
	}
}

func TestDecoding(t *testing.T) {
	latin1 := "case_id,onset_date,setting\r\nA,2026-01-02,caf\xe9\r\nB,2026-01-03,cr\xe8che\r\n"
	cp1252 := "case_id;onset_date;setting\nA;2026-01-02;\x93quoted\x94\nB;2026-01-03;\x80 cost\n"
	tests := []struct {
		name     string
		data     string
		in       InputConfig
		delim    rune
		enc      string
		settings []string
	}{
		{"BOM and CRLF", "\xef\xbb\xbfcase_id,onset_date,setting\r\nA,2026-01-02,home\r\nB,2026-01-03,\"a\r\nb\"\r\n", InputConfig{}, ',', EncUTF8BOM, []string{"home", "a\nb"}},
		{"semicolon", "case_id;onset_date;setting;note\nA;2026-01-02;home;x,y\nB;2026-01-03;work;z\n", InputConfig{}, ';', EncUTF8, []string{"home", "work"}},
		{"tab", "case_id\tonset_date\tsetting\nA\t2026-01-02\thome, garden\nB\t2026-01-03\twork\n", InputConfig{}, '\t', EncUTF8, []string{"home, garden", "work"}},
		{"latin-1 detected", latin1, InputConfig{}, ',', EncWindows1252, []string{"café", "crèche"}},
		{"latin-1 configured", latin1, InputConfig{Encoding: "latin-1"}, ',', EncLatin1, []string{"café", "crèche"}},
		{"windows-1252 detected", cp1252, InputConfig{}, ';', EncWindows1252, []string{"\u201cquoted\u201d", "€ cost"}},
		{"utf-8 non-ASCII", "case_id,onset_date,setting\nA,2026-01-02,crèche\nB,2026-01-03,café\n", InputConfig{}, ',', EncUTF8, []string{"crèche", "café"}},
		{"delimiter override", "case_id;onset_date,setting\nA;x,home\n", InputConfig{Delimiter: ";"}, ';', EncUTF8, nil},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			ll, err := Read(strings.NewReader(tt.data), Options{Input: tt.in})
			if tt.settings == nil {
				// delimiter override: the header splits into "case_id" and "onset_date,setting".
				var fe *FileError
				if !errors.As(err, &fe) || fe.Code != FileMissingColumn || !strings.Contains(fe.Err.Error(), `"onset_date,setting"`) {
					t.Fatalf("err = %v; want missing_column showing the header split on ';'", err)
				}
				return
			}
			if err != nil {
				t.Fatal(err)
			}
			checkLedger(t, ll)
			if ll.Sources[0].Delimiter != tt.delim || ll.Sources[0].Encoding != tt.enc {
				t.Errorf("delimiter %q encoding %q; want %q %q", ll.Sources[0].Delimiter, ll.Sources[0].Encoding, tt.delim, tt.enc)
			}
			var got []string
			for _, c := range ll.Cases {
				got = append(got, c.Setting)
			}
			if fmt.Sprintf("%q", got) != fmt.Sprintf("%q", tt.settings) {
				t.Errorf("settings = %q, want %q", got, tt.settings)
			}
			if len(ll.Problems) != 0 {
				t.Errorf("problems: %v", ll.Problems)
			}
			if ll.Sources[0].Header[0] != "case_id" {
				t.Errorf("header[0] = %q (BOM not stripped?)", ll.Sources[0].Header[0])
			}
		})
	}
}

func TestConfigDayFirst(t *testing.T) {
	raw, err := os.ReadFile(filepath.Join("testdata", "linelist", "dayfirst.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	in, err := parseInputYAML(string(raw))
	if err != nil {
		t.Fatal(err)
	}
	ll, err := ReadFile(filepath.Join("testdata", "linelist", "dayfirst.csv"), Options{Input: in})
	if err != nil {
		t.Fatal(err)
	}
	checkLedger(t, ll)
	if got := caseIDs(ll); fmt.Sprint(got) != "[C-1 C-2 C-3]" {
		t.Errorf("cases = %v", got)
	}
	wantOnset := []string{"2026-04-25", "2026-05-03", "2026-05-04"}
	for i, c := range ll.Cases {
		if c.Onset.String() != wantOnset[i] {
			t.Errorf("%s onset %s, want %s", c.ID, c.Onset, wantOnset[i])
		}
	}
	// 04/25/2026 is month-first; under dmy it has month 25.
	if got := keys(ll.Problems); fmt.Sprint(got) != fmt.Sprint([]probKey{{5, ColOnsetDate, CodeBadDate, SeverityError}}) {
		t.Errorf("problems = %v", ll.Problems)
	}
	if ll.Sources[0].Mapping[ColOnsetDate] != "Début des symptômes" || ll.Sources[0].Mapping[ColInfectorID] != "Cas source" {
		t.Errorf("mapping = %v", ll.Sources[0].Mapping)
	}
}

func TestFileErrors(t *testing.T) {
	wide := make([]string, 100000)
	for i := range wide {
		wide[i] = fmt.Sprintf("col%d", i)
	}
	tests := []struct {
		name    string
		data    string
		opts    Options
		code    FileCode
		message []string // substrings the message must contain
	}{
		{"empty", "", Options{}, FileEmpty, []string{"empty"}},
		{"blank lines", "\n\r\n  \n", Options{}, FileEmpty, nil},
		{"BOM only", "\xef\xbb\xbf", Options{}, FileEmpty, nil},
		{"header only", "case_id,onset_date\n", Options{}, FileNoDataRows, []string{"no data rows"}},
		{"no header names", ",,\nA,2026-01-01,x\n", Options{}, FileNoHeader, nil},
		{"binary", "PK\x03\x04\x14\x00\x06\x00\x08\x00\x00\x00!\x00\xb4\x12", Options{}, FileNotWorkbook, []string{"zip archive", "CSV"}},
		{"UTF-16", "\xff\xfec\x00a\x00", Options{}, FileUnsupportedEncoding, []string{"UTF-8"}},
		{"missing onset", "Case ID,Infector,Name\nA,,x\n", Options{}, FileMissingColumn,
			[]string{"onset_date", "dateofonset", `"Case ID", "Infector", "Name"`, "input.columns.onset_date"}},
		{"100,000 columns", strings.Join(wide, ",") + "\n", Options{}, FileMissingColumn,
			[]string{"case_id", "100000 columns", "and 99980 more"}},
		{"configured column absent", "case_id,onset_date\nA,2026-01-01\n",
			Options{Input: InputConfig{Columns: map[string]string{ColInfectorID: "Source"}}},
			FileMissingColumn, []string{"infector_id", `"Source"`}},
		{"ambiguous", "Case ID,case_id,onset_date\nA,B,2026-01-01\n", Options{}, FileAmbiguousColumn, []string{"Case ID", "case_id", "input.columns"}},
		{"too many rows", "case_id,onset_date\nA,2026-01-01\nB,2026-01-01\nC,2026-01-01\n", Options{MaxRows: 2}, FileTooManyRows, []string{"more than 2"}},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			ll, err := Read(strings.NewReader(tt.data), tt.opts)
			var fe *FileError
			if !errors.As(err, &fe) {
				t.Fatalf("err = %v (list %v); want *FileError %s", err, ll, tt.code)
			}
			if fe.Code != tt.code {
				t.Fatalf("code = %s (%s), want %s", fe.Code, fe.Err.Error(), tt.code)
			}
			for _, s := range tt.message {
				if !strings.Contains(fe.Err.Error(), s) {
					t.Errorf("message %q lacks %q", fe.Err.Error(), s)
				}
			}
			if len(fe.Err.Error()) > 2000 {
				t.Errorf("message is %d bytes long", len(fe.Err.Error()))
			}
		})
	}
}

func TestReadFileErrors(t *testing.T) {
	_, err := ReadFile(filepath.Join(t.TempDir(), "absent.csv"), Options{})
	var fe *FileError
	if !errors.As(err, &fe) || fe.Code != FileReadError || fe.Path == "" {
		t.Fatalf("err = %v; want read_error with path", err)
	}
	p := filepath.Join(t.TempDir(), "h.csv")
	if err := os.WriteFile(p, []byte("case_id\nA\n"), 0o600); err != nil {
		t.Fatal(err)
	}
	_, err = ReadFile(p, Options{})
	if !errors.As(err, &fe) || fe.Code != FileMissingColumn || !strings.HasPrefix(err.Error(), p+": missing_column") {
		t.Fatalf("err = %v; want missing_column prefixed by the path", err)
	}
}

func TestQuotedFieldsAndLineNumbers(t *testing.T) {
	data := "case_id,onset_date,setting,notes\n" + // line 1
		"A,2026-01-01,\"home, garden\",\"line one\nline two\nline three\"\n" + // lines 2-4
		"B,2026-01-02,work,\"a \"\"quoted\"\" word; and, commas\"\n" + // line 5
		",2026-01-03,work,x\n" + // line 6: missing_id
		"C,2026-01-04,\"multi\r\nline setting\",y\n" + // lines 7-8
		"D,2026-01-05,work,\"z\n" + // line 9: the quote never closes: one record to the end
		"E,2026-01-06,work,w\n"
	ll := mustRead(t, data, Options{})
	if got := caseIDs(ll); fmt.Sprint(got) != "[A B C]" {
		t.Fatalf("cases = %v", got)
	}
	rows := []int{ll.Cases[0].Row, ll.Cases[1].Row, ll.Cases[2].Row}
	if fmt.Sprint(rows) != "[2 5 7]" {
		t.Errorf("rows = %v, want [2 5 7]", rows)
	}
	if ll.Cases[0].Setting != "home, garden" || ll.Cases[2].Setting != "multi\nline setting" {
		t.Errorf("settings %q %q", ll.Cases[0].Setting, ll.Cases[2].Setting)
	}
	want := []probKey{{6, ColCaseID, CodeMissingID, SeverityError}, {9, "", CodeFieldCount, SeverityError}}
	if fmt.Sprint(keys(ll.Problems)) != fmt.Sprint(want) {
		t.Fatalf("problems = %v", ll.Problems)
	}
	if msg := ll.Problems[1].Message; !strings.Contains(msg, "starts on line 9") || !strings.Contains(msg, "line 10") {
		t.Errorf("unbalanced-quote message %q", msg)
	}
}

func TestMalformedQuotes(t *testing.T) {
	data := "case_id,onset_date,notes\n" +
		"ab\"c,2026-01-01,x\n" + // line 2: bare quote
		"\"x\"y\",2026-01-02,x\n" + // line 3: quote inside a quoted field not doubled
		"q,2026-01-03,\"5'10\"\"\"\n" + // line 4: correct quoting
		"r,2026-01-04,\"open\n" + // line 5: never closed: swallows line 6
		"s,2026-01-05,x\n"
	ll := mustRead(t, data, Options{})
	want := []probKey{{2, "", CodeFieldCount, SeverityError}, {3, "", CodeFieldCount, SeverityError}, {5, "", CodeFieldCount, SeverityError}}
	if fmt.Sprint(keys(ll.Problems)) != fmt.Sprint(want) || fmt.Sprint(caseIDs(ll)) != "[q]" || ll.Rows != 4 {
		t.Fatalf("problems %v cases %v rows %d", ll.Problems, caseIDs(ll), ll.Rows)
	}
	if !strings.Contains(ll.Problems[0].Message, "double the inner quote") || !strings.Contains(ll.Problems[2].Message, "starts on line 5") {
		t.Errorf("messages: %q / %q", ll.Problems[0].Message, ll.Problems[2].Message)
	}
}

func TestRaggedRows(t *testing.T) {
	data := "case_id,onset_date,setting\nA,2026-01-01\nB,2026-01-02,home,extra\nC,2026-01-03,home\n"
	ll := mustRead(t, data, Options{})
	want := []probKey{{2, "", CodeFieldCount, SeverityError}, {3, "", CodeFieldCount, SeverityError}}
	if fmt.Sprint(keys(ll.Problems)) != fmt.Sprint(want) || fmt.Sprint(caseIDs(ll)) != "[C]" {
		t.Fatalf("problems %v cases %v", ll.Problems, caseIDs(ll))
	}
	if !strings.Contains(ll.Problems[0].Message, "2 fields but the header has 3") {
		t.Errorf("message %q", ll.Problems[0].Message)
	}
}

func TestHugeField(t *testing.T) {
	big := strings.Repeat("x", 10<<20)
	data := "case_id,notes,onset_date,setting\n" +
		"A,\"" + big + "\",2026-01-01,home\n" +
		"B,\"" + big[:1000] + "\nsecond line\",2026-01-02," + big[:5000] + "\n" +
		"C,short,2026-01-03,work\n"
	ll := mustRead(t, data, Options{})
	if fmt.Sprint(caseIDs(ll)) != "[A B C]" || ll.Cases[2].Row != 5 {
		t.Fatalf("cases %v rows %v", caseIDs(ll), ll.Cases)
	}
	if len(ll.Cases[1].Setting) != 5000 {
		t.Errorf("setting length %d", len(ll.Cases[1].Setting))
	}
}

func TestHugeFieldInKeptColumn(t *testing.T) {
	big := strings.Repeat("7", 10<<20)
	ll := mustRead(t, "case_id,onset_date\nA,"+big+"\nB,2026-01-01\n", Options{})
	if ll.Rejected != 1 || len(ll.Problems) != 1 || ll.Problems[0].Code != CodeBadDate {
		t.Fatalf("problems %v", ll.Problems)
	}
	if n := len(ll.Problems[0].Message); n > 500 {
		t.Errorf("message is %d bytes; the cell should be clipped", n)
	}
}

func TestManyColumns(t *testing.T) {
	const n = 100000
	header := make([]string, n)
	row := make([]string, n)
	for i := range header {
		header[i] = fmt.Sprintf("extra%d", i)
		row[i] = "v"
	}
	header[n-2], header[n-1] = "case_id", "onset_date"
	row[n-2], row[n-1] = "A", "2026-01-01"
	data := strings.Join(header, ",") + "\n" + strings.Join(row, ",") + "\n"
	ll := mustRead(t, data, Options{})
	if len(ll.Cases) != 1 || ll.Cases[0].ID != "A" || len(ll.Sources[0].Header) != n {
		t.Fatalf("cases %v header %d", ll.Cases, len(ll.Sources[0].Header))
	}
}

func TestNULMidFile(t *testing.T) {
	data := "case_id,onset_date,notes,setting\n" +
		"A,2026-01-01,ab\x00cd,home\n" +
		"B\x00,2026-01-02,x,home\n" +
		"C,2026-01-03,x,ho\x00me\n"
	ll := mustRead(t, data, Options{})
	want := []probKey{{3, ColCaseID, CodeBadValue, SeverityError}, {4, ColSetting, CodeBadValue, SeverityError}}
	if fmt.Sprint(keys(ll.Problems)) != fmt.Sprint(want) || fmt.Sprint(caseIDs(ll)) != "[A C]" {
		t.Fatalf("problems %v cases %v", ll.Problems, caseIDs(ll))
	}
	if ll.Cases[1].Setting != "" {
		t.Errorf("setting with NUL kept: %q", ll.Cases[1].Setting)
	}
}

func TestInvalidUTF8MidFile(t *testing.T) {
	t.Run("after UTF-8", func(t *testing.T) {
		data := "case_id,onset_date,setting,infector_id\n" +
			"A,2026-01-01,crèche,\n" +
			"B,2026-01-02,caf\xe9,A\n" +
			"C\xff,2026-01-03,home,A\n" +
			"D,2026-01-04,home,A\xfe\n"
		ll := mustRead(t, data, Options{})
		want := []probKey{{3, ColSetting, CodeBadValue, SeverityError}, {4, ColCaseID, CodeBadValue, SeverityError}, {5, ColInfectorID, CodeBadValue, SeverityError}}
		if fmt.Sprint(keys(ll.Problems)) != fmt.Sprint(want) {
			t.Fatalf("problems %v", ll.Problems)
		}
		if fmt.Sprint(caseIDs(ll)) != "[A B D]" || ll.Cases[1].Setting != "" || ll.Cases[2].InfectorID != "" || ll.Sources[0].Encoding != EncUTF8 {
			t.Errorf("cases %+v encoding %s", ll.Cases, ll.Sources[0].Encoding)
		}
		if !strings.Contains(ll.Problems[0].Message, "input.encoding") {
			t.Errorf("message %q does not say what to do", ll.Problems[0].Message)
		}
	})
	t.Run("after a long ASCII prefix", func(t *testing.T) {
		var b strings.Builder
		b.WriteString("case_id,onset_date,setting\n")
		for i := 0; b.Len() < 3*prefixSize; i++ {
			fmt.Fprintf(&b, "P%d,2026-01-01,home\n", i)
		}
		b.WriteString("Z,2026-01-02,caf\xe9\n")
		ll := mustRead(t, b.String(), Options{})
		last := ll.Cases[len(ll.Cases)-1]
		if last.ID != "Z" || last.Setting != "café" || ll.Sources[0].Encoding != EncWindows1252 || len(ll.Problems) != 0 {
			t.Errorf("last %+v encoding %s problems %v", last, ll.Sources[0].Encoding, ll.Problems)
		}
	})
}

func TestDateCells(t *testing.T) {
	data := "case_id,onset_date,report_date\n" +
		"A,0000-00-00,\n" +
		"B,9999-12-31,\n" +
		"C,2026-02-30,\n" +
		"D,2026-01-05T10:30:00Z,9999-12-31\n" +
		"E,20260106,2026-01-08\n" +
		"F,  ,\n"
	ll := mustRead(t, data, Options{})
	want := []probKey{
		{2, ColOnsetDate, CodeBadDate, SeverityError},
		{3, ColOnsetDate, CodeBadDate, SeverityError},
		{4, ColOnsetDate, CodeBadDate, SeverityError},
		{5, ColReportDate, CodeBadDate, SeverityError},
		{7, ColOnsetDate, CodeBadDate, SeverityError},
	}
	if fmt.Sprint(keys(ll.Problems)) != fmt.Sprint(want) {
		t.Fatalf("problems %v", ll.Problems)
	}
	if fmt.Sprint(caseIDs(ll)) != "[D E]" || ll.Cases[0].Onset.String() != "2026-01-05" || ll.Cases[0].HasReport || ll.Cases[1].Report.String() != "2026-01-08" {
		t.Errorf("cases %+v", ll.Cases)
	}
}

func TestIdentifiers(t *testing.T) {
	data := "case_id,onset_date,infector_id\n" +
		"  A 1  ,2026-01-01,\n" +
		"\"say \"\"hi\"\"\",2026-01-02,A 1\n" +
		"A,2026-01-03,\n" + // Latin A
		"\u0410,2026-01-04,\n" + // Cyrillic A
		"caf\u00e9,2026-01-05,\n" + // composed é
		"cafe\u0301,2026-01-06,\n" + // e + combining acute
		"\u00a0B\u00a0,2026-01-07,B\n" // no-break spaces trimmed; self link kept for forest
	ll := mustRead(t, data, Options{})
	want := []string{"A 1", `say "hi"`, "A", "\u0410", "caf\u00e9", "cafe\u0301", "B"}
	if fmt.Sprintf("%q", caseIDs(ll)) != fmt.Sprintf("%q", want) || len(ll.Problems) != 0 {
		t.Fatalf("ids %q problems %v", caseIDs(ll), ll.Problems)
	}
	if ll.Cases[1].InfectorID != "A 1" || ll.Cases[6].InfectorID != "B" {
		t.Errorf("infectors %q %q", ll.Cases[1].InfectorID, ll.Cases[6].InfectorID)
	}
}

func TestImportedValues(t *testing.T) {
	tests := []struct {
		v        string
		imported bool
		problem  bool
	}{
		{"", false, false}, {"yes", true, false}, {"YES", true, false}, {" y ", true, false},
		{"True", true, false}, {"1", true, false}, {"no", false, false}, {"N", false, false},
		{"false", false, false}, {"0", false, false}, {"maybe", false, true}, {"2", false, true}, {"oui", false, true},
	}
	for _, tt := range tests {
		ll := mustRead(t, "case_id,onset_date,imported\nA,2026-01-01,\""+tt.v+"\"\n", Options{})
		if len(ll.Cases) != 1 || ll.Cases[0].Imported != tt.imported || (len(ll.Problems) == 1) != tt.problem {
			t.Errorf("imported %q: cases %+v problems %v", tt.v, ll.Cases, ll.Problems)
		}
	}
}

func TestHeaderVariants(t *testing.T) {
	tests := []struct {
		header string
		want   map[string]string
	}{
		{"Case ID,Date of Onset", map[string]string{ColCaseID: "Case ID", ColOnsetDate: "Date of Onset"}},
		{"case-id,symptom_onset,Infected By,Age.Group", map[string]string{ColCaseID: "case-id", ColOnsetDate: "symptom_onset", ColInfectorID: "Infected By", ColAgeGroup: "Age.Group"}},
		{"ID,CaseID,Onset,source_case", map[string]string{ColCaseID: "CaseID", ColOnsetDate: "Onset", ColInfectorID: "source_case"}},
		{"CASE_ID,ONSET_DATE,REPORT_DATE,SETTING,AGE_GROUP,JURISDICTION,IMPORTED,INFECTOR_ID", map[string]string{
			ColCaseID: "CASE_ID", ColOnsetDate: "ONSET_DATE", ColReportDate: "REPORT_DATE", ColSetting: "SETTING",
			ColAgeGroup: "AGE_GROUP", ColJurisdiction: "JURISDICTION", ColImported: "IMPORTED", ColInfectorID: "INFECTOR_ID"}},
	}
	for _, tt := range tests {
		// Every cell a date, so the row is kept whichever column is the onset.
		row := strings.Repeat("2026-01-01,", strings.Count(tt.header, ","))
		ll, err := Read(strings.NewReader(tt.header+"\n"+row+"2026-01-01\n"), Options{})
		if err != nil {
			t.Fatalf("%s: %v", tt.header, err)
		}
		if fmt.Sprint(ll.Sources[0].Mapping) != fmt.Sprint(tt.want) {
			t.Errorf("%s: mapping %v, want %v", tt.header, ll.Sources[0].Mapping, tt.want)
		}
	}
}

func TestFutureOnsetOff(t *testing.T) {
	ll := mustRead(t, "case_id,onset_date\nA,2199-01-01\n", Options{})
	if len(ll.Problems) != 0 {
		t.Errorf("AsOf zero should switch future_onset off: %v", ll.Problems)
	}
	ll = mustRead(t, "case_id,onset_date\nA,2026-01-02\nB,2026-01-01\n", Options{AsOf: day(t, "2026-01-01")})
	if fmt.Sprint(keys(ll.Problems)) != fmt.Sprint([]probKey{{2, ColOnsetDate, CodeFutureOnset, SeverityWarning}}) {
		t.Errorf("problems %v", ll.Problems)
	}
}

func TestReadFileMatchesRead(t *testing.T) {
	data := []byte(genLineList(5000))
	p := filepath.Join(t.TempDir(), "l.csv")
	if err := os.WriteFile(p, data, 0o600); err != nil {
		t.Fatal(err)
	}
	a, err := ReadFile(p, Options{})
	if err != nil {
		t.Fatal(err)
	}
	b, err := Read(bytes.NewReader(data), Options{})
	if err != nil {
		t.Fatal(err)
	}
	checkLedger(t, a)
	sum := sha256.Sum256(data)
	if a.Sources[0].SHA256 != hex.EncodeToString(sum[:]) || b.Sources[0].SHA256 != "" {
		t.Errorf("SHA256 %q / %q", a.Sources[0].SHA256, b.Sources[0].SHA256)
	}
	if len(a.Cases) != 5000 || !reflect.DeepEqual(a.Cases, b.Cases) {
		t.Errorf("ReadFile and Read disagree: %d vs %d cases", len(a.Cases), len(b.Cases))
	}
}

// genLineList writes n canonical rows with a few extra columns, as an export would.
func genLineList(n int) string {
	var b strings.Builder
	b.WriteString("case_id,infector_id,onset_date,report_date,setting,age_group,jurisdiction,imported,name\n")
	settings := []string{"household", "school", "work", "care home"}
	ages := []string{"0-9", "10-19", "20-39", "40-59", "60+"}
	base := Day(20454) // 2026-01-01
	for i := 0; i < n; i++ {
		inf := ""
		if i > 0 && i%5 != 0 {
			inf = fmt.Sprintf("C%07d", i/3)
		}
		on := base + Day(i%90)
		imp := "no"
		if i%5 == 0 {
			imp = "yes"
		}
		fmt.Fprintf(&b, "C%07d,%s,%s,%s,%s,%s,J%d,%s,Person %d\n", i, inf, on, on+2, settings[i%4], ages[i%5], i%7, imp, i)
	}
	return b.String()
}

// ByID lists every kept case once, in identifier order, also after duplicates are dropped.
func TestByIDSortedAfterDuplicates(t *testing.T) {
	ll, err := Read(strings.NewReader("case_id,onset_date\nq,2026-01-01\nb,2026-01-01\nq,2026-01-02\na,2026-01-01\nb,2026-01-03\n"), Options{})
	if err != nil {
		t.Fatal(err)
	}
	var ids []string
	for _, i := range ll.ByID {
		ids = append(ids, ll.Cases[i].ID)
	}
	if !reflect.DeepEqual(ids, []string{"a", "b", "q"}) || len(ll.Cases) != 3 || ll.Cases[ll.ByID[2]].Onset.String() != "2026-01-01" {
		t.Fatalf("ByID gives %v over %d cases", ids, len(ll.Cases))
	}
}

// A file whose lines end in a carriage return alone is read line by line; a stray CR that
// runs two rows together is named; a time of day that cannot be one rejects the date; a
// file whose every row is rejected is unusable, with its reasons and delimiter.
func TestLineEndsTimesAndUnusableFiles(t *testing.T) {
	ll := mustRead(t, "case_id,onset_date\rA,2026-01-01\rB,2026-01-02\r", Options{})
	if fmt.Sprint(caseIDs(ll)) != "[A B]" || !ll.Sources[0].CROnly || ll.Cases[1].Row != 3 {
		t.Errorf("CR-only file: cases %v, CR only %v", ll.Cases, ll.Sources[0].CROnly)
	}
	ll = mustRead(t, "case_id,onset_date\nA,2026-01-01\rB,2026-01-02\nC,2026-01-03\n", Options{})
	if len(ll.Problems) != 1 || !strings.Contains(ll.Problems[0].Message, "carriage return") {
		t.Errorf("stray CR: %v", ll.Problems)
	}
	ll = mustRead(t, "case_id,onset_date\nA,2026-01-01T25:00\nB,2026-01-01T23:59:60Z\nC,2026-01-01 12:61\nD,2026-01-01T08:00+02:00\n", Options{})
	if fmt.Sprint(caseIDs(ll)) != "[B D]" || len(ll.Problems) != 2 || !strings.Contains(ll.Problems[0].Message, "impossible time") {
		t.Errorf("times: cases %v problems %v", caseIDs(ll), ll.Problems)
	}
	_, err := Read(strings.NewReader("case_id,onset_date\nA;2026-01-01\nB;2026-01-02\n"), Options{})
	var fe *FileError
	if !errors.As(err, &fe) || fe.Code != FileNoUsableRows || !strings.Contains(err.Error(), "2 × field_count") || !strings.Contains(err.Error(), `delimiter ','`) {
		t.Errorf("every row rejected: %v", err)
	}
	for _, bad := range []string{"0001-01-01", "2300-01-01", "2026-13-01", "2026-1-1"} {
		if _, err := ParseISODay(bad); err == nil {
			t.Errorf("ParseISODay(%q) accepted", bad)
		}
	}
	if d, err := ParseISODay("2026-11-27"); err != nil || d.String() != "2026-11-27" {
		t.Errorf("ParseISODay: %v %v", d, err)
	}
}
