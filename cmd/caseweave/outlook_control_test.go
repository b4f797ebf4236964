package main

import (
	"encoding/json"
	"math"
	"strings"
	"testing"
)

// outlook --control: the targeted threshold for R = 3, k = 0.1 is the SciPy value of
// testdata/branching/control_reference.json (0.0613011), the random one 1 − 1/R, and a list
// of probabilities gets no targeted strategy.
func TestOutlookControl(t *testing.T) {
	code, stdout, stderr := cli(t, "outlook", "--model", "negbin", "--R", "3", "--k", "0.1", "--control", "--json", "-")
	if code != 0 {
		t.Fatal(stderr)
	}
	var doc struct {
		Control []struct {
			Strategy  string  `json:"strategy"`
			Threshold float64 `json:"threshold"`
			Points    []struct {
				Effort, R             float64
				ExtinctionProbability float64 `json:"extinction_probability"`
			} `json:"points"`
		} `json:"control"`
	}
	if err := json.Unmarshal([]byte(stdout), &doc); err != nil {
		t.Fatal(err)
	}
	if len(doc.Control) != 3 || doc.Control[2].Strategy != "targeted" {
		t.Fatalf("control %+v", doc.Control)
	}
	if th := doc.Control[2].Threshold; math.Abs(th-0.06130109763166474) > 1e-9 {
		t.Errorf("targeted threshold %v", th)
	}
	if th := doc.Control[1].Threshold; math.Abs(th-2.0/3) > 1e-15 {
		t.Errorf("random threshold %v", th)
	}
	if p := doc.Control[0].Points[1]; p.Effort != 0.1 || math.Abs(p.R-2.7) > 1e-12 || !(p.ExtinctionProbability > 0.8 && p.ExtinctionProbability < 1) {
		t.Errorf("population point %+v", p)
	}
	if !strings.Contains(stderr, "R < 1 at") {
		t.Errorf("no control table printed:\n%s", stderr)
	}
	code, stdout, stderr = cli(t, "outlook", "--pmf", "0.3,0.3,0.4", "--control")
	if code != 0 || !strings.Contains(stdout, "no targeted control") {
		t.Errorf("list: exit %d\n%s%s", code, stdout, stderr)
	}
}
