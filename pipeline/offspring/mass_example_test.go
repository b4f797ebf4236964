package offspring

import (
	"encoding/csv"
	"os"
	"strconv"
	"testing"
)

// TestExampleFitAllAgainstMASS checks the numbers ExampleFitAll quotes against R's
// MASS::fitdistr 7.3-58.2 on the same 15 counts (testdata/offspring/example_fitall.R, which
// writes its versions into example_fitall.txt). The estimates are closed forms for the
// Poisson and geometric models and must match to 1e-9. fitdistr's negative binomial is an
// optim search that stops short of the optimum (its R is 5e-7 from the mean), so its R and k
// match to 1e-6 and 3e-5 and the AIC, flat at the optimum, to 1e-8; the exact k is the root
// of the profile score found by R's uniroot in the same script, matched to 1e-9.
func TestExampleFitAllAgainstMASS(t *testing.T) {
	f, err := os.Open("../../testdata/offspring/example_fitall.txt")
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	cr := csv.NewReader(f)
	cr.Comment = '#'
	rows, err := cr.ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	want := map[string]float64{}
	for _, r := range rows[1:] {
		v, err := strconv.ParseFloat(r[1], 64)
		if err != nil {
			t.Fatal(err)
		}
		want[r[0]] = v
	}
	fits, _, err := FitAll(Tabulate([]int{0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 1, 1, 2, 3, 12}))
	if err != nil {
		t.Fatal(err)
	}
	seen := 0
	for _, fit := range fits {
		check := func(q string, got, tol float64) {
			w, ok := want[fit.Name+"_"+q]
			if !ok {
				t.Fatalf("no MASS value for %s %s", fit.Name, q)
			}
			if e := relErr(got, w); !(e <= tol) {
				t.Errorf("%s %s = %.10g, MASS::fitdistr %.10g (rel. error %.2g)", fit.Name, q, got, w, e)
			}
			seen++
		}
		tolR := 1e-9
		if fit.Name == "negative_binomial" {
			k, _, _ := fit.Param("k")
			check("k", k, 3e-5)
			check("k_uniroot", k, 1e-9)
			tolR = 1e-6
		}
		check("R", fit.R(), tolR)
		check("AIC", fit.AIC, 1e-8)
	}
	if seen != len(want) {
		t.Fatalf("checked %d of the %d MASS values", seen, len(want))
	}
}
