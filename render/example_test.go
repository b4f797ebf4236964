package render_test

import (
	"fmt"
	"strings"

	"github.com/caseweave/caseweave/pipeline/analysis"
	"github.com/caseweave/caseweave/pipeline/linelist"
	"github.com/caseweave/caseweave/render"
)

func ExampleRender() {
	asOf, _ := linelist.ParseISODay("2024-03-24")
	s := &analysis.Summary{
		Tool:     analysis.Tool{Name: "caseweave", Version: "dev"},
		AsOf:     asOf,
		Settings: analysis.RunSettings{Level: 0.95, Interval: "bca"},
		Input:    analysis.Input{Path: "cases.csv", Rows: 10, Used: 10},
		Tree:     analysis.Tree{Cases: 10, Linked: 6, Roots: 4, Clusters: 4},
	}
	released, err := analysis.Release(s, analysis.Policy{Pseudonyms: analysis.NewPseudonyms("")})
	if err != nil {
		fmt.Println(err)
		return
	}
	html, err := render.Render(released, render.Options{})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(strings.HasPrefix(string(html), "<!DOCTYPE html>"), strings.Contains(string(html), "Data to 24 March 2024"))
	// Output: true true
}

func ExampleParseConfig() {
	_, err := render.ParseConfig("config.yaml", []byte("jurisdiction: North\nsuppres_below: 3\n"))
	fmt.Println(err)
	// Output: config.yaml: line 2: bad_config: unknown key "suppres_below" (known keys: input, jurisdiction, contact, suppress_below, labels, sections, hide, caution, incubation_days, pseudonym_key, history, offspring_scale, colours, mail)
}

func ExampleChartNames() {
	fmt.Println(render.ChartNames()[:3])
	// Output: [epicurve nowcast forecast]
}
