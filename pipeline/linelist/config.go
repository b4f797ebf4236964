package linelist

import (
	"fmt"
	"strings"

	"go.yaml.in/yaml/v3"
)

// InputConfig is the part of a Config that says how to read the export.
type InputConfig struct {
	// Columns maps canonical column names (ColCaseID, ...) to the export's header for it.
	// Headers are matched ignoring surrounding spaces and letter case. Canonical columns
	// not listed here are still recognised by their usual header variants.
	Columns map[string]string
	// DateFormat is DateISO, DateDMY or DateMDY; "" means DateISO.
	DateFormat DateFormat
	// Delimiter is "auto" (or ""), ",", ";" or "tab".
	Delimiter string
	// Encoding is "auto" (or ""), "utf-8", "latin-1" or "windows-1252".
	Encoding string
	// Sheet is the workbook sheet to read, by name or 1-based position; "" chooses as
	// Options.Sheet says, which overrides it.
	Sheet string
}

// ParseInput reads the input section of a jurisdiction config (the mapping under input:)
// into in, checking every key and value:
//
//	input:
//	  columns:                 # canonical name: header in the export
//	    case_id: "Case Number"
//	    onset_date: "Date of Onset"
//	  date_format: dmy         # iso (default) | dmy | mdy
//	  delimiter: ";"           # auto (default) | "," | ";" | tab
//	  encoding: windows-1252   # auto (default) | utf-8 | latin-1 | windows-1252
//	  sheet: Cases             # workbooks: the sheet's name or position (default: chosen)
//
// Every failure is a *FileError with Code FileBadConfig and the line of the key or value to
// fix; the caller sets Path.
func ParseInput(n *yaml.Node, in *InputConfig) error { return parseInput(n, in) }

func parseInput(n *yaml.Node, in *InputConfig) error {
	if n.Kind == yaml.ScalarNode && n.Tag == "!!null" {
		return nil
	}
	if n.Kind != yaml.MappingNode {
		return configErr(n.Line, "input must be a mapping (columns:, date_format:, delimiter:, encoding:, sheet:), not a %s", kindName(n))
	}
	seen := map[string]int{}
	for i := 0; i+1 < len(n.Content); i += 2 {
		k, v := n.Content[i], n.Content[i+1]
		if first, dup := seen[k.Value]; dup {
			return configErr(k.Line, "key input.%s is given twice (first on line %d); keep one", k.Value, first)
		}
		seen[k.Value] = k.Line
		switch k.Value {
		case "columns":
			if err := parseColumns(v, in); err != nil {
				return err
			}
		case "date_format":
			s, err := scalar(v, "input.date_format")
			if err != nil {
				return err
			}
			switch f := DateFormat(strings.ToLower(strings.TrimSpace(s))); f {
			case "", DateISO, DateDMY, DateMDY:
				in.DateFormat = f
			default:
				return configErr(v.Line, "input.date_format %q is not one of iso, dmy (day first, 25/04/2026), mdy (month first, 04/25/2026)", clip(s))
			}
		case "delimiter":
			s, err := scalar(v, "input.delimiter")
			if err != nil {
				return err
			}
			d, ok := normDelimiter(s)
			if !ok {
				return configErr(v.Line, "input.delimiter %q is not one of auto, \",\", \";\", tab", clip(s))
			}
			in.Delimiter = d
		case "encoding":
			s, err := scalar(v, "input.encoding")
			if err != nil {
				return err
			}
			e, ok := normEncoding(s)
			if !ok {
				return configErr(v.Line, "input.encoding %q is not one of auto, utf-8, latin-1, windows-1252", clip(s))
			}
			in.Encoding = e
		case "sheet":
			s, err := scalar(v, "input.sheet")
			if err != nil {
				return err
			}
			if strings.TrimSpace(s) == "" {
				return configErr(v.Line, "input.sheet is blank; give the workbook sheet's name or position, or remove the line")
			}
			in.Sheet = s
		default:
			return configErr(k.Line, "unknown key input.%s; known keys are columns, date_format, delimiter, encoding, sheet", clip(k.Value))
		}
	}
	return nil
}

func parseColumns(n *yaml.Node, in *InputConfig) error {
	if n.Kind == yaml.ScalarNode && n.Tag == "!!null" {
		return nil
	}
	if n.Kind != yaml.MappingNode {
		return configErr(n.Line, "input.columns must map canonical names to export headers (case_id: \"Case Number\"), not a %s", kindName(n))
	}
	canonical := map[string]bool{}
	for _, c := range columns {
		canonical[c.Name] = true
	}
	in.Columns = map[string]string{}
	byHeader := map[string]string{} // folded header -> canonical name
	for i := 0; i+1 < len(n.Content); i += 2 {
		k, v := n.Content[i], n.Content[i+1]
		if !canonical[k.Value] {
			return configErr(k.Line, "input.columns has unknown column %q; the canonical columns are %s", clip(k.Value), strings.Join(ColumnNames(), ", "))
		}
		if _, dup := in.Columns[k.Value]; dup {
			return configErr(k.Line, "input.columns.%s is given twice; keep one", k.Value)
		}
		h, err := scalar(v, "input.columns."+k.Value)
		if err != nil {
			return err
		}
		h = strings.TrimSpace(h)
		if h == "" {
			return configErr(v.Line, "input.columns.%s is blank; give the export's header for %s or remove the line", k.Value, k.Value)
		}
		fold := strings.ToLower(h)
		if other, dup := byHeader[fold]; dup {
			a, b := other, k.Value
			if b < a {
				a, b = b, a
			}
			return configErr(v.Line, "input.columns maps both %s and %s to the column %q; each export column can feed only one canonical column", a, b, clip(h))
		}
		byHeader[fold] = k.Value
		in.Columns[k.Value] = h
	}
	return nil
}

func scalar(n *yaml.Node, key string) (string, error) {
	if n.Kind != yaml.ScalarNode {
		return "", configErr(n.Line, "%s must be a single value, not a %s", key, kindName(n))
	}
	return n.Value, nil
}

func normDelimiter(s string) (string, bool) {
	switch strings.ToLower(s) {
	case "", "auto":
		return "auto", true
	case ",", "comma":
		return ",", true
	case ";", "semicolon":
		return ";", true
	case "tab", "\t", `\t`:
		return "tab", true
	}
	return "", false
}

func normEncoding(s string) (string, bool) {
	switch strings.ToLower(strings.TrimSpace(s)) {
	case "", "auto":
		return "auto", true
	case "utf-8", "utf8":
		return "utf-8", true
	case "latin-1", "latin1", "iso-8859-1":
		return "latin-1", true
	case "windows-1252", "cp1252":
		return "windows-1252", true
	}
	return "", false
}

func kindName(n *yaml.Node) string {
	switch n.Kind {
	case yaml.SequenceNode:
		return "list"
	case yaml.MappingNode:
		return "mapping"
	case yaml.AliasNode:
		return "alias"
	}
	return "single value"
}

func configErr(line int, format string, args ...any) *FileError {
	return &FileError{Code: FileBadConfig, Line: line, Err: fmt.Errorf(format, args...)}
}
