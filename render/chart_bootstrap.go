package render

import (
	"fmt"
	"strings"

	"github.com/caseweave/caseweave/pipeline/analysis"
	"github.com/go-echarts/go-echarts/v2/charts"
	"github.com/go-echarts/go-echarts/v2/opts"
)

func init() {
	for _, c := range []struct {
		name, label string
		order       int
	}{{"bootstrap_r", "R", 30}, {"bootstrap_k", "k", 31}} {
		bins := func(o *analysis.Offspring) (*analysis.Bins, analysis.Estimate) {
			if c.label == "k" {
				return o.ReplicatesK, o.K
			}
			return o.ReplicatesR, o.R
		}
		registerChart(chartDef{
			name: c.name, order: c.order,
			available: func(s *analysis.Summary) (bool, string) {
				if s.Offspring == nil {
					return false, "No bootstrap replicates were available."
				}
				if b, _ := bins(s.Offspring); b == nil || len(b.Counts) == 0 {
					return false, "No bootstrap replicates were available for " + c.label + "."
				}
				return true, ""
			},
			build: func(st *renderState) ([]chartSpec, string, error) {
				b, e := bins(st.s.Offspring)
				return st.chartBootstrap(c.name, c.label, b, e)
			},
		})
	}
}

func (st *renderState) chartBootstrap(name, label string, b *analysis.Bins, e analysis.Estimate) ([]chartSpec, string, error) {
	id := st.newChartID(name)
	f := &finite{}
	if len(b.Edges) != len(b.Counts)+1 {
		return nil, "", fmt.Errorf("chart %q: %d bin edges for %d counts", name, len(b.Edges), len(b.Counts))
	}
	data := make([]opts.BarData, len(b.Counts))
	for i, c := range b.Counts {
		mid := (f.v(b.Edges[i], "a bin edge") + f.v(b.Edges[i+1], "a bin edge")) / 2
		data[i] = opts.BarData{Value: []any{round(mid, 4), c}}
	}
	var marks []any
	if e.Estimate != nil {
		marks = append(marks, markLineX("estimate", f.v(*e.Estimate, "the estimate"), false, colAccent))
	}
	iv := st.headline(e)
	if iv[0] != nil {
		marks = append(marks, markLineX("lower", f.v(*iv[0], "the lower bound"), true, colInk))
	}
	if iv[1] != nil {
		marks = append(marks, markLineX("upper", f.v(*iv[1], "the upper bound"), true, colInk))
	}
	bar := charts.NewBar()
	bar.SetGlobalOptions(append(baseOpts(id, 260, "axis", false),
		charts.WithXAxisOpts(opts.XAxis{Type: "value", Name: label + " in each bootstrap replicate", NameLocation: "middle", NameGap: 28, Scale: opts.Bool(true),
			SplitLine: &opts.SplitLine{Show: opts.Bool(false)}}),
		charts.WithYAxisOpts(yAxis("value", "Replicates")))...)
	bar.AddSeries("Replicates", data, charts.WithSeriesOpts(func(s *charts.SingleSeries) {
		s.BarWidth = "90%"
		s.ItemStyle = &opts.ItemStyle{Color: colBand50}
		if len(marks) > 0 {
			s.MarkLines = &opts.MarkLines{Data: marks, MarkLineStyle: opts.MarkLineStyle{Symbol: []string{"none", "none"}}}
		}
	}))
	obj, err := finish(name, f, bar, nil)
	caption := fmt.Sprintf("How %s varied across the bootstrap replicates. Solid line: the estimate; dashed lines: the %s %s interval.",
		label, st.levelText(), st.intervalName()) + undrawnReplicates(label, b)
	return one(chartSpec{ID: id, Title: "Bootstrap distribution of " + label, Caption: caption, Height: 260, Option: obj}, err)
}

// undrawnReplicates says which replicates a bootstrap histogram leaves out: those beyond its
// last edge (the 99th percentile) and those at +∞ (k in the Poisson limit). The interval
// lines still count them.
func undrawnReplicates(label string, b *analysis.Bins) string {
	count := func(n int) string {
		if n == 1 {
			return "1 replicate"
		}
		return formatNumber(float64(n), 0) + " replicates"
	}
	var parts []string
	if b.Overflow > 0 {
		parts = append(parts, fmt.Sprintf("%s above %s (beyond the 99th percentile)", count(b.Overflow), formatNumber(b.Edges[len(b.Edges)-1], 2)))
	}
	if b.Infinite > 0 {
		parts = append(parts, fmt.Sprintf("%s in the Poisson limit (%s = ∞)", count(b.Infinite), label))
	}
	if len(parts) == 0 {
		return ""
	}
	return " Not drawn, but counted in the interval: " + strings.Join(parts, " and ") + "."
}
