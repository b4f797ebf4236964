package linelist

import (
	"fmt"
	"os"
	"strings"

	"go.yaml.in/yaml/v3"
)

// Config is a jurisdiction config: how one jurisdiction's export is read (Input, owned by
// this package) and how its report looks (Report, owned by the report package and kept
// here unparsed). One YAML file holds both:
//
//	input:
//	  columns:                 # canonical name: header in the export
//	    case_id: "Case Number"
//	    onset_date: "Date of Onset"
//	  date_format: dmy         # iso (default) | dmy | mdy
//	  delimiter: ";"           # auto (default) | "," | ";" | tab
//	  encoding: windows-1252   # auto (default) | utf-8 | latin-1 | windows-1252
//	jurisdiction: "Ostvale"    # this and the other ReportKeys are read by the report package
//	suppress_below: 5
//
// Top-level keys other than input and those listed by ReportKeys are errors that name the key.
type Config struct {
	Input InputConfig
	// Report holds the top-level keys listed by ReportKeys as raw YAML nodes, keyed by
	// name, for the report package to decode; it is nil when there are none.
	Report map[string]yaml.Node
}

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
}

// ReportKeys lists the top-level config keys that belong to the report package. They are
// accepted without being checked here and kept in Config.Report.
func ReportKeys() []string {
	// The keys of render.ReportConfig: one config.yaml per jurisdiction holds both parts.
	return []string{"jurisdiction", "contact", "suppress_below", "labels", "sections",
		"caution", "incubation_days", "pseudonym_key"}
}

// LoadConfig reads and parses a jurisdiction config file. Every failure is a *FileError
// with Code FileBadConfig and Path set.
func LoadConfig(path string) (*Config, error) {
	b, err := os.ReadFile(path)
	if err != nil {
		return nil, &FileError{Path: path, Code: FileBadConfig, Message: fmt.Sprintf("cannot read the config: %v", err)}
	}
	c, err := ParseConfig(b)
	if err != nil {
		if fe, ok := err.(*FileError); ok {
			fe.Path = path
		}
		return nil, err
	}
	return c, nil
}

// ParseConfig parses a jurisdiction config. Every failure is a *FileError with Code
// FileBadConfig whose message names the line and the key to fix.
func ParseConfig(b []byte) (*Config, error) {
	var doc yaml.Node
	if err := yaml.Unmarshal(b, &doc); err != nil {
		return nil, configErr(0, "the config is not valid YAML: %v", err)
	}
	c := &Config{}
	if doc.Kind == 0 || len(doc.Content) == 0 {
		return c, nil // empty file: all defaults
	}
	root := doc.Content[0]
	if root.Kind != yaml.MappingNode {
		return nil, configErr(root.Line, "the config must be a mapping of keys (input:, report:, ...), not a %s", kindName(root))
	}
	report := map[string]bool{}
	for _, k := range ReportKeys() {
		report[k] = true
	}
	seen := map[string]int{}
	for i := 0; i+1 < len(root.Content); i += 2 {
		k, v := root.Content[i], root.Content[i+1]
		if first, dup := seen[k.Value]; dup {
			return nil, configErr(k.Line, "key %q is given twice (first on line %d); keep one", k.Value, first)
		}
		seen[k.Value] = k.Line
		switch {
		case k.Value == "input":
			if err := parseInput(v, &c.Input); err != nil {
				return nil, err
			}
		case report[k.Value]:
			if c.Report == nil {
				c.Report = map[string]yaml.Node{}
			}
			c.Report[k.Value] = *v
		default:
			return nil, configErr(k.Line, "unknown top-level key %q; known keys are input, %s", clip(k.Value), strings.Join(ReportKeys(), ", "))
		}
	}
	return c, nil
}

func parseInput(n *yaml.Node, in *InputConfig) error {
	if n.Kind == yaml.ScalarNode && n.Tag == "!!null" {
		return nil
	}
	if n.Kind != yaml.MappingNode {
		return configErr(n.Line, "input must be a mapping (columns:, date_format:, delimiter:, encoding:), not a %s", kindName(n))
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
		default:
			return configErr(k.Line, "unknown key input.%s; known keys are columns, date_format, delimiter, encoding", clip(k.Value))
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
	msg := fmt.Sprintf(format, args...)
	if line > 0 {
		msg = fmt.Sprintf("config line %d: %s", line, msg)
	}
	return &FileError{Code: FileBadConfig, Message: msg}
}
