package main

import (
	"encoding/csv"
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"github.com/caseweave/caseweave/pipeline/analysis"
	"github.com/caseweave/caseweave/pipeline/linelist"
)

// hostileLineList writes a line list built to provoke back-calculation: two jurisdictions,
// each with two large settings and many of 1 to 4 cases, spread over weeks and age groups.
func hostileLineList(t *testing.T, dir string) string {
	t.Helper()
	var b strings.Builder
	b.WriteString("case_id,infector_id,onset_date,setting,age_group,jurisdiction\n")
	start, _ := linelist.ParseISODay("2026-09-07")
	n := 0
	row := func(inf, setting, age, jur string, day int) string {
		n++
		id := fmt.Sprintf("H-%04d", n)
		fmt.Fprintf(&b, "%s,%s,%s,%s,%s,%s\n", id, inf, start+linelist.Day(day), setting, age, jur)
		return id
	}
	for _, jur := range []string{"Tarn", "Wick"} {
		root := row("", "household", "40-64", jur, 0)
		for i := 0; i < 24; i++ {
			row(root, "household", []string{"18-39", "65+"}[i%2], jur, 2+i)
			row(root, "school", "5-17", jur, 3+i)
		}
		for s := 1; s <= 9; s++ {
			for j := 0; j < 1+s%4; j++ {
				row(root, fmt.Sprintf("site %d", s), []string{"0-4", "18-39", "65+"}[(s+j)%3], jur, 5*j+2*s)
			}
		}
	}
	p := filepath.Join(dir, "hostile.csv")
	if err := os.WriteFile(p, []byte(b.String()), 0o600); err != nil {
		t.Fatal(err)
	}
	return p
}

func readSummary(t *testing.T, path string) *analysis.Summary {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	var s analysis.Summary
	if err := json.Unmarshal(b, &s); err != nil {
		t.Fatalf("%s: %v", path, err)
	}
	return &s
}

// casesCount finds "N cases" in a text.
var casesCount = regexp.MustCompile(`(?:^|[^\d,.])(\d+) cases\b`)

var chartOption = regexp.MustCompile(`(?s)<script type="application/json" id="(cw_[a-z_]+)_\d+_option">(.*?)</script>`)

// chartCounts returns every number of the data of the count charts (the epidemic curve
// and the age-mixing heat map) in a report's embedded chart options.
func chartCounts(t *testing.T, html string) []float64 {
	t.Helper()
	var out []float64
	for _, m := range chartOption.FindAllStringSubmatch(html, -1) {
		if m[1] != "cw_epicurve" && m[1] != "cw_age_mixing" {
			continue
		}
		var opt struct {
			Series []struct {
				Name string `json:"name"`
				Data []struct {
					Value any `json:"value"`
				} `json:"data"`
			} `json:"series"`
		}
		if err := json.Unmarshal([]byte(m[2]), &opt); err != nil {
			t.Fatalf("%s option: %v", m[1], err)
		}
		for _, s := range opt.Series {
			for _, d := range s.Data {
				switch v := d.Value.(type) {
				case float64:
					out = append(out, v)
				case []any: // heat-map cell [column, row, count]
					if len(v) == 3 {
						if c, ok := v[2].(float64); ok && s.Name != "Withheld" {
							out = append(out, c)
						}
					}
				}
			}
		}
	}
	return out
}

// csvCounts returns the numbers in the count columns of a --tables CSV.
func csvCounts(t *testing.T, path string, columns ...string) []float64 {
	t.Helper()
	f, err := os.Open(path)
	if os.IsNotExist(err) {
		return nil
	}
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	rows, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatalf("%s: %v", path, err)
	}
	var out []float64
	for _, r := range rows[1:] {
		for i, h := range rows[0] {
			want := len(columns) == 0 && i >= 2
			for _, c := range columns {
				want = want || h == c
			}
			if v, err := strconv.ParseFloat(r[i], 64); want && err == nil {
				out = append(out, v)
			}
		}
	}
	return out
}

// The outputs of a batch that leave the analyst — each report's HTML with its chart data and
// tooltips, the JSON beside it, its --tables CSVs — give away no stratified count below the
// threshold, directly or by subtraction (analysis.CheckDisclosure against the internal JSON
// is the oracle), and show no exact onset date of a case of its largest chain. Dates allowed,
// being aggregates: the analysis date and the censoring cutoff before it, week starts and
// ends (epidemic curve, weekly R, drawn chains, the recent R),
// the end-of-outbreak dates (curve, 95% and 99% dates, last onset in the jurisdiction, rule of
// thumb). The check is shown to catch a leak planted in a released JSON.
func TestBatchOutputsGiveNothingAway(t *testing.T) {
	dir := t.TempDir()
	for _, c := range []struct{ name, list, asOf string }{
		{"demo", filepath.Join(sharedDemo(t), "vell-estuary-linelist.csv"), demoAsOf},
		{"hostile", hostileLineList(t, dir), "2026-11-27"},
	} {
		out, internal, tables := filepath.Join(dir, c.name+"-out"), filepath.Join(dir, c.name+"-internal"), filepath.Join(dir, c.name+"-tables")
		code, _, stderr := cli(t, "report", "--as-of", c.asOf, "--bootstrap", "200", "--by", "jurisdiction",
			"-o", out, "--internal-json", internal, "--tables", tables, c.list)
		if code != 0 {
			t.Fatalf("%s: %s", c.name, stderr)
		}
		// The cover mail of each report, as a dry run writes it: its text and HTML parts are
		// scanned below with the report's outputs.
		mailTmpl := filepath.Join(dir, c.name+"-mail-template")
		os.MkdirAll(mailTmpl, 0o755)
		writeFile(t, mailTmpl, "config.yaml", "mail:\n  from: \"desk@vell.example\"\n  to: [\"lead@vell.example\"]\n")
		outbox := filepath.Join(dir, c.name+"-outbox")
		if code, _, stderr := cli(t, "mail", "--template", mailTmpl, "--no-chart-image", "--dry-run", outbox, out); code != 0 {
			t.Fatalf("%s: mail: %s", c.name, stderr)
		}
		reports, _ := filepath.Glob(filepath.Join(out, "*.html"))
		checked, plantedAny := 0, false
		for _, html := range reports {
			slug := strings.TrimSuffix(filepath.Base(html), ".html")
			if slug == "index" {
				continue
			}
			checked++
			full := readSummary(t, filepath.Join(internal, slug+".json"))
			rel := readSummary(t, filepath.Join(out, slug+".json"))
			thr := rel.Settings.SuppressBelow
			if leaks := analysis.CheckDisclosure(full, rel); len(leaks) > 0 {
				t.Errorf("%s/%s: %d disclosures, first: %s", c.name, slug, len(leaks), leaks[0])
			}
			page, _ := os.ReadFile(html)
			counts := chartCounts(t, string(page))
			for _, tab := range []string{"epicurve.csv", "strata.csv", "age_mixing.csv"} {
				cols := []string(nil)
				if tab == "strata.csv" {
					cols = []string{"Cases"}
				}
				if tab == "age_mixing.csv" {
					cols = nil
				}
				counts = append(counts, csvCounts(t, filepath.Join(tables, slug, tab), cols...)...)
			}
			counts = append(counts, csvCounts(t, filepath.Join(tables, slug, "weekly_r.csv"), "Cases")...)
			if len(counts) == 0 {
				t.Fatalf("%s/%s: no counts found to check", c.name, slug)
			}
			for _, v := range counts {
				if v > 0 && v < float64(thr) {
					t.Errorf("%s/%s: a count of %g is shown below the threshold %d", c.name, slug, v, thr)
				}
			}
			// Exact onset dates of the largest chain's cases.
			allowed := map[string]bool{rel.AsOf.String(): true}
			if e := rel.EpiCurve; e != nil {
				for _, w := range e.Weeks {
					allowed[w.String()] = true
					allowed[(w + 6).String()] = true // the week's Sunday
				}
			}
			allowed[(rel.AsOf - linelist.Day(rel.Settings.CensorDays)).String()] = true // the censoring cutoff
			if e := rel.EndOfOutbreak; e != nil {
				allowed[e.LastOnset.String()] = true
				for _, p := range e.Curve {
					allowed[p.Date.String()] = true
				}
				for _, d := range []*linelist.Day{e.P95Date, e.P99Date} {
					if d != nil {
						allowed[d.String()] = true
					}
				}
				if e.RuleOfThumb != nil {
					allowed[e.RuleOfThumb.Date.String()] = true
				}
				allowed[(e.LastOnset + 2*demoIncubationDays).String()] = true
			}
			if full.Clusters == nil || len(full.Clusters.Largest) == 0 {
				t.Fatalf("%s/%s: no chain to take dates from", c.name, slug)
			}
			outputs := []string{html, filepath.Join(out, slug+".json")}
			eml, err := os.ReadFile(filepath.Join(outbox, slug+".eml"))
			if err != nil {
				t.Fatalf("%s/%s: no mail: %v", c.name, slug, err)
			}
			text, htm, _ := mailParts(t, eml)
			if !strings.Contains(text, "Key numbers") {
				t.Fatalf("%s/%s: the mail's text part is missing", c.name, slug)
			}
			outputs = append(outputs, writeFile(t, outbox, slug+".txt", text), writeFile(t, outbox, slug+".part.html", htm))
			// A count of cases in the mail's sentences ("(47 cases)") is never a small one.
			for _, m := range casesCount.FindAllStringSubmatch(text, -1) {
				if n, _ := strconv.Atoi(m[1]); n > 0 && n < thr {
					t.Errorf("%s/%s: the mail says %q, below the threshold %d", c.name, slug, m[0], thr)
				}
			}
			csvs, _ := filepath.Glob(filepath.Join(tables, slug, "*.csv"))
			outputs = append(outputs, csvs...)
			for _, n := range full.Clusters.Largest[0].Nodes {
				d := n.Onset.String()
				if allowed[d] {
					continue
				}
				written := regexp.MustCompile(`\b(` + d + `|` + n.Onset.Time().Format("2 January 2006") + `)\b`)
				for _, o := range outputs {
					b, _ := os.ReadFile(o)
					if written.Match(b) {
						t.Errorf("%s/%s: the exact onset %s of case %s appears in %s", c.name, slug, d, n.ID, filepath.Base(o))
					}
				}
			}
			// The oracle catches a planted leak: one withheld epidemic-curve count put back.
			planted := false
			for i, sr := range rel.EpiCurve.Series {
				for k, v := range sr.Counts {
					if v == nil && !planted && *full.EpiCurve.Series[i].Counts[k] > 0 {
						rel.EpiCurve.Series[i].Counts[k] = full.EpiCurve.Series[i].Counts[k]
						planted = true
					}
				}
			}
			plantedAny = plantedAny || planted
			if planted && len(analysis.CheckDisclosure(full, rel)) == 0 {
				t.Errorf("%s/%s: the check missed a planted leak", c.name, slug)
			}
		}
		if checked < 2 || !plantedAny {
			t.Fatalf("%s: %d reports checked, a leak planted: %v", c.name, checked, plantedAny)
		}
	}
}
