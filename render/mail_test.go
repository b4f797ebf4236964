package render

import (
	"errors"
	"strings"
	"testing"
	"unicode"
	"unicode/utf8"

	"github.com/caseweave/caseweave/pipeline/analysis"
)

func TestMailCarriesTheReportNumbersInBothParts(t *testing.T) {
	s := fixtureSummary()
	rel := released(s)
	m, err := RenderMail(rel, MailOptions{Images: map[string]string{"epicurve": "epicurve.1@caseweave"}, ChartNote: "The chart is in the attached report north.html."})
	if err != nil {
		t.Fatal(err)
	}
	if m.Subject != "Transmission report, data to 24 March 2024" {
		t.Errorf("subject %q", m.Subject)
	}
	st := &renderState{s: s}
	// The headline numbers as the report's own formatter writes them.
	for _, want := range []string{
		st.estimateText(s.Offspring.R, 2, false),
		st.estimateText(s.Offspring.K, 2, false),
		st.estimateText(s.Outlook.ExtinctionProbability, 0, true),
		"45.6", "25 to 70", // next-generation mean and 90% interval (projections table)
	} {
		if !strings.Contains(m.Text, want) {
			t.Errorf("plain part lacks %q", want)
		}
		if !strings.Contains(string(m.HTML), want) {
			t.Errorf("HTML part lacks %q", want)
		}
	}
	if tag := ExternalReference(m.HTML); tag != "" {
		t.Errorf("HTML part refers outside the message: %s", tag)
	}
	if ExternalReference([]byte(`<p><img src="https://x.example/a.png"></p>`)) == "" || ExternalReference([]byte(`<script>`)) == "" {
		t.Error("the check misses an external image or a script")
	}
	if !strings.Contains(string(m.HTML), `src="cid:epicurve.1@caseweave"`) {
		t.Error("the HTML part does not show the epidemic curve's picture")
	}
	if !strings.Contains(m.Text, "The chart is in the attached report north.html.") {
		t.Error("the plain part does not say where the chart is")
	}
	// Without a picture, the HTML part says where the chart is instead.
	m2, err := RenderMail(rel, MailOptions{ChartNote: "The chart is in the attached report north.html."})
	if err != nil {
		t.Fatal(err)
	}
	if strings.Contains(string(m2.HTML), "<img") || !strings.Contains(string(m2.HTML), "The chart is in the attached report north.html.") {
		t.Error("without a picture the HTML part should carry the note and no image")
	}
	// The same view gives the same bytes.
	again, _ := RenderMail(rel, MailOptions{Images: map[string]string{"epicurve": "epicurve.1@caseweave"}, ChartNote: "The chart is in the attached report north.html."})
	if again.Text != m.Text || string(again.HTML) != string(m.HTML) {
		t.Error("two renders of the same view differ")
	}
}

func TestMailEscapesHostileData(t *testing.T) {
	cfg := DefaultConfig()
	cfg.Jurisdiction = hostileStrings[1]
	cfg.Contact = hostileStrings[0]
	m, err := RenderMail(released(hostileSummary()), MailOptions{Config: &cfg})
	if err != nil {
		t.Fatal(err)
	}
	if tag := ExternalReference(m.HTML); tag != "" {
		t.Errorf("hostile data became markup: %s", tag)
	}
	if strings.ContainsAny(m.Subject, "\r\n") || !strings.Contains(m.Subject, "</script><script>alert(2)</script>") {
		t.Errorf("subject %q: want the jurisdiction as plain text on one line", m.Subject)
	}
	// The plain part shows the value as written, not its Markdown escapes.
	if !strings.Contains(m.Text, "<img src=x onerror=alert(1)>") {
		t.Error("the plain part does not show the contact as written")
	}
}

func TestMailSubjectFromConfig(t *testing.T) {
	cfg, err := ParseConfig("config.yaml", []byte("jurisdiction: North\nmail:\n  to: [\"Lead <lead@north.example>\"]\n  subject: \"{{ jurisdiction }}: R {{ est .Offspring.R 2 }}\"\n"))
	if err != nil {
		t.Fatal(err)
	}
	if len(cfg.Mail.To) != 1 || cfg.Mail.To[0].Address != "lead@north.example" {
		t.Fatalf("mail.to = %v", cfg.Mail.To)
	}
	m, err := RenderMail(released(fixtureSummary()), MailOptions{Config: &cfg})
	if err != nil {
		t.Fatal(err)
	}
	if m.Subject != "North: R 0.80 (95% CI 0.71–0.92)" {
		t.Errorf("subject %q", m.Subject)
	}
	cfg.Mail.Subject, cfg.Mail.SubjectLine = "{{ .Nope }}", 5
	_, err = RenderMail(released(fixtureSummary()), MailOptions{Config: &cfg})
	var te *TemplateError
	if !errors.As(err, &te) || te.File != ConfigFile || te.Line != 5 {
		t.Errorf("a bad subject gives %v, want a template error at config.yaml line 5", err)
	}
	for _, bad := range []string{"mail:\n  to: [\"not an address\"]\n", "mail:\n  password: x\n", "mail: 3\n"} {
		if _, err := ParseConfig("config.yaml", []byte(bad)); err == nil {
			t.Errorf("config %q accepted", bad)
		}
	}
}

func TestChartPageDrawsOnlyTheChart(t *testing.T) {
	page, err := ChartPage(released(fixtureSummary()), "epicurve", nil)
	if err != nil {
		t.Fatal(err)
	}
	if n := strings.Count(string(page), "data-cw-chart="); n != 1 || !strings.Contains(string(page), `id="cw_epicurve_1"`) {
		t.Errorf("chart page holds %d charts", n)
	}
	if !HasChart(released(fixtureSummary()), "epicurve") || HasChart(released(minimalSummary()), "epicurve") {
		t.Error("HasChart does not follow the epidemic curve's data")
	}
}

// foldSpace is s as escapeMarkdown leaves its words: runs of spaces and control characters
// as one space, trimmed.
func foldSpace(s string) string {
	return strings.Join(strings.FieldsFunc(s, func(r rune) bool { return unicode.IsSpace(r) || unicode.IsControl(r) }), " ")
}

// Whatever the data, the mail's HTML part runs no script and refers to nothing outside the
// message, the subject stays one line, and both the subject and the plain part show a
// jurisdiction's name as written.
func FuzzMail(f *testing.F) {
	f.Add("Ostvale", "household", "cases.csv", 0.8, 12, int32(19806))
	f.Add(`<img src=x onerror=alert(1)>`, `</script><script>alert(1)</script>`, `"'><svg onload=alert(1)>`, 1e300, -3, int32(0))
	f.Add("Subject: x\r\nBcc: all@example.org", "[x](javascript:alert(1))", "![i](http://x.example/p.png)", 2.5, 0, int32(-719528))
	f.Add("a | b\n# h\n\n```caseweave-block\n1\n```", "\x00\x01\x1b[31m", "\xff\xfe\xc3(", 123456789.123, 1<<40, int32(2932896))
	f.Add("<!-- x --> &amp; &#60; =?utf-8?q?x?=", "*a* _b_ ~c~", "cid:x", 4.0, 4, int32(20000))
	f.Fuzz(func(t *testing.T, a, b, c string, x float64, n int, d int32) {
		rel, err := analysis.Release(fuzzSummary(b, c, c, x, n, d), analysis.Policy{})
		if err != nil {
			return // non-finite numbers; FuzzTemplateFunctions covers the release
		}
		cfg := DefaultConfig()
		cfg.Jurisdiction, cfg.Contact = a, b
		m, err := RenderMail(rel, MailOptions{Config: &cfg, Images: map[string]string{"epicurve": "e@t"}, ChartNote: c})
		if err != nil {
			t.Fatalf("mail of a released view failed: %v", err)
		}
		if tag := ExternalReference(m.HTML); tag != "" {
			t.Fatalf("the HTML part refers outside the message: %s", tag)
		}
		if strings.ContainsAny(m.Subject, "\r\n") {
			t.Fatalf("subject %q spans lines", m.Subject)
		}
		if name := foldSpace(a); utf8.ValidString(a) && name != "" {
			if !strings.Contains(m.Subject, name) || !strings.Contains(foldSpace(m.Text), name) {
				t.Fatalf("jurisdiction %q not shown as written: subject %q", name, m.Subject)
			}
		}
	})
}
