package render

import (
	"encoding/json"
	"fmt"
	"strings"
	"testing"
)

// TestBackfillChart draws the fixture's three reports: one line each, this report last,
// each point the report's count as released (a withheld or not-yet-begun week a gap).
func TestBackfillChart(t *testing.T) {
	rel := released(fixtureSummary()).Summary()
	st := &renderState{s: rel}
	specs, note, err := st.buildChart("backfill")
	if err != nil || len(specs) != 1 {
		t.Fatalf("%d charts, note %q, error %v", len(specs), note, err)
	}
	js, err := json.Marshal(specs[0].Option["series"])
	if err != nil {
		t.Fatal(err)
	}
	var series []struct {
		Name string `json:"name"`
		Data []struct {
			Value any `json:"value"`
		} `json:"data"`
	}
	if err := json.Unmarshal(js, &series); err != nil {
		t.Fatal(err)
	}
	b := rel.Backfill
	if len(series) != len(b.Reports) {
		t.Fatalf("%d lines, want %d", len(series), len(b.Reports))
	}
	if series[0].Name != "report of 2024-03-10" || !strings.HasPrefix(series[2].Name, "this report") {
		t.Errorf("line names %q, %q", series[0].Name, series[2].Name)
	}
	for k, r := range b.Reports {
		for i, c := range r.Counts {
			want := "-"
			if c != nil {
				want = fmt.Sprint(*c)
			}
			if got := fmt.Sprint(series[k].Data[i].Value); got != want {
				t.Errorf("report %d week %d: drawn %s, released %s", k, i, got, want)
			}
		}
	}
	// This report's line is the released epidemic curve's last three weeks.
	n := len(rel.EpiCurve.Total)
	for i, c := range rel.EpiCurve.Total[n-3:] {
		if fmt.Sprint(countValue(c)) != fmt.Sprint(series[2].Data[i].Value) {
			t.Errorf("week %d: this report drawn %v, curve %v", i, series[2].Data[i].Value, countValue(c))
		}
	}
	// Without an earlier report there is nothing to draw.
	rel.Backfill.Reports = rel.Backfill.Reports[2:]
	if specs, note, _ := st.buildChart("backfill"); len(specs) != 0 || note == "" {
		t.Error("a backfill chart of one report")
	}
}
