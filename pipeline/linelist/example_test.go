package linelist_test

import (
	"fmt"
	"go.yaml.in/yaml/v3"
	"strings"

	"github.com/caseweave/caseweave/pipeline/linelist"
)

func ExampleRead() {
	export := "Case ID,Infected by,Date of onset,Name\n" +
		"A,,2026-03-01,Ann\n" +
		"B,A,2026-03-04,Ben\n" +
		"B,A,2026-03-05,Bea\n" +
		"C,B,03/09/2026,Cy\n"
	ll, err := linelist.Read(strings.NewReader(export), linelist.Options{})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("%d rows: %d cases, %d rejected\n", ll.Rows, len(ll.Cases), ll.Rejected)
	for _, c := range ll.Cases {
		fmt.Println(c.ID, c.InfectorID, c.Onset)
	}
	for _, p := range ll.Problems {
		fmt.Println(p.Row, p.Code)
	}
	// Output:
	// 4 rows: 2 cases, 2 rejected
	// A  2026-03-01
	// B A 2026-03-04
	// 4 duplicate_id
	// 5 bad_date
}

func ExampleParseDate() {
	for _, s := range []string{"2026-04-25", "25/04/2026", "2026-02-30"} {
		d, err := linelist.ParseDate(s, linelist.DateDMY)
		fmt.Println(d, err)
	}
	_, err := linelist.ParseDate("25/04/2026", linelist.DateISO)
	fmt.Println(err)
	// Output:
	// 2026-04-25 <nil>
	// 2026-04-25 <nil>
	// 1970-01-01 date "2026-02-30" does not exist: month 2 of 2026 has 28 days
	// date "25/04/2026" is not ISO 8601 (YYYY-MM-DD); if the export writes day-first or month-first dates, set input.date_format: dmy or mdy in the jurisdiction config
}

func ExampleParseInput() {
	var doc yaml.Node
	_ = yaml.Unmarshal([]byte(`
columns:
  case_id: "Numéro"
  onset_date: "Début"
date_format: dmy
delimiter: ";"
`), &doc)
	var in linelist.InputConfig
	if err := linelist.ParseInput(doc.Content[0], &in); err != nil {
		fmt.Println(err)
		return
	}
	ll, err := linelist.Read(strings.NewReader("Numéro;Début\nX1;25/04/2026\n"), linelist.Options{Input: in})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(ll.Cases[0].ID, ll.Cases[0].Onset, ll.Sources[0].Mapping["onset_date"])

	_ = yaml.Unmarshal([]byte("columns:\n  onset_date: Date\n  report_date: Date\n"), &doc)
	fmt.Println(linelist.ParseInput(doc.Content[0], &in))
	// Output:
	// X1 2026-04-25 Début
	// line 3: bad_config: input.columns maps both onset_date and report_date to the column "Date"; each export column can feed only one canonical column
}

func ExampleReadFiles() {
	dir := "../../testdata/linelist/workbook/"
	ll, err := linelist.ReadFiles([]string{dir + "cases.csv", dir + "regions-1904.xlsx"}, linelist.Options{})
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, s := range ll.Sources {
		fmt.Printf("%s: %s, sheet %q, header %d, %d rows, %d used\n", s.Path[len(dir):], s.Format, s.Sheet, s.HeaderRow, s.Rows, s.Used)
	}
	for _, p := range ll.Problems[:3] {
		fmt.Println(ll.Place(p), p.Code)
	}
	// Output:
	// cases.csv: csv, sheet "", header 1, 16 rows, 14 used
	// regions-1904.xlsx: xlsx, sheet "Cases", header 3, 16 rows, 0 used
	// ../../testdata/linelist/workbook/cases.csv line 7 bad_date
	// ../../testdata/linelist/workbook/cases.csv line 15 bad_date
	// ../../testdata/linelist/workbook/regions-1904.xlsx Cases!A4 duplicate_id
}
