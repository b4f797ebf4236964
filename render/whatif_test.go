package render

import (
	"strings"
	"testing"

	"github.com/caseweave/caseweave/pipeline/analysis"
)

// The what-if sections show by default and hide with config.yaml's hide: list.
func TestWhatIfSectionsHide(t *testing.T) {
	html := mustRender(t, fixtureSummary(), Options{})
	for _, want := range []string{"What control could do", "Outlook by age group", "Lloyd-Smith et al. (2005, Nature 438:355)",
		"Diekmann, Heesterbeek &amp; Metz", "Harris 1963, The Theory of Branching Processes, ch. II",
		"is joined to the next older group", "already at\nmost 1"} {
		if !strings.Contains(html, want) {
			t.Errorf("report lacks %q", want)
		}
	}
	cfg, err := ParseConfig("config.yaml", []byte("hide: [control, age_outlook]\n"))
	if err != nil {
		t.Fatal(err)
	}
	html = mustRender(t, fixtureSummary(), Options{Config: &cfg})
	for _, gone := range []string{"What control could do", "Outlook by age group"} {
		if strings.Contains(html, gone) {
			t.Errorf("hidden section %q still shown", gone)
		}
	}
	if !strings.Contains(html, "Who infected whom, by age group") {
		t.Error("hide: removed a section it does not list")
	}
	if _, err := ParseConfig("config.yaml", []byte("hide: [controls]\n")); err == nil || !strings.Contains(err.Error(), `unknown section "controls"`) {
		t.Errorf("unknown hidden section: %v", err)
	}
}

func TestControlTables(t *testing.T) {
	st := &renderState{s: fixtureSummary()}
	tb, ok, err := tableControl(st, cellFmt{csv: true}, "Chance", 3, func(s analysis.ControlStrategy) []analysis.Estimate { return s.Extinction })
	if err != nil || !ok {
		t.Fatal(ok, err)
	}
	if len(tb.Rows) != len(controlRows) || len(tb.Header) != 4 {
		t.Fatalf("%d rows, header %v", len(tb.Rows), tb.Header)
	}
	// The 10% row: Extinction = 0.9 + 0.1·0.1 at its lower bound, from the fixture.
	if got := tb.Rows[1]; got[0] != "10.00%" || got[1] != "1.00000 (0.91000 to 1.00000)" {
		t.Errorf("10%% row %q", got)
	}
	th, ok, err := tableControlThresholds(st, cellFmt{})
	if err != nil || !ok || len(th.Rows) != 3 || th.Rows[2][0] != "Most infectious cases stopped" || th.Rows[2][1] != "0.0%" {
		t.Errorf("thresholds %v %v %v", th.Rows, ok, err)
	}
	sh, ok, err := tableAgeShares(st, cellFmt{})
	if err != nil || !ok || len(sh.Rows) != 3 || sh.Rows[2][0] != "In the long run" || sh.Rows[0][2] != "50%" {
		t.Errorf("age shares %v %v %v", sh.Rows, ok, err)
	}
	ao, ok, err := tableAgeOutlook(st, cellFmt{})
	if err != nil || !ok || ao.Rows[2][4] != "no finite k" || ao.Rows[1][2] != "0.60" {
		t.Errorf("age outlook %v %v %v", ao.Rows, ok, err)
	}
}
