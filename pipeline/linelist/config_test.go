package linelist

import (
	"errors"
	"strings"
	"testing"

	"go.yaml.in/yaml/v3"
)

// parseInputYAML reads the value of input: in a YAML document with ParseInput.
func parseInputYAML(text string) (InputConfig, error) {
	var doc yaml.Node
	var in InputConfig
	if err := yaml.Unmarshal([]byte(text), &doc); err != nil {
		return in, err
	}
	root := doc.Content[0]
	for i := 0; i+1 < len(root.Content); i += 2 {
		if root.Content[i].Value == "input" {
			return in, ParseInput(root.Content[i+1], &in)
		}
	}
	return in, nil
}

func TestParseInput(t *testing.T) {
	good := `
input:
  columns:
    case_id: "Case Number"
    onset_date: Date of Onset
  date_format: DMY
  delimiter: tab
  encoding: cp1252
  sheet: Cases
`
	in, err := parseInputYAML(good)
	if err != nil {
		t.Fatal(err)
	}
	if in.Columns[ColCaseID] != "Case Number" || in.Columns[ColOnsetDate] != "Date of Onset" || in.DateFormat != DateDMY || in.Delimiter != "tab" || in.Encoding != "windows-1252" || in.Sheet != "Cases" {
		t.Errorf("input = %+v", in)
	}
	if in, err := parseInputYAML("input:\n"); err != nil || in.Columns != nil {
		t.Errorf("empty input: %+v, %v", in, err)
	}

	bad := []struct {
		name, yaml string
		line       int
		has        []string
	}{
		{"unknown input key", "input:\n  colums:\n    case_id: X\n", 2, []string{"input.colums", "columns, date_format"}},
		{"two canonical names one column", "input:\n  columns:\n    onset_date: Date\n    report_date: date\n", 4, []string{"onset_date", "report_date", `"date"`}},
		{"unknown canonical", "input:\n  columns:\n    name: Name\n", 3, []string{`"name"`, "case_id, infector_id"}},
		{"blank header", "input:\n  columns:\n    case_id: ''\n", 3, []string{"input.columns.case_id is blank"}},
		{"bad date format", "input:\n  date_format: ymd\n", 2, []string{`"ymd"`, "dmy"}},
		{"bad delimiter", "input:\n  delimiter: '|'\n", 2, []string{`"|"`, "tab"}},
		{"bad encoding", "input:\n  encoding: utf-16\n", 2, []string{`"utf-16"`, "latin-1"}},
		{"duplicate key", "input:\n  delimiter: ','\n  delimiter: ';'\n", 3, []string{"twice"}},
		{"blank sheet", "input:\n  sheet: ' '\n", 2, []string{"input.sheet is blank"}},
		{"columns a list", "input:\n  columns: [a, b]\n", 2, []string{"input.columns must map"}},
		{"date format a list", "input:\n  date_format: [dmy]\n", 2, []string{"single value"}},
		{"input a list", "input: [a]\n", 1, []string{"input must be a mapping"}},
	}
	for _, tt := range bad {
		_, err := parseInputYAML(tt.yaml)
		var fe *FileError
		if !errors.As(err, &fe) || fe.Code != FileBadConfig || fe.Line != tt.line {
			t.Errorf("%s: err = %v; want bad_config on line %d", tt.name, err, tt.line)
			continue
		}
		for _, s := range tt.has {
			if !strings.Contains(fe.Err.Error(), s) {
				t.Errorf("%s: message %q lacks %q", tt.name, fe.Err, s)
			}
		}
	}
}

func TestConfigMappingOverridesVariants(t *testing.T) {
	// "ID" would be recognised as case_id; the config points case_id elsewhere, and the
	// configured header is matched ignoring case.
	in := InputConfig{Columns: map[string]string{ColCaseID: "lab ref", ColOnsetDate: "Sick Since"}}
	ll := mustRead(t, "ID,Lab Ref,SICK SINCE\n1,L-9,2026-02-01\n", Options{Input: in})
	if len(ll.Cases) != 1 || ll.Cases[0].ID != "L-9" || ll.Sources[0].Mapping[ColCaseID] != "Lab Ref" {
		t.Errorf("cases %+v mapping %v", ll.Cases, ll.Sources[0].Mapping)
	}
}
