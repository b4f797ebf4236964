package render

import (
	"bytes"
	"errors"
	"fmt"
	"io/fs"
	"slices"
	"strings"

	"go.yaml.in/yaml/v3"
)

// ConfigFile is the name of the report configuration inside a template folder.
const ConfigFile = "config.yaml"

// DefaultSuppressBelow is the small-count threshold when the configuration gives none.
const DefaultSuppressBelow = 5

// DefaultCaution is shown in the cautions section when config.yaml gives no caution text.
const DefaultCaution = "These figures describe the cases that were reported and linked. " +
	"They cannot show cases that were never tested or reported, links that were never traced, " +
	"or transmission from the most recent cases, which is still under way. " +
	"They support, but do not replace, the judgement of the local public-health authority: " +
	"decisions rest with that authority and its guidance."

// Section names a part of the report that config.yaml can hide or retitle.
var sectionTitles = []struct{ name, title string }{
	{"headline", "At a glance"},
	{"data_quality", "Data quality"},
	{"epicurve", "Cases over time"},
	{"offspring", "How many people each case infected"},
	{"r_and_k", "Reproduction number and spread"},
	{"concentration", "Who drove transmission"},
	{"clusters", "Transmission chains"},
	{"outlook", "Outlook"},
	{"age_mixing", "Who infected whom, by age group"},
	{"strata", "By setting"},
	{"serial_interval", "Time between onsets"},
	{"weekly_r", "Reproduction number by week"},
	{"end_of_outbreak", "Is the outbreak over?"},
	{"cautions", "What these figures cannot tell"},
	{"methods", "Methods and sources"},
	{"provenance", "Provenance"},
}

// SectionNames lists the section names config.yaml may use in sections: and labels:, in
// report order.
func SectionNames() []string {
	names := make([]string, len(sectionTitles))
	for i, s := range sectionTitles {
		names[i] = s.name
	}
	return names
}

// ReportConfig is a template folder's config.yaml: the jurisdiction's settings for its report.
type ReportConfig struct {
	// Jurisdiction is the display name of the reporting authority or area.
	Jurisdiction string `yaml:"jurisdiction"`
	// Contact is the contact line printed under the title.
	Contact string `yaml:"contact"`
	// SuppressBelow: counts from 1 to SuppressBelow−1 print as "<SuppressBelow" (default 5).
	SuppressBelow int `yaml:"suppress_below"`
	// Labels override section titles, keyed by section name (see SectionNames).
	Labels map[string]string `yaml:"labels"`
	// Sections lists the sections to show; empty means all.
	Sections []string `yaml:"sections"`
	// Caution is the cautions text; paragraphs are separated by blank lines.
	Caution string `yaml:"caution"`
	// IncubationDays is the longest incubation period, for the end-of-outbreak rule of thumb.
	IncubationDays *int `yaml:"incubation_days"`
	// PseudonymKey keys the hash that replaces case identifiers. It never appears in output.
	PseudonymKey string `yaml:"pseudonym_key"`
	// Input belongs to the line-list reader; the report ignores it.
	Input yaml.Node `yaml:"input"`
}

// ConfigError is a problem in config.yaml, with the file and line it was found at.
type ConfigError struct {
	File string
	Line int // 0 when unknown
	Msg  string
}

func (e *ConfigError) Error() string {
	if e.Line > 0 {
		return fmt.Sprintf("%s line %d: %s", e.File, e.Line, e.Msg)
	}
	return fmt.Sprintf("%s: %s", e.File, e.Msg)
}

var configKeys = []string{"jurisdiction", "contact", "suppress_below", "labels", "sections",
	"caution", "incubation_days", "pseudonym_key", "input"}

// LoadConfig reads config.yaml from a template folder. A folder without one gets the defaults.
func LoadConfig(fsys fs.FS) (ReportConfig, error) {
	data, err := fs.ReadFile(fsys, ConfigFile)
	if errors.Is(err, fs.ErrNotExist) {
		return ReportConfig{SuppressBelow: DefaultSuppressBelow}, nil
	}
	if err != nil {
		return ReportConfig{}, &ConfigError{File: ConfigFile, Msg: err.Error()}
	}
	return ParseConfig(ConfigFile, data)
}

// ParseConfig parses the bytes of a config.yaml; name is used in error messages.
func ParseConfig(name string, data []byte) (ReportConfig, error) {
	cfg := ReportConfig{}
	var doc yaml.Node
	if err := yaml.Unmarshal(data, &doc); err != nil {
		return cfg, &ConfigError{File: name, Msg: strings.TrimPrefix(err.Error(), "yaml: ")}
	}
	if len(doc.Content) > 0 {
		top := doc.Content[0]
		if top.Kind != yaml.MappingNode {
			return cfg, &ConfigError{File: name, Line: top.Line, Msg: "expected a mapping of keys at the top level"}
		}
		for i := 0; i+1 < len(top.Content); i += 2 {
			k := top.Content[i]
			if !slices.Contains(configKeys, k.Value) {
				return cfg, &ConfigError{File: name, Line: k.Line,
					Msg: fmt.Sprintf("unknown key %q (known keys: %s)", k.Value, strings.Join(configKeys, ", "))}
			}
		}
		dec := yaml.NewDecoder(bytes.NewReader(data))
		dec.KnownFields(true)
		if err := dec.Decode(&cfg); err != nil {
			return cfg, &ConfigError{File: name, Msg: strings.TrimPrefix(err.Error(), "yaml: ")}
		}
	}
	if cfg.SuppressBelow == 0 {
		cfg.SuppressBelow = DefaultSuppressBelow
	}
	if cfg.SuppressBelow < 1 {
		return cfg, &ConfigError{File: name, Msg: fmt.Sprintf("suppress_below must be at least 1, not %d", cfg.SuppressBelow)}
	}
	if cfg.IncubationDays != nil && *cfg.IncubationDays < 1 {
		return cfg, &ConfigError{File: name, Msg: "incubation_days must be a positive number of days"}
	}
	known := SectionNames()
	for _, s := range cfg.Sections {
		if !slices.Contains(known, s) {
			return cfg, &ConfigError{File: name, Msg: fmt.Sprintf("sections: unknown section %q (known: %s)", s, strings.Join(known, ", "))}
		}
	}
	labelKeys := make([]string, 0, len(cfg.Labels))
	for k := range cfg.Labels {
		labelKeys = append(labelKeys, k)
	}
	slices.Sort(labelKeys) // so the first bad key reported is the same every run
	for _, k := range labelKeys {
		if !slices.Contains(known, k) {
			return cfg, &ConfigError{File: name, Msg: fmt.Sprintf("labels: unknown section %q (known: %s)", k, strings.Join(known, ", "))}
		}
	}
	return cfg, nil
}

// shows reports whether the named section is enabled.
func (c *ReportConfig) shows(section string) bool {
	return len(c.Sections) == 0 || slices.Contains(c.Sections, section)
}

// title is the section's display title, honouring labels.
func (c *ReportConfig) title(section string) (string, error) {
	if t, ok := c.Labels[section]; ok && strings.TrimSpace(t) != "" {
		return t, nil
	}
	for _, s := range sectionTitles {
		if s.name == section {
			return s.title, nil
		}
	}
	return "", fmt.Errorf("unknown section %q (known: %s)", section, strings.Join(SectionNames(), ", "))
}

// suppress is the effective small-count threshold.
func (c *ReportConfig) suppress() int {
	if c.SuppressBelow < 1 {
		return DefaultSuppressBelow
	}
	return c.SuppressBelow
}
