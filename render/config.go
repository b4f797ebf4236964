package render

import (
	"errors"
	"fmt"
	"io/fs"
	"net/mail"
	"os"
	"regexp"
	"slices"
	"strings"

	"go.yaml.in/yaml/v3"

	"github.com/caseweave/caseweave/pipeline/analysis"
	"github.com/caseweave/caseweave/pipeline/linelist"
)

// ConfigFile is the name of the report configuration inside a template folder.
const ConfigFile = "config.yaml"

// DefaultCaution is shown in the cautions section when config.yaml gives no caution text.
const DefaultCaution = "These figures describe the cases that were reported and linked. " +
	"They cannot show cases that were never tested or reported, links that were never traced, " +
	"or transmission from the most recent cases, which is still under way. " +
	"They support, but do not replace, the judgement of the local public-health authority: " +
	"decisions rest with that authority and its guidance."

// Section names a part of the report that config.yaml can hide or retitle.
var sectionTitles = []struct{ name, title string }{
	{"headline", "At a glance"},
	{"epicurve", "Cases over time"},
	{"nowcast", "Recent weeks, corrected for late reports"},
	{"forecast", "The weeks ahead"},
	{"backtest", "How past forecasts fared"},
	{"since_last", "Since the last report"},
	{"trends", "Across reports"},
	{"data_quality", "Data quality"},
	{"offspring", "How many people each case infected"},
	{"r_and_k", "Reproduction number and spread"},
	{"concentration", "Who drove transmission"},
	{"clusters", "Transmission chains"},
	{"outlook", "Outlook"},
	{"control", "What control could do"},
	{"age_mixing", "Who infected whom, by age group"},
	{"age_outlook", "Outlook by age group"},
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

// Config is a jurisdiction's config.yaml, read once into one typed value: how its export
// is read (Input, owned by the line-list reader) and how its report looks. Unknown keys, and
// values of the wrong kind or out of range, are errors that name the line.
//
//	input:                     # see linelist.ParseInput
//	  columns: {case_id: "Case Number"}
//	  date_format: dmy
//	jurisdiction: "Ostvale"    # display name of the reporting authority or area
//	contact: "Ostvale Health Office, epi desk"
//	suppress_below: 5          # counts 1..4 print as "<5"
//	labels: {outlook: "What may come next"}
//	sections: [headline, epicurve, offspring, r_and_k, outlook, cautions, provenance]
//	hide: [control, age_outlook]   # sections left out, whatever sections: says
//	caution: "Paragraphs separated by blank lines."
//	incubation_days: 14        # longest incubation period, for the rule of thumb
//	pseudonym_key: "…"         # keys the hash that replaces case identifiers
//	mail:                      # the cover mail of `caseweave mail` (see MailConfig)
//	  from: "Epi desk <epi@ostvale.example>"
//	  to: ["lead@ostvale.example"]
//	  cc: ["archive@ostvale.example"]
//	  subject: "Ostvale transmission report, data to {{ day .AsOf }}"
type Config struct {
	// Input says how the jurisdiction's export is read.
	Input linelist.InputConfig
	// Jurisdiction is the display name of the reporting authority or area.
	Jurisdiction string
	// Contact is the contact line printed under the title.
	Contact string
	// SuppressBelow: counts from 1 to SuppressBelow−1 print as "<SuppressBelow" (default 5).
	SuppressBelow int
	// Labels override section titles, keyed by section name (see SectionNames).
	Labels map[string]string
	// Sections lists the sections to show; empty means all.
	Sections []string
	// Hide lists sections not to show, whatever Sections says.
	Hide []string
	// Caution is the cautions text; paragraphs are separated by blank lines.
	Caution string
	// IncubationDays is the longest incubation period, for the end-of-outbreak rule of thumb.
	IncubationDays *int
	// PseudonymKey keys the hash that replaces case identifiers. It never appears in output.
	PseudonymKey string
	// History is the run archive report and estimate record into (as --history does).
	History string
	// Colours pins a chart colour (#rrggbb) to a category value, such as a setting.
	Colours map[string]string
	// OffspringScale is the count axis of the offspring chart: "log", "linear", or ""
	// (logarithmic when the tail is long; see offspringLogScale).
	OffspringScale string
	// Mail says who receives the report's cover mail.
	Mail MailConfig
}

// MailConfig is the mail: section of config.yaml: the sender, recipients and subject of a
// jurisdiction's cover mail. Addresses are checked when the config is read (RFC 5322, as
// net/mail parses them). The SMTP server and its password are never here: they are flags
// and a secret of the person sending.
type MailConfig struct {
	From    *mail.Address
	To, Cc  []*mail.Address
	Subject string // a template with the report's function library; empty: mail.md's "subject"
	// SubjectLine is the line of subject: in config.yaml, for template errors.
	SubjectLine int
}

// mailKeys are the keys of the mail: section.
var mailKeys = []string{"from", "to", "cc", "subject"}

// parseMail decodes the mail: section.
func parseMail(v *yaml.Node, m *MailConfig) error {
	if v.Kind != yaml.MappingNode {
		return configErr(v.Line, "mail must be a mapping (from:, to:, cc:, subject:)")
	}
	addr := func(n *yaml.Node, key string) (*mail.Address, error) {
		var s string
		if err := decodeScalar(n, key, &s); err != nil {
			return nil, err
		}
		a, err := mail.ParseAddress(s)
		if err != nil {
			return nil, configErr(n.Line, "%s: %q is not a mail address (%v)", key, s, err)
		}
		return a, nil
	}
	list := func(n *yaml.Node, key string) ([]*mail.Address, error) {
		if n.Kind == yaml.ScalarNode {
			a, err := addr(n, key)
			return []*mail.Address{a}, err
		}
		if n.Kind != yaml.SequenceNode {
			return nil, configErr(n.Line, "%s must be a list of mail addresses", key)
		}
		var out []*mail.Address
		for _, e := range n.Content {
			a, err := addr(e, key)
			if err != nil {
				return nil, err
			}
			out = append(out, a)
		}
		return out, nil
	}
	for i := 0; i+1 < len(v.Content); i += 2 {
		k, val := v.Content[i], v.Content[i+1]
		var err error
		switch k.Value {
		case "from":
			m.From, err = addr(val, "mail.from")
		case "to":
			m.To, err = list(val, "mail.to")
		case "cc":
			m.Cc, err = list(val, "mail.cc")
		case "subject":
			err = decodeScalar(val, "mail.subject", &m.Subject)
			m.SubjectLine = val.Line
		default:
			err = configErr(k.Line, "mail: unknown key %q (known: %s); the SMTP server and password are given when sending, never here", k.Value, strings.Join(mailKeys, ", "))
		}
		if err != nil {
			return err
		}
	}
	return nil
}

// DefaultConfig is the configuration of a template folder without a config.yaml.
func DefaultConfig() Config { return Config{SuppressBelow: analysis.DefaultSuppressBelow} }

// LoadConfig reads config.yaml from a template folder; a folder without one gets the
// defaults. Errors are *linelist.FileError values with Code FileBadConfig and the line.
func LoadConfig(fsys fs.FS) (Config, error) {
	data, err := fs.ReadFile(fsys, ConfigFile)
	if errors.Is(err, fs.ErrNotExist) {
		return DefaultConfig(), nil
	}
	if err != nil {
		return Config{}, &linelist.FileError{Path: ConfigFile, Code: linelist.FileBadConfig, Err: err}
	}
	return ParseConfig(ConfigFile, data)
}

// LoadConfigFile reads a config.yaml by path (the --config flag).
func LoadConfigFile(path string) (Config, error) {
	data, err := os.ReadFile(path)
	if err != nil {
		return Config{}, &linelist.FileError{Path: path, Code: linelist.FileBadConfig, Err: fmt.Errorf("cannot read the config: %w", err)}
	}
	return ParseConfig(path, data)
}

// configKey is one top-level key of config.yaml with its decoder.
type configKey struct {
	name   string
	decode func(c *Config, v *yaml.Node) error
}

// configKeys are the top-level keys of config.yaml.
var configKeys = []configKey{
	{"input", func(c *Config, v *yaml.Node) error { return linelist.ParseInput(v, &c.Input) }},
	{"jurisdiction", func(c *Config, v *yaml.Node) error { return decodeScalar(v, "jurisdiction", &c.Jurisdiction) }},
	{"contact", func(c *Config, v *yaml.Node) error { return decodeScalar(v, "contact", &c.Contact) }},
	{"suppress_below", func(c *Config, v *yaml.Node) error {
		if err := decodeScalar(v, "suppress_below", &c.SuppressBelow); err != nil {
			return err
		}
		if c.SuppressBelow < 1 {
			return configErr(v.Line, "suppress_below must be a whole number of at least 1, not %d", c.SuppressBelow)
		}
		return nil
	}},
	{"labels", func(c *Config, v *yaml.Node) error {
		if v.Kind != yaml.MappingNode {
			return configErr(v.Line, "labels must map section names to titles (outlook: \"What may come next\")")
		}
		c.Labels = map[string]string{}
		for i := 0; i+1 < len(v.Content); i += 2 {
			k := v.Content[i]
			if !slices.Contains(SectionNames(), k.Value) {
				return configErr(k.Line, "labels: unknown section %q (known: %s)", k.Value, strings.Join(SectionNames(), ", "))
			}
			var t string
			if err := decodeScalar(v.Content[i+1], "labels."+k.Value, &t); err != nil {
				return err
			}
			c.Labels[k.Value] = t
		}
		return nil
	}},
	{"sections", func(c *Config, v *yaml.Node) error { return decodeSectionList(v, "sections", &c.Sections) }},
	{"hide", func(c *Config, v *yaml.Node) error { return decodeSectionList(v, "hide", &c.Hide) }},
	{"caution", func(c *Config, v *yaml.Node) error { return decodeScalar(v, "caution", &c.Caution) }},
	{"incubation_days", func(c *Config, v *yaml.Node) error {
		var d int
		if err := decodeScalar(v, "incubation_days", &d); err != nil {
			return err
		}
		if d < 1 {
			return configErr(v.Line, "incubation_days must be a positive number of days, not %d", d)
		}
		c.IncubationDays = &d
		return nil
	}},
	{"pseudonym_key", func(c *Config, v *yaml.Node) error { return decodeScalar(v, "pseudonym_key", &c.PseudonymKey) }},
	{"history", func(c *Config, v *yaml.Node) error { return decodeScalar(v, "history", &c.History) }},
	{"offspring_scale", func(c *Config, v *yaml.Node) error {
		if err := decodeScalar(v, "offspring_scale", &c.OffspringScale); err != nil {
			return err
		}
		if c.OffspringScale != "log" && c.OffspringScale != "linear" && c.OffspringScale != "auto" {
			return configErr(v.Line, "offspring_scale must be log, linear or auto, not %q", c.OffspringScale)
		}
		if c.OffspringScale == "auto" {
			c.OffspringScale = ""
		}
		return nil
	}},
	{"colours", func(c *Config, v *yaml.Node) error {
		if v.Kind != yaml.MappingNode {
			return configErr(v.Line, "colours must map category values to colours (school: \"#1f5c6e\")")
		}
		c.Colours = map[string]string{}
		for i := 0; i+1 < len(v.Content); i += 2 {
			k := v.Content[i]
			var col string
			if err := decodeScalar(v.Content[i+1], "colours."+k.Value, &col); err != nil {
				return err
			}
			if !hexColour.MatchString(col) {
				return configErr(v.Content[i+1].Line, "colours.%s must be a colour written #rrggbb, not %q", k.Value, col)
			}
			c.Colours[k.Value] = strings.ToLower(col)
		}
		return nil
	}},
	{"mail", func(c *Config, v *yaml.Node) error { return parseMail(v, &c.Mail) }},
}

// hexColour is a colour as config.yaml writes it.
var hexColour = regexp.MustCompile(`^#[0-9a-fA-F]{6}$`)

// ParseConfig parses the bytes of a config.yaml; name is the file named in errors.
func ParseConfig(name string, data []byte) (Config, error) {
	cfg := DefaultConfig()
	fail := func(err error) (Config, error) {
		var fe *linelist.FileError
		if errors.As(err, &fe) {
			fe.Path = name
			return Config{}, fe
		}
		return Config{}, &linelist.FileError{Path: name, Code: linelist.FileBadConfig, Err: err}
	}
	var doc yaml.Node
	if err := yaml.Unmarshal(data, &doc); err != nil {
		return fail(configErr(yamlErrorLine(err), "the config is not valid YAML: %s", strings.TrimPrefix(err.Error(), "yaml: ")))
	}
	if len(doc.Content) == 0 {
		return cfg, nil // empty file: all defaults
	}
	top := doc.Content[0]
	if top.Kind != yaml.MappingNode {
		return fail(configErr(top.Line, "the config must be a mapping of keys (input:, jurisdiction:, ...)"))
	}
	seen := map[string]int{}
	for i := 0; i+1 < len(top.Content); i += 2 {
		k, v := top.Content[i], top.Content[i+1]
		if first, dup := seen[k.Value]; dup {
			return fail(configErr(k.Line, "key %q is given twice (first on line %d); keep one", k.Value, first))
		}
		seen[k.Value] = k.Line
		j := slices.IndexFunc(configKeys, func(c configKey) bool { return c.name == k.Value })
		if j < 0 {
			names := make([]string, len(configKeys))
			for n, c := range configKeys {
				names[n] = c.name
			}
			return fail(configErr(k.Line, "unknown key %q (known keys: %s)", k.Value, strings.Join(names, ", ")))
		}
		if v.Kind == yaml.ScalarNode && v.Tag == "!!null" {
			continue // a key left empty keeps its default
		}
		if err := configKeys[j].decode(&cfg, v); err != nil {
			return fail(err)
		}
	}
	return cfg, nil
}

// decodeScalar decodes a single YAML value into dst (a string or an int), with the line in
// the error.
func decodeScalar(v *yaml.Node, key string, dst any) error {
	if v.Kind != yaml.ScalarNode {
		return configErr(v.Line, "%s must be a single value", key)
	}
	if err := v.Decode(dst); err != nil {
		want := "text"
		if _, ok := dst.(*int); ok {
			want = "a whole number"
		}
		return configErr(v.Line, "%s must be %s, not %q", key, want, v.Value)
	}
	return nil
}

func configErr(line int, format string, args ...any) *linelist.FileError {
	return &linelist.FileError{Line: line, Code: linelist.FileBadConfig, Err: fmt.Errorf(format, args...)}
}

// yamlErrorLine finds the line the YAML parser names in its message ("yaml: line 3: …").
func yamlErrorLine(err error) int {
	var n int
	if _, e := fmt.Sscanf(strings.TrimPrefix(err.Error(), "yaml: "), "line %d:", &n); e == nil {
		return n
	}
	return 0
}

// decodeSectionList reads a list of section names under key.
func decodeSectionList(v *yaml.Node, key string, out *[]string) error {
	if v.Kind != yaml.SequenceNode {
		return configErr(v.Line, "%s must be a list of section names ([headline, outlook, ...])", key)
	}
	for _, e := range v.Content {
		var name string
		if err := decodeScalar(e, key, &name); err != nil {
			return err
		}
		if !slices.Contains(SectionNames(), name) {
			return configErr(e.Line, "%s: unknown section %q (known: %s)", key, name, strings.Join(SectionNames(), ", "))
		}
		*out = append(*out, name)
	}
	return nil
}

// shows reports whether the named section is enabled: listed in Sections (or Sections
// empty) and not in Hide.
func (c *Config) shows(section string) bool {
	return (len(c.Sections) == 0 || slices.Contains(c.Sections, section)) && !slices.Contains(c.Hide, section)
}

// title is the section's display title, honouring labels.
func (c *Config) title(section string) (string, error) {
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
