package linelist

import (
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

func TestParseConfig(t *testing.T) {
	good := `
input:
  columns:
    case_id: "Case Number"
    onset_date: Date of Onset
  date_format: DMY
  delimiter: tab
  encoding: cp1252
jurisdiction: Weekly
sections: [a, b]
`
	c, err := ParseConfig([]byte(good))
	if err != nil {
		t.Fatal(err)
	}
	in := c.Input
	if in.Columns[ColCaseID] != "Case Number" || in.Columns[ColOnsetDate] != "Date of Onset" || in.DateFormat != DateDMY || in.Delimiter != "tab" || in.Encoding != "windows-1252" {
		t.Errorf("input = %+v", in)
	}
	if len(c.Report) != 2 {
		t.Fatalf("report keys = %v", c.Report)
	}
	var title string
	var sections []string
	jn, sn := c.Report["jurisdiction"], c.Report["sections"]
	if err := jn.Decode(&title); err != nil || title != "Weekly" {
		t.Errorf("jurisdiction decoded = %q, %v", title, err)
	}
	if err := sn.Decode(&sections); err != nil || len(sections) != 2 {
		t.Errorf("sections decoded = %v, %v", sections, err)
	}

	for _, empty := range []string{"", "# nothing\n", "input:\n"} {
		if c, err := ParseConfig([]byte(empty)); err != nil || c.Input.Columns != nil {
			t.Errorf("ParseConfig(%q) = %+v, %v", empty, c, err)
		}
	}

	bad := []struct {
		name, yaml string
		has        []string
	}{
		{"unknown top-level key", "inptu:\n  delimiter: ','\n", []string{`"inptu"`, "line 1", "input"}},
		{"unknown input key", "input:\n  colums:\n    case_id: X\n", []string{"input.colums", "line 2", "columns, date_format"}},
		{"two canonical names one column", "input:\n  columns:\n    onset_date: Date\n    report_date: date\n", []string{"onset_date", "report_date", `"date"`, "line 4"}},
		{"unknown canonical", "input:\n  columns:\n    name: Name\n", []string{`"name"`, "case_id, infector_id"}},
		{"blank header", "input:\n  columns:\n    case_id: ''\n", []string{"input.columns.case_id is blank"}},
		{"bad date format", "input:\n  date_format: ymd\n", []string{`"ymd"`, "dmy"}},
		{"bad delimiter", "input:\n  delimiter: '|'\n", []string{`"|"`, "tab"}},
		{"bad encoding", "input:\n  encoding: utf-16\n", []string{`"utf-16"`, "latin-1"}},
		{"duplicate key", "input:\n  delimiter: ','\n  delimiter: ';'\n", []string{"twice"}},
		{"not a mapping", "- a\n- b\n", []string{"mapping"}},
		{"columns a list", "input:\n  columns: [a, b]\n", []string{"input.columns must map"}},
		{"date format a list", "input:\n  date_format: [dmy]\n", []string{"single value"}},
		{"invalid yaml", "input: [\n", []string{"not valid YAML"}},
	}
	for _, tt := range bad {
		_, err := ParseConfig([]byte(tt.yaml))
		var fe *FileError
		if !errors.As(err, &fe) || fe.Code != FileBadConfig {
			t.Errorf("%s: err = %v; want bad_config", tt.name, err)
			continue
		}
		for _, s := range tt.has {
			if !strings.Contains(fe.Message, s) {
				t.Errorf("%s: message %q lacks %q", tt.name, fe.Message, s)
			}
		}
	}
}

func TestLoadConfig(t *testing.T) {
	_, err := LoadConfig(filepath.Join(t.TempDir(), "none.yaml"))
	var fe *FileError
	if !errors.As(err, &fe) || fe.Code != FileBadConfig || fe.Path == "" {
		t.Errorf("missing file: %v", err)
	}
	p := filepath.Join(t.TempDir(), "c.yaml")
	if err := os.WriteFile(p, []byte("input:\n  bogus: 1\n"), 0o600); err != nil {
		t.Fatal(err)
	}
	if _, err := LoadConfig(p); !errors.As(err, &fe) || !strings.HasPrefix(err.Error(), p+": bad_config: config line 2") {
		t.Errorf("bad key: %v", err)
	}
}

func TestConfigMappingOverridesVariants(t *testing.T) {
	// "ID" would be recognised as case_id; the config points case_id elsewhere, and the
	// configured header is matched ignoring case.
	cfg := &Config{Input: InputConfig{Columns: map[string]string{ColCaseID: "lab ref", ColOnsetDate: "Sick Since"}}}
	ll := mustRead(t, "ID,Lab Ref,SICK SINCE\n1,L-9,2026-02-01\n", Options{Config: cfg})
	if len(ll.Cases) != 1 || ll.Cases[0].ID != "L-9" || ll.Mapping[ColCaseID] != "Lab Ref" {
		t.Errorf("cases %+v mapping %v", ll.Cases, ll.Mapping)
	}
}
